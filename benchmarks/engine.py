"""Batch integrator vs per-schedule solve_ivp (DOP853), measured side by side in one run.

Prints 14-day schedules per second for the batch integrator (N schedules in one
call, grid sampling included) and for scipy's DOP853 one schedule at a time
(on a subset, per-schedule rate), their ratio, and the largest CBTmin
difference between the two on that subset.

The schedules are an invented demo population: habitual sleep 23:00-07:00 with
day-to-day jitter, 150 lux indoors, an hour of 3,000-lux daylight at midday and
a 10,000-lux light box for 30-60 min at a different time each day.

Usage: python benchmarks/engine.py [--model forger1999] [--n 1000] [--days 14] [--reference 5]
"""

from __future__ import annotations

import argparse
import time
from datetime import datetime, timedelta, timezone

import numpy as np

from planner import LightSchedule, ambient, cbtmin_times, light_box, load_model, sleep
from planner.engine.entrainment import entrain
from planner.engine.integrate import simulate
from planner.engine.reference import reference_solution

TARGET_RATE = 3000.0      # schedules/s (issue target)
TARGET_RATIO = 300.0      # × solve_ivp (issue target)
TARGET_ERROR_MIN = 1.0    # CBTmin agreement [min] (issue target)


def demo_schedules(count: int, days: int, seed: int = 1) -> tuple[list[LightSchedule], datetime, datetime]:
    rng = np.random.default_rng(seed)
    start = datetime(2027, 1, 4, tzinfo=timezone.utc)
    end = start + timedelta(days=days)
    schedules = []
    for _ in range(count):
        layers = []
        for day in range(-1, days + 1):
            midnight = start + timedelta(days=day)
            layers.append(ambient(midnight + timedelta(hours=12), midnight + timedelta(hours=13), 3000, "daylight"))
            box_start = midnight + timedelta(hours=float(rng.uniform(7.5, 21.0)))
            layers.append(light_box(box_start, box_start + timedelta(minutes=float(rng.uniform(30, 60))), 10_000))
            bed = midnight + timedelta(hours=23 + float(rng.normal(0, 0.5)))
            layers.append(sleep(bed, bed + timedelta(hours=8 + float(rng.normal(0, 0.3)))))
        schedules.append(LightSchedule.from_layers(start, end, 150.0, layers))
    return schedules, start, end


def nearest_error_min(reference: np.ndarray, batch: np.ndarray) -> float:
    if reference.size == 0 or batch.size == 0:
        return float("inf")
    return float(np.max(np.min(np.abs(reference[:, None] - batch[None, :]), axis=1)) * 60.0)


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--model", default="forger1999")
    parser.add_argument("--n", type=int, default=1000)
    parser.add_argument("--days", type=int, default=14)
    parser.add_argument("--reference", type=int, default=5, help="schedules integrated with solve_ivp")
    args = parser.parse_args()

    model = load_model(args.model)
    state = entrain(model).state[:, 0]
    built = time.perf_counter()
    schedules, start, end = demo_schedules(args.n, args.days)
    built = time.perf_counter() - built

    simulate(model, schedules[:10], state, start=start, end=end)  # warm-up
    began = time.perf_counter()
    result = simulate(model, schedules, state, start=start, end=end)
    batch_s = time.perf_counter() - began
    if not result.success:
        raise SystemExit(result.message)
    batch_rate = args.n / batch_s
    batch_markers = cbtmin_times(result)

    began = time.perf_counter()
    errors = []
    for j in range(args.reference):
        reference = reference_solution(model, schedules[j], state, start=start, end=end)
        errors.append(nearest_error_min(reference.cbtmin_h, batch_markers[j]))
    reference_rate = args.reference / (time.perf_counter() - began)
    ratio = batch_rate / reference_rate
    worst = max(errors)

    def verdict(ok: bool) -> str:
        return "PASS" if ok else "MISS"

    print(f"model {model.id}, {args.n} schedules x {args.days} days, step {model.step_minutes:g} min")
    print(f"building {args.n} LightSchedule objects: {built:.2f} s (not in the rates below)")
    print(f"batch integrator : {batch_rate:10.0f} schedules/s   target >= {TARGET_RATE:.0f}   {verdict(batch_rate >= TARGET_RATE)}")
    print(f"solve_ivp DOP853 : {reference_rate:10.2f} schedules/s   ({args.reference} schedules, rtol 1e-10)")
    print(f"ratio            : {ratio:10.0f} x              target >= {TARGET_RATIO:.0f}    {verdict(ratio >= TARGET_RATIO)}")
    print(f"max CBTmin error : {worst:10.3f} min            target < {TARGET_ERROR_MIN:.0f}      {verdict(worst < TARGET_ERROR_MIN)}")


if __name__ == "__main__":
    main()
