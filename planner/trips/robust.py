"""A trip plan over a population of simulated people: how likely it works, and a plan robust to who you are.

:class:`TripPopulation` simulates plans for N people in one batch (C plans × N people as C·N
batch columns, :func:`planner.engine.population.simulate_population`) and reads for each person what
:class:`planner.trips.search.Evaluator` reads for the average person: the daily CBTmin on the clock
of the place the day aims at, its error against *that person's own* entrained phase there (a
person with a long τ entrains later), re-entrainment over the time away
(:func:`planner.engine.markers.reentrainment`, CBTmin within 1 h from then on) and the direction the
clock moved.  :class:`PlanStats` summarises a plan: the probability of re-entraining by the end
of the time away and by each day, days to re-entrain (p10/median/p90), the fraction whose clock
moved the unintended way, and a fan of CBTmin per day.

:func:`robust_plan` reruns the trip planner's global refinement
(:meth:`planner.trips.search.TripPlanner.refine`, differential evolution) from the average-person
plan, scoring every candidate over a smaller search population in one batch per generation with
:func:`planner.engine.population.population_success` (probability of re-entraining by the asked day,
days, wrong-direction fraction).

:func:`model_ensemble` runs one plan under several published models.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field, replace
from datetime import timedelta
from typing import Callable, Sequence

import numpy as np

from planner.engine.entrainment import place_pattern
from planner.engine.markers import (
    HOURS_PER_DAY,
    cbtmin_times,
    phase_difference,
)
from planner.engine.parameters import ModelSpec, load_model
from planner.engine.population import (
    DUFFY2011_TAU_MEAN_H,
    DUFFY2011_TAU_SD_H,
    LIGHT_SENSITIVITY_SD_LN,
    Population,
    draw_population,
    entrain_people,
    population_success,
    simulate_population,
    spread,
)
from planner.errors import ComputationError, InputError
from planner.trips.evidence import (
    NO_EVIDENCE,
    PersonEvidence,
    StartingPhase,
    person_model,
    starting_phase,
)
from planner.trips.model import Plan, Trip, plan_schedule
from planner.trips.scoring import net_shifts_h, people_reentrainment
from planner.trips.search import (
    REENTRAINMENT_TOLERANCE_H,
    Aim,
    Evaluator,
    Outcome,
    TripPlanner,
    TripPlanResult,
    keep_to_lobes,
    plan_burden_days,
    target_place,
)
from planner.world.light import hours_between
from planner.world.localtime import clock_hours
from planner.intervals import count_text

#: People in the population that scores candidates in a robust search (a design choice of this
#: planner: a 10-point difference in success probability is then about one standard error apart
#: at p = 0.5, and a generation of 60 candidates is one batch of 1,920 columns).
SEARCH_PEOPLE = 32
#: Generations of the robust refinement (as the average-person refinement).
ROBUST_GENERATIONS = 12

#: progress(description, completed, total): called by long runs; the CLI draws a bar with it.
Progress = Callable[[str, int, int], None]


def _no_progress(description: str, completed: int, total: int) -> None:
    return None


def draw_people(model: ModelSpec, size: int, seed: int, evidence: PersonEvidence = NO_EVIDENCE) -> Population:
    """The population of a trip run: Duffy et al. 2011 periods (or everyone at the measured τ) and
    the planner's light-sensitivity spread (:data:`planner.engine.population.LIGHT_SENSITIVITY_SD_LN`)."""
    if evidence.tau_h is not None:
        return draw_population(model, size, seed, tau_mean_h=evidence.tau_h, tau_sd_h=0.0,
                               sensitivity_sd_ln=LIGHT_SENSITIVITY_SD_LN)
    return draw_population(model, size, seed, sensitivity_sd_ln=LIGHT_SENSITIVITY_SD_LN)


def distribution_spec(evidence: PersonEvidence = NO_EVIDENCE) -> dict:
    """How :func:`draw_people` draws, for reports."""
    tau = ({"distribution": "fixed", "value_h": evidence.tau_h, "source": "the person's measured intrinsic period"}
           if evidence.tau_h is not None else
           {"distribution": "normal", "mean_h": DUFFY2011_TAU_MEAN_H, "sd_h": DUFFY2011_TAU_SD_H,
            "source": "Duffy et al. 2011, PNAS 108:15602"})
    return {"tau_h": tau,
            "alpha0_scale": {"distribution": "lognormal", "median": 1.0, "sd_ln": LIGHT_SENSITIVITY_SD_LN,
                             "source": "this planner's assumption (planner.engine.population)"}}


@dataclass(frozen=True)
class PlanStats:
    """A plan over a population.

    Attributes
    ----------
    size : int
    aim : {"route", "home"}
    intended : {"advance", "delay", "none"}
        The direction the plan means the clock to move.
    by_day : int
        Day (after the arrival day) of ``probability``.
    probability : float
        Fraction re-entrained by ``by_day`` (aim "home": fraction held within 1 h of home time).
    probability_by_stay_end : float
        Fraction re-entrained before the time away ends.
    probability_by_day : ndarray, shape (S,)
        Fraction re-entrained by each day of the time away (day 0 = the arrival day).
    days_p10, days_median, days_p90 : float
        Days to re-entrain; inf when more than that share does not re-entrain within the time away.
    wrong_direction : float
        Fraction whose clock moved the other way than intended.
    cbtmin_dates : list of date
        Local date of each planned day.
    cbtmin_clock : dict of ndarray
        ``p10``, ``median``, ``p90`` of CBTmin per day [h of the local clock of the day's target
        place, possibly outside [0, 24) where the fan crosses midnight].
    score : float
        Robust score (lower is better; :func:`planner.engine.population.population_success`).
    days : ndarray, shape (N,)
        Each person's days to re-entrain (inf when not within the time away).
    """

    size: int
    aim: Aim
    intended: str
    by_day: int
    probability: float
    probability_by_stay_end: float
    probability_by_day: np.ndarray
    days_p10: float
    days_median: float
    days_p90: float
    wrong_direction: float
    cbtmin_dates: list
    cbtmin_clock: dict
    score: float
    days: np.ndarray = field(repr=False)


@dataclass
class TripPopulation:
    """N people taking one trip: their starting states and their own target phases.

    Parameters
    ----------
    evaluator : Evaluator
        The average person's evaluator of the trip (days, places, search step).
    population : Population
    starting : StartingPhase
        Per-person states at ``trip.start`` (:func:`planner.trips.evidence.starting_phase`).
    """

    evaluator: Evaluator
    population: Population
    starting: StartingPhase
    simulated: int = 0
    #: Each person's entrained CBTmin per place name [h of the local clock], shape (N,);
    #: computed when not given (see :func:`place_targets`).
    targets: dict | None = None

    def __post_init__(self):
        if self.targets is None:
            self.targets = place_targets(self.evaluator, self.population)

    @property
    def size(self) -> int:
        return self.population.size

    def _clocks(self, markers: list[np.ndarray], aim: Aim) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
        """Daily CBTmin (last in each day): time [h since start], clock of the day's place and error; each (D, C)."""
        ev = self.evaluator
        trip = ev.trip
        epoch = trip.start
        columns = len(markers)
        days = ev.days
        starts = np.array([hours_between(epoch, d.start) for d in days])
        ends = np.array([hours_between(epoch, d.end) for d in days])
        clocks = np.full((len(days), columns), np.nan)
        times = np.full((len(days), columns), np.nan)
        # each day's last marker before its end, for every column at once (markers padded with +inf)
        width = max((m.size for m in markers), default=0)
        if width:
            padded = np.full((columns, width), np.inf)
            for j, m in enumerate(markers):
                padded[j, :m.size] = m
            index = (padded[:, :, None] < ends[None, None, :]).sum(axis=1) - 1          # (C, D)
            value = np.take_along_axis(padded, np.clip(index, 0, None), axis=1)
            found = (index >= 0) & (value >= starts[None, :])
            times.T[found] = value[found]
        epoch_hour = clock_hours(epoch)
        errors = np.full_like(clocks, np.nan)
        person = np.arange(columns) % self.size
        for k, day in enumerate(days):
            place = trip.home if aim == "home" else target_place(trip, day)
            first, last = place.utc_offset_h(day.start), place.utc_offset_h(day.end - timedelta(seconds=1))
            row = times[k]
            if first == last:
                clocks[k] = np.mod(epoch_hour + row + first, HOURS_PER_DAY)
            else:   # a clock change that day: convert each CBTmin exactly
                for j in np.nonzero(np.isfinite(row))[0]:
                    clocks[k, j] = clock_hours((epoch + timedelta(hours=float(row[j]))).astimezone(place.zone))
            errors[k] = phase_difference(clocks[k], self.targets[place.name][person])
        return times, clocks, errors

    def simulate(self, plans: Sequence[Plan], *, final: bool = False):
        """Simulate plans × people; CBTmin times per column (see :func:`planner.engine.population.simulate_population`)."""
        ev = self.evaluator
        schedules = [plan_schedule(ev.trip, plan) for plan in plans]
        step = None if final else ev.search_step_minutes
        result = simulate_population(self.population, schedules, self.starting.states, ev.trip.start, ev.trip.end,
                                     step_minutes=step)
        if not result.success:
            raise ComputationError(result.message)
        self.simulated += len(plans) * self.size
        return cbtmin_times(result)

    def stats(self, plans: Sequence[Plan], intended: Sequence[str], aim: Aim = "route", *,
              by_day: int | None = None, final: bool = False) -> list[PlanStats]:
        """Population statistics of each plan (see :class:`PlanStats`)."""
        ev = self.evaluator
        markers = self.simulate(plans, final=final)
        times, clocks, errors = self._clocks(markers, aim)
        arrival, back = ev.arrival_index(), ev.return_index()
        stay_days = max(back - arrival, 1)
        by_day = stay_days - 1 if by_day is None else int(by_day)
        size = self.size
        out = []
        for c, plan in enumerate(plans):
            cols = slice(c * size, (c + 1) * size)
            stay = errors[arrival:back, cols]
            days = np.full(size, np.inf)
            scores = np.empty(size)
            wrong = np.zeros(size, bool)
            net = net_shifts_h(times[:back, cols])
            if aim == "home":
                held = np.nanmax(np.abs(stay), axis=0, initial=0.0) <= REENTRAINMENT_TOLERANCE_H
                held &= np.all(np.isfinite(stay), axis=0)
                days[held] = 0.0
                scores[:] = np.where(held, 0.0, stay_days + 5.0)
            else:
                days, scores = people_reentrainment(stay)
                wrong = _wrong_direction(net, intended[c])
            summary = population_success(days, wrong, by_day, person_scores=scores + plan_burden_days(ev.trip, plan))
            curve = np.array([(days <= d).mean() for d in range(stay_days)])
            fan = _fan(clocks[:, cols])
            out.append(PlanStats(size, aim, intended[c], by_day, float(summary.probability[0]),
                                 float((days <= stay_days - 1).mean()), curve, float(summary.days_p10[0]),
                                 float(summary.days_median[0]), float(summary.days_p90[0]),
                                 float(summary.wrong_direction[0]), [d.local_date for d in ev.days], fan,
                                 float(summary.score[0]), days))
        return out


    def scores(self, plans: Sequence[Plan], intended: Sequence[str], *, by_day: int | None = None) -> np.ndarray:
        """The robust score of each plan (aim "route"): :attr:`PlanStats.score` of :meth:`stats`, the same
        numbers, without the rest of the statistics (the robust search needs only the score)."""
        ev = self.evaluator
        markers = self.simulate(plans)
        times, _, errors = self._clocks(markers, "route")
        arrival, back = ev.arrival_index(), ev.return_index()
        stay_days = max(back - arrival, 1)
        by_day = stay_days - 1 if by_day is None else int(by_day)
        size = self.size
        days, scores, wrong = (np.empty((len(plans), size)) for _ in range(3))
        for c, plan in enumerate(plans):
            cols = slice(c * size, (c + 1) * size)
            days[c], scores[c] = people_reentrainment(errors[arrival:back, cols])
            scores[c] += plan_burden_days(ev.trip, plan)
            wrong[c] = _wrong_direction(net_shifts_h(times[:back, cols]), intended[c])
        return population_success(days, wrong.astype(bool), by_day, person_scores=scores).score


def _wrong_direction(net_h: np.ndarray, intended: str) -> np.ndarray:
    """Whether each clock moved (net ``net_h`` [h], under 1 h counts as not moving) the other way than intended."""
    moved = np.where(np.abs(net_h) < 1.0, "none", np.where(net_h > 0, "delay", "advance"))
    return (moved != intended) & (moved != "none") & (intended != "none")


def place_targets(evaluator: Evaluator, population: Population, steady: dict | None = None) -> dict[str, np.ndarray]:
    """Each person's entrained CBTmin at every place the trip aims at [h of the local clock].

    Places with the same habitual day share one entrainment run; ``steady`` (pattern →
    :class:`~planner.engine.entrainment.EntrainmentResult`) may hold runs already done and is filled in.
    """
    trip = evaluator.trip
    steady = {} if steady is None else steady
    places = {trip.home.name: trip.home}
    places.update({target_place(trip, d).name: target_place(trip, d) for d in evaluator.days})
    targets = {}
    for name, place in places.items():
        pattern = place_pattern(place, trip.light)
        if pattern not in steady:
            steady[pattern] = entrain_people(population.model, pattern)
        targets[name] = np.broadcast_to(steady[pattern].cbtmin_clock_h, (population.size,)).copy()
    return targets


def _fan(clocks: np.ndarray) -> dict:
    """p10/median/p90 per day of clock hours (D, N), taken around each day's circular mean so that
    a fan crossing midnight stays in one piece."""
    angles = clocks / HOURS_PER_DAY * 2 * math.pi
    with np.errstate(invalid="ignore"):
        centre = np.mod(np.arctan2(np.nanmean(np.sin(angles), axis=1), np.nanmean(np.cos(angles), axis=1))
                        / (2 * math.pi) * HOURS_PER_DAY, HOURS_PER_DAY)
    deviation = phase_difference(clocks, centre[:, None])
    empty = ~np.any(np.isfinite(clocks), axis=1)
    deviation[empty] = 0.0
    parts = spread(deviation, axis=1)
    return {key: np.where(empty, np.nan, centre + np.asarray(value)) for key, value in parts.items()}


# --------------------------------------------------------------------------- robust search

@dataclass(frozen=True)
class RobustResult:
    """The plan found by :func:`robust_plan`.

    Attributes
    ----------
    strategy : {"advance", "delay"}
    outcome : Outcome
        The robust plan for the average person (at the model's validated step).
    search : PlanStats
        The robust plan over the search population.
    seed_search : PlanStats
        The average-person plan of the same strategy over the same search population.
    people : int
        Size of the search population.
    simulated : int
        Person-schedules simulated in the search.
    """

    strategy: str
    outcome: Outcome
    search: PlanStats
    seed_search: PlanStats
    people: int
    simulated: int

    @property
    def improved(self) -> bool:
        """Whether the search found a plan with a better robust score than the average-person plan."""
        return self.search.score < self.seed_search.score - 1e-9

    @property
    def plan(self) -> Plan:
        return self.outcome.plan


def robust_plan(trip: Trip, model: ModelSpec, average: TripPlanResult, *, evidence: PersonEvidence = NO_EVIDENCE,
                people: int = SEARCH_PEOPLE, seed: int = 0, by_day: int | None = None,
                maxiter: int = ROBUST_GENERATIONS, progress: Progress | None = None) -> RobustResult | None:
    """Search a plan that works for most people, starting from the average-person plans.

    For each direction the average-person search planned (advance, delay), the trip planner's
    differential-evolution refinement runs again from that plan with the population's robust
    score; the direction with the better robust score wins.  Returns None when the average
    result recommends staying on home time (there is no light plan to make robust: moving the
    clock there and back is what the recommendation avoids) or has no light plan at all.

    Parameters
    ----------
    average : TripPlanResult
        The average-person result of :func:`planner.trips.search.plan_trip` for the same trip,
        model and evidence.
    people : int
        Size of the search population (drawn from ``seed``).
    by_day : int, optional
        Day after arrival by which re-entrainment counts as success (default: the end of the
        time away).
    """
    progress = progress or _no_progress
    strategies = [name for name in ("advance", "delay") if name in average.alternatives
                  and average.alternatives[name].choices]
    if not strategies or average.strategy == "home":
        return None
    average_model = person_model(model, evidence)
    start = starting_phase(trip, model, evidence)
    planner = TripPlanner(trip, average_model, start.state)
    population = draw_people(model, people, seed, evidence)
    steady: dict = {}
    targets = place_targets(planner.evaluator, population, steady)
    starting = starting_phase(trip, model, evidence, population=population, seed=seed,
                              entrained=steady[place_pattern(trip.home, trip.light)])
    crowd = TripPopulation(planner.evaluator, population, starting, targets=targets)
    generations = (maxiter + 1) * len(strategies)
    done = 0
    best = None
    for strategy in strategies:
        seed_result = average.alternatives[strategy]
        anchors = list(seed_result.anchors)

        def score(plans, strategy=strategy):
            nonlocal done
            values = crowd.scores(plans, [strategy] * len(plans), by_day=by_day)
            done += 1
            progress("robust search", min(done, generations), generations)
            return values

        choices, _ = planner.refine(strategy, list(seed_result.choices), anchors, seed=seed, maxiter=maxiter,
                                    score_plans=score, extra_seeds=_variants(seed_result.choices, strategy))
        plan = planner.build(choices, anchors, strategy)
        # windows kept in the lobes of the average person's simulated CBTmin under this plan
        plan = keep_to_lobes(planner.evaluator, planner.evaluator.evaluate([plan], final=True)[0], strategy).plan
        found, before = crowd.stats([plan, seed_result.outcome.plan], [strategy, strategy], by_day=by_day)
        if before.score <= found.score:
            plan, found = seed_result.outcome.plan, before
        if best is None or found.score < best[2].score:
            best = (strategy, plan, found, before)
    progress("robust search", generations, generations)
    strategy, plan, found, before = best
    outcome = planner.evaluator.evaluate([plan], final=True)[0]
    return RobustResult(strategy, outcome, found, before, people, crowd.simulated)


#: Moves of the light windows tried as extra starting plans of the robust search [h] (a design choice of
#: this planner: a person whose clock runs later or earlier than the average meets the average
#: person's windows at another phase, so the search starts from windows moved by up to 2 h).
VARIANT_MOVES_H = (-2.0, -1.0, 1.0, 2.0)


def _variants(choices: Sequence, strategy: str) -> list[list]:
    """Starting plans for the robust search besides the average-person plan: its light windows
    longer (2 h), and moved earlier or later (:data:`VARIANT_MOVES_H`)."""
    longer = [replace(c, bright_hours=2.0) if c.bright_hours > 0 else c for c in choices]
    moved = [[replace(c, bright_offset_h=c.bright_offset_h + move, avoid_offset_h=c.avoid_offset_h + move)
              for c in choices] for move in VARIANT_MOVES_H]
    return [longer] + moved + [[replace(c, bright_hours=2.0) if c.bright_hours > 0 else c for c in row]
                               for row in moved]


# --------------------------------------------------------------------------- population report

def population_report(trip: Trip, model: ModelSpec, plans: dict[str, tuple[Plan, str, Aim]], *, size: int,
                      seed: int = 0, evidence: PersonEvidence = NO_EVIDENCE, by_day: int | None = None,
                      progress: Progress | None = None) -> tuple[dict[str, PlanStats], StartingPhase, Population]:
    """Every named plan over one population of ``size`` people, at the model's validated step.

    ``plans`` maps a name to (plan, intended direction, aim).  People are simulated in batches
    of at most 500 (bounded memory), reporting progress after each.
    """
    progress = progress or _no_progress
    start = starting_phase(trip, model, evidence)
    evaluator = Evaluator(trip, person_model(model, evidence), initial_state=start.state)
    population = draw_people(model, size, seed, evidence)
    steady: dict = {}
    targets = place_targets(evaluator, population, steady)
    starting = starting_phase(trip, model, evidence, population=population, seed=seed,
                              entrained=steady[place_pattern(trip.home, trip.light)])
    batch = 500
    names = list(plans)
    parts: dict[str, list[PlanStats]] = {name: [] for name in names}
    chunks = [slice(a, min(a + batch, size)) for a in range(0, size, batch)]
    total = len(chunks) * len(names)
    done = 0
    for chunk in chunks:
        part = population.take(chunk)
        crowd = TripPopulation(evaluator, part, StartingPhase(starting.source, starting.states[:, chunk],
                                                              starting.dlmo_clock_h[chunk], starting.phase_sd_h,
                                                              starting.description, starting.findings),
                             targets={name: values[chunk] for name, values in targets.items()})
        for name in names:
            plan, intended, aim = plans[name]
            parts[name].append(crowd.stats([plan], [intended], aim, by_day=by_day, final=True)[0])
            done += 1
            progress("population", done, total)
    return {name: _merge(parts[name]) for name in names}, starting, population


def _merge(parts: list[PlanStats]) -> PlanStats:
    """Statistics of a population simulated in chunks."""
    if len(parts) == 1:
        return parts[0]
    days = np.concatenate([p.days for p in parts])
    first = parts[0]
    weights = np.array([p.size for p in parts], dtype=float)
    low, mid, high = np.percentile(days, (10, 50, 90), method="inverted_cdf")
    average = lambda name: float(np.average([getattr(p, name) for p in parts], weights=weights))   # noqa: E731
    curve = np.average(np.stack([p.probability_by_day for p in parts]), axis=0, weights=weights)
    fan = {key: np.average(np.stack([p.cbtmin_clock[key] for p in parts]), axis=0, weights=weights)
           for key in first.cbtmin_clock}
    return PlanStats(int(days.size), first.aim, first.intended, first.by_day, average("probability"),
                     average("probability_by_stay_end"), curve, float(low), float(mid), float(high),
                     average("wrong_direction"), first.cbtmin_dates, fan, average("score"), days)


# --------------------------------------------------------------------------- model ensemble

@dataclass(frozen=True)
class EnsembleMember:
    model: ModelSpec
    outcome: Outcome
    starting: StartingPhase


@dataclass(frozen=True)
class EnsembleResult:
    """One plan under several models.

    Attributes
    ----------
    members : list of EnsembleMember
    cbtmin_range_h : ndarray, shape (D,)
        Per day, the spread of the models' CBTmin (largest circular distance between two) [h].
    disagreements : list of str
        Plain statements of where the models disagree (days to re-entrain, direction, CBTmin).
    """

    members: list
    cbtmin_range_h: np.ndarray
    disagreements: list


#: Models disagree on a day when their CBTmin predictions lie further apart than this [h]
#: (the re-entrainment tolerance: a smaller difference does not change the verdict).
DISAGREE_H = REENTRAINMENT_TOLERANCE_H


def model_ensemble(trip: Trip, plan: Plan, models: Sequence[str | ModelSpec], *, aim: Aim = "route",
                   evidence: PersonEvidence = NO_EVIDENCE) -> EnsembleResult:
    """Run ``plan`` (fixed light and sleep) under each model, each from its own starting phase."""
    if len(models) < 1:
        raise InputError("name at least one model", field="models")
    members = []
    for name in models:
        model = load_model(name) if isinstance(name, str) else name
        start = starting_phase(trip, model, evidence)
        evaluator = Evaluator(trip, person_model(model, evidence), initial_state=start.state)
        members.append(EnsembleMember(model, evaluator.evaluate([plan], aim, final=True)[0], start))
    moments = [[d.cbtmin for d in m.outcome.days] for m in members]
    ranges = []
    for k in range(len(members[0].outcome.days)):
        known = [row[k] for row in moments if row[k] is not None]
        if len(known) < 2:
            ranges.append(math.nan)
            continue
        clock = np.array([hours_between(known[0], t) for t in known])
        pairs = np.abs(phase_difference(clock[:, None], clock[None, :]))
        ranges.append(float(pairs.max()))
    ranges = np.asarray(ranges)
    notes = []
    days = {m.model.id: m.outcome.reentrainment_days for m in members}
    if aim == "route" and len({d for d in days.values()}) > 1:
        shown = ", ".join(f"{k} {'not within the trip' if v is None else f'{v} d'}" for k, v in days.items())
        notes.append(f"days to re-entrain differ: {shown}")
    directions = {m.model.id: m.outcome.direction for m in members}
    if len(set(directions.values())) > 1:
        notes.append("the clock moves differently: " + ", ".join(f"{k} {v}" for k, v in directions.items()))
    wide = [members[0].outcome.days[k].day.local_date.isoformat() for k in range(len(ranges))
            if math.isfinite(ranges[k]) and ranges[k] > DISAGREE_H]
    if wide:
        notes.append(f"CBTmin predictions more than {DISAGREE_H:g} h apart on {count_text(len(wide), 'day')}: "
                     + ", ".join(wide[:6]) + (" …" if len(wide) > 6 else ""))
    return EnsembleResult(members, ranges, notes)
