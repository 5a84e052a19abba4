"""Batch integrator, numpy and compiled kernels, against per-schedule solve_ivp (DOP853), side by side.

For each model, in one run: 14-day schedules per second for the numpy kernel, the compiled
kernel on one thread and on all threads (N schedules in one ``simulate`` call, grid sampling
included; best of ``--repeat`` calls each; and the integrator alone on a grid sampled once), scipy's DOP853 one schedule at a time (on a subset,
per-schedule rate), their ratios, and the largest CBTmin difference of each kernel against
DOP853 on that subset.  The compiled kernel's first call (compilation, or loading its on-disk
cache) is timed apart and not in the rates.

The schedules are an invented demo population: habitual sleep 23:00-07:00 with
day-to-day jitter, 150 lux indoors, an hour of 3,000-lux daylight at midday and
a 10,000-lux light box for 30-60 min at a different time each day.

Usage: python benchmarks/engine.py [--model forger1999 ...] [--n 1000] [--days 14] [--reference 5] [--repeat 3]
"""

from __future__ import annotations

import argparse
import time
from datetime import datetime, timedelta, timezone

import numpy as np

from kernels import machine_load
from planner import LightSchedule, ambient, cbtmin_times, light_box, load_model, sample_on_grid, sleep
from planner.engine import kernel_numba
from planner.engine.entrainment import entrain
from planner.engine.integrate import integrate, simulate
from planner.engine.reference import reference_solution

MODELS = ("forger1999", "jewett1999", "hannay2019")
TARGET_SPEED_UP = 3.0       # compiled (all threads) vs numpy batch (issue target)
TARGET_RATIO = 1500.0       # compiled (all threads) vs per-schedule solve_ivp (issue target)
TARGET_ERROR_MIN = 1.0      # CBTmin agreement with DOP853 [min] (issue target)


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


def best_rate(count: int, repeat: int, run) -> tuple[float, object]:
    """Schedules per second of the fastest of ``repeat`` calls, and the last call's result."""
    best, result = float("inf"), None
    for _ in range(repeat):
        began = time.perf_counter()
        result = run()
        best = min(best, time.perf_counter() - began)
    return count / best, result


def verdict(ok: bool) -> str:
    return "PASS" if ok else "MISS"


def measure(name: str, args, schedules, start, end, threads: int) -> bool:
    model = load_model(name)
    state = entrain(model).state[:, 0]

    def batch(kernel):
        result = simulate(model, schedules, state, start=start, end=end, kernel=kernel)
        if not result.success:
            raise SystemExit(result.message)
        return result

    numpy_rate, numpy_result = best_rate(args.n, args.repeat, lambda: batch("numpy"))
    kernel_numba.set_thread_count(1)
    single_rate, _ = best_rate(args.n, args.repeat, lambda: batch("compiled"))
    kernel_numba.set_thread_count(threads)
    compiled_rate, compiled_result = best_rate(args.n, args.repeat, lambda: batch("compiled"))
    numpy_markers, compiled_markers = cbtmin_times(numpy_result), cbtmin_times(compiled_result)
    # The integrator alone, on a grid sampled once (sampling is numpy on both paths).
    grid = sample_on_grid(schedules, start, end, model.step_minutes / 60.0)
    numpy_only, _ = best_rate(args.n, args.repeat, lambda: integrate(model, grid, state, kernel="numpy"))
    compiled_only, _ = best_rate(args.n, args.repeat, lambda: integrate(model, grid, state, kernel="compiled"))

    began = time.perf_counter()
    numpy_errors, compiled_errors = [], []
    for j in range(args.reference):
        reference = reference_solution(model, schedules[j], state, start=start, end=end)
        numpy_errors.append(nearest_error_min(reference.cbtmin_h, numpy_markers[j]))
        compiled_errors.append(nearest_error_min(reference.cbtmin_h, compiled_markers[j]))
    reference_rate = args.reference / (time.perf_counter() - began)
    speed_up = compiled_rate / numpy_rate
    ratio = compiled_rate / reference_rate
    worst = max(compiled_errors)
    state_gap = float(np.max(np.abs(compiled_result.states - numpy_result.states)))

    print(f"\nmodel {model.id}, {args.n} schedules x {args.days} days, step {model.step_minutes:g} min")
    print(f"  numpy batch            : {numpy_rate:10.0f} schedules/s")
    print(f"  compiled, 1 thread     : {single_rate:10.0f} schedules/s   {single_rate / numpy_rate:6.2f} x numpy")
    print(f"  compiled, {threads} threads    : {compiled_rate:10.0f} schedules/s   {speed_up:6.2f} x numpy"
          f"      target >= {TARGET_SPEED_UP:g} x   {verdict(speed_up >= TARGET_SPEED_UP)}")
    print(f"  integrator only (grid sampled once): numpy {numpy_only:.0f}/s, compiled {compiled_only:.0f}/s, "
          f"{compiled_only / numpy_only:.2f} x")
    print(f"  solve_ivp DOP853       : {reference_rate:10.2f} schedules/s   ({args.reference} schedules, rtol 1e-10)")
    print(f"  ratio numpy / DOP853   : {numpy_rate / reference_rate:10.0f} x")
    print(f"  ratio compiled / DOP853: {ratio:10.0f} x             target >= {TARGET_RATIO:g} x  "
          f"{verdict(ratio >= TARGET_RATIO)}")
    print(f"  max CBTmin error       : compiled {worst:.3f} min, numpy {max(numpy_errors):.3f} min   "
          f"target < {TARGET_ERROR_MIN:g} min   {verdict(worst < TARGET_ERROR_MIN)}")
    print(f"  largest state difference compiled vs numpy: {state_gap:.1e}")
    return speed_up >= TARGET_SPEED_UP and ratio >= TARGET_RATIO and worst < TARGET_ERROR_MIN


def main() -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--model", action="append", help="model id (repeatable; default: all three)")
    parser.add_argument("--n", type=int, default=1000)
    parser.add_argument("--days", type=int, default=14)
    parser.add_argument("--reference", type=int, default=5, help="schedules integrated with solve_ivp")
    parser.add_argument("--repeat", type=int, default=3, help="calls per batch measurement (the fastest counts)")
    args = parser.parse_args()
    if not kernel_numba.AVAILABLE:
        raise SystemExit("numba is not installed: only the numpy kernel is available")

    threads = kernel_numba.thread_count()
    report = kernel_numba.warm_up()
    print(f"compiled kernel: numba {kernel_numba.numba.__version__}, {threads} threads "
          f"(threading layer {kernel_numba.numba.threading_layer()}); first call "
          f"{report.seconds:.2f} s ({'loaded from the cache' if report.from_cache else 'compiled'}), "
          f"not in the rates below; {machine_load()}")
    built = time.perf_counter()
    schedules, start, end = demo_schedules(args.n, args.days)
    print(f"building {args.n} LightSchedule objects: {time.perf_counter() - built:.2f} s (not in the rates below)")
    passed = [measure(name, args, schedules, start, end, threads) for name in (args.model or MODELS)]
    return 0 if all(passed) else 1


if __name__ == "__main__":
    raise SystemExit(main())
