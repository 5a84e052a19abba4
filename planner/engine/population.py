"""Populations of simulated people: intrinsic periods drawn from a published distribution.

A population is one :class:`~planner.engine.parameters.ModelSpec` whose per-person parameters are
arrays of shape ``(N,)``, so that the batch integrator simulates every person in one call
(see :mod:`planner.engine.integrate`, shape contract ``(3, N)``).

References
----------
.. [1] Duffy JF, Cain SW, Chang AM, et al. (2011). Sex difference in the near-24-hour
   intrinsic period of the human circadian timing system. PNAS 108(Suppl 3):15602-15608.
   doi:10.1073/pnas.1010666108 -- intrinsic period 24.15 ± 0.20 h (mean ± SD, n = 157).
.. [2] Phillips AJK, Vidafar P, Burns AC, et al. (2019). High sensitivity and interindividual
   variability in the response of the human circadian system to evening light. PNAS
   116(24):12019-12024 -- individual light sensitivity (melatonin suppression) varied more than
   50-fold (from memory).

Light sensitivity
-----------------
Each person's Process L activation scale α0 is the model's value times a lognormal factor
exp(σ·z), z standard normal, with σ = ``LIGHT_SENSITIVITY_SD_LN`` = 0.5 by default, so the
10th-90th percentile of the factor is 0.53-1.90.  **This spread is this planner's assumption**:
no published study gives a distribution of α0 itself.  It is deliberately narrower than the
>50-fold range of melatonin-suppression sensitivity of [2]_ (a different end point; with p = 0.5
a factor s on α0 acts like a factor s² on lux), and can be changed (``sensitivity_sd_ln``).

Batches of candidates × people
------------------------------
:func:`tiled` and :func:`simulate_population` lay C candidate schedules × N people out as
C·N batch columns, column j = candidate j // N, person j % N, so that one integrator call
scores every candidate over the whole population; :func:`population_success` summarises the
per-person outcomes of each candidate (probability of success, days p10/median/p90, fraction
moving the wrong way) and gives one robust score per candidate.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field
from datetime import datetime
from typing import Sequence

import numpy as np

from planner.engine.entrainment import DailyPattern, EntrainmentResult, entrain
from planner.engine.integrate import SimulationResult, default_step_h, integrate, model_batch_size
from planner.engine.process_l import MINUTES_PER_HOUR
from planner.engine.parameters import ModelSpec
from planner.errors import ComputationError, InputError
from planner.world.light import LightSchedule, sample_on_grid

#: Intrinsic period of sighted adults, mean and SD [h] (Duffy et al. 2011, PNAS 108:15602) [1]_.
DUFFY2011_TAU_MEAN_H = 24.15
DUFFY2011_TAU_SD_H = 0.20
DUFFY2011_CITATION = ("Duffy JF, Cain SW, Chang AM, Phillips AJK, Münch MY, Gronfier C, Wyatt JK, Dijk DJ, "
                      "Wright KP Jr, Czeisler CA (2011). Sex difference in the near-24-hour intrinsic period of the "
                      "human circadian timing system. PNAS 108(Suppl 3):15602-15608. doi:10.1073/pnas.1010666108")
#: The percentiles reported for a population: 10th, median, 90th (common practice for a spread).
REPORTED_PERCENTILES = (10.0, 50.0, 90.0)
#: SD of ln(α0 factor), the person-to-person light-sensitivity spread (this planner's assumption;
#: see the module docstring and [2]_).
LIGHT_SENSITIVITY_SD_LN = 0.5
#: Draws are clipped to this many SDs so that no simulated person is implausibly extreme
#: (a design choice of this planner).
CLIP_SD = 4.0


def intrinsic_period_values(model: ModelSpec, tau_h: np.ndarray | float) -> dict[str, np.ndarray]:
    """Parameter overrides that give a model the intrinsic period ``tau_h`` in darkness [h].

    van der Pol models (forger1999, jewett1999): ``tau_x`` is the dark period by construction
    (their period factor corrects for the damping term; Forger et al. 1999, Jewett et al. 1999).
    hannay2019: the dark phase velocity is ω0 + (K/2)·sin(β1)·(1 + R*⁴) on the dark limit cycle
    of amplitude R* (Hannay et al. 2019, eq. for dψ/dt with L = 0), so ω0 is set to
    2π/τ − (K/2)·sin(β1)·(1 + R*⁴).

    Parameters
    ----------
    model : ModelSpec
    tau_h : float or ndarray of shape (N,)
        Intrinsic period [h], each in (20, 28).
    """
    tau = np.asarray(tau_h, dtype=float)
    if not np.all(np.isfinite(tau)) or np.any((tau <= 20.0) | (tau >= 28.0)):
        raise InputError(f"intrinsic period must lie between 20 and 28 h, got {tau.min():g}..{tau.max():g}",
                         field="tau_h")
    if "tau_x" in model.values:
        return {"tau_x": tau}
    if "omega0" in model.values:
        c = model.coefficients
        r_star = model.family.steady_amplitude(c)
        return {"omega0": 2.0 * math.pi / tau - c.angular * (1.0 + r_star ** 4)}
    raise InputError(f"model {model.id} has no parameter that sets the intrinsic period", field="model")


@dataclass(frozen=True)
class Population:
    """N simulated people.

    Attributes
    ----------
    model : ModelSpec
        The parameter set with per-person arrays of shape (N,).
    tau_h : ndarray, shape (N,)
        Intrinsic period of each person [h].
    seed : int or None
        Seed the draw came from (None for given values).
    """

    model: ModelSpec
    tau_h: np.ndarray
    seed: int | None
    #: Factor on the model's α0 for each person (light sensitivity), shape (N,); None = all 1.
    alpha0_scale: np.ndarray | None = None

    @property
    def size(self) -> int:
        return int(self.tau_h.size)

    @property
    def sensitivity(self) -> np.ndarray:
        """Factor on α0 of each person, shape (N,) (ones when not drawn)."""
        return np.ones(self.size) if self.alpha0_scale is None else self.alpha0_scale

    def take(self, people: np.ndarray | slice) -> "Population":
        """The sub-population of some people (e.g. a chunk of a large population)."""
        tau = self.tau_h[people]
        scale = self.sensitivity[people]
        base = average_model(self.model)
        return Population(with_people(base, tau, scale), tau, self.seed, scale)


def average_model(model: ModelSpec) -> ModelSpec:
    """The model with every per-person array replaced by the file's own scalar value (the average person)."""
    scalars = {name: float(model.file.parameters[name].value) for name, v in model.values.items() if np.ndim(v) == 1}
    return model.with_values(**scalars) if scalars else model


def with_people(model: ModelSpec, tau_h: np.ndarray, alpha0_scale: np.ndarray | None = None) -> ModelSpec:
    """``model`` with per-person intrinsic periods [h] and α0 factors, arrays of shape (N,)."""
    values = intrinsic_period_values(model, tau_h)
    if alpha0_scale is not None:
        values["alpha0"] = np.asarray(model.values["alpha0"], dtype=float) * np.asarray(alpha0_scale, dtype=float)
    return model.with_values(**values)


def draw_population(model: ModelSpec, size: int, seed: int = 0, *, tau_mean_h: float = DUFFY2011_TAU_MEAN_H,
                    tau_sd_h: float = DUFFY2011_TAU_SD_H, sensitivity_sd_ln: float = 0.0) -> Population:
    """Draw ``size`` people reproducibly from ``seed``.

    Intrinsic periods are normal(``tau_mean_h``, ``tau_sd_h``), by default Duffy et al. (2011),
    24.15 ± 0.20 h [1]_.  With ``sensitivity_sd_ln`` > 0 each person's α0 is also scaled by a
    lognormal factor exp(σ·z) (see the module docstring; :data:`LIGHT_SENSITIVITY_SD_LN` is the
    planner's default for population runs).  Draws are clipped to ±4 SD so that no person falls
    outside the models' range of entrainment.  The periods are drawn first, so the same seed
    gives the same periods with or without sensitivities.
    """
    if not isinstance(size, (int, np.integer)) or isinstance(size, bool) or size < 1:
        raise InputError(f"population size must be a whole number >= 1, got {size!r}", field="people")
    if not tau_sd_h >= 0:
        raise InputError(f"SD of the intrinsic period must be >= 0, got {tau_sd_h}", field="tau_sd_h")
    if not (math.isfinite(sensitivity_sd_ln) and sensitivity_sd_ln >= 0):
        raise InputError(f"SD of ln(light sensitivity) must be >= 0, got {sensitivity_sd_ln}",
                         field="sensitivity_sd_ln")
    rng = np.random.default_rng(seed)
    tau = tau_mean_h + tau_sd_h * np.clip(rng.standard_normal(int(size)), -CLIP_SD, CLIP_SD)
    scale = None
    if sensitivity_sd_ln > 0:
        scale = np.exp(sensitivity_sd_ln * np.clip(rng.standard_normal(int(size)), -CLIP_SD, CLIP_SD))
    return Population(with_people(model, tau, scale), tau, seed, scale)


def spread(values: np.ndarray, axis: int = -1) -> dict[str, np.ndarray | float]:
    """10th percentile, median and 90th percentile of ``values`` along ``axis``, NaNs ignored."""
    values = np.asarray(values, dtype=float)
    if not np.any(np.isfinite(values)):   # nothing to summarise: NaN, without numpy's all-NaN warning
        shape = np.delete(np.shape(values), axis) if values.ndim > 1 else ()
        nothing = np.full(shape, np.nan) if shape else math.nan
        return {"p10": nothing, "median": nothing, "p90": nothing}
    low, mid, high = np.nanpercentile(values, REPORTED_PERCENTILES, axis=axis)
    return {"p10": low, "median": mid, "p90": high}


# --------------------------------------------------------------------------- candidates × people

def tiled(population: Population, candidates: int) -> ModelSpec:
    """The population's model with its per-person arrays repeated for ``candidates`` candidates.

    Column j of the batch is candidate ``j // N``, person ``j % N`` (N = population size).
    """
    if candidates < 1:
        raise InputError(f"need at least one candidate, got {candidates}", field="candidates")
    values = {name: np.tile(v, candidates) for name, v in population.model.values.items() if np.ndim(v) == 1}
    return population.model.with_values(**values) if values else population.model


def simulate_population(population: Population, schedules: Sequence[LightSchedule], initial_states: np.ndarray,
                        start: datetime, end: datetime, step_minutes: float | None = None) -> SimulationResult:
    """Simulate C candidate schedules for every person in one batch call.

    Parameters
    ----------
    population : Population
        N people.
    schedules : sequence of LightSchedule
        C candidate schedules (the same light for every person).
    initial_states : ndarray, shape (3,), (3, N) or (3, C·N)
        Start state; a (3, N) array gives each person their own state for every candidate.
    start, end : datetime
        Span to simulate.
    step_minutes : float, optional
        Integration step [min]; default the model's validated step.

    Returns
    -------
    SimulationResult
        C·N columns, column j = candidate j // N, person j % N.
    """
    count, size = len(schedules), population.size
    states = np.asarray(initial_states, dtype=float).reshape(3, -1)
    if states.shape[1] == size and count > 1:
        states = np.tile(states, (1, count))
    model = tiled(population, count)
    step_h = default_step_h(model) if step_minutes is None else step_minutes / MINUTES_PER_HOUR
    if not step_h > 0:
        raise InputError(f"step must be positive, got {step_minutes} min", field="step_minutes")
    if not schedules:
        raise InputError("no light schedules to simulate")
    # each candidate's light is sampled once and shared by its N columns
    light = sample_on_grid(schedules, start, end, step_h).each_repeated(size)
    return integrate(model, light, states)


@dataclass(frozen=True)
class PopulationSuccess:
    """Per-candidate summary of a population's outcomes (arrays of shape (C,)).

    Attributes
    ----------
    probability : ndarray
        Fraction of people who succeed by ``by_day`` (re-entrained, or whatever the caller's
        per-person success means).
    days_p10, days_median, days_p90 : ndarray
        Percentiles of the days to success [days]; people who never succeed count as +inf, so a
        percentile is inf when more than that share of people fail.
    wrong_direction : ndarray
        Fraction of people whose clock moved the unintended way.
    score : ndarray
        Robust score, lower is better (see :func:`population_success`).
    by_day : int
    """

    probability: np.ndarray
    days_p10: np.ndarray
    days_median: np.ndarray
    days_p90: np.ndarray
    wrong_direction: np.ndarray
    score: np.ndarray
    by_day: int
    per_person_days: np.ndarray = field(repr=False, default=None)


#: Weight of (1 − probability of success by the asked day) in the robust score [days]
#: (a design choice of this planner: a 10-point drop in probability costs as much as ~0.3 days).
MISS_PENALTY_DAYS = 3.0
#: Weight of the wrong-direction fraction in the robust score [days] (a design choice: moving
#: the long way round is worse than a slow re-entrainment, so it weighs more than a miss).
WRONG_DIRECTION_PENALTY_DAYS = 5.0


def population_success(days: np.ndarray, wrong_direction: np.ndarray, by_day: int, *,
                       person_scores: np.ndarray | None = None, never_days: float | None = None) -> PopulationSuccess:
    """Summarise the outcome of C candidates over N people.

    Parameters
    ----------
    days : ndarray, shape (C, N) or (N,)
        Days each person needs to succeed (e.g. to re-entrain); NaN or inf when never.
    wrong_direction : ndarray of bool, shape like ``days``
        Whether each person's clock moved the unintended way.
    by_day : int
        Success counts when ``days <= by_day``.
    person_scores : ndarray, optional
        Each person's own score of the candidate (lower is better, in days); its mean is the
        base of the robust score.  Default: the days, with ``never_days`` for failures.
    never_days : float, optional
        Days counted for a person who never succeeds (default ``by_day + 5``).

    Returns
    -------
    PopulationSuccess
        ``score = mean(person_scores) + MISS_PENALTY_DAYS·(1 − probability)
        + WRONG_DIRECTION_PENALTY_DAYS·wrong_direction``.
    """
    d = np.atleast_2d(np.asarray(days, dtype=float))
    d = np.where(np.isfinite(d), d, np.inf)
    wrong = np.atleast_2d(np.asarray(wrong_direction, dtype=bool))
    if wrong.shape != d.shape:
        raise InputError(f"wrong_direction has shape {wrong.shape}, days {d.shape}", field="wrong_direction")
    ok = d <= by_day
    probability = ok.mean(axis=1)
    low, mid, high = np.percentile(d, REPORTED_PERCENTILES, axis=1, method="inverted_cdf")
    wrong_fraction = wrong.mean(axis=1)
    if person_scores is None:
        person_scores = np.where(np.isfinite(d), d, by_day + 5.0 if never_days is None else never_days)
    base = np.atleast_2d(np.asarray(person_scores, dtype=float)).mean(axis=1)
    score = base + MISS_PENALTY_DAYS * (1.0 - probability) + WRONG_DIRECTION_PENALTY_DAYS * wrong_fraction
    return PopulationSuccess(probability, low, mid, high, wrong_fraction, score, int(by_day), d)


#: Longest habitual run of a population's entrainment from the average person's state [days]
#: (design choice: after four weeks of the same day the remaining daily change is minutes,
#: far below the 1-h re-entrainment tolerance; measured here).
POPULATION_ENTRAIN_DAYS = 28


def entrain_people(model: ModelSpec, pattern: DailyPattern) -> EntrainmentResult:
    """Entrain one person or a population to a habitual day.

    A population starts from the average person's entrained state and lives the habitual day
    for at most :data:`POPULATION_ENTRAIN_DAYS`; a few people at the edge of the range of
    entrainment (long τ with low light sensitivity) whose CBTmin still moves by minutes a day
    then keep the state that living the habitual day that long gives them (their clock is
    where it is), so only a non-finite state is an error.
    """
    first = None
    if model_batch_size(model) > 1:
        # Start everyone from the average person's entrained state: each then only has to move by
        # the little their own period and sensitivity change, which takes weeks less than a cold start.
        average = entrain(average_model(model), pattern)
        first = average.state if np.all(np.isfinite(average.state)) else None
    steady = entrain(model, pattern, initial_state=first,
                     max_days=POPULATION_ENTRAIN_DAYS if first is not None else 150)
    if not steady.success and not (np.all(np.isfinite(steady.state)) and np.all(np.isfinite(steady.cbtmin_clock_h))
                                   and np.all(np.isfinite(steady.dlmo_clock_h))):
        raise ComputationError(f"cannot entrain to the habitual day: {steady.message}")
    return steady
