"""Phase markers read from simulated trajectories: CBTmin, DLMO, phase, re-entrainment.

CBTmin is read by the rule in the model file (``markers.cbtmin``): the minimum of
x plus an offset for the van der Pol models, or the crossing of ψ = π for
hannay2019.  The minimum of x is taken as the crossing of the phase angle
atan2(−xc, x) through π, which is exactly the minimum of x in darkness and is
not pinned to light edges (light switched on while x falls makes a kink minimum
of x).  Crossings are located between grid points by cubic Hermite
interpolation with the model's own derivatives, not by taking the nearest
sample (which would be off by up to half a step).  DLMO is CBTmin plus an offset or
the crossing of its own phase angle.

Times are hours since the result's epoch; a *clock phase* is an hour of the day
in [0, 24) in some fixed frame (UTC or a local offset).
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import Sequence

import numpy as np

from planner.engine.integrate import SimulationResult, _take_coefficients, fine_steps
from planner.engine.parameters import MarkerRule

HOURS_PER_DAY = 24.0
TWO_PI = 2.0 * math.pi


def phase_difference(a_h: np.ndarray | float, b_h: np.ndarray | float) -> np.ndarray:
    """Circular difference a − b of clock phases [h], in (−12, 12].

    Positive means ``a`` is later in the day than ``b``.
    """
    d = np.mod(np.asarray(a_h, dtype=float) - np.asarray(b_h, dtype=float), HOURS_PER_DAY)
    return np.where(d > HOURS_PER_DAY / 2.0, d - HOURS_PER_DAY, d)


def _hermite_crossing(t0, t1, y0, y1, d0, d1, target, iterations=6):
    """Time where the cubic Hermite interpolant crosses ``target`` on [t0, t1] (monotone); vectorised."""
    h = t1 - t0
    m0, m1 = d0 * h, d1 * h
    s = np.clip((target - y0) / np.where(y1 != y0, y1 - y0, 1.0), 0.0, 1.0)
    for _ in range(iterations):
        s2, s3 = s * s, s * s * s
        p = ((2 * s3 - 3 * s2 + 1) * y0 + (s3 - 2 * s2 + s) * m0 + (-2 * s3 + 3 * s2) * y1 + (s3 - s2) * m1)
        dp = ((6 * s2 - 6 * s) * y0 + (3 * s2 - 4 * s + 1) * m0 + (-6 * s2 + 6 * s) * y1 + (3 * s2 - 2 * s) * m1)
        s = np.clip(s - (p - target) / np.where(np.abs(dp) > 1e-12, dp, 1e-12), 0.0, 1.0)
    return t0 + s * h


def _per_column(times: np.ndarray, columns: np.ndarray, size: int) -> list[np.ndarray]:
    order = np.lexsort((times, columns))
    times, columns = times[order], columns[order]
    cuts = np.searchsorted(columns, np.arange(size + 1))
    return [times[cuts[j]:cuts[j + 1]] for j in range(size)]


def dark_x_minima(result: SimulationResult) -> list[np.ndarray]:
    """Times [h] where x would have its minimum with no light, one array per schedule.

    The upward zero crossings, with x < 0, of dx/dt evaluated with the drive B set to 0.
    Whenever no light reaches the eye (as during sleep) this is the minimum of x itself;
    under light it stays a smooth function of the state, whereas the raw minimum of x can
    be pinned to a light edge (light switched on while x falls makes a kink minimum).
    Located inside its grid step by re-integrating that step in fine sub-steps
    (:func:`planner.engine.integrate.fine_steps`) and interpolating linearly between them: under
    bright light the trajectory bends too sharply within a step for interpolation between
    grid points.
    """
    dark = _dark_x_rate(result)
    x = result.states[:, 0, :]
    rising = (dark[:-1] < 0) & (dark[1:] >= 0) & (x[:-1] < 0) & np.isfinite(dark[:-1]) & np.isfinite(dark[1:])
    rows, cols = np.nonzero(rising)
    t = result.times
    when = t[rows] - dark[rows, cols] * (t[rows + 1] - t[rows]) / (dark[rows + 1, cols] - dark[rows, cols])
    if result.light is not None and rows.size:
        when = _refined_dark_minima(result, rows, cols, when)
    return _per_column(when, cols, result.size)


def _dark_x_rate(result: SimulationResult) -> np.ndarray:
    """dx/dt with the drive set to 0 on the grid, shape (K + 1, N): the family's own cheap form when it
    has one (the x equation alone), else from :meth:`SimulationResult.derivatives`."""
    rate = getattr(result.model.family, "dark_x_rate", None)
    if rate is None:
        return result.derivatives(light_off=True)[:, 0, :]
    with np.errstate(over="ignore", invalid="ignore"):
        return rate(np.moveaxis(result.states[:, :2, :], 1, 0), result.model.coefficients)


def _refined_dark_minima(result: SimulationResult, rows, cols, fallback):
    times, path = fine_steps(result, rows, cols)
    family = result.model.family
    c = _take_coefficients(result.model.coefficients, cols)
    points = times.shape[0]
    rate = getattr(family, "dark_x_rate", None)
    with np.errstate(over="ignore", invalid="ignore"):
        if rate is not None:   # all fine points at once: the same numbers, one call
            dark = rate(np.moveaxis(path, 1, 0), c)
        else:
            dark = np.stack([family.derivatives(path[j], np.zeros(rows.size), c)[0] for j in range(points)])
    x = path[:, 0, :]
    rising = (dark[:-1] < 0) & (dark[1:] >= 0) & (x[:-1] < 0)
    found = rising.any(axis=0)
    first = np.argmax(rising, axis=0)
    idx = np.arange(rows.size)
    g0, g1 = dark[first, idx], dark[first + 1, idx]
    t0, t1 = times[first, idx], times[first + 1, idx]
    refined = t0 - g0 * (t1 - t0) / np.where(g1 != g0, g1 - g0, 1.0)
    return np.where(found, refined, fallback)


def angle_crossings(result: SimulationResult, angle_rad: float) -> list[np.ndarray]:
    """Times [h] at which the model's phase angle passes ``angle_rad`` (mod 2π), per schedule."""
    family = result.model.family
    oscillator = result.states[:, :2, :]
    angle = family.phase_angle(np.moveaxis(oscillator, 1, 0))
    unwrapped = np.unwrap(angle, axis=0)
    turns = np.floor((unwrapped - angle_rad) / TWO_PI)
    rows, cols = np.nonzero(turns[1:] > turns[:-1])
    t = result.times
    if family.marker_kind == "phase_angle":
        d = result.derivatives()[:, 1, :]
    else:
        d = _angle_rate(result, oscillator)
    target = angle_rad + TWO_PI * turns[rows + 1, cols]
    when = _hermite_crossing(t[rows], t[rows + 1], unwrapped[rows, cols], unwrapped[rows + 1, cols],
                             d[rows, cols], d[rows + 1, cols], target)
    return _per_column(when, cols, result.size)


def _angle_rate(result: SimulationResult, oscillator: np.ndarray) -> np.ndarray:
    # d/dt atan2(−xc, x) = (x·(−xc') + xc·x')/(x² + xc²)
    deriv = result.derivatives()
    x, xc = oscillator[:, 0, :], oscillator[:, 1, :]
    return (-x * deriv[:, 1, :] + xc * deriv[:, 0, :]) / (x * x + xc * xc)


def _apply_rule(result: SimulationResult, rule: MarkerRule, cbtmin: list[np.ndarray] | None) -> list[np.ndarray]:
    if rule.rule == "x_minimum":
        return [t + rule.offset_h for t in dark_x_minima(result)]
    if rule.rule == "phase_angle":
        return [t + rule.offset_h for t in angle_crossings(result, rule.angle_rad)]
    base = cbtmin if cbtmin is not None else cbtmin_times(result)
    return [t + rule.offset_h for t in base]


def cbtmin_times(result: SimulationResult) -> list[np.ndarray]:
    """CBTmin times [h since epoch] by the model's rule, one array per schedule."""
    return _apply_rule(result, result.model.file.markers.cbtmin, None)


def dlmo_times(result: SimulationResult, cbtmin: list[np.ndarray] | None = None) -> list[np.ndarray]:
    """DLMO times [h since epoch] by the model's rule, one array per schedule."""
    return _apply_rule(result, result.model.file.markers.dlmo, cbtmin)


def phase_at(result: SimulationResult, hours: np.ndarray | float) -> np.ndarray:
    """Circadian phase at ``hours`` [h since epoch]: hours after CBTmin on the model's own cycle.

    The phase angle (π at CBTmin for the model's rule, before its offset) is
    linearly interpolated on the grid and expressed in hours of a 24-h cycle,
    in [0, 24).  Shape ``(len(hours), N)``.
    """
    family = result.model.family
    angle = np.unwrap(family.phase_angle(np.moveaxis(result.states[:, :2, :], 1, 0)), axis=0)
    hours = np.atleast_1d(np.asarray(hours, dtype=float))
    rule = result.model.file.markers.cbtmin
    reference = rule.angle_rad if rule.rule == "phase_angle" else math.pi
    values = np.stack([np.interp(hours, result.times, angle[:, j]) for j in range(result.size)], axis=1)
    return np.mod((values - reference) / TWO_PI * HOURS_PER_DAY - rule.offset_h, HOURS_PER_DAY)


def clock_phase(times_h: np.ndarray, epoch_offset_h: float = 0.0) -> np.ndarray:
    """Hour of the day [0, 24) of times [h since epoch] when the epoch is ``epoch_offset_h`` past midnight."""
    return np.mod(np.asarray(times_h, dtype=float) + epoch_offset_h, HOURS_PER_DAY)


def daily_markers(marker_times_h: np.ndarray, day_starts_h: Sequence[float]) -> np.ndarray:
    """The first marker in each day window [start_i, start_i + 24) [h], NaN where a day has none."""
    marker_times_h = np.asarray(marker_times_h, dtype=float)
    out = np.full(len(day_starts_h), np.nan)
    for i, start in enumerate(day_starts_h):
        inside = marker_times_h[(marker_times_h >= start) & (marker_times_h < start + HOURS_PER_DAY)]
        if inside.size:
            out[i] = inside[0]
    return out


@dataclass(frozen=True)
class Reentrainment:
    """When daily markers settle on a target phase.

    Attributes
    ----------
    day : int or None
        Index of the first day from which every later daily marker is within
        ``tolerance_h`` of the target; None if that never happens.
    errors_h : ndarray
        Daily phase error (marker − target) in (−12, 12] [h].
    tolerance_h : float
    """

    day: int | None
    errors_h: np.ndarray
    tolerance_h: float

    @property
    def reentrained(self) -> bool:
        return self.day is not None


def reentrainment(daily_clock_phases_h: np.ndarray, target_clock_h: float | np.ndarray,
                  tolerance_h: float = 1.0) -> Reentrainment:
    """First day from which every later daily marker stays within ``tolerance_h`` of the target.

    Parameters
    ----------
    daily_clock_phases_h : ndarray, shape (D,)
        One marker clock phase per day [h of day]; NaN for a missing marker (never within tolerance).
    target_clock_h : float or ndarray of shape (D,)
        Target clock phase [h of day].
    tolerance_h : float
        Allowed |error| [h]; default 1 h.
    """
    if not tolerance_h > 0:
        raise ValueError("tolerance must be positive")
    errors = phase_difference(daily_clock_phases_h, target_clock_h)
    ok = np.abs(errors) <= tolerance_h
    ok &= np.isfinite(errors)
    if ok.size == 0 or not ok[-1]:
        return Reentrainment(None, errors, tolerance_h)
    failing = np.nonzero(~ok)[0]
    day = int(failing[-1] + 1) if failing.size else 0
    return Reentrainment(day, errors, tolerance_h)
