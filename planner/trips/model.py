"""Trips across time zones: the traveller's days, light, baseline and plan simulation.

A :class:`Trip` is a home place, one or more flights and the light the traveller
can get.  :func:`trip_days` cuts the trip into days, each in the local time of
where the traveller is (a travel day runs from the origin's midnight to the
next midnight at the arrival place after landing).  :func:`plan_schedule`
turns a :class:`Plan` (sleep episodes, bright-light and light-avoidance
windows) into the light at the eye, layered as: indoor light, ordinary
daylight, the plan's bright light, cabin light in flight, the plan's
light-avoidance (dark glasses, or an eye mask on a flight), then sleep (eyes shut wins).

Everything is computed in UTC; local times are for display.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from datetime import date, datetime, timedelta, timezone
from functools import cached_property, lru_cache
from typing import Literal, Sequence

import numpy as np

from planner.engine.entrainment import BASELINE_OUTDOOR_H, entrain, place_pattern
from planner.engine.markers import HOURS_PER_DAY
from planner.engine.parameters import ModelSpec
from planner.errors import ComputationError, InputError
from planner.hashing import hash_once
from planner.intervals import free_segments, parts_inside
from planner.world.daylight import daylight_for
from planner.world.light import (
    LightLayer,
    LightOptions,
    LightSchedule,
    Window,
    ambient,
    dark_glasses,
    hours_between,
    light_box,
    sleep,
)
from planner.world.places import Place, sun_up

UTC = timezone.utc

#: Hours before departure by which the traveller is up (getting to the airport; common practice).
WAKE_BEFORE_DEPARTURE_H = 2.0
#: Hours after take-off and around landing without sleep when sleeping on a flight [h]
#: (boarding, meals, landing; a planner's default, common practice).
IN_FLIGHT_SETTLE_H = 1.0
#: Longest planned time awake between two sleeps [h] unless a flight forces more: a whole day
#: and night awake is where sleepiness and errors climb steeply (Dawson & Reid 1997, Nature
#: 388:235: 24 h awake impairs performance like 0.1 % blood alcohol; from memory).
MAX_WAKE_H = 24.0
#: Shortest sleep opportunity planned on a flight or a layover [h] (one sleep cycle of about
#: 90 min; common practice, no single source).
MIN_TRAVEL_SLEEP_H = 1.5
#: Light-avoidance source worn awake in a seat on a flight (:mod:`planner.trips.travel_sleep`).
EYE_MASK = "eye mask"
#: Fraction of the light an eye mask lets reach the eye [0..1]: an opaque mask over the eyes leaves
#: them in near darkness, as closed eyes in sleep (from memory; no measured value at hand).
EYE_MASK_TRANSMISSION = 0.0


@dataclass(frozen=True)
class Flight:
    """One flight, instants in UTC."""

    origin: Place
    destination: Place
    depart: datetime
    arrive: datetime

    def __post_init__(self):
        if self.arrive <= self.depart:
            raise InputError(f"arrival ({self.arrive.isoformat()}) is not after departure "
                             f"({self.depart.isoformat()})", field="flights.arrive")
        if hours_between(self.depart, self.arrive) > 40:
            raise InputError("a single flight longer than 40 h; split it into legs", field="flights.arrive")


@dataclass(frozen=True)
class Busy:
    """Hours the traveller cannot control light (meetings, events), UTC."""

    start: datetime
    end: datetime
    label: str = "busy"


@hash_once
@dataclass(frozen=True)
class Trip:
    """A trip to plan.

    Attributes
    ----------
    name : str
    home : Place
    flights : tuple of Flight
    preparation_days : int
        Days before the first departure the traveller will prepare.
    max_shift_h_per_day : float
        Largest move of sleep per preparation day [h].
    end : datetime
        End of the planned period (UTC).
    light : LightOptions
    busy : tuple of Busy
    """

    name: str
    home: Place
    flights: tuple[Flight, ...]
    preparation_days: int
    max_shift_h_per_day: float
    end: datetime
    light: LightOptions = field(default_factory=LightOptions)
    busy: tuple[Busy, ...] = ()

    @cached_property
    def start(self) -> datetime:
        first = self.flights[0].depart
        return self.home.midnight_of(first) - timedelta(days=self.preparation_days)

    @property
    def destination(self) -> Place:
        return self.flights[0].destination

    @property
    def arrival(self) -> datetime:
        return self.flights[0].arrive


@dataclass(frozen=True)
class TripDay:
    """One day of the trip in the local time of where the traveller is.

    ``place`` is where the day starts, ``end_place`` where it ends (they differ on travel days).
    """

    index: int
    kind: Literal["preparation", "travel", "stay"]
    place: Place
    end_place: Place
    start: datetime
    end: datetime

    @property
    def local_date(self) -> date:
        return self.start.astimezone(self.place.zone).date()

    @property
    def evening_date(self) -> date:
        """The local date, at ``end_place``, of the evening that closes this day."""
        return (self.end - timedelta(minutes=1)).astimezone(self.end_place.zone).date()


def trip_days(trip: Trip) -> list[TripDay]:
    """The trip cut into days (see the module docstring)."""
    return list(_trip_days(trip))


@lru_cache(maxsize=64)
def _trip_days(trip: Trip) -> tuple[TripDay, ...]:
    days: list[TripDay] = []
    cursor = trip.start
    place = trip.home
    pending = sorted(trip.flights, key=lambda f: f.depart)
    while cursor < trip.end - timedelta(minutes=1):
        nxt = place.midnight_after(cursor)
        start_place = place
        kind = "preparation" if cursor < trip.flights[0].depart else "stay"
        while pending and pending[0].depart < nxt:
            flight = pending.pop(0)
            place = flight.destination
            nxt = place.midnight_after(flight.arrive)
            kind = "travel"
        days.append(TripDay(len(days), kind, start_place, place, cursor, min(nxt, trip.end)))
        cursor = nxt
    return tuple(days)


def where_at(trip: Trip, moment: datetime) -> Place | None:
    """The place the traveller is at ``moment``; None while flying."""
    place = trip.home
    for flight in trip.flights:
        if moment < flight.depart:
            return place
        if moment < flight.arrive:
            return None
        place = flight.destination
    return place


@dataclass(frozen=True)
class TravelSleep:
    """Sleep on flights and layovers chosen for a plan (:mod:`planner.trips.travel_sleep`), UTC.

    Attributes
    ----------
    spots : tuple of (datetime, datetime)
        The sleep spots (:func:`sleep_spots`) this placement decides; the others keep the default
        placement (the destination's night).
    episodes : tuple of (datetime, datetime)
        The sleep opportunities placed in those spots.
    eye_mask : tuple of Window
        Light-avoidance with an eye mask while awake on a flight (source ``EYE_MASK``).
    preferred : tuple of (datetime, datetime)
        Where a nap that breaks a waking gap longer than ``MAX_WAKE_H`` should go if one is needed
        (the light-avoidance lobe of the plan's direction).
    label : str
        How the placement was made, in a few words (for tests and debugging).
    """

    spots: tuple[tuple[datetime, datetime], ...]
    episodes: tuple[tuple[datetime, datetime], ...]
    eye_mask: tuple[Window, ...] = ()
    preferred: tuple[tuple[datetime, datetime], ...] = ()
    label: str = ""


@dataclass(frozen=True)
class Plan:
    """Sleep episodes and light windows of a whole trip (UTC)."""

    sleep: tuple[tuple[datetime, datetime], ...]
    bright: tuple[Window, ...] = ()
    avoid: tuple[Window, ...] = ()

    @property
    def box_minutes(self) -> float:
        return sum(w.minutes for w in self.bright if w.source == "light box")


def night_of(place: Place, evening: date) -> tuple[datetime, datetime]:
    """The sleep at ``place`` that begins on the evening of ``evening`` (bedtimes before noon fall on the next date)."""
    bed_date = evening if place.bed_h >= 12.0 else evening + timedelta(days=1)
    bed = place.at(bed_date, place.bed_h)
    return bed, bed + timedelta(hours=(place.wake_h - place.bed_h) % HOURS_PER_DAY)


def habitual_sleep(trip: Trip, shifts_h: Sequence[float] = (),
                   travel: TravelSleep | None = None) -> list[tuple[datetime, datetime]]:
    return list(_habitual_sleep(trip, tuple(float(x) for x in shifts_h), travel))


@lru_cache(maxsize=4096)
def _habitual_sleep(trip: Trip, shifts_h: tuple[float, ...],
                    travel: TravelSleep | None = None) -> tuple[tuple[datetime, datetime], ...]:
    """Sleep episodes of the trip: home habits (the night closing preparation day k moved by
    ``shifts_h[k]`` [h], negative = earlier), then each place's wanted sleep from the first
    night after arrival.  No sleep overlaps a flight, and the traveller is up
    ``WAKE_BEFORE_DEPARTURE_H`` before each departure.  Sleep on flights and layovers as
    ``travel`` places it (default: :func:`_travel_sleep`).
    """
    return tuple(_fit_sleep_to_travel(trip, list(bed_sleep(trip, shifts_h)), travel))


@lru_cache(maxsize=4096)
def bed_sleep(trip: Trip, shifts_h: tuple[float, ...] = ()) -> tuple[tuple[datetime, datetime], ...]:
    """The sleeps in a bed of :func:`habitual_sleep`, cut around the flights, without travel sleep."""
    days = trip_days(trip)
    episodes = [night_of(trip.home, days[0].local_date - timedelta(days=1))]
    for day in days:
        bed, wake = night_of(day.end_place, day.evening_date)
        if day.kind == "preparation" and day.index < len(shifts_h):
            move = timedelta(hours=float(shifts_h[day.index]))
            bed, wake = bed + move, wake + move
        episodes.append((bed, wake))
    return tuple(_fit_sleep_around_flights(trip, episodes))


def sleep_spots(trip: Trip) -> list[tuple[datetime, datetime, str]]:
    """Where sleep is possible while travelling: each flight from ``IN_FLIGHT_SETTLE_H`` after
    take-off to as long before landing ("in flight"), and each stop between two flights shorter
    than a day from as long after landing to ``WAKE_BEFORE_DEPARTURE_H`` before the next
    take-off ("layover")."""
    settle = timedelta(hours=IN_FLIGHT_SETTLE_H)
    ordered = sorted(trip.flights, key=lambda f: f.depart)
    spots = [(f.depart + settle, f.arrive - settle, "in flight") for f in ordered]
    for before, after in zip(ordered[:-1], ordered[1:]):
        if after.depart - before.arrive < timedelta(hours=HOURS_PER_DAY):
            spots.append((before.arrive + settle, after.depart - timedelta(hours=WAKE_BEFORE_DEPARTURE_H), "layover"))
    least = timedelta(hours=MIN_TRAVEL_SLEEP_H)
    return sorted((a, b, where) for a, b, where in spots if b - a >= least)


def sleep_setting(trip: Trip, start: datetime, end: datetime) -> Literal["in flight", "layover", "bed"]:
    """Where a planned sleep happens: on a flight, on a layover between flights, or in a bed at a place."""
    middle = start + (end - start) / 2
    if where_at(trip, middle) is None:
        return "in flight"
    if any(a <= start and end <= b for a, b, where in sleep_spots(trip) if where == "layover"):
        return "layover"
    return "bed"


def _travel_sleep(trip: Trip, episodes: list[tuple[datetime, datetime]]) -> list[tuple[datetime, datetime]]:
    """Sleep on flights and layovers added to ``episodes`` (sorted, none overlapping travel), the
    default for every plan that does not place its own (:func:`_fit_sleep_to_travel`): sleep in the
    destination's night (:func:`_destination_night_sleep`), then a nap in every long waking gap
    (:func:`fill_long_gaps`)."""
    return fill_long_gaps(trip, _destination_night_sleep(trip, episodes))


def _destination_night_sleep(trip: Trip, episodes: list[tuple[datetime, datetime]],
                             skip: Sequence[tuple[datetime, datetime]] = ()) -> list[tuple[datetime, datetime]]:
    """``episodes`` with sleep where each travel spot (:func:`sleep_spots`) but those in ``skip``
    falls in the night of the place it is heading for, so the sleep lands where the new day will want
    it (the usual advice to sleep on board when it is night at the destination)."""
    spots = sleep_spots(trip)
    added = []
    for a, b, _ in spots:
        if (a, b) in skip:
            continue
        heading = next((f.destination for f in sorted(trip.flights, key=lambda f: f.depart) if f.arrive >= b),
                       trip.flights[-1].destination)
        first = a.astimezone(heading.zone).date() - timedelta(days=1)
        for k in range(3):
            bed, wake = night_of(heading, first + timedelta(days=k))
            for lo, hi in free_segments(max(a, bed), min(b, wake), sorted(episodes + added)):
                if hi - lo >= timedelta(hours=MIN_TRAVEL_SLEEP_H):
                    added.append((lo, hi))
    return sorted(episodes + added)


def fill_long_gaps(trip: Trip, merged: list[tuple[datetime, datetime]],
                   preferred: Sequence[tuple[datetime, datetime]] = ()) -> list[tuple[datetime, datetime]]:
    """``merged`` (sorted sleep) with a nap in a travel spot (:func:`sleep_spots`) in every planned
    waking gap longer than ``MAX_WAKE_H`` that holds one.

    The nap is as short as keeps both parts of the gap within ``MAX_WAKE_H`` (``MIN_TRAVEL_SLEEP_H``
    at least), so that it breaks the long day without taking the place of the night's sleep.  It is
    placed where it overlaps ``preferred`` most (a plan's light-avoidance lobe) among the starts that
    keep both parts within ``MAX_WAKE_H``, else to split the gap as evenly as the spot allows.
    """
    spots = sleep_spots(trip)
    longest = timedelta(hours=MAX_WAKE_H)
    for _ in range(len(spots)):
        gaps = [(w, b) for (_, w), (b, _) in zip(merged[:-1], merged[1:]) if b - w > longest]
        filled = False
        for awake, asleep in gaps:
            for a, b, _ in spots:
                lo, hi = max(a, awake), min(b, asleep)
                if hi - lo < timedelta(hours=MIN_TRAVEL_SLEEP_H):
                    continue
                length = min(hi - lo, max(timedelta(hours=MIN_TRAVEL_SLEEP_H), (asleep - awake) - 2 * longest))
                start = awake + ((asleep - awake) - length) / 2
                start = min(max(start, lo), hi - length)
                start = _preferred_start(start, length, (max(lo, asleep - longest - length), min(hi - length,
                                                                                                   awake + longest)),
                                         preferred)
                merged = sorted(merged + [(start, start + length)])
                filled = True
                break
            if filled:
                break
        if not filled:
            break
    return merged


def _preferred_start(start: datetime, length: timedelta, starts: tuple[datetime, datetime],
                     preferred: Sequence[tuple[datetime, datetime]]) -> datetime:
    """The start in ``starts`` (first, last) of a nap of ``length`` overlapping ``preferred`` most
    (ties: nearest to ``start``); ``start`` when none overlaps or the range is empty."""
    first, last = starts
    if not preferred or last < first:
        return start
    candidates = {first, last, min(max(start, first), last)}
    for a, b in preferred:
        candidates |= {min(max(a, first), last), min(max(b - length, first), last)}

    def overlap(x):
        return sum((max(timedelta(0), min(b, x + length) - max(a, x)) for a, b in preferred), timedelta(0))

    best = max(sorted(candidates), key=lambda x: (overlap(x), -abs((x - start).total_seconds())))
    return best if overlap(best) > timedelta(0) else start


def _fit_sleep_to_travel(trip: Trip, fitted: list[tuple[datetime, datetime]], travel: TravelSleep | None = None):
    """Sleep episodes already cut around the flights (:func:`bed_sleep`) with sleep on flights and
    layovers added: as ``travel`` places it in its spots, the default (:func:`_travel_sleep`) in the
    others, then naps that break long waking gaps (:func:`fill_long_gaps`)."""
    if travel is None:
        return _travel_sleep(trip, fitted)
    merged = _destination_night_sleep(trip, fitted, skip=travel.spots)
    placed = [(a, b) for episode in travel.episodes for a, b in free_segments(*episode, merged)]
    joined: list[tuple[datetime, datetime]] = []
    for a, b in fill_long_gaps(trip, sorted(merged + placed), travel.preferred):
        if joined and a <= joined[-1][1]:   # a nap that continues a sleep is one sleep
            joined[-1] = (joined[-1][0], max(b, joined[-1][1]))
        else:
            joined.append((a, b))
    return joined


def _fit_sleep_around_flights(trip: Trip, episodes):
    fitted = []
    for bed, wake in episodes:
        for flight in trip.flights:
            latest_wake = flight.depart - timedelta(hours=WAKE_BEFORE_DEPARTURE_H)
            if bed < flight.depart and wake > latest_wake:
                wake = min(wake, latest_wake)
            if bed < flight.arrive and wake > flight.depart:
                bed = max(bed, flight.arrive)
        if wake - bed >= timedelta(hours=1) and bed < trip.end and wake > trip.start:
            fitted.append((max(bed, trip.start), min(wake, trip.end)))
    return fitted


def daylight_within(trip: Trip, place: Place, start: datetime, end: datetime) -> list[tuple[datetime, datetime]]:
    """Parts of [start, end] with the sun up at ``place``."""
    return parts_inside(*_sun_spans(trip, place), start, end)


@lru_cache(maxsize=256)
def _sun_spans(trip: Trip, place: Place) -> tuple[tuple, list]:
    """The sun-up spans at ``place`` around the trip, in time order, and their ends."""
    ups = tuple(sorted(sun_up(place, trip.start - timedelta(days=1), trip.end + timedelta(days=1))))
    return ups, [b for _, b in ups]


@lru_cache(maxsize=64)
def baseline_daylight(trip: Trip) -> tuple[LightLayer, ...]:
    """Ordinary outdoor light of a day without a plan: an hour around local noon while the sun is up."""
    layers = []
    for day in trip_days(trip):
        place = day.end_place
        local_noon = place.at(day.evening_date, 12.0)
        a = local_noon - timedelta(hours=BASELINE_OUTDOOR_H / 2)
        b = local_noon + timedelta(hours=BASELINE_OUTDOOR_H / 2)
        for start, end in daylight_within(trip, place, a, b):
            if where_at(trip, start) == place and where_at(trip, end) == place:
                layers.extend(daylight_for(trip.light, place, start, end))
    return tuple(layers)


def plan_schedule(trip: Trip, plan: Plan) -> LightSchedule:
    """The light at the eye for a plan (layer order in the module docstring)."""
    glasses = [_avoid_layers(window, trip.light.glasses_transmission) for window in plan.avoid]
    # every group of layers is a tuple kept by a cache, converted once (LightSchedule.from_layer_groups)
    groups = [baseline_daylight(trip), *(_bright_layers(trip, window) for window in plan.bright), _cabin_layers(trip),
              *glasses, _sleep_layers(tuple(plan.sleep))]
    return LightSchedule.from_layer_groups(trip.start, trip.end, trip.light.indoor_lux, groups)


@lru_cache(maxsize=8192)
def _bright_layers(trip: Trip, window: Window) -> tuple[LightLayer, ...]:
    """The layers of a bright-light window (searches place the same windows in many plans)."""
    if window.source == "light box":
        return (light_box(window.start, window.end, window.lux),)
    if window.source == "daylight" and where_at(trip, window.start) is not None:
        return tuple(daylight_for(trip.light, where_at(trip, window.start), window.start, window.end))
    return (ambient(window.start, window.end, window.lux, window.source),)


@lru_cache(maxsize=8192)
def _avoid_layers(window: Window, glasses_transmission: float) -> tuple[LightLayer, ...]:
    """The layer of a light-avoidance window: an eye mask scales by its own transmission, dark
    glasses by the traveller's glasses' transmission."""
    if window.source == EYE_MASK:
        return (LightLayer(window.start, window.end, "scale", window.lux, EYE_MASK),)
    return (dark_glasses(window.start, window.end, glasses_transmission),)


@lru_cache(maxsize=64)
def _cabin_layers(trip: Trip) -> tuple[LightLayer, ...]:
    return tuple(ambient(flight.depart, flight.arrive, trip.light.cabin_lux, "cabin") for flight in trip.flights)


@lru_cache(maxsize=4096)
def _sleep_layers(episodes: tuple[tuple[datetime, datetime], ...]) -> tuple[LightLayer, ...]:
    """Sleep layers of a plan's sleep (searches build many plans with the same sleep)."""
    return tuple(sleep(a, b) for a, b in episodes)


@dataclass(frozen=True)
class Targets:
    """Entrained phases the traveller starts from and aims for."""

    initial_state: np.ndarray
    home_cbtmin_h: float        # local clock at home [h]
    destination_cbtmin_h: float  # local clock at the destination [h]


def targets(trip: Trip, model: ModelSpec) -> Targets:
    """Entrain at home (start state) and at the destination (target phase)."""
    home = entrain(model, place_pattern(trip.home, trip.light), utc_offset_h=trip.home.utc_offset_h(trip.start))
    if not home.success:
        raise ComputationError(f"cannot entrain the traveller at home: {home.message}")
    away = entrain(model, place_pattern(trip.destination, trip.light))
    if not away.success:
        raise ComputationError(f"cannot entrain to the destination's day: {away.message}")
    return Targets(home.state, float(home.cbtmin_clock_h[0]), float(away.cbtmin_clock_h[0]))
