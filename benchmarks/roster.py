"""Roster planning for a population: 1,000 simulated workers × 3 drafts of a 28-day roster.

Prints the wall time of ``plan_roster`` (every strategy searched for the average worker,
then the chosen plan of each draft simulated for N workers in one batch per draft) on the
compiled kernel and, in the same run, on the numpy kernel, the light schedules simulated per
second, PASS/MISS of the compiled time against the target of under 3 s, and,
side by side in the same run, the population batch against simulating the same workers
one call each (on a subset, per-worker rate) and their ratio.

The roster is invented: a 12-h day/night crew at an imaginary North Sea terminal with
three 28-day drafts (2-2-3 fast rotation, 4-on-4-off, and a block of seven nights).

Usage: python benchmarks/roster.py [--model forger1999] [--workers 1000] [--one-by-one 20] [--no-numpy]
"""

from __future__ import annotations

import argparse
import time
from datetime import date
from zoneinfo import ZoneInfo

from kernels import announce, timed
from planner import load_model
from planner.engine.population import draw_population
from planner.rosters.model import Draft, Roster, ShiftType
from planner.rosters.search import RosterEvaluator, plan_for, plan_roster, reference
from planner.world.places import Place

TARGET_SECONDS = 3.0    # 28-day roster, 1,000 workers, 3 drafts, compiled kernel (issue target)


def demo_roster() -> Roster:
    site = Place("Imaginary terminal", ZoneInfo("Europe/Amsterdam"), 51.96, 4.03, 23.0, 7.0)
    shifts = (ShiftType("D", 7.0, 19.0), ShiftType("N", 19.0, 7.0))
    off = None
    drafts = (Draft("2-2-3", ("D", "D", "N", "N", off, off, off), 4),
              Draft("4-on-4-off", ("D", "D", "N", "N", off, off, off, off) * 1 + ("D", "D", "D", "D", off, off), 2),
              Draft("7 nights", ("N",) * 7 + (off,) * 7, 2))
    return Roster("benchmark crew", site, date(2027, 2, 1), shifts, drafts, crew_size=1000)


def main() -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--model", default="forger1999", help="model id or file")
    parser.add_argument("--workers", type=int, default=1000, help="simulated workers per draft")
    parser.add_argument("--one-by-one", type=int, default=20, help="workers simulated one call each, for the ratio")
    parser.add_argument("--no-numpy", action="store_true", help="skip the numpy-kernel run")
    args = parser.parse_args()
    print(announce())
    roster = demo_roster()
    model = load_model(args.model)
    days = [d.days for d in roster.drafts]
    seconds, result = timed("compiled", lambda: plan_roster(roster, model, workers=args.workers, seed=1))
    numpy_seconds = float("nan") if args.no_numpy else timed(
        "numpy", lambda: plan_roster(roster, model, workers=args.workers, seed=1))[0]
    verdict = "PASS" if seconds < TARGET_SECONDS else "MISS"
    print(f"plan_roster: {len(roster.drafts)} drafts ({'/'.join(map(str, days))} days), {args.workers} workers: "
          f"{seconds:.2f} s compiled, {numpy_seconds:.2f} s numpy ({numpy_seconds / seconds:.2f}×), "
          f"{result.simulated:,} schedules, {result.simulated / seconds:,.0f} schedules/s  "
          f"target < {TARGET_SECONDS:g} s  {verdict}")

    # Side by side: the same population plan, one batch call against one call per worker.
    draft = roster.drafts[0]
    plan = plan_for(roster, draft, "compromise")
    population = draw_population(model, args.workers, seed=1)
    evaluator = RosterEvaluator(roster, model)
    state = reference(roster, population.model).state
    began = time.perf_counter()
    evaluator.evaluate(draft, [plan], final=True, model=population.model, initial_state=state)
    batch_rate = args.workers / (time.perf_counter() - began)
    subset = draw_population(model, args.one_by_one, seed=2)
    states = reference(roster, subset.model).state
    began = time.perf_counter()
    for j in range(args.one_by_one):
        one = model.with_values(**{k: v[j] for k, v in subset.model.values.items() if getattr(v, "ndim", 0) == 1})
        evaluator.evaluate(draft, [plan], final=True, model=one, initial_state=states[:, j])
    single_rate = args.one_by_one / (time.perf_counter() - began)
    print(f"population batch: {batch_rate:,.0f} workers/s; one call per worker: {single_rate:,.1f} workers/s; "
          f"ratio {batch_rate / single_rate:,.0f}×  ({draft.days}-day draft, validated step)")
    return 0 if verdict == "PASS" else 1


if __name__ == "__main__":
    raise SystemExit(main())
