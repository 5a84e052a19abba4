"""The gazetteer: places by name against coordinates and zones from outside the project.

Reference values come from astral's own city database (``astral.geocoder``, a different list
from GeoNames, shipped on PyPI), from the IANA time-zone database as Python's ``zoneinfo``
reads it (UTC offsets on given dates), and, where marked, from memory.  Antarctica is the one
continent without a town of 15,000 people, so none is checked there.
"""

from __future__ import annotations

from datetime import datetime, timedelta
from zoneinfo import ZoneInfo

import pytest
from astral.geocoder import database, lookup
from typer.testing import CliRunner

from planner.cli import app
from planner.errors import InputError
from planner.world.gazetteer import (DOMINANT_POPULATION_RATIO, AmbiguousPlaceError, UnknownPlaceError, normalise,
                               place_fields, resolve_place, search_places)
from tests.test_cli import assert_one_line_error, one_json_document

#: Query -> astral's name for the same city; a dozen cities on six continents.
ASTRAL_CITIES = {
    "London, GB": "London",            # Europe
    "Moscow": "Moscow",                # Europe
    "Reykjavik": "Reykjavik",          # Europe, UTC all year
    "Tokyo": "Tokyo",                  # Asia
    "Kathmandu": "Kathmandu",          # Asia, a quarter-hour zone (+05:45)
    "Tehran": "Tehran",                # Asia, a half-hour zone (+03:30)
    "Nairobi": "Nairobi",              # Africa
    "Dakar": "Dakar",                  # Africa
    "Cape Town": "Cape Town",          # Africa, southern hemisphere
    "Honolulu": "Honolulu",            # North America (Oceania's zone), no DST
    "Anchorage": "Anchorage",          # North America
    "Bogota": "Bogota",                # South America
    "Santiago": "Santiago",            # South America, southern-hemisphere DST
    "Adelaide": "Adelaide",            # Oceania, half-hour zone with southern-hemisphere DST
    "Sydney": "Sydney",                # Oceania, southern-hemisphere DST
    "Perth": "Perth",                  # Oceania, no DST
    "Wellington, NZ": "Wellington",    # Oceania, southern-hemisphere DST (five Wellingtons: ambiguous alone)
}

#: Instants at which two zone names must give the same UTC offset (both solstice seasons, 2027).
PROBES = [datetime(2027, 1, 15, 12), datetime(2027, 4, 15, 12), datetime(2027, 7, 15, 12), datetime(2027, 10, 15, 12)]
#: City centres differ between lists by up to a few tenths of a degree (astral rounds to minutes of arc
#: and places some cities at their observatory or airport); 0.5 degree is about 55 km.
COORDINATE_TOLERANCE_DEG = 0.5


def _offsets(zone_name: str) -> list[timedelta]:
    zone = ZoneInfo(zone_name)
    return [probe.replace(tzinfo=zone).utcoffset() for probe in PROBES]


@pytest.fixture(scope="module")
def astral_db():
    return database()


@pytest.mark.parametrize("query", sorted(ASTRAL_CITIES))
def test_city_matches_astral_database(query, astral_db):
    place = resolve_place(query)
    reference = lookup(ASTRAL_CITIES[query], astral_db)   # astral.geocoder city database
    assert abs(place.latitude - reference.latitude) < COORDINATE_TOLERANCE_DEG, (place, reference)
    assert abs(place.longitude - reference.longitude) < COORDINATE_TOLERANCE_DEG, (place, reference)
    # astral uses some old zone names (US/Alaska); the offsets through the year must agree (IANA tz database).
    assert _offsets(place.time_zone) == _offsets(reference.timezone), (place.time_zone, reference.timezone)


def test_half_hour_zones_and_southern_dst():
    adelaide = resolve_place("Adelaide")
    # Australian Central Standard Time +09:30, daylight time +10:30 from October to April (from memory).
    assert adelaide.time_zone == "Australia/Adelaide"
    assert datetime(2027, 1, 15, 12, tzinfo=ZoneInfo(adelaide.time_zone)).utcoffset() == timedelta(hours=10.5)
    assert datetime(2027, 7, 15, 12, tzinfo=ZoneInfo(adelaide.time_zone)).utcoffset() == timedelta(hours=9.5)
    kolkata = resolve_place("Kolkata")
    # Kolkata: 22.57 N, 88.36 E, India Standard Time +05:30 all year (from memory).
    assert abs(kolkata.latitude - 22.57) < 0.1 and abs(kolkata.longitude - 88.36) < 0.1
    assert _offsets(kolkata.time_zone) == [timedelta(hours=5.5)] * len(PROBES)
    santiago = resolve_place("Santiago")
    # Chile: -03:00 in the southern summer, -04:00 in winter (IANA tz database; from memory).
    assert santiago.country_code == "CL"
    assert _offsets(santiago.time_zone)[0] == timedelta(hours=-3)
    assert _offsets(santiago.time_zone)[2] == timedelta(hours=-4)


def test_qualified_names_pick_the_right_place():
    # Portland, Oregon 45.52 N 122.68 W; Portland, Maine 43.66 N 70.26 W (from memory).
    oregon = resolve_place("Portland, US-OR")
    assert (oregon.admin1, oregon.time_zone) == ("OR", "America/Los_Angeles")
    assert abs(oregon.latitude - 45.52) < 0.1 and abs(oregon.longitude + 122.68) < 0.1
    assert resolve_place("Portland, Oregon") == oregon
    maine = resolve_place("Portland, ME")     # ME: Montenegro or Maine; only Maine has a Portland
    assert maine.time_zone == "America/New_York"
    assert resolve_place("London, GB").time_zone == "Europe/London"
    assert resolve_place("London, UK") == resolve_place("London, GB")
    ontario = resolve_place("London, CA")     # London, Ontario: 42.98 N 81.25 W (from memory)
    assert ontario.time_zone == "America/Toronto" and abs(ontario.latitude - 42.98) < 0.1
    assert resolve_place("Los Angeles, CA").country_code == "US"   # CA: Canada or California
    assert resolve_place("Cordoba, Spain").time_zone == "Europe/Madrid"   # accents ignored


def test_dominant_place_resolves_without_qualifier():
    # Sydney, Australia (about 5 million) against Sydney, Nova Scotia (about 0.1 million): far apart in size.
    sydney = resolve_place("Sydney")
    assert sydney.country_code == "AU" and sydney.time_zone == "Australia/Sydney"
    candidates = [m.place for m in search_places("Sydney") if m.matched == "name"]
    assert len(candidates) >= 2 and candidates[0].population >= DOMINANT_POPULATION_RATIO * candidates[1].population


def test_alternate_and_accentless_names():
    # Bombay is the former name of Mumbai; São Paulo's accent may be left out (common knowledge).
    assert resolve_place("Bombay").name == "Mumbai"
    assert resolve_place("sao paulo").time_zone == "America/Sao_Paulo"
    assert normalise("St. John's") == "st john s"
    assert normalise("Zürich") == "zurich"


def test_ambiguous_name_lists_candidates_largest_first():
    with pytest.raises(AmbiguousPlaceError) as caught:
        resolve_place("Portland")
    candidates = caught.value.candidates
    # Oregon's Portland is far larger than Maine's (US Census; from memory), and both are listed.
    assert [(c.country_code, c.admin1) for c in candidates[:2]] == [("US", "OR"), ("US", "ME")]
    assert [c.population for c in candidates] == sorted((c.population for c in candidates), reverse=True)
    message = caught.value.one_line()
    assert '"Portland, US-OR"' in message and '"Portland, US-ME"' in message
    assert message.index("US-OR") < message.index("US-ME")
    assert "\n" not in message
    # Hyderabad, India and Hyderabad, Pakistan lie in different zones: never guessed.
    with pytest.raises(AmbiguousPlaceError) as caught:
        resolve_place("Hyderabad")
    assert {c.time_zone for c in caught.value.candidates} == {"Asia/Kolkata", "Asia/Karachi"}


def test_unknown_and_malformed_queries():
    with pytest.raises(UnknownPlaceError, match="no place called"):
        resolve_place("Qwertzuiop")
    with pytest.raises(InputError, match="not a country"):
        resolve_place("Paris, Narnia")
    with pytest.raises(InputError, match="no place given"):
        resolve_place("   ")


def test_search_lists_prefix_matches_for_suggestions():
    found = search_places("Adel", limit=5)
    assert any(m.place.name == "Adelaide" and m.matched == "prefix" for m in found)
    assert len(search_places("San", limit=4)) == 4


def test_place_fields_fit_a_scenario_table():
    fields = place_fields(resolve_place("Tokyo"))
    # Tokyo 35.69 N 139.69 E, Asia/Tokyo (from memory).
    assert fields["time_zone"] == "Asia/Tokyo"
    assert abs(fields["latitude"] - 35.69) < 0.05 and abs(fields["longitude"] - 139.69) < 0.05


# --------------------------------------------------------------------------- phaseplan places

def run(*args: str):
    return CliRunner().invoke(app, list(args))


def test_places_json_resolves_and_lists():
    result = run("places", "Adelaide", "--json")
    assert result.exit_code == 0, result.stderr
    document = one_json_document(result.stdout)
    assert document["resolves_to"]["time_zone"] == "Australia/Adelaide"   # IANA tz database
    assert document["matches"][0]["write"] == "Adelaide, AU"
    assert "GeoNames" in document["source"]


def test_places_ambiguous_lists_all_and_says_so():
    result = run("places", "Portland", "--json")
    assert result.exit_code == 0, result.stderr
    document = one_json_document(result.stdout)
    assert document["resolves_to"] is None and "ambiguous" in document["unresolved_reason"]
    assert [m["write"] for m in document["matches"][:2]] == ["Portland, US-OR", "Portland, US-ME"]


def test_places_unknown_is_one_line_exit_2():
    line = assert_one_line_error(run("places", "Qwertzuiop"))
    assert "no place called" in line
    line = assert_one_line_error(run("places", "Paris, Narnia", "--json"))
    assert "not a country" in line
