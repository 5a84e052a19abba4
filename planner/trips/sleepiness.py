"""The sleepiest hours of a trip's travel and arrival days (three-process model; :mod:`planner.engine.sleepiness`)."""

from __future__ import annotations

import math

from planner.engine.sleepiness import acrophase_after_cbtmin, load_alertness_model, sleepiest_hours, steady_s
from planner.trips.views import local


def _num(value) -> float | None:
    value = float(value)
    return round(value, 2) if math.isfinite(value) else None


def trip_sleepiest(trip, outcome, model) -> list[dict]:
    """The sleepiest awake hour of each travel day and each arrival day (the first stay day after travel).

    ``outcome`` is a :class:`planner.trips.search.Outcome` (its plan's sleep and daily CBTmin); times are on the
    local clock of where the traveller is.
    """
    days = [d.day for d in outcome.days]
    picked = [k for k, day in enumerate(days)
              if day.kind == "travel" or (day.kind == "stay" and k > 0 and days[k - 1].kind == "travel")]
    if not picked or not outcome.plan.sleep:
        return []
    alert = load_alertness_model()
    s0 = steady_s(trip.home.bed_h, trip.home.wake_h, trip.home.bed_h, alert)
    sleeps = sorted(outcome.plan.sleep)
    # Process S starts at the first sleep of the plan with the habitual day's bedtime value.
    spans = [(days[k].start, days[k].end) for k in picked]
    hours = sleepiest_hours(sleeps, [d.cbtmin for d in outcome.days], spans, acrophase_after_cbtmin(model), s0,
                            alert)
    rows = []
    for k, found in zip(picked, hours):
        day = days[k]
        rows.append({"date": day.local_date.isoformat(), "kind": "travel" if day.kind == "travel" else "arrival",
                     "start": None if found is None else local(trip, found.start).isoformat(timespec="minutes"),
                     "end": None if found is None else local(trip, found.end).isoformat(timespec="minutes"),
                     "mean_kss": None if found is None else _num(found.mean_kss),
                     "peak_kss": None if found is None else _num(found.peak_kss)})
    return rows
