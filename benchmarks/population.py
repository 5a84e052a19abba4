"""Speed of population runs: 1,000 simulated people through a 14-day trip plan, and a robust search.

Each step runs on the compiled kernel and, in the same run, on the numpy kernel (times side by
side; the kernel's first call is timed apart).  Prints, for the built-in demo trip lisbon-tokyo
(an invented traveller, 14 planned days):

1. the wall time of ``population_report`` for 1,000 people (drawing them, entraining each to the
   habitual home day and to the destination, the starting phases, and simulating the recommended
   plan and no plan at the model's validated step), person-schedules per second, and PASS/MISS
   against the target of under 5 s (compiled kernel);
2. the wall time of ``robust_plan`` (differential evolution over the search population, both
   directions), person-schedules simulated per second, and PASS/MISS against under 10 s (compiled).

The average-person plan both start from is computed first and timed separately.

Usage: python benchmarks/population.py [--people 1000] [--model forger1999] [--seed 0] [--no-numpy]
"""

from __future__ import annotations

import argparse

from kernels import announce, timed
from planner import load_model
from planner.trips.model import trip_days
from planner.trips.robust import SEARCH_PEOPLE, population_report, robust_plan
from planner.trips.scenario import demo_path, load_trip
from planner.trips.search import plan_trip

POPULATION_TARGET_S = 5.0   # 1,000 people × a 14-day plan (issue target)
ROBUST_TARGET_S = 10.0      # robust optimisation of one trip (issue target)


def main() -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--people", type=int, default=1000)
    parser.add_argument("--model", default=None, help="model id or file (default: the scenario's own)")
    parser.add_argument("--seed", type=int, default=0)
    parser.add_argument("--no-numpy", action="store_true", help="skip the numpy-kernel runs")
    args = parser.parse_args()
    print(announce())
    trip, info = load_trip(demo_path("lisbon-tokyo"))
    model = load_model(args.model or info.model)
    print(f"trip {info.name!r}: {len(trip_days(trip))} planned days, model {model.id}")

    def both(run):
        seconds, result = timed("compiled", run)
        numpy_seconds = float("nan") if args.no_numpy else timed("numpy", run)[0]
        return seconds, numpy_seconds, result

    seconds, numpy_seconds, average = both(lambda: plan_trip(trip, model))
    print(f"average-person plan: {seconds:.2f} s compiled, {numpy_seconds:.2f} s numpy ({average.simulated:,} schedules)")

    chosen = average.recommended.outcome
    plans = {"recommended": (chosen.plan, average.strategy, chosen.aim),
             "no_plan": (average.baseline.plan, average.strategy, "route")}
    seconds, numpy_seconds, (stats, _, _) = both(
        lambda: population_report(trip, model, plans, size=args.people, seed=args.seed))
    schedules = args.people * len(plans)
    verdict = "PASS" if seconds < POPULATION_TARGET_S or args.people != 1000 else "MISS"
    print(f"population: {args.people:,} people × {len(plans)} plans in {seconds:.2f} s compiled "
          f"({numpy_seconds:.2f} s numpy, {numpy_seconds / seconds:.2f}×) = "
          f"{schedules / seconds:,.0f} person-schedules/s (set-up and entrainment included); "
          f"P(re-entrained by stay end) {stats['recommended'].probability_by_stay_end:.2f}  "
          f"target < {POPULATION_TARGET_S:g} s for 1,000 people: {verdict}")

    seconds, numpy_seconds, robust = both(lambda: robust_plan(trip, model, average, seed=args.seed))
    robust_verdict = "PASS" if seconds < ROBUST_TARGET_S else "MISS"
    print(f"robust search: {SEARCH_PEOPLE} people, {robust.simulated:,} person-schedules in {seconds:.2f} s compiled "
          f"({numpy_seconds:.2f} s numpy, {numpy_seconds / seconds:.2f}×) = "
          f"{robust.simulated / seconds:,.0f} person-schedules/s; strategy {robust.strategy}, "
          f"{'improved on' if robust.improved else 'kept'} the average-person plan "
          f"(score {robust.search.score:.3f} vs {robust.seed_search.score:.3f})  "
          f"target < {ROBUST_TARGET_S:g} s: {robust_verdict}")
    return 0 if verdict == robust_verdict == "PASS" else 1


if __name__ == "__main__":
    raise SystemExit(main())
