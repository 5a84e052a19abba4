"""The published checks behind the tests, run for any model: literature value beside model value.

Each check rebuilds a published protocol with the planner's own machinery (the single-pulse PRC
protocol of :mod:`planner.engine.prc`, light schedules and the batch integrator) and reports what the
model predicts beside what was measured.  The tests in ``tests/`` assert bands around the same
numbers; ``phaseplan models validate`` prints them.  The night-work protocols (``smith2008``,
``santhi2008``) need the roster machinery and live in :mod:`planner.rosters.validation`.

Checks
------
``khalsa2003``   6.7-h ~10,000-lux pulse on a dim background: PRC peak-to-trough 5.02 h, max advance
                 about +2.0 h, max delay about −3.4 h (Khalsa et al. 2003, J Physiol 549:945).
``st_hilaire2012``  1-h ~9,000-lux pulse: peak-to-trough about 2.2 h, every shift under 1 h
                 (St Hilaire et al. 2012, J Physiol 590:3035; low confidence, from memory).
``zeitzer2000``  6.5-h exposure early in the biological night: half-maximal delay near 100 lux
                 (ED50 about 119 lux; Zeitzer et al. 2000, J Physiol 526:695; from memory).
``burgess2003``  3 days of sleep 1 h earlier each day with intermittent morning light (~5,000 lux):
                 DLMO advanced about 1.5 h (Burgess et al. 2003, J Biol Rhythms 18:318; Eastman et al.
                 2005, Sleep 28:33: 1.4-1.9 h).
``smith2008``    a week of nights with bright light early in the shift, dark glasses home, dark day
                 sleep and afternoon outdoor light: DLMO about 04:30 against 00:30 without
                 (Smith & Eastman 2008, Sleep 31:1639).
``santhi2008``   three nights 23:00-07:00 with light 23:00-03:00 and sleep 08:00-16:00 delayed DLMO
                 4.98 h; light 03:00-07:00 and sleep 14:00-22:00 advanced it 2.27 h (Santhi et al.
                 2008, J Biol Rhythms 23:341).
"""

from __future__ import annotations

from dataclasses import dataclass, field
from datetime import datetime, timedelta, timezone
from typing import Callable, Sequence

import numpy as np

from planner.engine.entrainment import DailyPattern, entrain
from planner.engine.integrate import simulate
from planner.engine.markers import cbtmin_times
from planner.engine.parameters import ModelSpec
from planner.engine.prc import phase_response_curve, pulse_shifts, summarise
from planner.errors import ComputationError, InputError
from planner.world.light import LightSchedule, ambient, light_box, sleep

UTC = timezone.utc
#: Dim light of a constant routine [lux] (Khalsa et al. 2003: 2-7 lux; a round figure).
DIM_LUX = 5.0
#: Zeitzer et al. 2000's brightest exposure was about 9,100 lux (from memory); 25 levels log-spaced from 1 lux.
ZEITZER_LUX = np.logspace(0, np.log10(9_100), 25)
#: The 6.5-h exposure was centred about 3.5 h before CBTmin (from memory).
ZEITZER_CENTRE_H = -3.5
#: Intermittent morning light of Eastman et al. 2005 (Sleep 28:33): about 5,000 lux, four 30-min pulses an hour apart.
GRADUAL_LUX = 5_000.0
#: Largest published 3-day gradual advance: 2.1 h with continuous bright light (Burgess et al. 2003).
PREPARATION_PUBLISHED_HIGH_H = 2.1
#: Above the top of the intermittent-light range, 1.9 h (Eastman et al. 2005), a model's preparation days
#: promise more than measured.
PREPARATION_OPTIMISTIC_ABOVE_H = 1.9


@dataclass(frozen=True)
class Check:
    """One published figure beside the model's.

    Attributes
    ----------
    key : str
        Which check (module docstring).
    quantity : str
        What is compared, in plain words, with its unit.
    published : float
    model : float
    low, high : float
        The band in which the model agrees (the band the tests hold) [same unit].
    source : str
    note : str
    """

    key: str
    quantity: str
    published: float
    model: float
    low: float
    high: float
    source: str
    note: str = ""

    @property
    def difference(self) -> float:
        return self.model - self.published

    @property
    def agrees(self) -> bool:
        return bool(np.isfinite(self.model) and self.low <= self.model <= self.high)


@dataclass(frozen=True)
class Validation:
    """Every check for one model (scipy-like result: ``success`` when all agree)."""

    model_id: str
    checks: list = field(default_factory=list)

    @property
    def success(self) -> bool:
        return all(c.agrees for c in self.checks)

    @property
    def agreeing(self) -> int:
        return sum(c.agrees for c in self.checks)


def _khalsa(model: ModelSpec) -> list[Check]:
    summary = summarise(phase_response_curve(model, duration_h=6.7, lux=10_000, background_lux=DIM_LUX))
    source = "Khalsa et al. 2003, J Physiol 549:945"
    return [Check("khalsa2003", "PRC peak-to-trough, 6.7-h pulse [h]", 5.02, summary.peak_to_trough_h, 2.0, 5.52,
                  source, "the van der Pol models are known to give a smaller type 1 curve"),
            Check("khalsa2003", "largest advance [h]", 2.0, summary.max_advance_h, 0.0, 2.5, source + " (from memory)"),
            Check("khalsa2003", "largest delay [h]", -3.4, summary.max_delay_h, -3.9, 0.0, source + " (from memory)")]


def _st_hilaire(model: ModelSpec) -> list[Check]:
    prc = phase_response_curve(model, duration_h=1.0, lux=9_000, background_lux=DIM_LUX, step_h=1.0)
    return [Check("st_hilaire2012", "largest shift of a 1-h pulse [h]", 1.0, float(np.max(np.abs(prc.shifts_h))),
                  0.0, 1.0, "St Hilaire et al. 2012, J Physiol 590:3035", "published: every shift under 1 h")]


def zeitzer_ed50(model: ModelSpec) -> float:
    """Illuminance of a 6.5-h exposure that gives half the largest delay [lux] (log interpolation)."""
    shifts = pulse_shifts(model, ZEITZER_CENTRE_H, 6.5, ZEITZER_LUX, background_lux=3).shifts_h
    half = shifts[-1] / 2.0
    below = np.nonzero(shifts < half)[0]
    if below.size == 0 or below[0] == 0:
        return float("nan")
    i = int(below[0])
    return float(np.exp(np.interp(half, [shifts[i], shifts[i - 1]],
                                  np.log([ZEITZER_LUX[i], ZEITZER_LUX[i - 1]]))))


def _zeitzer(model: ModelSpec) -> list[Check]:
    return [Check("zeitzer2000", "half-maximal delay (ED50) [lux]", 119.0, zeitzer_ed50(model), 30.0, 300.0,
                  "Zeitzer et al. 2000, J Physiol 526:695 (ED50 from memory)", "published: near 100 lux")]


def gradual_advance_h(model: ModelSpec, lux: float = GRADUAL_LUX) -> float:
    """CBTmin advance after 3 days of sleep 1 h earlier each day with intermittent morning light [h].

    The habitual day is 23:00-07:00 (entrained); on the three nights bedtime and wake move 1, 2 and 3 h
    earlier and each early waking is followed by four 30-min pulses of ``lux`` an hour apart (Eastman et
    al. 2005).  The advance is read from CBTmin on the morning after the third light session against
    the habitual day.
    """
    steady = entrain(model, DailyPattern(23.0, 7.0))
    if not steady.success:
        raise ComputationError(f"cannot entrain {model.id}: {steady.message}")
    start = datetime(2027, 10, 4, tzinfo=UTC)
    days = 6
    end = start + timedelta(days=days)

    def schedule(shifts_h: Sequence[float], pulses: bool) -> LightSchedule:
        layers = []
        for d in range(days):
            base = start + timedelta(days=d)
            layers.append(ambient(base + timedelta(hours=12), base + timedelta(hours=13), 3000.0, "daylight"))
        sleeps = []
        for d, shift in enumerate(shifts_h):
            bed = start + timedelta(days=d - 1, hours=23 + shift)
            wake = start + timedelta(days=d, hours=7 + shift)
            sleeps.append((bed, wake))
            if pulses and shift < 0 and lux > 0:
                layers += [light_box(wake + timedelta(hours=k), wake + timedelta(hours=k + 0.5), lux) for k in range(4)]
        layers += [sleep(a, b) for a, b in sleeps]
        return LightSchedule.from_layers(start, end, 150.0, layers)

    plan = [0.0, -1.0, -2.0, -3.0, -3.0, -3.0]
    result = simulate(model, [schedule([0.0] * days, False), schedule(plan, True)], steady.state[:, 0], start=start,
                      end=end)
    if not result.success:
        raise ComputationError(result.message)
    control, treated = cbtmin_times(result)
    # The CBTmin that falls on the morning after the third light session (day 4 here).
    window = (4 * 24.0 - 12.0, 4 * 24.0 + 12.0)
    pick = lambda marks: marks[(marks >= window[0]) & (marks < window[1])]  # noqa: E731
    a, b = pick(control), pick(treated)
    if a.size == 0 or b.size == 0:
        return float("nan")
    return float(a[0] - b[0])


def _burgess(model: ModelSpec) -> list[Check]:
    return [Check("burgess2003", "3-day gradual pre-flight advance [h]", 1.5, gradual_advance_h(model), 1.0,
                  PREPARATION_PUBLISHED_HIGH_H,
                  "Burgess et al. 2003, J Biol Rhythms 18:318 (1.5 h intermittent, 2.1 h continuous light); "
                  "Eastman et al. 2005, Sleep 28:33 (1.4-1.9 h)",
                  "above the published range, preparation-day predictions are optimistic")]


#: The checks of this module by key.
ENGINE_CHECKS: dict[str, Callable[[ModelSpec], list[Check]]] = {
    "khalsa2003": _khalsa, "st_hilaire2012": _st_hilaire, "zeitzer2000": _zeitzer, "burgess2003": _burgess,
}


def validate(model: ModelSpec, checks: Sequence[str] | None = None,
             registry: dict[str, Callable[[ModelSpec], list[Check]]] = ENGINE_CHECKS) -> Validation:
    """Run the published checks of ``registry`` (all, or those named) for one model."""
    names = list(registry) if checks is None else list(checks)
    unknown = [n for n in names if n not in registry]
    if unknown:
        raise InputError(f"unknown check(s) {', '.join(unknown)}; allowed: {', '.join(registry)}", field="--checks")
    return Validation(model.id, [c for name in names for c in registry[name](model)])


def optimistic_preparation(validation: Validation) -> bool:
    """Whether the model predicts more gradual pre-flight advance than published (1.9 h, the top of Eastman et
    al. 2005's range): its preparation-day predictions are then optimistic."""
    return any(c.key == "burgess2003" and np.isfinite(c.model) and c.model > PREPARATION_OPTIMISTIC_ABOVE_H
               for c in validation.checks)


def recommended_default(validations: Sequence[Validation]) -> tuple[str, str]:
    """The model agreeing with most checks (ties: the smaller summed relative error), and why."""
    def error(v: Validation) -> float:
        return float(sum(abs(c.difference) / max(abs(c.published), 1e-9) for c in v.checks if np.isfinite(c.model)))

    best = min(validations, key=lambda v: (-v.agreeing, error(v)))
    others = "; ".join(f"{v.model_id} {v.agreeing}/{len(v.checks)}" for v in validations if v is not best)
    return best.model_id, (f"{best.model_id} agrees with {best.agreeing} of {len(best.checks)} published checks "
                           f"(against {others})")


def preparation_note(preparation_days: int, model: ModelSpec) -> dict | None:
    """A warning for a plan with preparation days when the model over-predicts the gradual pre-flight advance.

    Returns None without preparation days or when the model's 3-day advance (:func:`gradual_advance_h`) lies
    within the published range; else the model's and the published advance and one line of text.
    """
    if preparation_days <= 0:
        return None
    advance = gradual_advance_h(model)
    if not np.isfinite(advance) or advance <= PREPARATION_OPTIMISTIC_ABOVE_H:
        return None
    return {"optimistic": True, "model_advance_h": round(advance, 2),
            "published_advance_h": [1.4, PREPARATION_OPTIMISTIC_ABOVE_H],
            "source": "Eastman et al. 2005, Sleep 28:33; Burgess et al. 2003, J Biol Rhythms 18:318",
            "text": (f"{model.id} predicts a {advance:.1f}-h advance from 3 days of gradual preparation where "
                     f"1.4-{PREPARATION_OPTIMISTIC_ABOVE_H:g} h was measured: the preparation days' phase "
                     "predictions are optimistic; expect to arrive less shifted than shown.")}
