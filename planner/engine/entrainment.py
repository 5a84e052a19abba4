"""Steady states: entrainment to a daily pattern and the free-running period.

A person living the same day over and over settles at a fixed phase relative to
the day.  :func:`entrain` simulates week after week until CBTmin moves less
than a tolerance (default 1 min) from one day to the next, and reports how it
converged.  Days are local days at a fixed UTC offset, so no clock change
interrupts the search; the returned state belongs to local midnight.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field
from datetime import datetime, timedelta, timezone

import numpy as np

from planner.engine.integrate import model_batch_size, simulate
from planner.engine.markers import (
    HOURS_PER_DAY,
    TWO_PI,
    cbtmin_times,
    daily_markers,
    dlmo_times,
    phase_difference,
)
from planner.engine.parameters import ModelSpec
from planner.errors import ComputationError, InputError
from planner.world.light import LightLayer, LightOptions, LightSchedule, ambient, sleep
from planner.world.places import Place

#: Reference midnight of the entrainment runs; any date would do at a fixed offset.
REFERENCE_MIDNIGHT = datetime(2001, 1, 1)

#: Indoor illuminance assumed for an ordinary waking day [lux]; the planner's
#: default indoor level (typical room lighting, common practice, no single source).
DEFAULT_INDOOR_LUX = 150.0

#: Outdoor light of the default day: one hour at midday [lux]; a dull-daylight
#: level (common practice, no single source).
DEFAULT_DAYLIGHT_LUX = 3000.0

#: CBTmin lies roughly 2-3 h before habitual wake (from memory; only a starting guess).
CBTMIN_BEFORE_WAKE_GUESS_H = 2.5


@dataclass(frozen=True)
class DailyPattern:
    """A repeating day in local clock hours.

    Parameters
    ----------
    sleep_start_h, sleep_end_h : float
        Habitual bedtime and wake time [h of the local day]; bedtime may be
        later than wake (sleep across midnight).
    indoor_lux : float
        Light while awake and indoors [lux].
    daylight : tuple of (start_h, end_h, lux)
        Outdoor spells each day [h of the local day, lux].
    """

    sleep_start_h: float = 23.0
    sleep_end_h: float = 7.0
    indoor_lux: float = DEFAULT_INDOOR_LUX
    daylight: tuple[tuple[float, float, float], ...] = ((12.0, 13.0, DEFAULT_DAYLIGHT_LUX),)

    def __post_init__(self):
        for name in ("sleep_start_h", "sleep_end_h"):
            value = getattr(self, name)
            if not (math.isfinite(value) and 0.0 <= value < HOURS_PER_DAY):
                raise InputError(f"must be a clock hour in [0, 24), got {value}", field=name)
        if self.sleep_hours <= 0:
            raise InputError("bedtime and wake time must differ", field="sleep_end_h")
        if not (math.isfinite(self.indoor_lux) and self.indoor_lux >= 0):
            raise InputError(f"must be a finite number >= 0, got {self.indoor_lux}", field="indoor_lux")
        for start, end, lux in self.daylight:
            if not (0.0 <= start < end <= HOURS_PER_DAY) or not (math.isfinite(lux) and lux >= 0):
                raise InputError(f"daylight spell ({start}, {end}, {lux}) needs 0 <= start < end <= 24 "
                                 "and lux >= 0", field="daylight")

    @property
    def sleep_hours(self) -> float:
        return (self.sleep_end_h - self.sleep_start_h) % HOURS_PER_DAY

    @property
    def mid_sleep_h(self) -> float:
        return (self.sleep_start_h + self.sleep_hours / 2.0) % HOURS_PER_DAY

    def layers(self, midnight: datetime, days: int) -> list[LightLayer]:
        """Daylight and sleep layers for ``days`` days from local ``midnight`` (aware)."""
        layers: list[LightLayer] = []
        sleeps: list[LightLayer] = []
        for day in range(-1, days + 1):
            base = midnight + timedelta(days=day)
            for start, end, lux in self.daylight:
                layers.append(ambient(base + timedelta(hours=start), base + timedelta(hours=end), lux, "daylight"))
            bed = base + timedelta(hours=self.sleep_start_h)
            sleeps.append(sleep(bed, bed + timedelta(hours=self.sleep_hours)))
        return layers + sleeps

    def schedule(self, midnight: datetime, days: int) -> LightSchedule:
        """The pattern as a light schedule of ``days`` days from local ``midnight`` (aware)."""
        end = midnight + timedelta(days=days)
        return LightSchedule.from_layers(midnight, end, self.indoor_lux, self.layers(midnight, days))


DEFAULT_DAY = DailyPattern()


def guess_state(model: ModelSpec, cbtmin_clock_h: float, size: int) -> np.ndarray:
    """A state at local midnight whose CBTmin falls near ``cbtmin_clock_h``, shape (3, N)."""
    angle = math.pi - TWO_PI * cbtmin_clock_h / HOURS_PER_DAY
    oscillator = model.family.state_from_angle(np.full(size, angle), model.coefficients)
    return np.vstack([oscillator, np.zeros((1, size))])


@dataclass(frozen=True)
class EntrainmentResult:
    """Outcome of :func:`entrain`.

    Attributes
    ----------
    success : bool
        True when every person converged within ``max_days``.
    message : str
    days_simulated : int
    state : ndarray, shape (3, N)
        State at local midnight after the last simulated day.
    cbtmin_clock_h, dlmo_clock_h : ndarray, shape (N,)
        Entrained CBTmin and DLMO [h of the local day].
    last_change_min : ndarray, shape (N,)
        Last day-to-day change of CBTmin [min].
    history_h : ndarray, shape (D, N)
        Daily CBTmin clock phases over the whole run [h of the local day].
    utc_offset_h : float
    """

    success: bool
    message: str
    days_simulated: int
    state: np.ndarray
    cbtmin_clock_h: np.ndarray
    dlmo_clock_h: np.ndarray
    last_change_min: np.ndarray
    history_h: np.ndarray = field(repr=False)
    utc_offset_h: float = 0.0


def entrain(model: ModelSpec, pattern: DailyPattern = DEFAULT_DAY, *, utc_offset_h: float = 0.0,
            tolerance_min: float = 1.0, max_days: int = 150, chunk_days: int = 7,
            initial_state: np.ndarray | None = None) -> EntrainmentResult:
    """Entrain a model (one person or a batch of people) to a daily pattern.

    Parameters
    ----------
    model : ModelSpec
        Parameter set; per-person arrays make a batch.
    pattern : DailyPattern
        The repeated day.
    utc_offset_h : float
        UTC offset of the local clock [h]; only labels the returned state's epoch.
    tolerance_min : float
        Convergence: day-to-day CBTmin change below this for every person [min].
    max_days : int
        Give up after this many days (``success`` False).
    """
    if not tolerance_min > 0:
        raise InputError("tolerance must be positive", field="tolerance_min")
    size = model_batch_size(model)
    zone = timezone(timedelta(hours=utc_offset_h))
    midnight = REFERENCE_MIDNIGHT.replace(tzinfo=zone)
    schedule = pattern.schedule(midnight, chunk_days)
    if initial_state is None:
        guess = (pattern.sleep_end_h - CBTMIN_BEFORE_WAKE_GUESS_H) % HOURS_PER_DAY
        state = guess_state(model, guess, size)
    else:
        state = np.broadcast_to(np.asarray(initial_state, dtype=float).reshape(3, -1), (3, size)).copy()
    history = []
    previous_last = None
    days = 0
    change = np.full(size, np.inf)
    dlmo_clock = np.full(size, np.nan)
    day_starts = np.arange(chunk_days) * HOURS_PER_DAY
    while days < max_days:
        result = simulate(model, schedule, state)
        if not result.success:
            return _failed(result.message, days, state, history, size, utc_offset_h)
        cbt = cbtmin_times(result)
        dlmo = dlmo_times(result, cbt)
        daily = np.stack([daily_markers(t, day_starts) for t in cbt], axis=1) % HOURS_PER_DAY
        history.append(daily)
        chain = daily if previous_last is None else np.vstack([previous_last, daily])
        steps = np.abs(phase_difference(chain[1:], chain[:-1])) * 60.0
        change = steps[-1] if steps.size else np.full(size, np.inf)
        previous_last = daily[-1:]
        dlmo_clock = np.array([(t[-1] % HOURS_PER_DAY) if t.size else np.nan for t in dlmo])
        state = result.final_state.copy()
        days += chunk_days
        if np.all(np.isfinite(change)) and np.all(change < tolerance_min):
            break
    history_h = np.vstack(history)
    converged = bool(np.all(np.isfinite(change)) and np.all(change < tolerance_min))
    worst = float(np.nanmax(np.where(np.isfinite(change), change, np.nan))) if np.any(np.isfinite(change)) else math.inf
    message = (f"converged after {days} days: day-to-day CBTmin change {worst:.2f} min < {tolerance_min} min"
               if converged else
               f"not entrained after {days} days: day-to-day CBTmin change still {worst:.2f} min "
               f"(limit {tolerance_min} min); the pattern may be outside the range of entrainment")
    return EntrainmentResult(converged, message, days, state, history_h[-1].copy(), dlmo_clock,
                             change, history_h, utc_offset_h)


def _failed(message, days, state, history, size, utc_offset_h) -> EntrainmentResult:
    history_h = np.vstack(history) if history else np.full((0, size), np.nan)
    nan = np.full(size, np.nan)
    return EntrainmentResult(False, message, days, state, nan, nan, nan, history_h, utc_offset_h)


@dataclass(frozen=True)
class FreeRunResult:
    """Free-running period under constant light.

    Attributes
    ----------
    period_h : ndarray, shape (N,)
        Mean CBTmin-to-CBTmin interval [h] (least-squares slope over the measured cycles).
    cycles : int
        Cycles measured (after a transient that is discarded).
    lux : float
    """

    period_h: np.ndarray
    cycles: int
    lux: float


def free_running_period(model: ModelSpec, lux: float = 0.0, *, transient_days: int = 10,
                        measure_days: int = 20) -> FreeRunResult:
    """Free-running period under constant ``lux`` [lux], from CBTmin times."""
    if not (math.isfinite(lux) and lux >= 0):
        raise InputError(f"lux must be a finite number >= 0, got {lux}", field="lux")
    size = model_batch_size(model)
    start = REFERENCE_MIDNIGHT.replace(tzinfo=timezone.utc)
    days = transient_days + measure_days
    schedule = LightSchedule.constant(start, start + timedelta(days=days), lux)
    result = simulate(model, schedule, guess_state(model, 4.0, size))
    if not result.success:
        raise ComputationError(result.message)
    periods = []
    cycles = 0
    for times in cbtmin_times(result):
        times = times[times >= transient_days * HOURS_PER_DAY]
        if times.size < 3:
            periods.append(math.nan)
            continue
        index = np.arange(times.size)
        periods.append(float(np.polyfit(index, times, 1)[0]))
        cycles = max(cycles, times.size - 1)
    return FreeRunResult(np.asarray(periods), cycles, float(lux))


#: Ordinary outdoor time of the no-plan day, centred on local noon [h] (invented default).
BASELINE_OUTDOOR_H = 1.0


def place_pattern(place: Place, light: LightOptions) -> DailyPattern:
    """The habitual day at a place: its sleep, indoor light and an hour of midday daylight."""
    half = BASELINE_OUTDOOR_H / 2
    return DailyPattern(place.bed_h, place.wake_h, light.indoor_lux, ((12.0 - half, 12.0 + half, light.daylight_lux),))
