"""The traveller's starting phase from evidence: a measured DLMO, a light log, or habits.

In order of preference, when the scenario's ``[person]`` table gives them:

1. **Measured DLMO** (local home clock, optionally its date and SD).  Each simulated person is
   first entrained to the habitual home day; the phase is then moved so that the person's
   DLMO (by the model file's marker rule: CBTmin − 7 h for the van der Pol sets, ψ = 5π/12
   for hannay2019) falls on the measured clock time, and the habitual day is simulated from
   the measurement's date to the start of the plan.  Population runs add the assay's
   uncertainty, N(0, ``dlmo_sd_min``) per person.
2. **Light log** (:mod:`planner.world.lightlog`).  Each person starts entrained to the habitual home
   day at the local midnight before the first sample (the *assumed start*) and is driven
   through the log (gaps filled with the habitual day) and then the habitual day until the
   plan starts.  The longer the log, the less the assumed start matters.
3. **Habitual sleep and typical light** (the default): each person entrained to the habitual
   home day.

Moving a phase
--------------
A person whose clock runs ``δ`` hours later than the entrained one is, at local midnight, where
the entrained person was ``δ`` hours before midnight: :func:`shift_phase` simulates one habitual
day in 2-min steps and reads the oscillator state at 24 − δ h (linear interpolation), keeping
Process L's n of midnight (the light history is the same).

Uncertainty of the starting phase (population runs)
---------------------------------------------------
- DLMO: ``dlmo_sd_min``, default :data:`DLMO_SD_MIN` = 30 min.  This is this planner's
  assumption: with saliva sampled every 30 min, as is usual, DLMO is resolved to about the
  sampling interval (common practice, no single source).
- Habitual sleep (and a light log's assumed start): :data:`HABITUAL_PHASE_SD_H` = 1 h on top of
  the spread that τ and light sensitivity give.  This planner's assumption: people keeping the
  same sleep hours differ in the phase angle between DLMO and bedtime by about an hour (Burgess
  & Fogg 2008, PLoS One 3:e3055, from memory).
"""

from __future__ import annotations

from dataclasses import dataclass, field
from datetime import date, datetime, time, timedelta, timezone
from pathlib import Path
from typing import Literal

import numpy as np

from planner.engine.entrainment import DailyPattern, EntrainmentResult, place_pattern
from planner.engine.integrate import simulate
from planner.engine.markers import HOURS_PER_DAY, dlmo_times, phase_difference
from planner.engine.parameters import ModelSpec
from planner.engine.population import (
    Population,
    entrain_people,
    intrinsic_period_values,
)
from planner.errors import ComputationError, InputError
from planner.trips.model import Trip
from planner.world.light import LightSchedule, hours_between
from planner.world.lightlog import Finding, LightLog, log_schedule, read_light_log
from planner.world.localtime import clock_hours

#: Usual uncertainty of a salivary DLMO [min] (this planner's assumption; module docstring).
DLMO_SD_MIN = 30.0
#: Spread of the starting phase of people living the same habitual day [h] (this planner's
#: assumption; module docstring).
HABITUAL_PHASE_SD_H = 1.0
#: Step of the one-day run that moves a phase [min] (design choice: 2-min linear interpolation of
#: a 24-h cycle is far below a minute of phase error).
SHIFT_STEP_MINUTES = 2.0

Source = Literal["dlmo", "light_log", "habitual"]


@dataclass(frozen=True)
class PersonEvidence:
    """What is known about the traveller's own clock (the scenario's ``[person]`` table).

    Attributes
    ----------
    dlmo_h : float or None
        Measured DLMO [h of the local home clock].
    dlmo_date : date or None
        The evening the DLMO was measured; None = the evening before the plan starts.
    dlmo_sd_min : float
        Uncertainty of the DLMO [min].
    light_log : str or None
        Path of a light-log CSV.
    light_log_time_zone : str or None
        Zone of the log's time stamps that carry no UTC offset (default: the home zone).
    tau_h : float or None
        Measured intrinsic period [h].
    """

    dlmo_h: float | None = None
    dlmo_date: date | None = None
    dlmo_sd_min: float = DLMO_SD_MIN
    light_log: str | None = None
    light_log_time_zone: str | None = None
    tau_h: float | None = None

    @property
    def source(self) -> Source:
        if self.dlmo_h is not None:
            return "dlmo"
        if self.light_log is not None:
            return "light_log"
        return "habitual"


NO_EVIDENCE = PersonEvidence()


def person_model(model: ModelSpec, evidence: PersonEvidence) -> ModelSpec:
    """The model with the person's measured intrinsic period, when there is one."""
    if evidence.tau_h is None:
        return model
    return model.with_values(**{k: float(v) for k, v in intrinsic_period_values(model, evidence.tau_h).items()})


@dataclass(frozen=True)
class StartingPhase:
    """Where each simulated person's clock stands when the plan starts.

    Attributes
    ----------
    source : {"dlmo", "light_log", "habitual"}
    states : ndarray, shape (3, N)
        State at ``trip.start`` of each person (N = 1 for the average person).
    dlmo_clock_h : ndarray, shape (N,)
        Each person's DLMO on the plan's first day had they kept their habits [h of the home clock].
    phase_sd_h : float
        SD of the random phase offset added per person [h] (0 for the average person).
    description : str
        Plain statement of the evidence used.
    findings : tuple of Finding
        What the light-log reader reported (empty otherwise).
    """

    source: Source
    states: np.ndarray
    dlmo_clock_h: np.ndarray
    phase_sd_h: float
    description: str
    findings: tuple[Finding, ...] = field(default=())

    @property
    def state(self) -> np.ndarray:
        """The first person's state, shape (3,)."""
        return self.states[:, 0]


def _midnight(trip: Trip, day: date) -> datetime:
    return datetime.combine(day, time(0), trip.home.zone).astimezone(timezone.utc)


def _habitual_schedule(pattern: DailyPattern, trip: Trip, start: datetime, end: datetime) -> LightSchedule:
    """The habitual home day from the local midnight before ``start`` until after ``end``."""
    first = start.astimezone(trip.home.zone).date()
    days = (end.astimezone(trip.home.zone).date() - first).days + 2
    return pattern.schedule(datetime.combine(first, time(0), trip.home.zone), days)


def shift_phase(model: ModelSpec, pattern: DailyPattern, midnight_states: np.ndarray,
                shifts_h: np.ndarray) -> np.ndarray:
    """States at local midnight of people ``shifts_h`` later than the entrained ones [h] (module docstring).

    Parameters
    ----------
    model : ModelSpec
        N people (or one).
    pattern : DailyPattern
        The habitual day the states are entrained to.
    midnight_states : ndarray, shape (3, N)
        Entrained states at local midnight.
    shifts_h : ndarray, shape (N,)
        Wanted phase change, + later (delay), − earlier (advance) [h].
    """
    shifts = np.asarray(shifts_h, dtype=float).reshape(-1)
    states = np.asarray(midnight_states, dtype=float).reshape(3, -1)
    size = max(states.shape[1], shifts.size)
    states = np.broadcast_to(states, (3, size))
    shifts = np.broadcast_to(shifts, (size,))
    midnight = datetime(2001, 1, 1, tzinfo=timezone.utc)
    day = simulate(model, pattern.schedule(midnight, 1), states, step_minutes=SHIFT_STEP_MINUTES)
    if not day.success:
        raise ComputationError(day.message)
    when = np.mod(-shifts, HOURS_PER_DAY)
    out = states.copy()
    for k in range(2):
        out[k] = [np.interp(when[j], day.times, day.states[:, k, j]) for j in range(size)]
    return out


def _run(model: ModelSpec, schedule: LightSchedule, states: np.ndarray, start: datetime, end: datetime) -> np.ndarray:
    """The states at ``end`` after simulating ``schedule`` from ``start``."""
    if end <= start:
        return states
    result = simulate(model, schedule, states, start=start, end=end)
    if not result.success:
        raise ComputationError(result.message)
    return result.final_state.copy()


def starting_phase(trip: Trip, model: ModelSpec, evidence: PersonEvidence = NO_EVIDENCE, *,
                   population: Population | None = None, seed: int = 0,
                   log: LightLog | None = None, entrained: EntrainmentResult | None = None) -> StartingPhase:
    """The starting states at ``trip.start`` from the evidence (see the module docstring).

    Parameters
    ----------
    trip : Trip
    model : ModelSpec
        The average person's parameter set (used when ``population`` is None).
    evidence : PersonEvidence
    population : Population, optional
        People to start; each gets their own entrained state and a random phase offset
        (the evidence's uncertainty) drawn from ``seed``.
    log : LightLog, optional
        An already read light log (otherwise it is read from ``evidence.light_log``).
    entrained : EntrainmentResult, optional
        The same people already entrained to the habitual home day
        (``place_pattern(trip.home, trip.light)``), to save entraining them again.

    Raises
    ------
    InputError
        A DLMO date on or after the plan's first day, a light log that starts after the plan.
    """
    people = population.model if population is not None else person_model(model, evidence)
    size = population.size if population is not None else 1
    rng = np.random.default_rng(seed)
    pattern = place_pattern(trip.home, trip.light)
    steady = entrained if entrained is not None else entrain_people(people, pattern)
    states = np.broadcast_to(steady.state, (3, size)).copy()
    dlmo_entrained = np.broadcast_to(steady.dlmo_clock_h, (size,))
    source = evidence.source
    sd_h = 0.0
    findings: tuple[Finding, ...] = ()
    if source == "dlmo":
        sd_h = evidence.dlmo_sd_min / 60.0 if population is not None else 0.0
        measured = evidence.dlmo_h + sd_h * rng.standard_normal(size) if sd_h > 0 else np.full(size, evidence.dlmo_h)
        moved = shift_phase(people, pattern, states, phase_difference(measured, dlmo_entrained))
        measured_day = evidence.dlmo_date
        start_day = trip.start.astimezone(trip.home.zone).date()
        if measured_day is not None and measured_day >= start_day:
            raise InputError(f"the DLMO was measured on {measured_day.isoformat()}, not before the plan starts "
                             f"({start_day.isoformat()}); give a date before the first planned day",
                             field="person.dlmo_date")
        since = _midnight(trip, measured_day) if measured_day is not None else trip.start
        schedule = _habitual_schedule(pattern, trip, since, trip.start)
        final = _run(people, schedule, moved, since, trip.start)
        when = f" on {measured_day.isoformat()}" if measured_day else " just before the plan starts"
        description = (f"measured DLMO {_hhmm(evidence.dlmo_h)} (home clock){when}, then the habitual home day"
                       + (f"; assay uncertainty ±{evidence.dlmo_sd_min:g} min (SD)" if population is not None else ""))
    elif source == "light_log":
        log = log or read_light_log(evidence.light_log, evidence.light_log_time_zone or trip.home.zone)
        findings = log.findings
        if log.start >= trip.start:
            raise InputError(f"the light log starts {log.start.isoformat()}, after the plan starts "
                             f"({trip.start.isoformat()}); it must cover days before the plan", source=log.source,
                             field="person.light_log")
        origin = _midnight(trip, log.start.astimezone(trip.home.zone).date())
        if population is not None:
            sd_h = HABITUAL_PHASE_SD_H
            states = shift_phase(people, pattern, states, sd_h * rng.standard_normal(size))
        if log.end > trip.start:
            findings = findings + (Finding("outside_period", f"samples after {trip.start.isoformat()} (the start of "
                                                             "the plan) are not used"),)
        schedule = log_schedule(log, _habitual_schedule(pattern, trip, origin, trip.start))
        final = _run(people, schedule, states, origin, trip.start)
        days = hours_between(log.start, min(log.end, trip.start)) / HOURS_PER_DAY
        gaps = sum(1 for f in log.findings if f.kind == "gap")
        description = (f"light log {Path(log.source).name}: {days:.1f} days from {_home_wall(trip, log.start)}"
                       f"{f', {gaps} gap(s) filled with the habitual day' if gaps else ''}; assumed start: "
                       "entrained to the habitual home day")
    else:
        if population is not None:
            sd_h = HABITUAL_PHASE_SD_H
            states = shift_phase(people, pattern, states, sd_h * rng.standard_normal(size))
        final = states
        description = (f"habitual sleep {_hhmm(trip.home.bed_h)}–{_hhmm(trip.home.wake_h)} at home and typical "
                       "light (no DLMO or light log given)")
    dlmo_clock = _first_evening_dlmo(trip, people, pattern, final)
    return StartingPhase(source, final, dlmo_clock, sd_h, description, findings)


def _first_evening_dlmo(trip: Trip, people: ModelSpec, pattern: DailyPattern, states: np.ndarray) -> np.ndarray:
    """Each person's DLMO on the plan's first day had they kept their habits [h of the home clock]."""
    end = trip.start + timedelta(days=1, hours=6)
    ahead = simulate(people, _habitual_schedule(pattern, trip, trip.start, end), states, start=trip.start, end=end)
    if not ahead.success:
        raise ComputationError(ahead.message)
    out = np.full(states.shape[1], np.nan)
    for j, times in enumerate(dlmo_times(ahead)):
        if times.size:
            out[j] = clock_hours((trip.start + timedelta(hours=float(times[0]))).astimezone(trip.home.zone))
    return out


def _hhmm(hours: float) -> str:
    minutes = round(hours * 60) % (24 * 60)
    return f"{minutes // 60:02d}:{minutes % 60:02d}"


def _home_wall(trip: Trip, moment: datetime) -> str:
    return moment.astimezone(trip.home.zone).strftime("%Y-%m-%d %H:%M")
