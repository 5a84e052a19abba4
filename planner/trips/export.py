"""A planned trip as the JSON document of ``phaseplan trip --json`` and of the web API.

Times are ISO 8601 on the local clock of where the traveller is (while flying, the departure
airport's), with their UTC offset.
"""

from __future__ import annotations

import math
from datetime import datetime
from typing import Any

from planner.engine.parameters import ModelSpec
from planner.plans.cautions import cautions_for
from planner.plans.entries import citation_entry, clock, model_entry, number, window_entry
from planner.trips.evidence import StartingPhase
from planner.trips.model import Trip, trip_days
from planner.trips.robust import EnsembleResult, PlanStats, RobustResult, distribution_spec
from planner.trips.scenario import ScenarioInfo
from planner.trips.search import TripPlanResult
from planner.trips.views import DayView, clock_change_h, day_views, local, movement
from planner.world.places import zone_name


def local_iso(trip: Trip, moment: datetime) -> str:
    return local(trip, moment).isoformat(timespec="minutes")


def outcome_entry(result: Any, alternatives: dict) -> dict[str, Any]:
    outcome = result.outcome if hasattr(result, "outcome") else result
    entry = {
        "aim": outcome.aim,
        "reentrainment_days": outcome.reentrainment_days,
        "box_minutes": number(outcome.box_minutes),
        "near_low_amplitude": bool(outcome.near_low_amplitude),
        "min_amplitude_ratio": number(outcome.min_amplitude_ratio),
        "direction": outcome.direction,
        "net_shift_h": number(outcome.net_shift_h),
        "max_error_while_away_h": number(outcome.max_away_error_h),
        "movement": movement(outcome, alternatives),
    }
    if hasattr(result, "outcome"):
        entry.update({"strategy": result.strategy, "refined": bool(result.refined),
                      "required_shift_h": number(result.required_shift_h)})
    return entry


def day_entry(trip: Trip, view: DayView) -> dict[str, Any]:
    day = view.day
    return {
        "index": day.index,
        "date": day.local_date.isoformat(),
        "kind": day.kind,
        "place": day.place.name,
        "time_zone": zone_name(day.place),
        "arrival_place": day.end_place.name if day.end_place != day.place else None,
        "arrival_time_zone": zone_name(day.end_place) if day.end_place != day.place else None,
        "start": local_iso(trip, day.start),
        "end": local_iso(trip, day.end),
        "target_place": view.target_place.name,
        "sleep": [{"start": local_iso(trip, a), "end": local_iso(trip, b)} for a, b in view.sleep],
        "bright_light": [window_entry(w, lambda m: local_iso(trip, m)) for w in view.bright],
        "light_avoidance": [window_entry(w, lambda m: local_iso(trip, m)) for w in view.avoid],
        "cbtmin": local_iso(trip, view.cbtmin) if view.cbtmin is not None else None,
        "phase_error_h": number(view.error_h),
    }


def trip_document(command: str, trip: Trip, info: ScenarioInfo, model: ModelSpec, plan: TripPlanResult,
                   views: list[DayView]) -> dict[str, Any]:
    chosen = plan.recommended
    return {
        "command": command,
        "scenario": {"name": info.name, "description": info.description, "path": info.path,
                     "round_trip": info.round_trip},
        "model": {**model_entry(model), "citation": model.citation},
        "citations": [citation_entry(model)],
        "strategy": plan.strategy,
        "aim": chosen.outcome.aim,
        "success": bool(plan.success),
        "message": plan.message,
        "reason": plan.reason,
        "reentrainment_days": chosen.outcome.reentrainment_days if chosen.outcome.aim == "route" else None,
        "clock_change_h": number(clock_change_h(trip)),
        "baseline": outcome_entry(plan.baseline, plan.alternatives),
        "alternatives": {name: outcome_entry(result, plan.alternatives) for name, result in plan.alternatives.items()},
        "days": [day_entry(trip, view) for view in views],
        "simulated": plan.simulated,
        "cautions": [c.as_dict() for c in cautions_for()],
        "conventions": {
            "times": "ISO 8601 on the local clock of where the traveller is (while flying: the departure "
                     "airport's), with its UTC offset",
            "reentrainment_days": "days after the arrival day until CBTmin stays within 1 h of the target; "
                                  "null when not within the time away (for aim 'home': of home time)",
            "phase_error_h": "CBTmin minus the target place's entrained CBTmin, in (-12, 12]; + means the "
                             "body clock is later than the target (it must advance)",
            "net_shift_h": "net movement of CBTmin over the time away; + later (delay), - earlier (advance)",
        },
    }


def person_entry(person) -> dict[str, Any]:
    return {"evidence": person.source, "dlmo": None if person.dlmo_h is None else clock(person.dlmo_h),
            "dlmo_date": person.dlmo_date.isoformat() if person.dlmo_date else None, "dlmo_sd_min": person.dlmo_sd_min,
            "light_log": person.light_log, "tau_h": person.tau_h}


def days_value(value: float) -> float | None:
    return float(value) if math.isfinite(value) else None


def stats_entry(trip: Trip, stats: PlanStats) -> dict[str, Any]:
    return {
        "aim": stats.aim,
        "intended_direction": stats.intended,
        "by_day": stats.by_day,
        "probability_by_day_k": number(stats.probability),
        "probability_by_stay_end": number(stats.probability_by_stay_end),
        "probability_by_day": [number(p) for p in stats.probability_by_day],
        "days": {"p10": days_value(stats.days_p10), "median": days_value(stats.days_median),
                 "p90": days_value(stats.days_p90)},
        "wrong_direction_fraction": number(stats.wrong_direction),
        "cbtmin": [{"date": d.isoformat(), "p10": number(stats.cbtmin_clock["p10"][k]),
                    "median": number(stats.cbtmin_clock["median"][k]), "p90": number(stats.cbtmin_clock["p90"][k])}
                   for k, d in enumerate(stats.cbtmin_dates)],
    }


def starting_entry(start: StartingPhase) -> dict[str, Any]:
    return {"source": start.source, "description": start.description,
            "dlmo_clock_h": number(start.dlmo_clock_h[0]), "dlmo_clock": clock(start.dlmo_clock_h[0]),
            "light_log_findings": [f.as_dict() for f in start.findings]}


def population_entry(trip: Trip, people: int, seed: int, evidence, population) -> dict[str, Any] | None:
    if population is None:
        return None
    stats, starting = population
    return {
        "n": people,
        "seed": seed,
        "distribution": {**distribution_spec(evidence),
                         "starting_phase": {"source": starting.source, "extra_sd_h": starting.phase_sd_h}},
        "plans": {name: stats_entry(trip, value) for name, value in stats.items()},
        "conventions": {
            "days": "days after the arrival day until CBTmin stays within 1 h of the person's own target; "
                    "null when that share of people does not re-entrain within the time away",
            "probability_by_day": "fraction re-entrained by each day of the time away (index 0 = arrival day)",
            "wrong_direction_fraction": "fraction whose clock moved the other way than the plan intends",
            "cbtmin": "10th, 50th and 90th percentile of CBTmin per day, hours of the local clock of the place "
                      "the day aims at; may lie outside 0-24 where the fan crosses midnight",
        },
    }


def robust_entry(trip: Trip, result: RobustResult | None, plan: TripPlanResult) -> dict[str, Any] | None:
    if result is None:
        return None
    return {
        "strategy": result.strategy,
        "improved": bool(result.improved),
        "search_people": result.people,
        "simulated": result.simulated,
        "search": {"robust": stats_entry(trip, result.search), "average_person_plan": stats_entry(trip, result.seed_search)},
        "average_person": outcome_entry(result.outcome, plan.alternatives),
        "days": [day_entry(trip, view) for view in day_views(trip, result.outcome)],
    }


def ensemble_entry(trip: Trip, ensemble: EnsembleResult | None) -> dict[str, Any] | None:
    if ensemble is None:
        return None
    members = []
    for member in ensemble.members:
        outcome = member.outcome
        members.append({"model": member.model.id, "citation": member.model.citation,
                        "reentrainment_days": outcome.reentrainment_days if outcome.aim == "route" else None,
                        "direction": outcome.direction, "net_shift_h": number(outcome.net_shift_h),
                        "starting_dlmo_clock": clock(member.starting.dlmo_clock_h[0]),
                        "cbtmin": [local_iso(trip, d.cbtmin) if d.cbtmin is not None else None for d in outcome.days],
                        "phase_error_h": [number(d.error_h) for d in outcome.days]})
    return {"models": members, "cbtmin_range_h": [number(v) for v in ensemble.cbtmin_range_h],
            "disagreements": list(ensemble.disagreements)}


def check_summary(trip: Trip, info: ScenarioInfo) -> dict[str, Any]:
    """What ``phaseplan check`` reports of a valid trip file."""
    flights = [{"from": f.origin.name, "to": f.destination.name,
                "depart": f.depart.astimezone(f.origin.zone).isoformat(timespec="minutes"),
                "arrive": f.arrive.astimezone(f.destination.zone).isoformat(timespec="minutes")}
               for f in trip.flights]
    return {"kind": "trip", "name": info.name, "model": info.model, "round_trip": info.round_trip,
            "clock_change_h": number(clock_change_h(trip)),
            "start": local_iso(trip, trip.start), "end": local_iso(trip, trip.end), "days": len(trip_days(trip)),
            "preparation_days": trip.preparation_days, "flights": flights, "busy": len(trip.busy),
            "person": person_entry(info.person)}
