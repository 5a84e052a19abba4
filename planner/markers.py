"""Phase markers read from simulated trajectories: CBTmin, DLMO, phase, re-entrainment.

CBTmin is read by the rule in the model file (``markers.cbtmin``): the minimum of
x plus an offset for the van der Pol models, or the crossing of ψ = π for
hannay2019.  Crossings are located between grid points by cubic Hermite
interpolation with the model's own derivatives, not by taking the lowest sample
(which would be off by up to half a step).  DLMO is CBTmin plus an offset or
the crossing of its own phase angle.

Times are hours since the result's epoch; a *clock phase* is an hour of the day
in [0, 24) in some fixed frame (UTC or a local offset).
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import Sequence

import numpy as np

from planner.integrate import SimulationResult
from planner.parameters import MarkerRule

HOURS_PER_DAY = 24.0
TWO_PI = 2.0 * math.pi


def phase_difference(a_h: np.ndarray | float, b_h: np.ndarray | float) -> np.ndarray:
    """Circular difference a − b of clock phases [h], in (−12, 12].

    Positive means ``a`` is later in the day than ``b``.
    """
    d = np.mod(np.asarray(a_h, dtype=float) - np.asarray(b_h, dtype=float), HOURS_PER_DAY)
    return np.where(d > HOURS_PER_DAY / 2.0, d - HOURS_PER_DAY, d)


def _hermite_minimum(t0, t1, x0, x1, d0, d1):
    """Minimum of the cubic Hermite interpolant on [t0, t1]; vectorised."""
    h = t1 - t0
    m0, m1 = d0 * h, d1 * h
    # p(s) = h00 x0 + h10 m0 + h01 x1 + h11 m1; p'(s) = a s² + b s + c
    a = 6.0 * x0 + 3.0 * m0 - 6.0 * x1 + 3.0 * m1
    b = -6.0 * x0 - 4.0 * m0 + 6.0 * x1 - 2.0 * m1
    c = m0
    s = np.full(np.shape(a), 0.5)
    quadratic = np.abs(a) > 1e-14
    disc = np.maximum(b * b - 4.0 * a * c, 0.0)
    root = np.sqrt(disc)
    with np.errstate(divide="ignore", invalid="ignore"):
        r1 = np.where(quadratic, (-b + root) / (2.0 * a), -c / np.where(b != 0, b, 1.0))
        r2 = np.where(quadratic, (-b - root) / (2.0 * a), r1)
    # The minimum is where p' rises through zero: p'' = 2as + b > 0.
    pick = np.where(2.0 * a * r1 + b > 0, r1, r2)
    s = np.where(np.isfinite(pick), np.clip(pick, 0.0, 1.0), s)
    return t0 + s * h


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


def x_minima(result: SimulationResult) -> list[np.ndarray]:
    """Times [h] of the minimum of the first state variable in each cycle, one array per schedule.

    Light switched on while x is falling can make x turn up for a while and fall
    again, leaving two local minima in one cycle; a cycle (one turn of the phase
    angle, counted from the maxima of x) keeps only its lowest minimum, and only
    minima on the lower half of the cycle count.
    """
    x = result.states[:, 0, :]
    dx = result.derivatives()[:, 0, :]
    rising = (dx[:-1] < 0) & (dx[1:] >= 0) & np.isfinite(dx[:-1]) & np.isfinite(dx[1:])
    rows, cols = np.nonzero(rising)
    t = result.times
    when = _hermite_minimum(t[rows], t[rows + 1], x[rows, cols], x[rows + 1, cols], dx[rows, cols], dx[rows + 1, cols])
    value = _hermite_value(t[rows], t[rows + 1], x[rows, cols], x[rows + 1, cols], dx[rows, cols], dx[rows + 1, cols], when)
    angle = np.unwrap(result.model.family.phase_angle(np.moveaxis(result.states[:, :2, :], 1, 0)), axis=0)
    at = angle[rows, cols]
    # A minimum of x lies on the lower half of the cycle (angle near π); a light edge can put
    # a kink minimum near the maximum of x, which is no CBTmin.
    lower_half = np.abs(np.mod(at, TWO_PI) - math.pi) < math.pi / 2
    rows, cols, when, value, at = rows[lower_half], cols[lower_half], when[lower_half], value[lower_half], at[lower_half]
    cycle = np.floor(at / TWO_PI)
    order = np.lexsort((value, cycle, cols))
    keep = np.ones(order.size, bool)
    keep[1:] = (cols[order][1:] != cols[order][:-1]) | (cycle[order][1:] != cycle[order][:-1])
    chosen = order[keep]
    return _per_column(when[chosen], cols[chosen], result.size)


def _hermite_value(t0, t1, y0, y1, d0, d1, when):
    h = t1 - t0
    s = np.where(h > 0, (when - t0) / np.where(h > 0, h, 1.0), 0.0)
    s2, s3 = s * s, s * s * s
    return ((2 * s3 - 3 * s2 + 1) * y0 + (s3 - 2 * s2 + s) * d0 * h + (-2 * s3 + 3 * s2) * y1 + (s3 - s2) * d1 * h)


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
        return [t + rule.offset_h for t in x_minima(result)]
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
