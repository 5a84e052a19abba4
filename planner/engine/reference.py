"""Reference solution with :func:`scipy.integrate.solve_ivp` (DOP853), one schedule at a time.

Slow but tight: used to check the batch integrator's accuracy and speed.  The
full three-variable system (oscillator and Process L) is integrated piece by
piece of constant light, so no light edge falls inside a solver step, and
CBTmin is located by the solver's event detection on dense output.
"""

from __future__ import annotations

from dataclasses import dataclass
from datetime import datetime

import numpy as np
from scipy.integrate import solve_ivp

from planner.engine import process_l
from planner.engine.parameters import ModelSpec
from planner.engine.process_l import MINUTES_PER_HOUR
from planner.world.light import LightSchedule, hours_between


@dataclass(frozen=True)
class ReferenceResult:
    """Outcome of :func:`reference_solution`.

    Attributes
    ----------
    success : bool
    message : str
    final_state : ndarray, shape (3,)
    cbtmin_h : ndarray
        CBTmin times [h since ``start``] by the model's rule.
    evaluations : int
        Right-hand-side evaluations used.
    """

    success: bool
    message: str
    final_state: np.ndarray
    cbtmin_h: np.ndarray
    evaluations: int


def reference_solution(model: ModelSpec, schedule: LightSchedule, initial_state: np.ndarray, *,
                       start: datetime | None = None, end: datetime | None = None,
                       rtol: float = 1e-10, atol: float = 1e-12) -> ReferenceResult:
    """Integrate one schedule with DOP853 and return its CBTmin times."""
    family, c, pl = model.family, model.coefficients, model.process_l
    rule = model.file.markers.cbtmin
    start = start or schedule.start
    end = end or schedule.end
    span = hours_between(start, end)
    edges = schedule.relative_to(start)
    cuts = np.unique(np.clip(np.concatenate(([0.0], edges, [span])), 0.0, span))
    state = np.asarray(initial_state, dtype=float).reshape(3).copy()
    minima: list[float] = []
    evaluations = 0
    for a, b in zip(cuts[:-1], cuts[1:]):
        if b - a <= 0:
            continue
        lux = float(schedule.lux_at(np.array([0.5 * (a + b) - hours_between(start, schedule.epoch)]))[0])
        alpha = float(process_l.activation_rate(lux, pl))
        decay = float(pl.decay)
        gain = float(pl.G)

        def rhs(_t, y, alpha=alpha):
            osc = y[:2].reshape(2, 1)
            drive = np.array([gain * alpha * (1.0 - y[2])])
            d = family.derivatives(osc, drive, c)[:, 0]
            dn = MINUTES_PER_HOUR * (alpha * (1.0 - y[2]) - decay * y[2])
            return np.array([d[0], d[1], dn])

        if rule.rule == "x_minimum":
            # The planner's CBTmin for x: dx/dt with no light rising through 0 with x < 0 (x < 0 is
            # checked below).  The event function must stay continuous: a jump, such as returning a
            # constant while x >= 0, is itself reported as a rising crossing when light pushes x
            # back up through 0.
            def event(_t, y):
                return family.derivatives(y[:2].reshape(2, 1), np.zeros(1), c)[0, 0]
            event.direction = 1.0
        else:
            def event(_t, y, angle=rule.angle_rad):
                return np.sin(0.5 * (y[1] - angle))  # zero once per turn, rising through ψ = angle mod 2π
            event.direction = 0.0
        solution = solve_ivp(rhs, (a, b), state, method="DOP853", rtol=rtol, atol=atol, events=event)
        evaluations += solution.nfev
        if not solution.success:
            return ReferenceResult(False, solution.message, state, np.asarray(minima), evaluations)
        for t_event, y_event in zip(solution.t_events[0], solution.y_events[0]):
            if rule.rule == "phase_angle":
                # sin((ψ − θ)/2) vanishes at ψ = θ + 2πm for every integer m; keep rising ψ only.
                minima.append(float(t_event))
            elif a < t_event < b and y_event[0] < 0:
                minima.append(float(t_event))
        state = solution.y[:, -1]
    times = np.unique(np.round(np.asarray(minima), 9)) + rule.offset_h
    return ReferenceResult(True, "reference integration finished", state, times, evaluations)
