"""The demo trips' plans stay what they were when the search was made faster.

The speed work on the search (cached layer tables, numbered placement states, the compiled kernel's
shared level tables, vectorised population scores) must not change any plan: for every shipped demo
trip (the model its file names, strategy auto) the recommended strategy and, for each strategy, the light windows
(start, end, source) and the days to re-entrain equal those the search gave before that work
(tests/snapshots/demo_trip_plans.json).

A change meant to alter plans (a new rule for windows or sleep) updates the snapshot on purpose:
``python tests/test_search_snapshot.py --update`` plans the demos and rewrites it.
"""

from __future__ import annotations

import json
import sys
from pathlib import Path

import pytest

SNAPSHOT = Path(__file__).resolve().parent / "snapshots" / "demo_trip_plans.json"


def summary(result) -> dict:
    """What the snapshot keeps of a TripPlanResult: strategy, and per strategy windows and days."""
    alternatives = {}
    for name, chosen in result.alternatives.items():
        outcome = chosen.outcome
        alternatives[name] = {
            "days": outcome.reentrainment_days, "origin": chosen.origin,
            "bright": [f"{w.start.isoformat()}/{w.end.isoformat()} {w.source}" for w in outcome.plan.bright],
            "avoid": [f"{w.start.isoformat()}/{w.end.isoformat()} {w.source}" for w in outcome.plan.avoid]}
    return {"strategy": result.strategy, "alternatives": alternatives}


def stored() -> dict:
    return json.loads(SNAPSHOT.read_text(encoding="utf-8"))


@pytest.mark.parametrize("name", sorted(stored()))
def test_demo_plans_are_those_of_the_search_before_the_speed_work(name, planned_demos):
    _, _, result = planned_demos(name)
    # regression snapshot (measured here): plans of the search before the speed work of issue 13
    assert summary(result) == stored()[name]


def test_every_shipped_demo_trip_is_in_the_snapshot():
    from planner.trips.scenario import builtin_scenario_paths

    # regression snapshot (measured here): the snapshot covers the shipped demos
    assert sorted(stored()) == sorted(builtin_scenario_paths())


def _update() -> None:
    from planner import load_model
    from planner.trips.scenario import builtin_scenario_paths, load_trip
    from planner.trips.search import plan_trip

    plans = {}
    for name, path in sorted(builtin_scenario_paths().items()):
        trip, info = load_trip(path)
        plans[name] = summary(plan_trip(trip, load_model(info.model)))
    SNAPSHOT.write_text(json.dumps(plans, indent=1, sort_keys=True) + "\n", encoding="utf-8")


if __name__ == "__main__" and sys.argv[1:] == ["--update"]:
    _update()
