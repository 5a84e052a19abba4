"""Trip scenario files: the TOML a clinician writes for one traveller and one trip.

:func:`load_trip` reads a file, validates it (:mod:`planner.tomlfile` reports every
problem with its file, field and line), converts the local wall times of flights and
busy hours to UTC with :func:`planner.world.localtime.resolve_local` (a time inside a
spring-forward gap is refused; a repeated fall-back time needs ``depart_fold`` /
``arrive_fold`` / ``start_fold`` / ``end_fold`` = 0 for the first occurrence or 1 for the
second) and builds the :mod:`planner.trips.model` objects.

Layout (``[[stops]]``, ``[light]`` and ``[[busy]]`` are optional)::

    kind = "trip"
    name = "Ana to Tokyo"
    description = "..."
    model = "jewett1999"                  # a built-in id or a model file (relative to this file)

    [traveller]
    sleep = { bed = "23:00", wake = "07:00" }   # habitual sleep at home (local clock)
    preparation_days = 3                         # days before the first departure (0..14)
    max_sleep_shift_h_per_day = 1.0              # largest move of bedtime per preparation day (0, 3]

    [home]                                # or just: place = "Lisbon" (see below)
    name = "Lisbon"
    time_zone = "Europe/Lisbon"
    latitude = 38.72
    longitude = -9.14
    days_after_return = 3                 # only with a flight back home (0..14, default 3)

    [destination]
    name = "Tokyo"
    time_zone = "Asia/Tokyo"
    latitude = 35.68
    longitude = 139.69
    sleep = { bed = "23:00", wake = "07:00" }   # wanted there (default: the home sleep)
    stay_days = 10                        # only for a one-way trip (1..30)

    [[stops]]                             # other places on the route where the traveller stays
    name = "Dubai"                        # (same fields as [destination] without stay_days)

    [[flights]]                           # in order; "from"/"to": "home", "destination" or a stop name
    from = "home"
    to = "destination"
    depart = "2027-03-10 11:00"           # local time where the flight departs
    arrive = "2027-03-11 07:00"           # local time where it lands

    [light]
    indoor_lux = 150

    [[busy]]                              # hours the traveller cannot choose their light
    place = "destination"                 # local times at this place
    start = "2027-03-12 09:00"
    end = "2027-03-12 17:00"
    label = "conference"

    [person]                              # optional: evidence of the traveller's own clock
    dlmo = "21:15"                        # measured DLMO, local home clock
    dlmo_date = 2027-03-05                # the evening it was measured (default: just before the plan)
    dlmo_sd_min = 30                      # its uncertainty (default 30 min)
    light_log = "week.csv"                # a wearable light meter's CSV, relative to this file
    light_log_time_zone = "Europe/Lisbon" # zone of time stamps without a UTC offset (default: home)
    tau_h = 24.4                          # measured intrinsic period [h]

Places by name
--------------
Any place table (``[home]``, ``[destination]``, ``[[stops]]``, and a roster's ``[site]``) may give
``place = "Tokyo"`` (or ``"London, GB"``, ``"Portland, US-OR"``) instead of ``time_zone``,
``latitude`` and ``longitude``; :func:`planner.world.gazetteer.resolve_place` looks it up, and an unknown
or ambiguous name is reported on the ``place`` line (the ambiguity with its candidates).  ``name``
is then optional.

A measured DLMO is preferred to a light log, and a light log to the habitual sleep
(:mod:`planner.trips.evidence`).

The planned period
------------------
It starts at home midnight ``preparation_days`` before the first departure
(:attr:`planner.trips.model.Trip.start`).  A **one-way** trip (the last flight lands at the
destination) ends at the destination's midnight closing the ``stay_days``-th full day
after the arrival day.  A **round trip** (the last flight lands at home) ends at home
midnight closing the ``days_after_return``-th full day after the day of the return; its
stay is fixed by the flights, so ``stay_days`` is not allowed then.

Flights form one route: the first leaves home, each later one leaves where the previous
one landed, and the destination must be on it.  Write a connection of a few hours as one
flight from the first departure to the last arrival (the layover counts as time in
transit); a ``[[stop]]`` is for a place where the traveller stays.
"""

from __future__ import annotations

import os
from dataclasses import dataclass
from datetime import date, datetime, timedelta
from pathlib import Path
from typing import Literal

from pydantic import Field, field_validator

from planner import tomlfile
from planner.errors import InputError
from planner.scenariofile import (
    DEFAULT_MODEL,
    PlaceEntry,
    Problems,
    SleepEntry,
    StrictEntry,
    build_place,
    checked,
    model_reference,
)
from planner.shipped import shipped_toml_files
from planner.trips.evidence import DLMO_SD_MIN, NO_EVIDENCE, PersonEvidence
from planner.trips.model import Busy, Flight, Trip, where_at
from planner.world.light import LightOptions
from planner.world.localtime import (
    check_date_range,
    local_day_bounds,
    parse_clock,
    resolve_local,
    to_utc,
    zone,
)
from planner.world.places import Place

#: Longest planned period accepted [days] (planning cost grows with the days).
MAX_PERIOD_DAYS = 60
#: Longest single flight accepted [h] (as :class:`planner.trips.model.Flight`).
MAX_FLIGHT_H = 40.0
#: Names a flight's "from"/"to" may use besides the stops' names.
HOME, DESTINATION = "home", "destination"


class Traveller(StrictEntry):
    sleep: SleepEntry
    preparation_days: int = Field(0, ge=0, le=14)
    max_sleep_shift_h_per_day: float = Field(1.0, gt=0.0, le=3.0, allow_inf_nan=False)


class HomeEntry(PlaceEntry):
    days_after_return: int | None = Field(None, ge=0, le=14)


class DestinationEntry(PlaceEntry):
    stay_days: int | None = Field(None, ge=1, le=30)


class FlightEntry(StrictEntry):
    from_: str = Field(alias="from", min_length=1)
    to: str = Field(min_length=1)
    depart: str
    arrive: str
    depart_fold: Literal[0, 1] | None = None
    arrive_fold: Literal[0, 1] | None = None


class LightEntry(StrictEntry):
    indoor_lux: float = Field(150.0, ge=0.0, allow_inf_nan=False)
    box_lux: float = Field(10_000.0, ge=0.0, allow_inf_nan=False)
    box_max_minutes: float = Field(60.0, ge=0.0, le=24 * 60, allow_inf_nan=False)
    glasses_transmission: float = Field(0.1, ge=0.0, le=1.0, allow_inf_nan=False)
    daylight: bool = True
    daylight_lux: float | None = Field(None, ge=0.0, allow_inf_nan=False)   # cap; None: as the sky gives it
    daylight_max_minutes: float = Field(120.0, ge=0.0, le=24 * 60, allow_inf_nan=False)
    cabin_lux: float = Field(50.0, ge=0.0, allow_inf_nan=False)
    sky: Literal["clear", "partly", "overcast"] = "overcast"
    daylight_exposure: Literal["open", "shade", "window"] = "open"


class BusyEntry(StrictEntry):
    place: str = Field(min_length=1)
    start: str
    end: str
    label: str = Field("busy", min_length=1, max_length=80)
    start_fold: Literal[0, 1] | None = None
    end_fold: Literal[0, 1] | None = None


#: Accepted measured intrinsic periods [h]: sighted adults lie within about 23.5-24.7 h (Duffy et
#: al. 2011, PNAS 108:15602, range of n = 157); a wider margin allows for unusual people.
TAU_RANGE_H = (23.0, 25.5)


class PersonEntry(StrictEntry):
    """Evidence of the traveller's own clock (all optional)."""

    dlmo: str | None = None
    dlmo_date: date | None = None
    dlmo_sd_min: float = Field(DLMO_SD_MIN, gt=0.0, le=180.0, allow_inf_nan=False)
    light_log: str | None = Field(None, min_length=1)
    light_log_time_zone: str | None = None
    tau_h: float | None = Field(None, gt=TAU_RANGE_H[0], lt=TAU_RANGE_H[1], allow_inf_nan=False)

    @field_validator("dlmo")
    @classmethod
    def _clock(cls, value: str | None) -> str | None:
        return None if value is None else checked(parse_clock, value)

    @field_validator("light_log_time_zone")
    @classmethod
    def _zone(cls, value: str | None) -> str | None:
        return None if value is None else checked(zone, value).strip()

    @field_validator("dlmo_date")
    @classmethod
    def _date(cls, value: date | None) -> date | None:
        return None if value is None else checked(check_date_range, value)


class TripFile(StrictEntry):
    """The whole scenario file (see the module docstring)."""

    kind: Literal["trip"]
    name: str = Field(min_length=1, max_length=120)
    description: str = ""
    model: str = Field(DEFAULT_MODEL, min_length=1)
    traveller: Traveller
    home: HomeEntry
    destination: DestinationEntry
    stops: list[PlaceEntry] = Field(default_factory=list)
    flights: list[FlightEntry] = Field(min_length=1)
    light: LightEntry = Field(default_factory=LightEntry)
    busy: list[BusyEntry] = Field(default_factory=list)
    person: PersonEntry | None = None


@dataclass(frozen=True)
class ScenarioInfo:
    """What a scenario file says about itself.

    Attributes
    ----------
    name, description : str
    model : str
        Built-in model id, or the path of a model file (made absolute when the file gave
        it relative to itself).
    path : str
        The scenario file.
    round_trip : bool
        Whether the last flight lands at home.
    person : PersonEvidence
        The ``[person]`` table (light-log path made absolute); empty without one.
    """

    name: str
    description: str
    model: str
    path: str
    round_trip: bool = False
    person: PersonEvidence = NO_EVIDENCE


def load_trip(path: str | Path) -> tuple[Trip, ScenarioInfo]:
    """Read, validate and build a trip scenario (see the module docstring).

    Raises
    ------
    InputFileError
        Listing every problem of the file, each with file, field and line.
    """
    path = Path(path)
    spec, text = tomlfile.load_scenario(TripFile, path, "trip", default="trip")
    return _build(spec, text, path)


def load_trip_text(text: str, source: str, folder: str | Path = ".") -> tuple[Trip, ScenarioInfo]:
    """:func:`load_trip` for scenario text that is not (yet) a file, e.g. a trip given on the command line.

    ``source`` names the text in messages; relative paths in it (a model file, a light log) are read from
    ``folder``.
    """
    spec = tomlfile.scenario_from_text(TripFile, text, source, "trip", default="trip")
    trip, info = _build(spec, text, Path(folder) / "scenario.toml", source)
    return trip, ScenarioInfo(info.name, info.description, info.model, source, info.round_trip, info.person)


def _local(text: str, place: Place, fold: int | None, field: tuple[str | int, ...],
           problems: Problems) -> datetime | None:
    try:
        return to_utc(resolve_local(text, place.zone, fold=fold, field=None))
    except InputError as exc:
        message = exc.message
        if "fold=" in message:
            name = field[-1]
            message = message.replace("fold=0", f"{name}_fold = 0").replace("fold=1", f"{name}_fold = 1")
        problems.add(field, message)
        return None


def _build(spec: TripFile, text: str, path: Path, source: str | None = None) -> tuple[Trip, ScenarioInfo]:
    problems = Problems(source or str(path), text)
    model = model_reference(spec.model, path, problems)
    home_sleep = spec.traveller.sleep
    home = build_place(spec.home, home_sleep)
    destination = build_place(spec.destination, home_sleep)
    places: dict[str, Place] = {HOME: home, DESTINATION: destination}
    for k, stop in enumerate(spec.stops):
        key = stop.name.strip()
        if key.lower() in (HOME, DESTINATION) or key in places:
            problems.add(("stops", k, "name"), f'"{key}" is already used; each stop needs its own name, '
                                               f'other than "{HOME}" and "{DESTINATION}"')
            continue
        places[key] = build_place(stop, home_sleep)
    allowed = ", ".join(f'"{name}"' for name in places)

    flights: list[Flight] = []
    here = HOME
    for k, entry in enumerate(spec.flights):
        ends = []
        for side, name in (("from", entry.from_), ("to", entry.to)):
            if name not in places:
                problems.add(("flights", k, side), f'unknown place "{name}"; allowed are {allowed}')
            ends.append(name)
        if entry.from_ == entry.to:
            problems.add(("flights", k, "to"), f'the flight leaves and lands at "{entry.to}"; '
                                               "a flight goes from one place to another")
        elif entry.from_ != here and entry.from_ in places:
            where = "the first flight leaves home" if k == 0 else f'the previous flight landed at "{here}"'
            problems.add(("flights", k, "from"), f'the route is broken: {where}, so this flight must leave '
                                                 f'from "{here}", not "{entry.from_}"')
        here = entry.to
        if not all(name in places for name in ends):
            continue
        origin, landing = places[entry.from_], places[entry.to]
        depart = _local(entry.depart, origin, entry.depart_fold, ("flights", k, "depart"), problems)
        arrive = _local(entry.arrive, landing, entry.arrive_fold, ("flights", k, "arrive"), problems)
        if depart is None or arrive is None:
            continue
        if arrive <= depart:
            problems.add(("flights", k, "arrive"),
                         f"arrival {entry.arrive} ({landing.name}) is not after departure {entry.depart} "
                         f"({origin.name}): {_hours(depart, arrive)} in real time; check the dates and "
                         "that each time is local to its own airport")
            continue
        if flights and depart < flights[-1].arrive:
            problems.add(("flights", k, "depart"), f"departs before the previous flight lands "
                                                   f"({_hours(depart, flights[-1].arrive)} overlap); list flights "
                                                   "in order, each leaving after the previous one lands")
            continue
        if (arrive - depart).total_seconds() / 3600.0 > MAX_FLIGHT_H:
            problems.add(("flights", k, "arrive"), f"the flight lasts {_hours(depart, arrive)}; at most "
                                                   f"{MAX_FLIGHT_H:g} h is allowed (split a longer journey into legs)")
            continue
        flights.append(Flight(origin, landing, depart, arrive))
    route = [spec.flights[0].from_] + [entry.to for entry in spec.flights]
    last = spec.flights[-1].to
    if not all(name in places for name in route):
        problems.raise_if_any()   # unknown places: the route cannot be judged
    if DESTINATION not in route:
        problems.add(("flights",), f'no flight goes to the destination ("{spec.destination.name}"); '
                                   'one flight needs to = "destination"')
    if last not in (HOME, DESTINATION):
        problems.add(("flights", len(spec.flights) - 1, "to"),
                     f'the last flight lands at the stop "{last}"; a trip ends with a flight to '
                     '"destination" (one-way) or to "home" (round trip)')
    round_trip = last == HOME
    if round_trip and spec.destination.stay_days is not None:
        problems.add(("destination", "stay_days"), "not used on a round trip: the flights fix the stay; "
                                                   "say how many days after the return to plan with "
                                                   "home.days_after_return (0..14, default 3)")
    if not round_trip and spec.home.days_after_return is not None:
        problems.add(("home", "days_after_return"), "only used on a round trip (a last flight to \"home\"); "
                                                    "a one-way trip's period is set by destination.stay_days")
    if last == DESTINATION and spec.destination.stay_days is None:
        problems.add(("destination", "stay_days"), "required field is missing: the days to plan at the "
                                                   "destination after the arrival day (1..30)")
    problems.raise_if_any()

    final = flights[-1]
    if round_trip:
        after = 3 if spec.home.days_after_return is None else spec.home.days_after_return
        end = _end_of_day_after(final.arrive, home, after)
    else:
        end = _end_of_day_after(final.arrive, destination, int(spec.destination.stay_days))
    light = LightOptions(**spec.light.model_dump())
    trip = Trip(spec.name, home, tuple(flights), spec.traveller.preparation_days,
                float(spec.traveller.max_sleep_shift_h_per_day), end, light)
    period_days = (trip.end - trip.start).total_seconds() / 86400.0
    if period_days > MAX_PERIOD_DAYS:
        problems.add(("destination", "stay_days") if not round_trip else ("flights",),
                     f"the planned period lasts {period_days:.0f} days; at most {MAX_PERIOD_DAYS} are allowed")

    busy: list[Busy] = []
    for k, entry in enumerate(spec.busy):
        if entry.place not in places:
            problems.add(("busy", k, "place"), f'unknown place "{entry.place}"; allowed are {allowed}')
            continue
        place = places[entry.place]
        start = _local(entry.start, place, entry.start_fold, ("busy", k, "start"), problems)
        finish = _local(entry.end, place, entry.end_fold, ("busy", k, "end"), problems)
        if start is None or finish is None:
            continue
        if finish <= start:
            problems.add(("busy", k, "end"), f"end {entry.end} is not after start {entry.start}; "
                                             "busy hours need an end later than their start")
            continue
        if start < trip.start or finish > trip.end:
            problems.add(("busy", k, "start"), "outside the planned period, which runs from "
                                               f"{_wall(trip.start, place)} to {_wall(trip.end, place)} "
                                               f"{place.name} time")
            continue
        if not _stays_at(trip, place, start, finish):
            problems.add(("busy", k, "place"), f"the traveller is not at {place.name} for all of "
                                               f"{entry.start}–{entry.end} (check the flights and the place)")
            continue
        busy.append(Busy(start, finish, entry.label))
    problems.raise_if_any()
    if busy:
        trip = Trip(trip.name, trip.home, trip.flights, trip.preparation_days, trip.max_shift_h_per_day,
                    trip.end, trip.light, tuple(sorted(busy, key=lambda b: b.start)))
    info = ScenarioInfo(spec.name, spec.description, model, str(path), round_trip, _person(spec.person, path, problems))
    problems.raise_if_any()
    return trip, info


def _person(entry: PersonEntry | None, path: Path, problems: Problems) -> PersonEvidence:
    if entry is None:
        return NO_EVIDENCE
    log = None
    if entry.light_log is not None:
        candidate = Path(entry.light_log)
        candidate = (candidate if candidate.is_absolute() else path.parent / candidate).resolve()
        if not os.path.isfile(candidate):
            problems.add(("person", "light_log"), f'no light-log file "{entry.light_log}" (a relative path is read '
                                                  "from the scenario's folder)")
        log = str(candidate)
    return PersonEvidence(None if entry.dlmo is None else parse_clock(entry.dlmo), entry.dlmo_date,
                          float(entry.dlmo_sd_min), log, entry.light_log_time_zone, entry.tau_h)


def _end_of_day_after(arrival: datetime, place: Place, days: int) -> datetime:
    """The local midnight at ``place`` closing the ``days``-th full day after the day of ``arrival``."""
    local_date: date = arrival.astimezone(place.zone).date()
    return local_day_bounds(local_date + timedelta(days=days), place.zone)[1]


def _stays_at(trip: Trip, place: Place, start: datetime, end: datetime) -> bool:
    """Whether the traveller is at ``place`` from ``start`` to ``end`` (no flight in between)."""
    if where_at(trip, start) != place:
        return False
    return not any(start < flight.arrive and flight.depart < end for flight in trip.flights)


def _hours(a: datetime, b: datetime) -> str:
    hours = abs((b - a).total_seconds()) / 3600.0
    whole, minutes = divmod(round(hours * 60), 60)
    return f"{whole} h {minutes:02d} min" if minutes else f"{whole} h"


def _wall(moment: datetime, place: Place) -> str:
    return moment.astimezone(place.zone).strftime("%Y-%m-%d %H:%M")


# --------------------------------------------------------------------------- built-in demo trips

def builtin_scenario_paths() -> dict[str, Path]:
    """The demo trips shipped with the package, keyed by file stem (the folder also holds demo rosters)."""
    return {key: path for key, path in shipped_toml_files("scenarios").items()
            if tomlfile.declared_kind(path) == "trip"}


#: The demo ``phaseplan demo`` runs when no name is given.
DEFAULT_DEMO = "lisbon-tokyo"


def demo_path(name: str | None = None) -> Path:
    """The file of a built-in demo trip.

    Raises
    ------
    InputError
        For an unknown name; the message lists the demos.
    """
    demos = builtin_scenario_paths()
    key = name or DEFAULT_DEMO
    if key not in demos:
        raise InputError(f'no demo trip "{key}"; the demos are {", ".join(demos) or "(none installed)"}',
                         field="demo")
    return demos[key]


__all__ = ["ScenarioInfo", "TripFile", "load_trip", "load_trip_text", "builtin_scenario_paths", "demo_path", "DEFAULT_DEMO"]
