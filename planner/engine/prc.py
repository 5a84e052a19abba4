"""Model phase response curves (PRC) by the standard pulse protocol.

Protocol (as in the human PRC studies, e.g. Khalsa et al. 2003, J Physiol
549:945): the person is entrained to a habitual day, then kept in constant dim
light (``background_lux``) from the wake time of day 0.  A single pulse of
``lux`` for ``duration_h`` is centred at a chosen phase relative to the
unpulsed control's CBTmin on day 1; the shift is the control's CBTmin minus the
pulsed CBTmin, several days after the last pulse ended (positive = advance,
negative = delay).  The control and every pulse phase are one batch of a
single integrator call.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from datetime import timedelta, timezone

import numpy as np

from planner.engine.entrainment import (
    DEFAULT_DAY,
    REFERENCE_MIDNIGHT,
    DailyPattern,
    entrain,
)
from planner.engine.integrate import simulate
from planner.engine.markers import HOURS_PER_DAY, cbtmin_times, phase_difference
from planner.engine.parameters import ModelSpec
from planner.errors import ComputationError, InputError
from planner.world.light import LightSchedule, ambient

#: Days between the end of the last pulse and the CBTmin that is measured, so
#: that transients have passed (Khalsa et al. 2003 measured after ~2 days; more is safer in a model).
DEFAULT_MEASURE_AFTER_DAYS = 3


@dataclass(frozen=True)
class PulseResponse:
    """Phase shifts of a batch of single light pulses.

    Attributes
    ----------
    phases_h : ndarray, shape (P,)
        Pulse centre relative to the control's CBTmin [h]; negative = before CBTmin.
    shifts_h : ndarray, shape (P,)
        Phase shift [h]; positive = advance, negative = delay.
    durations_h, lux : ndarray, shape (P,)
    background_lux : float
    reference_cbtmin_h : float
        The control CBTmin the phases refer to [h since the protocol's start].
    citation : str
        The model's citation.
    """

    phases_h: np.ndarray
    shifts_h: np.ndarray
    durations_h: np.ndarray
    lux: np.ndarray
    background_lux: float
    reference_cbtmin_h: float
    citation: str


def pulse_shifts(model: ModelSpec, phases_h, durations_h, lux, *, background_lux: float = 10.0,
                 pattern: DailyPattern = DEFAULT_DAY,
                 measure_after_days: int = DEFAULT_MEASURE_AFTER_DAYS) -> PulseResponse:
    """Phase shifts of single pulses; ``phases_h``, ``durations_h`` and ``lux`` broadcast to (P,).

    Raises
    ------
    InputError
        For a non-positive duration, negative lux or a phase outside [−12, 12].
    ComputationError
        When the model cannot be entrained or the integration fails.
    """
    phases, durations, levels = (np.atleast_1d(np.asarray(v, dtype=float)) for v in (phases_h, durations_h, lux))
    phases, durations, levels = np.broadcast_arrays(phases, durations, levels)
    if not np.all(np.isfinite(durations)) or np.any(durations <= 0) or np.any(durations > 16):
        raise InputError("pulse duration must be greater than 0 h and at most 16 h", field="hours")
    if not np.all(np.isfinite(levels)) or np.any(levels < 0):
        raise InputError("pulse lux must be a finite number >= 0", field="lux")
    if not (math.isfinite(background_lux) and background_lux >= 0):
        raise InputError(f"background lux must be a finite number >= 0, got {background_lux}", field="background")
    if not np.all(np.isfinite(phases)) or np.any(np.abs(phases) > 12):
        raise InputError("pulse phases must lie in [-12, 12] h around CBTmin", field="phases")
    if model_is_batch(model):
        raise InputError("a PRC is computed for one parameter set, not a batch of people", field="model")

    entrained = entrain(model, pattern)
    if not entrained.success:
        raise ComputationError(f"cannot start the PRC protocol: {entrained.message}")
    start = REFERENCE_MIDNIGHT.replace(tzinfo=timezone(timedelta(hours=entrained.utc_offset_h)))
    wake = start + timedelta(hours=pattern.sleep_end_h)

    def protocol(extra, days):
        # Day 0 keeps the habitual pattern until wake; constant dim light follows.
        end = start + timedelta(days=days)
        layers = pattern.layers(start, days) + [ambient(wake, end, background_lux, "dim constant light")] + extra
        return LightSchedule.from_layers(start, end, background_lux, layers)

    control_days = 3
    control = simulate(model, protocol([], control_days), entrained.state)
    if not control.success:
        raise ComputationError(control.message)
    day_one = [t for t in cbtmin_times(control)[0] if HOURS_PER_DAY <= t < 2 * HOURS_PER_DAY]
    if not day_one:
        raise ComputationError("the control shows no CBTmin on day 1 of the protocol")
    reference = day_one[0]
    centres = reference + phases
    last_end = float(np.max(centres + durations / 2.0))
    measure_from = last_end + measure_after_days * HOURS_PER_DAY
    days = int(math.ceil((measure_from + 1.5 * HOURS_PER_DAY) / HOURS_PER_DAY))
    schedules = [protocol([], days)]
    for centre, duration, level in zip(centres, durations, levels):
        pulse_start = start + timedelta(hours=float(centre - duration / 2.0))
        schedules.append(protocol([ambient(pulse_start, pulse_start + timedelta(hours=float(duration)),
                                           float(level), "light pulse")], days))
    result = simulate(model, schedules, entrained.state)
    if not result.success:
        raise ComputationError(result.message)
    markers = cbtmin_times(result)
    after = markers[0][markers[0] >= measure_from]
    if after.size == 0:
        raise ComputationError("the control shows no CBTmin in the measurement window")
    measured = after[0]
    shifts = np.empty(phases.size)
    for i, times in enumerate(markers[1:]):
        if times.size == 0:
            raise ComputationError(f"pulse {i} left no CBTmin to measure")
        nearest = times[np.argmin(np.abs(times - measured))]
        shifts[i] = float(phase_difference(measured, nearest))
    return PulseResponse(phases, shifts, durations, levels, float(background_lux), float(reference),
                         model.citation)


def model_is_batch(model: ModelSpec) -> bool:
    return any(np.ndim(v) >= 1 and np.size(v) > 1 for v in model.values.values())


@dataclass(frozen=True)
class PRCSummary:
    """Shape of a PRC.

    Attributes
    ----------
    max_advance_h, max_delay_h : float
        Largest advance (positive) and largest delay (negative) [h].
    max_advance_phase_h, max_delay_phase_h : float
        Where they occur [h from CBTmin].
    crossover_h : float or None
        Delay-to-advance zero crossing nearest CBTmin [h from CBTmin].
    peak_to_trough_h : float
    dead_zone_h : float
        Longest run of phases with |shift| below ``dead_zone_threshold_h`` [h].
    dead_zone_threshold_h : float
    """

    max_advance_h: float
    max_advance_phase_h: float
    max_delay_h: float
    max_delay_phase_h: float
    crossover_h: float | None
    peak_to_trough_h: float
    dead_zone_h: float
    dead_zone_threshold_h: float


def summarise(response: PulseResponse, dead_zone_threshold_h: float = 0.1) -> PRCSummary:
    """Maxima, crossover and dead zone of a PRC sampled at sorted phases."""
    order = np.argsort(response.phases_h)
    phases, shifts = response.phases_h[order], response.shifts_h[order]
    i_adv, i_del = int(np.argmax(shifts)), int(np.argmin(shifts))
    crossings = []
    for a in range(phases.size - 1):
        if shifts[a] < 0 <= shifts[a + 1]:
            frac = -shifts[a] / (shifts[a + 1] - shifts[a])
            crossings.append(phases[a] + frac * (phases[a + 1] - phases[a]))
    crossover = min(crossings, key=abs) if crossings else None
    small = np.abs(shifts) < dead_zone_threshold_h
    spacing = float(np.median(np.diff(phases))) if phases.size > 1 else 0.0
    longest = run = 0
    for flag in np.concatenate([small, small]):  # the PRC is circular
        run = run + 1 if flag else 0
        longest = max(longest, run)
    longest = min(longest, small.size)
    return PRCSummary(float(shifts[i_adv]), float(phases[i_adv]), float(shifts[i_del]), float(phases[i_del]),
                      None if crossover is None else float(crossover), float(shifts[i_adv] - shifts[i_del]),
                      longest * spacing, dead_zone_threshold_h)


def phase_response_curve(model: ModelSpec, *, duration_h: float = 6.7, lux: float = 10000.0,
                         background_lux: float = 10.0, step_h: float = 1.0,
                         pattern: DailyPattern = DEFAULT_DAY) -> PulseResponse:
    """PRC of one pulse type at phases −12 … 12 − ``step_h`` h from CBTmin (defaults: Khalsa et al. 2003's 6.7 h)."""
    if not (math.isfinite(step_h) and 0.1 <= step_h <= 6):
        raise InputError(f"phase step must lie in [0.1, 6] h, got {step_h}", field="step")
    phases = np.arange(-12.0, 12.0 - 1e-9, step_h)
    return pulse_shifts(model, phases, duration_h, lux, background_lux=background_lux, pattern=pattern)
