"""Time to plan each built-in demo trip (scenarios/, invented travellers).

Prints, per demo trip: the wall time of ``plan_trip`` (strategy "auto": both directions, and
staying on home time for a short trip back home), the number of light schedules simulated in
the search, the recommendation and days to re-entrain, and PASS/MISS against the target of
under 10 s per trip.

Usage: python benchmarks/trip.py [--model forger1999] [NAME ...]
"""

from __future__ import annotations

import argparse
import time

from planner import load_model
from planner.trips.scenario import builtin_scenario_paths, load_trip
from planner.trips.search import plan_trip

TARGET_SECONDS = 10.0   # per trip (issue target)


def main() -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("names", nargs="*", help="demo trips to plan (default: all)")
    parser.add_argument("--model", default=None, help="model id or file (default: each scenario's own)")
    args = parser.parse_args()
    demos = builtin_scenario_paths()
    names = args.names or list(demos)
    print(f"{'trip':<24} {'seconds':>8} {'schedules':>10} {'strategy':>9} {'days':>5}  target < {TARGET_SECONDS:g} s")
    misses = 0
    for name in names:
        trip, info = load_trip(demos[name])
        model = load_model(args.model or info.model)
        began = time.perf_counter()
        result = plan_trip(trip, model)
        seconds = time.perf_counter() - began
        days = result.recommended.outcome.reentrainment_days
        verdict = "PASS" if seconds < TARGET_SECONDS else "MISS"
        misses += verdict == "MISS"
        print(f"{name:<24} {seconds:8.2f} {result.simulated:10,d} {result.strategy:>9} "
              f"{'-' if days is None else days:>5}  {verdict}")
    return 1 if misses else 0


if __name__ == "__main__":
    raise SystemExit(main())
