"""Sleepiness forecast: the three-process model of alertness driven by the simulated clock.

The three-process model (Åkerstedt & Folkard 1997, Chronobiol Int 14:115; parameter data in
``models/alertness/akerstedt1997.toml``) sums

- **Process S**, the homeostatic term: while awake ``S(t) = La + (S0 − La) e^(−r_w t)`` falls towards
  the lower asymptote ``La``; during sleep ``S(t) = Ha − (Ha − S0) e^(−r_s t)`` recovers towards the
  upper asymptote ``Ha``;
- **Process C**, the circadian term ``C = M cos(π (t − p) / 12)`` with acrophase ``p``;
- **Process W**, sleep inertia after waking, ``W = W0 e^(−r_i t)`` (Åkerstedt, Folkard & Portin 2004,
  Aviat Space Environ Med 75:A75),

into alertness on the model's scale (about 1-16), translated to the Karolinska Sleepiness Scale by
``KSS = a + b · alertness`` (Åkerstedt et al. 2004).  The model's own ultradian Process U (amplitude
0.5) is left out: it moves alertness by less than the rounding of the KSS.

Two choices of this planner:

- **Process C follows the simulated clock, not the wall clock.**  The published acrophase ``p`` is a
  clock hour for people sleeping about 23:00–07:00; it is carried as a lag after CBTmin, measured on
  the oscillator model's own entrained CBTmin for that sleep (:func:`acrophase_after_cbtmin`), and
  each moment's circadian hour is read between the simulated CBTmin before and after it (24
  circadian hours from one CBTmin to the next).  A clock that has moved to the day sleep after
  nights moves the alertness trough with it.
- **Process S follows the planned sleeps** (their length and timing); it starts from the steady
  state of the habitual day.

This is a population model of average sleepiness, not a fitness-for-duty test.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from datetime import timedelta
from functools import lru_cache
from typing import Sequence

import numpy as np

from planner.engine.entrainment import DailyPattern, entrain
from planner.errors import ComputationError
from planner.shipped import read_shipped_toml

HOURS_PER_DAY = 24.0
#: KSS 7, "sleepy, but no effort to stay awake", is where driving starts to suffer (lane drifting rises
#: steeply from KSS 7 upwards: Ingre et al. 2006, J Sleep Res 15:47; Åkerstedt et al. 2005, J Sleep
#: Res 14:17; from memory).
SLEEPY_KSS = 7.0
#: The Karolinska Sleepiness Scale runs from 1 (extremely alert) to 9 (very sleepy, fighting sleep)
#: (Åkerstedt & Gillberg 1990, Int J Neurosci 52:29).
KSS_MIN, KSS_MAX = 1.0, 9.0
#: KSS is reported to one decimal (the scale itself has whole steps); a forecast that reads 7.0 counts
#: as sleepy, so the number shown and the flag beside it always agree (a reporting choice).
KSS_REPORTED_DECIMALS = 1
#: Step of the alertness grid [h]: 10 min; Process S moves by under 0.1 alertness units in a step
#: awake and Process C by under 0.1 (a numerical choice).
GRID_STEP_H = 1.0 / 6.0
#: Days of the habitual day the steady state of Process S is taken from (S forgets its start
#: within two days: e^(−0.0353·16 − 0.381·8) < 0.03 per day).
STEADY_DAYS = 6
#: Batches up to this many columns keep the KSS along every shift (for charts); larger search batches do not.
PROFILE_MAX_COLUMNS = 8


def reads_sleepy(kss) -> np.ndarray:
    """Whether KSS, as reported to ``KSS_REPORTED_DECIMALS``, is ``SLEEPY_KSS`` or more."""
    return np.round(np.asarray(kss, dtype=float), KSS_REPORTED_DECIMALS) >= SLEEPY_KSS


@dataclass(frozen=True)
class AlertnessModel:
    """Parameters of the three-process model (``models/alertness/<id>.toml``)."""

    id: str
    citation: str
    doi: str
    lower_asymptote: float
    upper_asymptote: float
    wake_rate_per_h: float
    sleep_rate_per_h: float
    amplitude: float
    acrophase_h: float
    reference_bed_h: float
    reference_wake_h: float
    inertia_amplitude: float
    inertia_rate_per_h: float
    kss_intercept: float
    kss_slope: float

    def kss(self, alertness) -> np.ndarray:
        """Karolinska Sleepiness Scale from alertness (Åkerstedt et al. 2004), clipped to 1-9."""
        return np.clip(self.kss_intercept + self.kss_slope * np.asarray(alertness, dtype=float), KSS_MIN, KSS_MAX)

    def alertness_at_kss(self, kss: float) -> float:
        """The alertness that maps to a KSS value (the inverse of :meth:`kss`)."""
        return (kss - self.kss_intercept) / self.kss_slope


@lru_cache(maxsize=4)
def load_alertness_model(name: str = "akerstedt1997") -> AlertnessModel:
    """Read a shipped alertness parameter file."""
    data = read_shipped_toml("models/alertness", name, "alertness model")
    s, c, w, k = data["process_s"], data["process_c"], data["sleep_inertia"], data["kss"]
    return AlertnessModel(data["id"], data["citation"], data["doi"], float(s["lower_asymptote"]),
                          float(s["upper_asymptote"]), float(s["wake_rate_per_h"]), float(s["sleep_rate_per_h"]),
                          float(c["amplitude"]), float(c["acrophase_h"]), float(c["reference_bed_h"]),
                          float(c["reference_wake_h"]), float(w["amplitude"]), float(w["rate_per_h"]),
                          float(k["intercept"]), float(k["slope"]))


# --------------------------------------------------------------------------- the three processes

def process_s(asleep: np.ndarray, step_h: float, s0, model: AlertnessModel) -> np.ndarray:
    """Process S on a grid (Åkerstedt & Folkard 1997): exact exponential steps.

    Parameters
    ----------
    asleep : ndarray of bool, shape (K, P)
        Whether each of P people sleeps in each of K steps.
    step_h : float
        Step length [h].
    s0 : float or ndarray, shape (P,)
        S at the first grid point [alertness units].

    Returns
    -------
    ndarray, shape (K + 1, P)
        S at every grid point.
    """
    asleep = np.asarray(asleep, dtype=bool)
    wake_keep = math.exp(-model.wake_rate_per_h * step_h)
    sleep_keep = math.exp(-model.sleep_rate_per_h * step_h)
    out = np.empty((asleep.shape[0] + 1, asleep.shape[1]))
    out[0] = s0
    la, ha = model.lower_asymptote, model.upper_asymptote
    for k in range(asleep.shape[0]):
        s = out[k]
        out[k + 1] = np.where(asleep[k], ha - (ha - s) * sleep_keep, la + (s - la) * wake_keep)
    return out


def process_c(circadian_h, model: AlertnessModel, acrophase_after_cbtmin_h: float) -> np.ndarray:
    """Process C at circadian hours since CBTmin [h]: ``M cos(π (φ − p') / 12)``, p' the acrophase lag."""
    return model.amplitude * np.cos(math.pi * (np.asarray(circadian_h, dtype=float) - acrophase_after_cbtmin_h) / 12.0)


def sleep_inertia(hours_since_wake, model: AlertnessModel) -> np.ndarray:
    """Process W: ``W0 e^(−r t)`` hours after waking (Åkerstedt et al. 2004); 0 for unknown (NaN) times."""
    t = np.asarray(hours_since_wake, dtype=float)
    with np.errstate(over="ignore", invalid="ignore"):
        w = model.inertia_amplitude * np.exp(-model.inertia_rate_per_h * np.maximum(t, 0.0))
    return np.where(np.isfinite(t), w, 0.0)


def circadian_hours(times_h: np.ndarray, cbtmin_h: np.ndarray) -> np.ndarray:
    """Circadian hours since CBTmin at ``times_h`` for each person, read from their simulated CBTmin.

    Between two consecutive CBTmin the circadian hour runs linearly from 0 to 24; before the first
    and after the last it runs at 24 circadian hours per 24 h.

    Parameters
    ----------
    times_h : ndarray, shape (E,)
    cbtmin_h : ndarray, shape (N, M)
        Each person's CBTmin times, padded with NaN [h].

    Returns
    -------
    ndarray, shape (E, N)
        In [0, 24) [h]; NaN for a person without any CBTmin.
    """
    times_h = np.asarray(times_h, dtype=float)
    out = np.full((times_h.size, cbtmin_h.shape[0]), np.nan)
    marks = np.sort(np.where(np.isfinite(cbtmin_h), cbtmin_h, np.nan), axis=1)     # known marks first, in order
    counts = np.isfinite(marks).sum(axis=1)
    known = np.nonzero(counts)[0]
    if known.size == 0 or times_h.size == 0:
        return out
    marks, counts = marks[known], counts[known]
    # Every person at once, the arithmetic of numpy.interp(times_h, marks, 24·(0, 1, ...)) on each row:
    # the mark at or before each time, the slope to the next, and the ends held.
    t = times_h[None, :]
    first = marks[:, :1]
    last_index = (counts - 1)[:, None]
    last = np.take_along_axis(marks, last_index, axis=1)
    below = np.clip((marks[:, :, None] <= t[:, None, :]).sum(axis=1) - 1, 0, np.maximum(last_index - 1, 0))
    above = np.minimum(below + 1, last_index)
    x0, x1 = np.take_along_axis(marks, below, axis=1), np.take_along_axis(marks, above, axis=1)
    y0, y1 = below * HOURS_PER_DAY, above * HOURS_PER_DAY
    with np.errstate(divide="ignore", invalid="ignore"):
        slope = (y1 - y0) / (x1 - x0)
        inside = slope * (t - x0) + y0
        inside = np.where(np.isnan(inside), slope * (t - x1) + y1, inside)
    inside = np.where(t == x0, y0, inside)
    inside = np.where(t >= last, last_index * HOURS_PER_DAY, inside)
    inside = np.where(t < first, t - first, inside)
    inside = np.where(t > last, last_index * HOURS_PER_DAY + t - last, inside)
    out[:, known] = np.mod(inside, HOURS_PER_DAY).T
    return out


_LAGS: dict = {}


def acrophase_after_cbtmin(model, alertness: AlertnessModel | None = None) -> float:
    """Lag of the alertness peak after CBTmin [h] for an oscillator model.

    The three-process model's acrophase is a clock hour for people sleeping at the model's reference
    hours (23:00–07:00); the oscillator model entrained to that sleep (the default habitual day of
    :mod:`planner.engine.entrainment`) puts CBTmin at some clock hour, and the lag is the difference.
    """

    alertness = alertness or load_alertness_model()
    key = (model.id, model.path, tuple((k, np.asarray(v).tobytes()) for k, v in sorted(model.values.items())),
           alertness)
    if key not in _LAGS:
        _LAGS[key] = _acrophase_lag(model, alertness)
    return _LAGS[key]


def _acrophase_lag(model, alertness: AlertnessModel) -> float:
    pattern = DailyPattern(alertness.reference_bed_h, alertness.reference_wake_h)
    steady = entrain(model, pattern)
    if not steady.success:
        raise ComputationError(f"cannot entrain {model.id} to the alertness model's reference sleep: "
                               f"{steady.message}")
    cbtmin = float(np.nanmedian(steady.cbtmin_clock_h))
    return (alertness.acrophase_h - cbtmin) % HOURS_PER_DAY


def _asleep_mask(times_h: np.ndarray, starts: np.ndarray, ends: np.ndarray) -> np.ndarray:
    """Whether each step [t_k, t_k+1) is asleep, judged at its middle; shape (K,)."""
    middle = 0.5 * (times_h[:-1] + times_h[1:])
    if starts.size == 0:
        return np.zeros(middle.shape, dtype=bool)
    order = np.argsort(starts)
    starts, ends = starts[order], ends[order]
    index = np.searchsorted(starts, middle, side="right") - 1
    return (index >= 0) & (middle < ends[np.clip(index, 0, None)])


def _hours_since_wake(times_h: np.ndarray, ends: np.ndarray) -> np.ndarray:
    if ends.size == 0:
        return np.full(times_h.shape, np.nan)
    ends = np.sort(ends)
    index = np.searchsorted(ends, times_h, side="right") - 1
    return np.where(index >= 0, times_h - ends[np.clip(index, 0, None)], np.nan)


@lru_cache(maxsize=64)
def steady_s(bed_h: float, wake_h: float, clock_h: float, model: AlertnessModel) -> float:
    """Process S at clock hour ``clock_h`` for someone living the habitual day bed→wake (steady state)."""
    grid = np.arange(0.0, STEADY_DAYS * HOURS_PER_DAY + GRID_STEP_H / 2, GRID_STEP_H) + clock_h
    sleep_len = (wake_h - bed_h) % HOURS_PER_DAY
    starts = np.arange(-1, STEADY_DAYS + 1) * HOURS_PER_DAY + bed_h
    mask = _asleep_mask(grid, starts, starts + sleep_len)
    s = process_s(mask[:, None], GRID_STEP_H, model.upper_asymptote, model)
    return float(s[-1, 0])


@dataclass(frozen=True)
class PlanSleep:
    """Process S and hours since waking of P sleep plans on one grid (they do not depend on the clock)."""

    times_h: np.ndarray          # (K + 1,)
    s: np.ndarray                # (K + 1, P)
    since_wake_h: np.ndarray     # (K + 1, P)
    asleep: np.ndarray           # (K + 1, P) bool (the step starting at the point)

    def at(self, hours: np.ndarray, column_plan: np.ndarray) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
        """S, hours since waking and asleep at ``hours`` (E,) for columns following ``column_plan`` (N,)."""
        index = np.clip(np.round((np.asarray(hours) - self.times_h[0]) / GRID_STEP_H).astype(int), 0,
                        self.times_h.size - 1)
        return (self.s[index][:, column_plan], self.since_wake_h[index][:, column_plan],
                self.asleep[index][:, column_plan])


def plan_sleep(sleeps: Sequence[tuple[np.ndarray, np.ndarray]], span_h: float, s0: float,
               model: AlertnessModel) -> PlanSleep:
    """Process S for P plans given as (starts, ends) arrays of sleep [h since the epoch]."""
    times = np.arange(0.0, span_h + GRID_STEP_H, GRID_STEP_H)
    masks = np.stack([_asleep_mask(times, np.asarray(a, float), np.asarray(b, float)) for a, b in sleeps], axis=1)
    s = process_s(masks, GRID_STEP_H, s0, model)
    since = np.stack([_hours_since_wake(times, np.asarray(b, float)) for _, b in sleeps], axis=1)
    asleep = np.vstack([masks, masks[-1:]])
    return PlanSleep(times, s, since, asleep)


def alertness(plans: PlanSleep, column_plan: np.ndarray, hours: np.ndarray, cbtmin_h: np.ndarray,
              lag_h: float, model: AlertnessModel) -> np.ndarray:
    """Alertness S + C + W at ``hours`` (E,) for N columns, shape (E, N)."""
    s, since, _ = plans.at(hours, column_plan)
    c = process_c(circadian_hours(hours, cbtmin_h), model, lag_h)
    return s + c + sleep_inertia(since, model)


# --------------------------------------------------------------------------- shifts

@dataclass(frozen=True)
class ShiftSleepiness:
    """Sleepiness on each shift and on the drive home after it, for N workers (or plans) and W shifts.

    Attributes
    ----------
    lowest_alertness : ndarray, shape (N, W)
        Lowest alertness during the shift [alertness units].
    lowest_at_h : ndarray, shape (N, W)
        When it occurs [h since the simulation epoch].
    peak_kss : ndarray, shape (N, W)
        Highest KSS during the shift (the KSS of the lowest alertness).
    sleepy_hours : ndarray, shape (N, W)
        Hours of the shift at KSS ≥ 7 [h].
    drive_kss : ndarray, shape (N, W)
        Highest KSS on the way home after the shift (``commute_h`` from its end).
    drive_flag : ndarray of bool, shape (N, W)
        The way home reaches KSS ≥ 7.
    profiles : tuple of (ndarray (E,), ndarray (N, E))
        Per shift, the grid times [h since the epoch] and the KSS along the shift; kept only for small
        batches (at most :data:`PROFILE_MAX_COLUMNS` columns, e.g. the final plans), else empty.
    """

    lowest_alertness: np.ndarray
    lowest_at_h: np.ndarray
    peak_kss: np.ndarray
    sleepy_hours: np.ndarray
    drive_kss: np.ndarray
    drive_flag: np.ndarray
    profiles: tuple = ()

    def column(self, j: int) -> "ShiftSleepiness":
        pick = slice(j, j + 1)
        arrays = (getattr(self, f)[pick] for f in self.__dataclass_fields__ if f != "profiles")
        return ShiftSleepiness(*arrays, tuple((times, kss[pick]) for times, kss in self.profiles))

    def sleepy_hours_per_week(self, days: int) -> np.ndarray:
        """Hours at work at KSS ≥ 7 per 7 days, shape (N,)."""
        return self.sleepy_hours.sum(axis=1) * 7.0 / max(days, 1)


def shift_sleepiness(plans: PlanSleep, column_plan: np.ndarray, cbtmin_h: np.ndarray, lag_h: float,
                     work_starts_h: np.ndarray, work_ends_h: np.ndarray, commute_h: float,
                     model: AlertnessModel) -> ShiftSleepiness:
    """Sleepiness of N columns on W shifts (times in hours since the epoch)."""
    size, shifts = len(column_plan), len(work_starts_h)
    out = {name: np.full((size, shifts), np.nan) for name in ("lowest_alertness", "lowest_at_h", "peak_kss",
                                                              "sleepy_hours", "drive_kss")}
    profiles = []
    for w, (a, b) in enumerate(zip(work_starts_h, work_ends_h)):
        points = np.arange(a, b + 1e-9, GRID_STEP_H)
        level = alertness(plans, column_plan, points, cbtmin_h, lag_h, model)          # (E, N)
        if size <= PROFILE_MAX_COLUMNS:
            profiles.append((points, model.kss(level).T))
        lowest = np.nanargmin(np.where(np.isfinite(level), level, np.inf), axis=0)
        out["lowest_alertness"][:, w] = level[lowest, np.arange(size)]
        out["lowest_at_h"][:, w] = points[lowest]
        out["peak_kss"][:, w] = model.kss(out["lowest_alertness"][:, w])
        # Each point stands for one grid step of the shift (the last for what is left of it).
        weights = np.full(points.size, GRID_STEP_H)
        weights[-1] = max(b - points[-1], 0.0) if points.size > 1 else b - a
        out["sleepy_hours"][:, w] = (reads_sleepy(model.kss(level)) * weights[:, None]).sum(axis=0)
        drive = np.arange(b, b + commute_h + 1e-9, GRID_STEP_H) if commute_h > 0 else np.array([b])
        out["drive_kss"][:, w] = model.kss(alertness(plans, column_plan, drive, cbtmin_h, lag_h, model)).max(axis=0)
    return ShiftSleepiness(out["lowest_alertness"], out["lowest_at_h"], out["peak_kss"], out["sleepy_hours"],
                           out["drive_kss"], reads_sleepy(out["drive_kss"]), tuple(profiles))


# --------------------------------------------------------------------------- trips

@dataclass(frozen=True)
class SleepiestHour:
    """The awake hour of a day with the highest mean KSS (None when the day has no awake hour)."""

    start: object            # datetime (aware, UTC)
    end: object
    mean_kss: float
    peak_kss: float


def sleepiest_hours(sleeps: Sequence[tuple], cbtmins: Sequence, spans: Sequence[tuple], lag_h: float,
                    s0: float, model: AlertnessModel | None = None) -> list[SleepiestHour | None]:
    """For each (start, end) span, the awake hour with the highest mean KSS.

    Parameters
    ----------
    sleeps : sequence of (datetime, datetime)
        The planned sleep episodes (aware).
    cbtmins : sequence of datetime or None
        The simulated CBTmin of each day (None where there is none).
    spans : sequence of (datetime, datetime)
        The days to search (e.g. the travel and arrival days).
    lag_h : float
        Alertness peak after CBTmin (:func:`acrophase_after_cbtmin`) [h].
    s0 : float
        Process S at the first sleep's start (e.g. :func:`steady_s` of the habitual day).
    """
    model = model or load_alertness_model()
    marks = [m for m in cbtmins if m is not None]
    if not spans or not marks:
        return [None for _ in spans]
    epoch = min([a for a, _ in sleeps] + [a for a, _ in spans] + marks)
    hours = lambda t: (t - epoch).total_seconds() / 3600.0  # noqa: E731
    starts = np.array([hours(a) for a, _ in sleeps])
    ends = np.array([hours(b) for _, b in sleeps])
    span_h = max(hours(b) for _, b in spans) + 1.0
    plans = plan_sleep([(starts, ends)], span_h, s0, model)
    cbt = np.array([[hours(m) for m in marks]])
    out = []
    for a, b in spans:
        grid = np.arange(hours(a), hours(b) - 1.0 + 1e-9, GRID_STEP_H)
        if grid.size == 0:
            out.append(None)
            continue
        points = np.arange(hours(a), hours(b) + 1e-9, GRID_STEP_H)
        level = alertness(plans, np.array([0]), points, cbt, lag_h, model)[:, 0]
        _, _, asleep = plans.at(points, np.array([0]))
        kss = np.where(asleep[:, 0], np.nan, model.kss(level))
        per_hour = int(round(1.0 / GRID_STEP_H))
        best = None
        for k in range(points.size - per_hour):
            window = kss[k:k + per_hour + 1]
            if np.isnan(window).any():
                continue
            mean = float(window.mean())
            if best is None or mean > best[0]:
                best = (mean, k, float(window.max()))
        if best is None:
            out.append(None)
            continue
        start = epoch + timedelta(hours=float(points[best[1]]))
        out.append(SleepiestHour(start, start + timedelta(hours=1), best[0], best[2]))
    return out
