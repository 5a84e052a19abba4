"""The trip search never does worse than a brute-force reference plan.

The reference (``TripPlanner.reference_candidates`` driven by the same day-by-day greedy): each
day, the best start of a 2- or 3-h bright-light window on a 15-min grid, no avoidance but the eye masks
on flights, no sleep shift.  On trips of our own the recommended plan of each strategy must re-entrain no later than
the reference computed here, independently of the plan's own search.
"""

from __future__ import annotations

import math
from datetime import timedelta

import pytest

from conftest import lisbon_trip_toml
from planner.engine.parameters import load_model
from planner.trips.scenario import load_trip
from planner.trips.search import TripPlanner, keep_to_lobes, plan_trip

# Invented travellers (no single source); real cities and zones.
TRIPS = {
    "east, Lisbon to Osaka": dict(destination="Osaka", time_zone="Asia/Tokyo", latitude=34.69, longitude=135.50,
                                 stay_days=5, preparation_days=1, depart="2027-04-12T11:00",
                                 arrive="2027-04-13T08:30"),
    "west, Lisbon to Mexico City": dict(destination="Mexico City", time_zone="America/Mexico_City",
                                       latitude=19.43, longitude=-99.13, stay_days=5, preparation_days=1,
                                       depart="2027-10-05T10:00", arrive="2027-10-05T16:30"),
}


def days_or_inf(outcome) -> float:
    return math.inf if outcome.reentrainment_days is None else outcome.reentrainment_days


@pytest.mark.parametrize("name", list(TRIPS))
def test_the_search_never_loses_to_the_brute_force_reference(name, tmp_path):
    path = tmp_path / "trip.toml"
    path.write_text(lisbon_trip_toml(**TRIPS[name]))
    trip, _ = load_trip(path)
    model = load_model("forger1999")
    planner = TripPlanner(trip, model)
    result = plan_trip(trip, model)
    for strategy in ("advance", "delay"):
        _, _, searched = planner.greedy(strategy, planner.reference_candidates)
        reference = planner.evaluator.evaluate([searched.plan], final=True)[0]
        # as every plan, the reference keeps its windows in their lobes of its own simulated CBTmin
        reference = keep_to_lobes(planner.evaluator, reference, strategy)
        # the reference is what it claims: bright light only, windows of at most 3 h (besides the sleep and eye
        # masks on flights every plan places by its direction, planner.trips.travel_sleep)
        assert all(w.source == "eye mask" for w in reference.plan.avoid) and reference.plan.bright
        assert all(w.end - w.start <= timedelta(hours=3) for w in reference.plan.bright)
        chosen = result.alternatives[strategy].outcome
        # regression check against the brute-force reference (greedy window start on a 15-min grid); no external source
        assert days_or_inf(chosen) <= days_or_inf(reference), (strategy, chosen.reentrainment_days,
                                                               reference.reentrainment_days)
        assert result.alternatives[strategy].reference.reentrainment_days == reference.reentrainment_days
