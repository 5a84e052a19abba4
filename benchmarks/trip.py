"""Time to plan each built-in demo trip (scenarios/, invented travellers), compiled and numpy kernels.

Prints, per demo trip (strategy "auto": both directions, the brute-force reference, and staying on
home time for a short trip back home): the wall time of ``plan_trip`` on the compiled kernel in this
process, the same with the advance and delay searches side by side in worker processes
(``processes=0``, as ``phaseplan serve`` plans; the workers start before the timing), and in the same
run on the numpy kernel; their ratio, the light schedules simulated, the recommendation and days to
re-entrain, and PASS/MISS of both compiled times against the target of under 3 s per trip (after
the kernel's first call, which is timed apart).

Usage: python benchmarks/trip.py [--model forger1999] [--no-numpy] [NAME ...]
"""

from __future__ import annotations

import argparse
import time

from kernels import announce, timed, warm_up_worker
from planner import load_model
from planner.trips.scenario import builtin_scenario_paths, load_trip
from planner.engine.workers import run_side_by_side, worker_count
from planner.trips.search import plan_trip

TARGET_SECONDS = 3.0   # per trip on the compiled kernel (issue target)


def main() -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("names", nargs="*", help="demo trips to plan (default: all)")
    parser.add_argument("--model", default=None, help="model id or file (default: each scenario's own)")
    parser.add_argument("--no-numpy", action="store_true", help="skip the numpy-kernel runs")
    args = parser.parse_args()
    print(announce())
    demos = builtin_scenario_paths()
    names = args.names or list(demos)
    # the worker processes start (and load the kernel) once, here, not inside the times below
    began = time.perf_counter()
    run_side_by_side(warm_up_worker, [(), ()], processes=0)
    print(f"worker processes for side-by-side strategies: {worker_count(2, 0)}; started in "
          f"{time.perf_counter() - began:.2f} s, not in the times below")
    print(f"{'trip':<26} {'compiled s':>10} {'side s':>9} {'numpy s':>8} {'ratio':>6} {'schedules':>10} "
          f"{'strategy':>9} {'days':>5}  target < {TARGET_SECONDS:g} s (in process / side by side)")
    misses = 0
    for name in names:
        trip, info = load_trip(demos[name])
        model = load_model(args.model or info.model)
        seconds, result = timed("compiled", lambda: plan_trip(trip, model))
        side_seconds, side = timed("compiled", lambda: plan_trip(trip, model, processes=0))
        assert side.strategy == result.strategy and side.simulated == result.simulated
        numpy_seconds = float("nan") if args.no_numpy else timed("numpy", lambda: plan_trip(trip, model))[0]
        days = result.recommended.outcome.reentrainment_days
        verdict = "/".join("PASS" if t < TARGET_SECONDS else "MISS" for t in (seconds, side_seconds))
        misses += min(seconds, side_seconds) >= TARGET_SECONDS
        print(f"{name:<26} {seconds:10.2f} {side_seconds:9.2f} {numpy_seconds:8.2f} {numpy_seconds / seconds:6.2f} "
              f"{result.simulated:10,d} {result.strategy:>9} {'-' if days is None else days:>5}  {verdict}")
    return 1 if misses else 0


if __name__ == "__main__":
    raise SystemExit(main())
