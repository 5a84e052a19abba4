"""Planning a trip: evaluate plans in batches, search light windows, compare strategies.

Search
------
1. *Greedy, receding horizon*: day by day from the simulated state, every
   candidate for that day (bright-light window placed on the advancing or
   delaying side of the predicted CBTmin, light-avoidance window on the other
   side, and on preparation days a sleep shift) is simulated together with a
   one-day look-ahead, and the candidate leaving the least shift still to do
   (plus a small burden penalty) is kept.
2. *Global refinement*: :func:`scipy.optimize.differential_evolution` with
   ``vectorized=True`` over every day's window offsets and lengths, seeded with
   the greedy plan, scoring whole-trip simulations in one batch per generation.
   The greedy plan is kept if refinement finds nothing better.

Both strategies — **advance** and **delay** — are planned; the one with fewer
days to re-entrain is recommended (ties: less light-box time), unless it passes
near low amplitude while the other is nearly as fast.

Phase-response rules used to place windows: light before CBTmin delays, after
CBTmin advances (Khalsa et al. 2003, J Physiol 549:945); sustained light beats
short pulses and large shifts pass near low amplitude (Dean, Forger & Klerman
2009, PLoS Comput Biol 5:e1000418; Serkh & Forger 2014, PLoS Comput Biol
10:e1003523).
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field, replace
from functools import cached_property, lru_cache
from datetime import datetime, timedelta, timezone
from typing import Callable, Literal, Sequence

import numpy as np
from scipy.optimize import differential_evolution

from planner.engine.integrate import SEARCH_STEP_MINUTES, simulate
from planner.engine.markers import (
    HOURS_PER_DAY,
    cbtmin_times,
    phase_difference,
)
from planner.engine.parameters import ModelSpec
from planner.engine.workers import run_side_by_side, worker_count
from planner.errors import ComputationError
from planner.intervals import SortedSpans, free_segments
from planner.trips.lobes import (
    LOBE_H,
    MAX_AVOIDANCE_H,
    MIN_WINDOW_MINUTES,
    Strategy,
    lobe,
    nearest_cbtmin,
    whole_minute as _whole_minute,
)
from planner.trips.model import (
    IN_FLIGHT_SETTLE_H,
    WAKE_BEFORE_DEPARTURE_H,
    Plan,
    Targets,
    TravelSleep,
    Trip,
    TripDay,
    bed_sleep,
    daylight_within,
    habitual_sleep,
    night_of,
    plan_schedule,
    sleep_setting,
    targets,
    trip_days,
    where_at,
)
from planner.trips.scoring import REENTRAINMENT_TOLERANCE_H, net_shifts_h, people_reentrainment
from planner.trips.travel_sleep import eye_mask_clear_of, travel_sleep_options
from planner.world.daylight import mean_daylight_for
from planner.world.light import Window, hours_between
from planner.world.localtime import clock_hours
from planner.world.places import Place
from planner.intervals import count_text

#: What a plan aims at: the clock of each day's place on the route, or home time throughout.
Aim = Literal["route", "home"]

#: Burden penalty per minute of light box and per hour of sleep displacement, in days of
#: re-entrainment: small so it only breaks near-ties (a design choice of this planner).
BOX_MINUTE_PENALTY_DAYS = 0.002
SLEEP_SHIFT_PENALTY_DAYS = 0.02
#: Amplitude below this fraction of the entrained amplitude counts as "near low amplitude",
#: where the response to light is unpredictable (a design threshold of this planner).
LOW_AMPLITUDE_FRACTION = 0.5
#: Bright-light windows are placed on this lattice [h] so that batches share light edges.
WINDOW_LATTICE_H = 0.25
#: Search ranges of the windows relative to the predicted CBTmin [h]: the advancing side
#: runs over the hours after CBTmin and the delaying side over the hours before it, where a
#: type 1 PRC has its advance and delay regions (Khalsa et al. 2003, J Physiol 549:945).
RESPONSE_SIDE_H = 8.0
#: Day placements :meth:`TripPlanner.build` remembers before starting afresh (bounds memory).
PLACED_CACHE_SIZE = 50_000
#: The brute-force reference plan (:meth:`TripPlanner.reference_candidates`): each day, a bright-light
#: window of one of these lengths [h] starting anywhere within the day's half-days around its
#: anchor on a grid of ``REFERENCE_START_STEP_H`` (a check on the search devised by this project).
REFERENCE_WINDOW_HOURS = (2.0, 3.0)
REFERENCE_START_STEP_H = 0.25
#: A trip back home whose time at the destination is at most this many full days is planned
#: on home time as well: re-entraining there and back again costs more days than the stay
#: (common practice for short trips, no single source; the threshold is this planner's choice).
SHORT_STAY_DAYS = 3
#: Staying on home time succeeds while CBTmin keeps within this of its home phase [h]
#: (the re-entrainment tolerance, read the other way round).
HOME_TIME_TOLERANCE_H = REENTRAINMENT_TOLERANCE_H
#: Rounds of moving windows into the lobes of the plan's own simulated CBTmin (see
#: :func:`keep_to_lobes`); the windows settle in one or two (measured here).
LOBE_ROUNDS = 4


@dataclass(frozen=True)
class DayOutcome:
    """One day of a simulated plan."""

    day: TripDay
    target_place: Place
    cbtmin: datetime | None
    error_h: float           # CBTmin − target in (−12, 12] [h]; NaN without a CBTmin


@dataclass(frozen=True)
class Outcome:
    """A simulated plan: daily CBTmin, re-entrainment and burden."""

    plan: Plan
    reentrainment_days: int | None   # days after the arrival day; None if not within the trip
    net_shift_h: float               # net movement of the clock over the trip, + later / − earlier [h]
    direction: Literal["advance", "delay", "none"]
    min_amplitude_ratio: float
    score: float
    aim: Aim = "route"
    #: Largest |CBTmin − target| from the arrival day until the return flight (or the end) [h].
    max_away_error_h: float = math.nan
    #: Every simulated CBTmin of the plan [h since ``epoch``], in order (see :attr:`cbtmins`).
    cbtmin_hours: np.ndarray = field(default_factory=lambda: np.zeros(0), repr=False, compare=False)
    epoch: datetime | None = field(default=None, repr=False, compare=False)
    #: Each day of the trip with the place its phase aims at, and the day's CBTmin [h since
    #: ``epoch``] and CBTmin − target in (−12, 12] [h] (NaN without a CBTmin); see :attr:`days`.
    day_places: tuple[tuple[TripDay, Place], ...] = field(default=(), repr=False, compare=False)
    day_cbtmin_hours: np.ndarray = field(default_factory=lambda: np.zeros(0), repr=False, compare=False)
    day_errors_h: np.ndarray = field(default_factory=lambda: np.zeros(0), repr=False, compare=False)

    @cached_property
    def days(self) -> list[DayOutcome]:
        """One record per day of the trip (made when first asked for, like :attr:`cbtmins`)."""
        return [DayOutcome(day, place, self.epoch + timedelta(hours=float(hours)) if math.isfinite(hours) else None,
                           float(error))
                for (day, place), hours, error in zip(self.day_places, self.day_cbtmin_hours, self.day_errors_h)]

    @cached_property
    def cbtmins(self) -> tuple[datetime, ...]:
        """Every simulated CBTmin of the plan (UTC), in order (made when first asked for: the
        search simulates thousands of plans and looks at the CBTmin times of a few)."""
        return tuple(self.epoch + timedelta(hours=float(h)) for h in self.cbtmin_hours if math.isfinite(h))

    @property
    def near_low_amplitude(self) -> bool:
        return self.min_amplitude_ratio < LOW_AMPLITUDE_FRACTION

    @property
    def box_minutes(self) -> float:
        return self.plan.box_minutes


_UNIX_EPOCH = datetime(1970, 1, 1, tzinfo=timezone.utc)
_MICROSECONDS_PER_HOUR = 3_600_000_000


def target_place(trip: Trip, day: TripDay) -> Place:
    """Where the day's phase should aim: the current place on stay days, else the next destination."""
    if day.kind == "stay":
        return day.end_place
    for flight in sorted(trip.flights, key=lambda f: f.depart):
        if flight.depart >= day.start:
            return flight.destination
    return day.end_place


@dataclass
class Evaluator:
    """Simulates batches of plans for one trip and model."""

    trip: Trip
    model: ModelSpec
    targets_: Targets = field(init=False)
    days: list[TripDay] = field(init=False)
    target_clock: dict[str, float] = field(init=False)
    simulated: int = 0
    #: Step used while searching [min]; None = the model file's validated step.
    search_step_minutes: float | None = None
    #: State at ``trip.start``, shape (3,) (e.g. from a measured DLMO or a light log,
    #: :mod:`planner.trips.evidence`); None = entrained to the habitual home day.
    initial_state: np.ndarray | None = None

    def __post_init__(self):
        self._day_tables = {}
        self.targets_ = targets(self.trip, self.model)
        self.days = trip_days(self.trip)
        from planner.engine.entrainment import entrain, place_pattern
        self.target_clock = {}
        places = [self.trip.home] + [target_place(self.trip, d) for d in self.days]
        for place in {id(p): p for p in places}.values():
            steady = entrain(self.model, place_pattern(place, self.trip.light))
            if not steady.success:
                raise ComputationError(f"cannot entrain to the day at {place.name}: {steady.message}")
            self.target_clock[place.name] = float(steady.cbtmin_clock_h[0])
        self.reference_amplitude = float(self.model.family.amplitude(self.targets_.initial_state[:2])[0])
        self.start_cbtmin_h = self.targets_.home_cbtmin_h
        if self.initial_state is None:
            self.initial_state = self.targets_.initial_state
        else:
            self.start_cbtmin_h = self._first_home_cbtmin(np.asarray(self.initial_state, dtype=float).reshape(3))
        self.initial_state = np.asarray(self.initial_state, dtype=float).reshape(3)

    def _first_home_cbtmin(self, state: np.ndarray) -> float:
        """CBTmin [h of the home clock] of a traveller starting from ``state`` who keeps the habitual
        home day for the first day and a half (the phase the evidence gives)."""
        from planner.engine.entrainment import place_pattern
        end = self.trip.start + timedelta(hours=36)
        day = place_pattern(self.trip.home, self.trip.light).schedule(self.trip.start.astimezone(self.trip.home.zone), 2)
        result = simulate(self.model, day, state, start=self.trip.start, end=end)
        markers = cbtmin_times(result)[0] if result.success else np.zeros(0)
        if markers.size == 0:
            return self.targets_.home_cbtmin_h
        return clock_hours((self.trip.start + timedelta(hours=float(markers[0]))).astimezone(self.trip.home.zone))

    def arrival_index(self) -> int:
        return next(d.index for d in self.days if d.kind == "travel")

    def return_index(self) -> int:
        """Index of the day the first flight back home departs; the number of days if none does."""
        for flight in sorted(self.trip.flights, key=lambda f: f.depart):
            if flight.destination == self.trip.home:
                return next((d.index for d in self.days if d.start <= flight.depart < d.end), len(self.days))
        return len(self.days)

    def days_away(self) -> int:
        """Full days between the arrival day and the day of the return flight (or the trip's end)."""
        return max(0, self.return_index() - self.arrival_index() - 1)

    def evaluate(self, plans: Sequence[Plan], aim: Aim = "route", *, final: bool = False) -> list[Outcome]:
        """Simulate plans in one batch: at the search step, or with ``final`` at the model's own step."""
        schedules = [plan_schedule(self.trip, plan) for plan in plans]
        step = None if final else self.search_step_minutes
        result = simulate(self.model, schedules, self.initial_state, start=self.trip.start, end=self.trip.end,
                          step_minutes=step)
        if not result.success:
            raise ComputationError(result.message)
        self.simulated += len(plans)
        markers = cbtmin_times(result)
        amplitude = self.model.family.amplitude(np.moveaxis(result.states[:, :2, :], 1, 0))
        ratio = np.nanmin(amplitude, axis=0) / self.reference_amplitude
        return self._outcomes(plans, markers, ratio, aim)

    def _day_table(self, aim: Aim) -> tuple[list[Place], np.ndarray, np.ndarray, list[float]]:
        """Per day: the place aimed at, its bounds [h since trip start] and the target clock [h]."""
        table = self._day_tables.get(aim)
        if table is None:
            epoch = self.trip.start
            places = [self.trip.home if aim == "home" else target_place(self.trip, day) for day in self.days]
            table = self._day_tables[aim] = (
                places, np.array([hours_between(epoch, day.start) for day in self.days]),
                np.array([hours_between(epoch, day.end) for day in self.days]),
                [self.target_clock[place.name] for place in places])
        return table

    def _outcomes(self, plans: Sequence[Plan], markers: list[np.ndarray], amplitude_ratio: np.ndarray,
                  aim: Aim = "route") -> list[Outcome]:
        """The outcome of each plan from its CBTmin times [h since the trip's start]; re-entrainment, net
        shift and score of all plans at once (:mod:`planner.trips.scoring`: the same numbers)."""
        epoch = self.trip.start
        places, day_start, day_end, target = self._day_table(aim)
        cbtmin_h = np.full((len(self.days), len(plans)), np.nan)   # each day's CBTmin per plan [h since epoch]
        for j, marker_h in enumerate(markers):
            # Each day's CBTmin is the last marker inside it (markers are in time order).
            last = np.searchsorted(marker_h, day_end, side="left") - 1
            if marker_h.size:
                found = (last >= 0) & (marker_h[np.maximum(last, 0)] >= day_start)
                cbtmin_h[found, j] = marker_h[last[found]]
        errors = self._clock_errors_h(cbtmin_h, places, target)   # CBTmin − target per day and plan [h]
        day_places = tuple(zip(self.days, places))
        # Re-entrainment, net shift and direction describe the time away: from the arrival day
        # until the day of the flight back home (the whole rest of a one-way trip).
        arrival, back = self.arrival_index(), self.return_index()
        stay = errors[arrival:back]
        settled, person = people_reentrainment(stay)
        net = net_shifts_h(cbtmin_h[:back])
        largest = np.where(np.isfinite(stay), np.abs(stay), -np.inf).max(axis=0, initial=-np.inf)
        outcomes = []
        for j, plan in enumerate(plans):
            shift = float(net[j])
            direction = "none" if abs(shift) < 1.0 else ("delay" if shift > 0 else "advance")
            score = float(person[j] + plan_burden_days(self.trip, plan))
            outcomes.append(Outcome(plan, None if math.isinf(settled[j]) else int(settled[j]), shift,
                                    direction, float(amplitude_ratio[j]), score, aim,
                                    float(largest[j]) if math.isfinite(largest[j]) else math.nan, markers[j], epoch,
                                    day_places, cbtmin_h[:, j], errors[:, j]))
        return outcomes

    def _clock_errors_h(self, cbtmin_h: np.ndarray, places: Sequence[Place], target: Sequence[float]) -> np.ndarray:
        """CBTmin − target clock in (−12, 12] [h] for CBTmin times of shape (days, plans) [h since the
        trip's start] (NaN stays NaN), on the clock of each day's place.

        The clock is that of ``(start + timedelta(hours=h)).astimezone(zone)`` to the whole second,
        computed for all plans at once: the instant to the microsecond as :class:`datetime.timedelta`
        rounds it, and the zone's offset, which is the same all day unless the day holds a clock
        change (no zone changes its offset twice within a day); such a day is read one CBTmin at a time.
        """
        epoch = self.trip.start
        epoch_us = (epoch - _UNIX_EPOCH) // timedelta(microseconds=1)
        errors = np.full(cbtmin_h.shape, np.nan)
        for i, day in enumerate(self.days):
            row = cbtmin_h[i]
            found = np.nonzero(np.isfinite(row))[0]
            if found.size == 0:
                continue
            zone = places[i].zone
            offset = day.start.astimezone(zone).utcoffset()
            if day.end.astimezone(zone).utcoffset() == offset:
                hours = row[found]
                whole = np.trunc(hours)   # timedelta(hours=h): whole hours exactly, the rest rounded half to even
                micro = (whole.astype(np.int64) * _MICROSECONDS_PER_HOUR
                         + np.rint((hours - whole) * float(_MICROSECONDS_PER_HOUR)).astype(np.int64))
                local_s = (epoch_us + micro) // 1_000_000 + offset // timedelta(seconds=1)
                of_day = np.mod(local_s, 86_400)
                clock = (of_day // 3600).astype(float) + ((of_day % 3600) // 60) / 60 + (of_day % 60) / 3600
            else:
                clock = np.array([clock_hours((epoch + timedelta(hours=float(hours))).astimezone(zone))
                                  for hours in row[found]])
            errors[i, found] = phase_difference(clock, target[i])
        return errors


def person_score(days: int | None, stay_errors_h: np.ndarray) -> float:
    """One person's score of a plan before its burden, in days (lower is better): the days to
    re-entrain (the days away + 5 when never) plus a twentieth of the mean |error| while away, so
    that among plans re-entraining on the same day the one ending closer to the target wins."""
    days_needed = days if days is not None else len(stay_errors_h) + 5
    residual = float(np.nanmean(np.abs(stay_errors_h))) if np.any(np.isfinite(stay_errors_h)) else 12.0
    return days_needed + 0.05 * residual


def plan_burden_days(trip: Trip, plan: Plan) -> float:
    """The burden of a plan in days of re-entrainment: light-box minutes and sleep displacement."""
    return BOX_MINUTE_PENALTY_DAYS * plan.box_minutes + SLEEP_SHIFT_PENALTY_DAYS * _sleep_displacement_h(trip, plan)


def _net_shift_h(cbtmin_hours: Sequence[float]) -> float:
    """Net movement of CBTmin over the trip [h] from the daily CBTmin times [h since the trip's
    start]: the sum of daily moves, each taken as the shortest way round the clock (a body clock
    moves well under 12 h a day); + later, − earlier."""
    if len(cbtmin_hours) < 2:
        return 0.0
    return float(np.sum(phase_difference(np.mod(np.diff(cbtmin_hours), HOURS_PER_DAY), 0.0)))


def _sleep_displacement_h(trip: Trip, plan: Plan) -> float:
    return _sleep_displacement(trip, plan.sleep)


@lru_cache(maxsize=4096)
def _sleep_displacement(trip: Trip, sleep: tuple) -> float:
    """Hours the plan's sleeps in a bed moved from the habits (travel sleep placed for the plan's
    direction is not a displacement)."""
    habitual = bed_sleep(trip)
    sleep = [(a, b) for a, b in sleep if sleep_setting(trip, a, b) == "bed"]
    total = 0.0
    for (a, _), (b, _) in zip(habitual, sleep):
        total += abs(hours_between(a, b))
    return total


def required_shift_h(trip: Trip, evaluator: Evaluator, strategy: Strategy) -> float:
    """How far the clock must move in the strategy's direction [h, positive]."""
    home_clock = evaluator.start_cbtmin_h   # the traveller's own phase when evidence gives one
    dest = trip.destination
    dest_clock = evaluator.target_clock[dest.name]
    # Home CBTmin expressed on the destination clock at arrival, vs the destination target.
    offset = dest.utc_offset_h(trip.arrival) - trip.home.utc_offset_h(trip.flights[0].depart)
    behind = float(phase_difference(home_clock + offset, dest_clock))   # + = body later than target
    if strategy == "advance":
        return behind % HOURS_PER_DAY
    return (-behind) % HOURS_PER_DAY


# --- windows -------------------------------------------------------------------------------------

def _forbidden(trip: Trip, plan_sleep) -> list[tuple[datetime, datetime]]:
    return list(_forbidden_spans(trip, tuple(plan_sleep)))


@lru_cache(maxsize=4096)
def _forbidden_spans(trip: Trip, plan_sleep: tuple) -> tuple[tuple[datetime, datetime], ...]:
    spans = list(plan_sleep)
    spans += [(f.depart, f.arrive) for f in trip.flights]
    spans += [(b.start, b.end) for b in trip.busy]
    return tuple(sorted(spans))


def _longest(segments):
    return max(segments, key=lambda se: se[1] - se[0]) if segments else None


def fit_window(trip: Trip, start: datetime, end: datetime, source: str, forbidden) -> Window | None:
    """The longest part of [start, end] the traveller can use for ``source``; None if none.

    Light boxes and dark glasses avoid sleep, flights and busy hours.  Daylight needs the sun up
    at the place the traveller is, and so do dark glasses: after sunset they are a hazard on the
    road and on foot (the cautions' "never while driving or cycling at night or in dim light";
    the roster planner keeps the same rule).
    """
    light = trip.light
    segments = free_segments(start, end, forbidden)
    if source in ("daylight", "dark glasses"):
        if source == "daylight" and not light.daylight:
            return None
        place = where_at(trip, start)
        if place is None:
            return None
        sunny = []
        for s, e in segments:
            if where_at(trip, e) != place:
                continue
            sunny += daylight_within(trip, place, s, e)
        segments = sunny
    if source == "daylight":
        cap, lux = light.daylight_max_minutes, None
    elif source == "light box":
        cap, lux = light.box_max_minutes, light.box_lux
    else:
        cap, lux = MAX_AVOIDANCE_H * 60.0, light.glasses_transmission
    best = _longest(segments)
    if best is None:
        return None
    s, e = best
    # sunrise, sunset and busy hours fall between minutes: keep to the whole minutes inside them
    s, e = _whole_minute(s, up=True), _whole_minute(e, up=False)
    e = min(e, s + timedelta(minutes=cap))
    if hours_between(s, e) * 60.0 < MIN_WINDOW_MINUTES:   # also a cap of 0: that source is not available
        return None
    if lux is None:   # daylight follows the sun; the window shows its mean (planner.world.daylight)
        lux = mean_daylight_for(light, place, s, e)
    return Window(s, e, lux, source)


def in_lobe(window: Window, cbtmins: Sequence[datetime], kind: Literal["bright", "avoid"], strategy: Strategy) -> bool:
    """Whether the window's midpoint lies in its lobe (:func:`lobe`) of the nearest simulated CBTmin."""
    middle = window.start + (window.end - window.start) / 2
    anchor = nearest_cbtmin(cbtmins, middle)
    if anchor is None:
        return True
    lo, hi = lobe(anchor, kind, strategy)
    return lo <= middle <= hi


@dataclass(frozen=True)
class DayChoice:
    """Decision variables of one day, relative to that day's anchor (predicted CBTmin)."""

    bright_offset_h: float = 0.0
    bright_hours: float = 0.0
    bright_source: str = "light box"
    avoid_offset_h: float = 0.0
    avoid_hours: float = 0.0
    sleep_shift_h: float = 0.0
    #: On a travel day: sleep and eye masks on its flights and layovers (and those of earlier travel
    #: days), placed by :func:`planner.trips.travel_sleep.travel_sleep_options`; None = the default
    #: placement in the destination's night.
    travel_sleep: TravelSleep | None = None


def _travel_choice(choices: Sequence[DayChoice]) -> TravelSleep | None:
    """The travel sleep of the last travel day that placed one (it holds the earlier ones too)."""
    return next((c.travel_sleep for c in reversed(choices) if c.travel_sleep is not None), None)


#: What TripPlanner._fit has not been asked yet (fit_window itself may answer None).
_UNFITTED = object()


def _lattice(moment: datetime) -> datetime:
    step = WINDOW_LATTICE_H * 3600.0
    seconds = round(moment.timestamp() / step) * step
    return datetime.fromtimestamp(seconds, tz=moment.tzinfo)


class TripPlanner:
    """Plans one trip under one model (see the module docstring)."""

    def __init__(self, trip: Trip, model: ModelSpec, initial_state: np.ndarray | None = None):
        self.trip = trip
        self.model = model
        self.evaluator = Evaluator(trip, model, search_step_minutes=max(SEARCH_STEP_MINUTES, model.step_minutes),
                                   initial_state=initial_state)
        self.days = self.evaluator.days
        # see build: placements by (state number, choice, anchor, strategy), the states by number
        # and the numbers by state
        self._placed: dict = {}
        self._states: list = []
        self._state_numbers: dict = {}
        self._lattice_of: dict = {}     # (anchor, offset) -> window start (_lattice_after)
        self._fitted: dict = {}         # what fit_window gave (_fit)
        self._caps = {"light box": trip.light.box_max_minutes, "daylight": trip.light.daylight_max_minutes}

    # A plan is a list of DayChoice plus anchors (predicted CBTmin per day).
    def build(self, choices: Sequence[DayChoice], anchors: Sequence[datetime], strategy: Strategy) -> Plan:
        travel = _travel_choice(choices)
        sleep = tuple(habitual_sleep(self.trip, self._sleep_shifts(choices), travel))
        # The windows of a day depend only on the days before it, so the windows placed up to
        # each day are remembered (searches vary one day of otherwise equal plans).  A state of
        # placement is known by its number, which keeps the keys cheap to look up.
        if len(self._placed) > PLACED_CACHE_SIZE:
            self._placed.clear()
            self._states.clear()
            self._state_numbers.clear()
            self._fitted.clear()   # its keys name the spans of the states by their id
        # A state: what windows avoid (sleep, flights, busy hours), bright, avoid, used minutes per (day, source).
        state = self._state_numbers.get(sleep)
        if state is None:
            state = self._state_number(sleep, (SortedSpans(_forbidden(self.trip, sleep)), (), (), ()))
        for day, choice, anchor in zip(self.days, choices, anchors):
            if anchor is None or (choice.bright_hours <= 0 and choice.avoid_hours <= 0):
                continue
            key = (state, choice, anchor, strategy)
            following = self._placed.get(key)
            if following is None:
                before = self._states[state]
                after = self._place_day(before, choice, anchor, strategy)
                # a state is told by the one it grew from and what the day added to it
                grown = (state, after[1][len(before[1]):], after[2][len(before[2]):], after[3])
                following = self._placed[key] = self._state_number(grown, after)
            state = following
        placed = self._states[state]
        masks = eye_mask_clear_of(travel.eye_mask, sleep) if travel is not None else ()
        return Plan(sleep, placed[1], placed[2] + masks)

    def _sleep_shifts(self, choices: Sequence[DayChoice]) -> tuple[float, ...]:
        """The sleep shift of each preparation day [h]."""
        return tuple(choice.sleep_shift_h for day, choice in zip(self.days, choices) if day.kind == "preparation")

    def _state_number(self, key: tuple, placed: tuple) -> int:
        """The number of a state of placement ``placed`` known by ``key`` (see :meth:`build`),
        given one if it is new."""
        number = self._state_numbers.get(key)
        if number is None:
            number = self._state_numbers[key] = len(self._states)
            self._states.append(placed)
        return number

    def _place_day(self, placed: tuple, choice: DayChoice, anchor: datetime, strategy: Strategy) -> tuple:
        """``placed`` (forbidden spans, bright, avoid, used) with one day's windows added."""
        forbidden, bright, avoid, used_items = placed
        bright, avoid, used = list(bright), list(avoid), dict(used_items)
        caps = self._caps
        # A day's windows sit on either side of its CBTmin, so they may fall on the evening
        # before the day (delaying light before a CBTmin just after midnight): each is bounded
        # by its lobe of the anchor (:func:`lobe`), not by the calendar day.
        if choice.bright_hours > 0:
            lo, hi = lobe(anchor, "bright", strategy)
            lo, hi = max(lo, self.trip.start), min(hi, self.trip.end)
            s = self._lattice_after(anchor, choice.bright_offset_h)
            e = s + timedelta(hours=choice.bright_hours)
            window = self._fit(max(s, lo), min(e, hi), choice.bright_source, forbidden, bright)
            if window is not None:
                key = (self._day_index(window.start), window.source)
                room = caps[window.source] - used.get(key, 0.0)
                window = window if window.minutes <= room else (
                    Window(window.start, window.start + timedelta(minutes=room), window.lux, window.source)
                    if room >= MIN_WINDOW_MINUTES else None)
            if window is not None:
                bright.append(window)
                used[key] = used.get(key, 0.0) + window.minutes
        if choice.avoid_hours > 0:
            lo, hi = lobe(anchor, "avoid", strategy)
            lo, hi = max(lo, self.trip.start), min(hi, self.trip.end)
            s = self._lattice_after(anchor, choice.avoid_offset_h)
            e = s + timedelta(hours=choice.avoid_hours)
            window = self._fit(max(s, lo), min(e, hi), "dark glasses", forbidden, bright + avoid)
            if window is not None:
                avoid.append(window)
        return forbidden, tuple(bright), tuple(avoid), tuple(sorted(used.items()))

    def _fit(self, start: datetime, end: datetime, source: str, forbidden: SortedSpans,
             placed: list[Window]) -> Window | None:
        """:func:`fit_window` for ``forbidden`` and the windows already ``placed``, remembered: only the
        placed windows overlapping [start, end] can cut it (free_segments needs no order), so plans that
        differ elsewhere share the answer."""
        near = tuple([w for w in placed if w.end > start and w.start < end])
        key = (start, end, source, id(forbidden), near)     # forbidden spans live in the states
        window = self._fitted.get(key, _UNFITTED)
        if window is not _UNFITTED:
            return window
        if len(self._fitted) > PLACED_CACHE_SIZE:
            self._fitted.clear()
        window = self._fitted[key] = fit_window(self.trip, start, end, source,
                                                forbidden.overlapping(start, end) + [(w.start, w.end) for w in near])
        return window

    def _lattice_after(self, anchor: datetime, offset_h: float) -> datetime:
        """``_lattice(anchor + offset_h)``, remembered (the searches ask for the same few offsets of each anchor)."""
        key = (anchor, offset_h)
        moment = self._lattice_of.get(key)
        if moment is None:
            if len(self._lattice_of) > PLACED_CACHE_SIZE:
                self._lattice_of.clear()
            moment = self._lattice_of[key] = _lattice(anchor + timedelta(hours=offset_h))
        return moment

    def _day_index(self, moment: datetime) -> int:
        """Index of the trip day holding ``moment`` (the last day for the trip's end)."""
        for day in self.days:
            if day.start <= moment < day.end:
                return day.index
        return self.days[-1].index

    def baseline(self) -> Outcome:
        """No plan: home habits until departure, then the destination's sleep and ordinary light."""
        return self.evaluator.evaluate([Plan(tuple(habitual_sleep(self.trip)))], final=True)[0]

    def _anchors(self, outcome: Outcome) -> list[datetime | None]:
        anchors = []
        last = None
        for o in outcome.days:
            if o.cbtmin is not None:
                last = o.cbtmin
                anchors.append(o.cbtmin)
            else:
                anchors.append(last + timedelta(hours=HOURS_PER_DAY) if last is not None else None)
        return anchors

    def _candidates(self, day: TripDay, strategy: Strategy, previous_shift: float) -> list[DayChoice]:
        sign = 1.0 if strategy == "advance" else -1.0
        offsets = np.arange(0.0, RESPONSE_SIDE_H + 1e-9, 1.0)
        bright_opts = [(0.0, 0.0, "light box")]
        for o in offsets:
            # Advance: light after CBTmin; delay: light ending at or before CBTmin.
            for hours, source in ((0.5, "light box"), (1.0, "light box"), (1.0, "daylight"), (2.0, "daylight")):
                if source == "daylight" and not self.trip.light.daylight:
                    continue
                start = o if sign > 0 else -o - hours
                bright_opts.append((start, hours, source))
        avoid_opts = [(0.0, 0.0)]
        for hours in (2.0, 4.0):
            avoid_opts.append((-hours if sign > 0 else 0.0, hours))
            avoid_opts.append((-hours - 2.0 if sign > 0 else 2.0, hours))
        shifts = [previous_shift]
        if day.kind == "preparation":
            step = self.trip.max_shift_h_per_day
            shifts = sorted({previous_shift - sign * step, previous_shift - sign * step / 2, previous_shift})
        return [DayChoice(b[0], b[1], b[2], a[0], a[1], s) for b in bright_opts for a in avoid_opts for s in shifts]

    def reference_candidates(self, day: TripDay, strategy: Strategy, previous_shift: float) -> list[DayChoice]:
        """The brute-force reference's choices for a day: no light, or one bright-light window of
        each length in ``REFERENCE_WINDOW_HOURS`` lying anywhere in the anchor's bright-light lobe
        (:func:`lobe`) on a ``REFERENCE_START_STEP_H`` grid, from a light box or (when allowed)
        daylight; no avoidance and no sleep shift.  ``build`` fits each to sleep, flights, busy
        hours, the sun and the daily caps, as for every plan."""
        first, last = (0.0, LOBE_H) if strategy == "advance" else (-LOBE_H, 0.0)
        sources = ("light box", "daylight") if self.trip.light.daylight else ("light box",)
        options = [DayChoice(sleep_shift_h=previous_shift)]
        for hours in REFERENCE_WINDOW_HOURS:
            starts = np.arange(first, last - hours + REFERENCE_START_STEP_H / 2, REFERENCE_START_STEP_H)
            options += [DayChoice(float(start), hours, source, sleep_shift_h=previous_shift)
                        for source in sources for start in starts]
        return options

    def greedy(self, strategy: Strategy,
               candidates: Callable[[TripDay, Strategy, float], list[DayChoice]] | None = None,
               ) -> tuple[list[DayChoice], list[datetime | None], Outcome]:
        """Day-by-day search with a one-day look-ahead (receding horizon).

        ``candidates(day, strategy, previous_shift)`` lists a day's choices; default the search's
        own (:meth:`_candidates`); :meth:`reference_candidates` gives the brute-force reference.
        Choices that build the same plan are simulated once.
        """
        candidates = candidates or self._candidates
        base = self.baseline()
        anchors = self._anchors(base)
        choices = [DayChoice() for _ in self.days]
        required = required_shift_h(self.trip, self.evaluator, strategy)
        arrival = self.evaluator.arrival_index()
        best_outcome = base
        for day in self.days:
            settled = best_outcome.reentrainment_days
            if settled is not None and day.index > arrival + settled:
                break  # every later day already holds the target: no more light is prescribed
            travel = self._choose_travel_sleep(day, strategy, choices, anchors, best_outcome, required, arrival)
            if travel is not None:
                choices, anchors, best_outcome = travel
            if anchors[day.index] is None:
                continue
            previous_shift = choices[day.index - 1].sleep_shift_h if day.index else 0.0
            options = candidates(day, strategy, previous_shift)
            plans = {}
            for option in options:
                trial = list(choices)
                travel_sleep = choices[day.index].travel_sleep
                trial[day.index] = option if option.travel_sleep == travel_sleep else replace(option, travel_sleep=travel_sleep)
                for later in range(day.index + 1, len(trial)):
                    if self.days[later].kind == "preparation":
                        trial[later] = DayChoice(sleep_shift_h=option.sleep_shift_h)
                plans.setdefault(self.build(trial, anchors, strategy), trial)   # first choice of each plan
            plans = [(trial, plan) for plan, trial in plans.items()]
            outcomes = self.evaluator.evaluate([p for _, p in plans])
            horizon = min(day.index + 1, len(self.days) - 1)
            scores = [self._remaining(o, horizon, strategy, required, arrival) + self._burden(o) for o in outcomes]
            pick = int(np.argmin(scores))
            choices = plans[pick][0]
            best_outcome = outcomes[pick]
            anchors = self._merge_anchors(anchors, self._anchors(best_outcome), day.index + 1)
        return choices, anchors, best_outcome

    def _choose_travel_sleep(self, day: TripDay, strategy: Strategy, choices: list[DayChoice], anchors: list,
                             best: Outcome, required: float, arrival: int) -> tuple | None:
        """Sleep on the day's flights and layovers for ``strategy``: each placement of
        :func:`planner.trips.travel_sleep.travel_sleep_options` (in the light-avoidance lobe of the
        predicted CBTmin, Khalsa et al. 2003, J Physiol 549:945) simulated with the plan so far, the one
        leaving the least shift still to do kept.  Returns (choices, anchors, outcome), or None when the
        day has no travel spot or nothing to place."""
        kept = _travel_choice(choices[:day.index])
        options = travel_sleep_options(self.trip, bed_sleep(self.trip, self._sleep_shifts(choices)), best.cbtmins,
                                       strategy, (day.start, day.end), kept)
        if not options:
            return None
        trials = []
        for option in options:
            trial = list(choices)
            trial[day.index] = replace(trial[day.index], travel_sleep=option)
            trials.append(trial)
        outcomes = self.evaluator.evaluate([self.build(trial, anchors, strategy) for trial in trials])
        horizon = min(day.index + 1, len(self.days) - 1)
        scores = [self._remaining(o, horizon, strategy, required, arrival) + self._burden(o) for o in outcomes]
        pick = int(np.argmin(scores))
        return trials[pick], self._merge_anchors(anchors, self._anchors(outcomes[pick]), day.index), outcomes[pick]

    @staticmethod
    def _merge_anchors(old, new, from_index):
        return list(old[:from_index]) + list(new[from_index:])

    def _remaining(self, outcome: Outcome, index: int, strategy: Strategy, required: float, arrival: int) -> float:
        """Shift still to do after day ``index`` in the strategy's direction [h], plus final errors."""
        error = float(outcome.day_errors_h[index])
        if not math.isfinite(error):
            return 24.0
        todo = (error if strategy == "advance" else -error) % HOURS_PER_DAY
        if todo > HOURS_PER_DAY - 3.0:
            todo = HOURS_PER_DAY - todo   # overshoot by a little counts as error, not as a whole turn
        return todo + 0.1 * outcome.score

    @staticmethod
    def _burden(outcome: Outcome) -> float:
        return BOX_MINUTE_PENALTY_DAYS * outcome.box_minutes

    def refine(self, strategy: Strategy, choices: list[DayChoice], anchors, seed: int = 0,
               maxiter: int = 12, popsize: int = 6,
               score_plans: Callable[[list[Plan]], np.ndarray] | None = None,
               init_spread: float = 0.15,
               extra_seeds: Sequence[Sequence[DayChoice]] = ()) -> tuple[list[DayChoice], Outcome]:
        """Differential evolution over every day's windows, seeded with ``choices``.

        ``score_plans`` scores a batch of plans (lower is better); default: the average
        person's :attr:`Outcome.score` (a population's robust score in :mod:`planner.trips.robust`).
        """
        sign = 1.0 if strategy == "advance" else -1.0
        active = [i for i, a in enumerate(anchors) if a is not None]
        bounds = []
        for _ in active:
            bounds += [(-RESPONSE_SIDE_H, RESPONSE_SIDE_H), (0.0, 2.0), (-RESPONSE_SIDE_H, RESPONSE_SIDE_H), (0.0, MAX_AVOIDANCE_H)]
        def encode(days):
            vector = []
            for i in active:
                c = days[i]
                vector += [c.bright_offset_h, c.bright_hours, c.avoid_offset_h, c.avoid_hours]
            return np.clip(np.asarray(vector, dtype=float), [b[0] for b in bounds], [b[1] for b in bounds])

        base_vector = encode(choices)

        def decode(vector):
            new = list(choices)
            values = vector.tolist()
            for k, i in enumerate(active):
                bo, bh, ao, ah = values[4 * k:4 * k + 4]
                c = choices[i]
                new[i] = DayChoice(bo, round(bh * 4) / 4, c.bright_source, ao, round(ah * 4) / 4, c.sleep_shift_h,
                                   c.travel_sleep)
            return new

        def objective(population):
            members = population.T
            plans = [self.build(decode(v), anchors, strategy) for v in members]
            if score_plans is not None:
                return np.asarray(score_plans(plans), dtype=float)
            return np.array([o.score for o in self.evaluator.evaluate(plans)])

        rng = np.random.default_rng(seed)
        count = max(5, popsize * len(bounds))
        count = min(count, 60)
        spread = np.array([b[1] - b[0] for b in bounds]) * init_spread   # of each range, around the seed
        init = np.clip(base_vector + rng.normal(size=(count, len(bounds))) * spread,
                       [b[0] for b in bounds], [b[1] for b in bounds])
        init[0] = base_vector
        for row, extra in enumerate(extra_seeds[:count - 1], start=1):   # other starting plans, e.g. variants
            init[row] = encode(extra)
        result = differential_evolution(objective, bounds, init=init, maxiter=maxiter, vectorized=True,
                                        updating="deferred", polish=False, seed=seed, tol=1e-6)
        refined = decode(result.x)
        outcome = self.evaluator.evaluate([self.build(refined, anchors, strategy)])[0]
        del sign
        return refined, outcome


def home_time_sleep(trip: Trip) -> list[tuple[datetime, datetime]]:
    """Sleep kept at home clock hours all trip long, around flights and busy hours.

    Each night is the home habit on the home clock.  Staying on home time means sleeping
    on a flight that falls in the home night, so a flight only takes out the hours of
    getting to the airport and taking off (``WAKE_BEFORE_DEPARTURE_H`` before to
    ``IN_FLIGHT_SETTLE_H`` after departure) and of landing (``IN_FLIGHT_SETTLE_H``
    around arrival); busy hours are cut out as well, and pieces shorter than an hour dropped.
    """
    first = trip.start.astimezone(trip.home.zone).date() - timedelta(days=1)
    last = trip.end.astimezone(trip.home.zone).date()
    nights = [night_of(trip.home, first + timedelta(days=k)) for k in range((last - first).days + 1)]
    settle = timedelta(hours=IN_FLIGHT_SETTLE_H)
    taken = [(b.start, b.end) for b in trip.busy]
    for flight in trip.flights:
        taken.append((flight.depart - timedelta(hours=WAKE_BEFORE_DEPARTURE_H), flight.depart + settle))
        taken.append((flight.arrive - settle, flight.arrive + settle))
    kept = []
    for bed, wake in nights:
        bed, wake = max(bed, trip.start), min(wake, trip.end)
        for a, b in free_segments(bed, wake, sorted(taken)):
            if b - a >= timedelta(hours=1):
                kept.append((a, b))
    return kept


@dataclass(frozen=True)
class StrategyResult:
    """The best plan found for one strategy ("home": staying on home time)."""

    strategy: Strategy | Literal["home"]
    outcome: Outcome
    greedy_score: float
    refined: bool
    required_shift_h: float
    #: The day choices and anchors the plan was built from (a start for further searches).
    choices: tuple = ()
    anchors: tuple = ()
    #: Where the plan came from: "search" (greedy or refined) or "reference" (brute force).
    origin: str = "search"
    #: The brute-force reference plan at the validated step (None when it was not run).
    reference: Outcome | None = None


@dataclass(frozen=True)
class TripPlanResult:
    """Outcome of :func:`plan_trip`.

    Attributes
    ----------
    success : bool
        True when the recommended plan re-entrains within the trip.
    message : str
        Plain statement of the result, including a shortfall when the target is not reached.
    strategy : str
        The recommended strategy: "advance", "delay", or "home" (stay on home time; short trips
        back home with ``strategy="auto"``, see :func:`plan_trip`).
    recommended : StrategyResult
    alternatives : dict of StrategyResult
        Every strategy evaluated, by name (the recommended one among them).
    baseline : Outcome
    reason : str
        Why the recommended strategy was chosen.
    simulated : int
        Schedules simulated in the search.
    citations : list of str
    """

    success: bool
    message: str
    strategy: Strategy | Literal["home"]
    recommended: StrategyResult
    alternatives: dict
    baseline: Outcome
    reason: str
    simulated: int
    citations: list


def _clipped_to_lobes(windows: Sequence[Window], cbtmins: Sequence[datetime], kind: Literal["bright", "avoid"],
                      strategy: Strategy) -> tuple[Window, ...]:
    """Each window cut to its lobe of the nearest simulated CBTmin; pieces under ``MIN_WINDOW_MINUTES`` dropped."""
    kept = []
    for window in windows:
        anchor = nearest_cbtmin(cbtmins, window.start + (window.end - window.start) / 2)
        start, end = window.start, window.end
        if anchor is not None:
            lo, hi = lobe(anchor, kind, strategy)
            # a cut at a simulated CBTmin falls between minutes: move it inward to a whole minute, so the
            # window stays in its lobe and every rendering (table, JSON, calendar) shows the same clock time
            if lo > start:
                start = _whole_minute(lo, up=True)
            if hi < end:
                end = _whole_minute(hi, up=False)
        if hours_between(start, end) * 60.0 >= MIN_WINDOW_MINUTES - 1e-6:
            kept.append(window if (start, end) == (window.start, window.end)
                        else Window(start, end, window.lux, window.source))
    return tuple(kept)


def keep_to_lobes(evaluator: Evaluator, outcome: Outcome, strategy: Strategy) -> Outcome:
    """The plan of ``outcome`` with every window in its lobe of the plan's own simulated CBTmin.

    The search places windows around a *predicted* CBTmin; the plan it settles on moves CBTmin,
    so a window can end up on the wrong side of it, where bright light would push the clock the
    other way.  Windows are cut to their lobe (:func:`lobe`) of the nearest simulated CBTmin and
    the plan simulated again, until nothing changes (``LOBE_ROUNDS`` at most).
    """
    for _ in range(LOBE_ROUNDS):
        plan = outcome.plan
        bright = _clipped_to_lobes(plan.bright, outcome.cbtmins, "bright", strategy)
        avoid = _clipped_to_lobes(plan.avoid, outcome.cbtmins, "avoid", strategy)
        if bright == plan.bright and avoid == plan.avoid:
            break
        outcome = evaluator.evaluate([Plan(plan.sleep, bright, avoid)], final=True)[0]
    return outcome


def plan_strategy(planner: TripPlanner, strategy: Strategy, *, seed: int = 0) -> StrategyResult:
    """Greedy plan for one strategy, its global refinement, and the brute-force reference
    (:meth:`TripPlanner.reference_candidates`), all three simulated at the validated step; the
    plan re-entraining soonest wins, then the lower score, so the search never does worse than
    the reference. The winner's windows are then kept in their lobes of its own simulated CBTmin
    (:func:`keep_to_lobes`)."""
    choices, anchors, greedy_outcome = planner.greedy(strategy)
    refined_choices, refined_outcome = planner.refine(strategy, choices, anchors, seed=seed)
    better = refined_outcome.score < greedy_outcome.score - 1e-9
    searched = (refined_choices, anchors, refined_outcome) if better else (choices, anchors, greedy_outcome)
    reference = planner.greedy(strategy, planner.reference_candidates)
    finals = planner.evaluator.evaluate([searched[2].plan, reference[2].plan], final=True)   # the validated step
    finals = [keep_to_lobes(planner.evaluator, outcome, strategy) for outcome in finals]
    pick = min((0, 1), key=lambda i: (_days_or_inf(finals[i]), finals[i].score, i))
    picked_choices, picked_anchors, _ = (searched, reference)[pick]
    picked_choices, final = settle_travel_sleep(planner, strategy, picked_choices, picked_anchors, finals[pick])
    return StrategyResult(strategy, final, greedy_outcome.score, better,
                          required_shift_h(planner.trip, planner.evaluator, strategy),
                          tuple(picked_choices), tuple(picked_anchors), "reference" if pick else "search",
                          finals[1])


def settle_travel_sleep(planner: TripPlanner, strategy: Strategy, choices: Sequence[DayChoice], anchors: Sequence,
                        outcome: Outcome) -> tuple[list[DayChoice], Outcome]:
    """The plan with the best travel sleep for its own simulated CBTmin.

    The search chose each travel day's sleep on a CBTmin predicted before that day's light was known;
    here every placement of :func:`planner.trips.travel_sleep.travel_sleep_options` for the plan's own
    CBTmin (each in the light-avoidance lobe, Khalsa et al. 2003, J Physiol 549:945) is simulated over
    the whole trip at the validated step with the plan's windows, travel day by travel day, and the one
    re-entraining soonest (then the lower score) kept, windows held to their lobes (:func:`keep_to_lobes`).
    """
    choices, best = list(choices), outcome
    for day in planner.days:
        trials = []
        for option in travel_sleep_options(planner.trip, bed_sleep(planner.trip, planner._sleep_shifts(choices)),
                                           best.cbtmins, strategy, (day.start, day.end),
                                           _travel_choice(choices[:day.index])):
            trial = [replace(c, travel_sleep=None) if i > day.index else c for i, c in enumerate(choices)]
            trial[day.index] = replace(trial[day.index], travel_sleep=option)
            trials.append(trial)
        if not trials:
            continue
        found = planner.evaluator.evaluate([planner.build(t, anchors, strategy) for t in trials], final=True)
        k = min(range(len(found)), key=lambda i: (_days_or_inf(found[i]), found[i].score))
        kept = keep_to_lobes(planner.evaluator, found[k], strategy)
        placed = _travel_choice(choices)
        # a day the search left without its own placement (it stopped before the day) takes one now: the
        # lobe rule holds for every plan, as for its windows
        undecided = not set(trials[k][day.index].travel_sleep.spots) <= set(placed.spots if placed else ())
        if undecided or (_days_or_inf(kept), kept.score) < (_days_or_inf(best), best.score):
            choices, best = trials[k], kept
    return choices, best


def _days_or_inf(outcome: Outcome) -> float:
    return math.inf if outcome.reentrainment_days is None else float(outcome.reentrainment_days)


def moved(outcome: Outcome) -> str:
    """How the body clock actually moved over the time away, e.g. "advanced 8.9 h"."""
    if outcome.direction == "none":
        # signed as the JSON's net_phase_shift_h: + advance, - delay
        return f"moved under 1 h (net {-outcome.net_shift_h:+.1f} h, + advance)"
    return f"{'advanced' if outcome.direction == 'advance' else 'delayed'} {abs(outcome.net_shift_h):.1f} h"


def moved_as_named(result: StrategyResult) -> bool:
    """Whether an advance (delay) plan moved the clock earlier (later), as its name says."""
    return result.strategy not in ("advance", "delay") or result.outcome.direction == result.strategy


def _plan_words(result: StrategyResult) -> str:
    """A plan named by what it did: "the advance plan (clock advanced 8.9 h)", with a warning when
    the clock went the other way than the plan's name."""
    text = f"the {result.strategy} plan (clock {moved(result.outcome)}"
    if not moved_as_named(result):
        text += f", the other way than {'an' if result.strategy == 'advance' else 'a'} {result.strategy} intends"
    return text + ")"


def recommend(results: dict) -> tuple[Strategy, str]:
    """Choose between strategies: fewer days to re-entrain, then less light-box time; avoid
    a plan passing near low amplitude when the other is at most a day slower."""
    adv, dly = results.get("advance"), results.get("delay")
    if adv is None or dly is None:
        only = adv or dly
        return only.strategy, f"only the {only.strategy} strategy was requested"
    a_days, d_days = _days_or_inf(adv.outcome), _days_or_inf(dly.outcome)
    fast, slow = (adv, dly) if (a_days, adv.outcome.box_minutes) <= (d_days, dly.outcome.box_minutes) else (dly, adv)
    f_days, s_days = _days_or_inf(fast.outcome), _days_or_inf(slow.outcome)
    fast_words, slow_words = _plan_words(fast), _plan_words(slow)
    if fast.outcome.near_low_amplitude and not slow.outcome.near_low_amplitude and s_days - f_days <= 1:
        return slow.strategy, (f"{slow_words} is at most a day slower and, unlike {fast_words}, does not pass "
                               "near low circadian amplitude, where the response to light is unpredictable")
    if math.isinf(f_days):
        return fast.strategy, (f"neither plan re-entrains within the trip; {fast_words} ends closest "
                               "to the target")
    if f_days == s_days:
        return fast.strategy, (f"both re-entrain in {int(f_days)} days; {fast_words} needs less light-box time "
                               f"than {slow_words}")
    slower = "does not re-entrain within the trip" if math.isinf(s_days) else f"needs {int(s_days)}"
    return fast.strategy, (f"{fast_words} re-entrains in {int(f_days)} days after arrival; "
                           f"{slow_words} {slower}")


def plan_home_time(planner: TripPlanner) -> StrategyResult:
    """Stay on home time: home sleep hours kept all trip long (:func:`home_time_sleep`), no
    prescribed light; scored against the home clock."""
    outcome = planner.evaluator.evaluate([Plan(tuple(home_time_sleep(planner.trip)))], aim="home", final=True)[0]
    return StrategyResult("home", outcome, outcome.score, False, 0.0)


def _home_time_wanted(planner: TripPlanner, results: dict, chosen: str) -> str | None:
    """Why staying on home time should be offered for this trip; None when it should not.

    Only for a trip back home, and only when the time away is short (at most
    ``SHORT_STAY_DAYS`` full days) or shorter than re-entrainment would take.
    """
    if planner.evaluator.return_index() >= len(planner.days):
        return None
    away = planner.evaluator.days_away()
    days = results[chosen].outcome.reentrainment_days
    stay = f"{away} full day{'s' if away != 1 else ''} away"
    if days is None:
        return f"{stay}, and no plan re-entrains to the destination before the flight home"
    if away <= SHORT_STAY_DAYS:
        return f"only {stay} (re-entraining there takes {count_text(days, 'day')}, and then the clock has to come back)"
    if days > away:
        return f"{stay}, fewer than the {days} days re-entraining would take"
    return None


def _strategy_job(trip: Trip, model: ModelSpec, initial_state: np.ndarray | None, strategy: Strategy,
                  seed: int) -> tuple[StrategyResult, int]:
    """One strategy searched by a planner of its own: its result and the schedules it simulated."""
    planner = TripPlanner(trip, model, initial_state)
    return plan_strategy(planner, strategy, seed=seed), planner.evaluator.simulated


def plan_trip(trip: Trip, model: ModelSpec, strategy: Literal["auto", "advance", "delay"] = "auto",
              *, seed: int = 0, initial_state: np.ndarray | None = None, processes: int = 1) -> TripPlanResult:
    """Plan a trip: baseline, the requested strategies, and a recommendation.

    With ``strategy="auto"`` on a short trip back home (see :func:`_home_time_wanted`),
    staying on home time is evaluated too and recommended: the clock is held near home
    instead of being moved there and back.

    An infeasible target is not an error: the best plan found is returned with
    ``success`` False and a message saying how far it falls short.

    ``initial_state`` (shape (3,)) is the traveller's state at ``trip.start`` from evidence
    (:func:`planner.trips.evidence.starting_phase`); default entrained to the habitual home day.

    ``processes``: processes for the strategies' searches (:func:`planner.engine.workers.run_side_by_side`:
    1 = this process, 0 = one per core); the plans are the same either way.
    """
    planner = TripPlanner(trip, model, initial_state)
    baseline = planner.baseline()
    wanted = ("advance", "delay") if strategy == "auto" else (strategy,)
    if worker_count(len(wanted), processes) > 1:
        # The strategies share nothing but the trip: side by side on the machine's cores, each searched
        # by a planner of its own (planner.engine.workers); the plans are those of one planner in turn.
        searched = run_side_by_side(_strategy_job, [(trip, model, initial_state, name, seed) for name in wanted],
                                    processes)
        results = {name: result for name, (result, _) in zip(wanted, searched)}
        planner.evaluator.simulated += sum(count for _, count in searched)
    else:   # in this process, one planner in turn: its entrained targets and caches serve both
        results = {name: plan_strategy(planner, name, seed=seed) for name in wanted}
    chosen, reason = recommend(results)
    short = _home_time_wanted(planner, results, chosen) if strategy == "auto" else None
    if short is not None:
        results["home"] = plan_home_time(planner)
        chosen, reason = "home", (f"stay on home time: {short}; keeping home sleep hours holds the body clock "
                                  "near home time instead of moving it there and back")
    best = results[chosen]
    days = best.outcome.reentrainment_days
    if chosen == "home":
        drift = best.outcome.max_away_error_h
        success = math.isfinite(drift) and drift <= HOME_TIME_TOLERANCE_H
        held = f"within {drift:.1f} h" if math.isfinite(drift) else "(no CBTmin predicted)"
        message = (f"stay on home time: with home sleep hours kept, CBTmin stays {held} of its home phase "
                   "while away" + ("" if success else
                                   f", more than the {HOME_TIME_TOLERANCE_H:g} h the plan aims for"))
    elif days is None:
        back = planner.evaluator.return_index()
        last = [o.error_h for o in best.outcome.days[:back] if math.isfinite(o.error_h)]
        residual = abs(last[-1]) if last else math.nan
        when = "on the last day" if back >= len(planner.days) else "on the last day before the flight home"
        message = (f"the target is not reached within the trip: the best plan ({chosen}) still leaves "
                   f"CBTmin {residual:.1f} h from the destination's target {when}")
        success = False
    else:
        message = f"re-entrained {count_text(days, 'day')} after the arrival day with the {chosen} plan"
        success = True
    return TripPlanResult(success, message, chosen, best, results, baseline, reason,
                          planner.evaluator.simulated, [model.citation])
