"""A trip plan as the planner-neutral :class:`planner.plans.document.PlanDocument` (calendars, reports)."""

from __future__ import annotations

import math
from datetime import datetime, timedelta

from planner.plans.cautions import TRIP_CAUTIONS, cautions_for
from planner.plans.document import PRC_CITATION, UTC, DayRow, Period, PlanDocument, PlanEvent, stable_id
from planner.trips.model import EYE_MASK, Trip, sleep_setting
from planner.trips.scenario import ScenarioInfo
from planner.trips.search import TripPlanResult
from planner.trips.views import (
    DayView,
    clock_change_h,
    day_views,
    local,
    movement,
    place_at,
    settling,
    strategy_name,
)
from planner.world.light import Window
from planner.world.localtime import zone_label


def _hhmm(moment: datetime) -> str:
    return moment.strftime("%H:%M")


def _cbtmin_note(trip: Trip, view: DayView) -> str:
    if view.cbtmin is None:
        return "the body clock's minimum"
    return f"the body clock's minimum (CBTmin, predicted {_hhmm(local(trip, view.cbtmin))})"


def _target_words(view: DayView) -> str:
    return f"{view.target_place.name} time"


def _bright_event(trip: Trip, view: DayView, window: Window, strategy: str) -> dict:
    minutes = round((window.end - window.start).total_seconds() / 60.0)
    if window.source == "light box":
        action = (f"Sit at the light box for {minutes} min, eyes open, without staring into the lamp "
                  f"({window.lux:,.0f} lux at the eye); you may read or eat.")
    else:
        action = (f"Go outdoors in daylight for {minutes} min (about {window.lux:,.0f} lux); no sunglasses, "
                  "no need to look at the sun.")
    if strategy == "delay":
        purpose = (f"Light in these hours, before {_cbtmin_note(trip, view)}, moves the body clock later "
                   f"(a phase delay) toward {_target_words(view)}.")
    else:
        purpose = (f"Light in these hours, after {_cbtmin_note(trip, view)}, moves the body clock earlier "
                   f"(a phase advance) toward {_target_words(view)}.")
    return dict(kind="bright_light", summary=f"Bright light: {window.source}", action=action, purpose=purpose,
                source=window.source, lux=float(window.lux), transmission=None)


def _avoid_event(trip: Trip, view: DayView, window: Window, strategy: str) -> dict:
    minutes = round((window.end - window.start).total_seconds() / 60.0)
    if window.source == EYE_MASK:
        return dict(_avoid_purpose(trip, view, strategy), kind="light_avoidance", summary="Dim light: eye mask",
                    action=(f"Awake in your seat: wear the eye mask for {minutes} min and rest with the cabin light "
                            "kept out; take it off to get up or walk about."),
                    source=window.source, lux=None, transmission=float(window.lux), caution="eye_mask")
    action = (f"Wear the dark glasses for {minutes} min (they pass {window.lux:.0%} of the light) or stay in "
              "dim light indoors.")
    return dict(_avoid_purpose(trip, view, strategy), kind="light_avoidance", summary="Dim light: dark glasses",
                action=action, source=window.source, lux=None, transmission=float(window.lux))


def _avoid_purpose(trip: Trip, view: DayView, strategy: str) -> dict:
    """Why a light-avoidance window sits where it does (the lobe opposite the plan's direction)."""
    if strategy == "delay":
        purpose = (f"Light in these hours, after {_cbtmin_note(trip, view)}, would move the body clock earlier "
                   "and undo the planned delay; avoiding it keeps the clock moving later.")
    else:
        purpose = (f"Light in these hours, before {_cbtmin_note(trip, view)}, would move the body clock later "
                   "and undo the planned advance; avoiding it keeps the clock moving earlier.")
    return {"purpose": purpose}


def _sleep_event(trip: Trip, view: DayView, strategy: str, start: datetime, end: datetime) -> dict:
    if strategy == "home":
        purpose = "Home sleep hours, kept while away, hold the body clock on home time."
    else:
        purpose = (f"Sleep in the dark at the planned hours, part of the {strategy_name(strategy)} plan toward "
                   f"{_target_words(view)}; closed eyes also keep light out at the wrong time.")
    setting = sleep_setting(trip, start, end)
    if setting != "bed" and strategy in ("advance", "delay"):
        side = "before" if strategy == "advance" else "after"
        purpose += (f" Travel sleep goes {side} the body clock's minimum where the flight allows, the hours in which "
                    "cabin light would move the clock against the plan (or where a nap keeps the time awake "
                    "under a day).")
    if setting == "in flight":
        return dict(kind="sleep", summary="Sleep in flight",
                    action="Eye mask on (it keeps the cabin light out), seat reclined, earplugs if you have them; "
                           "skip the meal service if it falls in these hours.",
                    purpose=purpose, source="sleep", lux=0.0, transmission=None)
    if setting == "layover":
        return dict(kind="sleep", summary="Sleep on the layover",
                    action="Rest in a quiet, dark place (an airport hotel or rest area) with an eye mask; set an "
                           "alarm for the connecting flight.", purpose=purpose, source="sleep", lux=0.0,
                    transmission=None)
    return dict(kind="sleep", summary="Sleep", action="Lights out and eyes closed; keep the room dark.",
                purpose=purpose, source="sleep", lux=0.0, transmission=None)


def trip_plan_id(info: ScenarioInfo) -> str:
    """The stable plan id of a trip scenario (from its name)."""
    return stable_id("trip", info.name)


def _whole_sleeps(trip: Trip, sleeps) -> list[tuple[datetime, datetime]]:
    """The sleeps as the person sleeps them, not cut by the plan's ends: the night running into the plan's
    start is the person's own (left out), and the night the plan ends in runs on to the place's wake time
    (the simulation stops at the end; a calendar should not say "sleep 22:00–00:00")."""
    whole = []
    for bed, wake in sleeps:
        if bed <= trip.start:
            continue
        if wake >= trip.end:
            place = place_at(trip, bed)
            wake = max(wake, bed + timedelta(hours=(place.wake_h - place.bed_h) % 24.0))
        whole.append((bed, wake))
    return whole


def _trip_events(trip: Trip, views: list[DayView], strategy: str) -> list[PlanEvent]:
    events = []
    for view in views:
        day = view.day.local_date
        items = [((a, b), _sleep_event(trip, view, strategy, a, b)) for a, b in _whole_sleeps(trip, view.sleep)]
        items += [((w.start, w.end), _bright_event(trip, view, w, strategy)) for w in view.bright]
        items += [((w.start, w.end), _avoid_event(trip, view, w, strategy)) for w in view.avoid]
        ordinals: dict[str, int] = {}
        for (start, end), fields in items:
            ordinal = ordinals[fields["kind"]] = ordinals.get(fields["kind"], 0) + 1
            where = place_at(trip, start)
            events.append(PlanEvent(start=start.astimezone(UTC), end=end.astimezone(UTC), zone=where.zone,
                                    place=where.name, day=day, key=f"{day.isoformat()}/{fields['kind']}/{ordinal}",
                                    **fields))
    return sorted(events, key=lambda e: (e.start, e.kind))


def _trip_bands(trip: Trip, views: list[DayView], fan: dict | None) -> list:
    """A population's CBTmin fan per day moved onto each row's clock: (p10, median, p90) [h] or None.

    The fan is on the clock of the day's target place (:class:`planner.trips.robust.PlanStats`); the row shows
    the clock of where the traveller is at the day's start.
    """
    if fan is None:
        return [None] * len(views)
    bands = []
    for k, view in enumerate(views):
        values = [float(fan[key][k]) for key in ("p10", "median", "p90")] if k < len(fan["median"]) else []
        if len(values) != 3 or not all(math.isfinite(v) for v in values):
            bands.append(None)
            continue
        moment = view.day.start
        shift = (moment.astimezone(view.day.place.zone).utcoffset()
                 - moment.astimezone(view.target_place.zone).utcoffset()).total_seconds() / 3600.0
        bands.append(tuple(v + shift for v in values))
    return bands


def _trip_days(trip: Trip, views: list[DayView], fan: dict | None = None) -> list[DayRow]:
    rows = []
    bands = _trip_bands(trip, views, fan)
    for view, band in zip(views, bands):
        day = view.day
        start = local(trip, day.start)
        text = zone_label(start)
        if day.end_place != day.place:
            end_label = zone_label(day.end.astimezone(day.end_place.zone))
            if end_label != text:
                text += f" → {end_label}"
        target = None
        if view.cbtmin is not None and math.isfinite(view.error_h):
            # error = CBTmin − target (planner.trips.search), so the target instant is CBTmin − error
            target = view.cbtmin - timedelta(hours=float(view.error_h))
        place = day.place.name if day.end_place == day.place else f"{day.place.name} → {day.end_place.name}"
        marker_zone = place_at(trip, view.cbtmin).zone if view.cbtmin is not None else None
        rows.append(DayRow(day.local_date, day.place.zone, text, day.kind, place, view.cbtmin, target,
                           view.target_place.name, float(view.error_h), band=band, cbtmin_zone=marker_zone))
    return rows


def _comparison(plan: TripPlanResult) -> tuple[list[dict], int]:
    rows = [(name, result.outcome) for name, result in plan.alternatives.items()] + [("no plan", plan.baseline)]
    table = [{"plan": strategy_name(name), "re-entrains": settling(outcome),
              "light box": f"{outcome.box_minutes:.0f} min",
              "near low amplitude": "yes" if outcome.near_low_amplitude else "no",
              "body clock": movement(outcome, plan.alternatives, name)} for name, outcome in rows]
    recommended = [name for name, _ in rows].index(plan.strategy)
    return table, recommended


def document_from_trip(trip: Trip, info: ScenarioInfo, plan: TripPlanResult,
                       views: list[DayView] | None = None, population=None) -> PlanDocument:
    """A trip plan as a :class:`PlanDocument`.

    Parameters
    ----------
    trip : Trip
    info : ScenarioInfo
        The scenario's name and description (the plan id comes from the name).
    plan : TripPlanResult
        The planner's result; its recommended plan becomes the events.
    views : list of DayView, optional
        ``day_views(trip, plan.recommended.outcome)`` when the caller has it already.
    population : tuple, optional
        ``(stats, starting)`` from :func:`planner.trips.robust.population_report`; the recommended plan's
        CBTmin fan becomes each day's ``band`` (the report draws it) and its success figures join the
        summary.

    Returns
    -------
    PlanDocument
    """
    views = views if views is not None else day_views(trip, plan.recommended.outcome)
    change = clock_change_h(trip)
    route = " → ".join([trip.home.name] + [f.destination.name for f in trip.flights])
    first, last = local(trip, trip.start), local(trip, trip.end)
    summary = [("traveller's trip", info.name)]
    if info.description:
        summary.append(("about", info.description))
    summary += [
        ("route", route),
        ("clock change", f"{abs(change):g} h {'east' if change > 0 else 'west'} at the first arrival"
         if change else "none"),
        ("planned", f"{first:%Y-%m-%d %H:%M} {zone_label(first).split()[0]} to "
                    f"{last:%Y-%m-%d %H:%M} {zone_label(last).split()[0]} ({len(views)} days)"),
        ("recommended", f"{strategy_name(plan.strategy)}: {plan.reason}"),
        ("result", plan.message),
    ]
    comparison, recommended = _comparison(plan)
    fan = None
    if population is not None:
        stats = population[0].get("recommended")
        if stats is not None:
            fan = stats.cbtmin_clock
            summary.append(("population", f"{stats.size} simulated people: {stats.probability_by_stay_end:.0%} "
                                          f"re-entrained before the time away ends; {stats.wrong_direction:.0%} "
                                          "moved the other way than intended"))
    return PlanDocument(
        plan_id=trip_plan_id(info), title=info.name, summary=tuple(summary),
        events=tuple(_trip_events(trip, views, plan.strategy)), days=tuple(_trip_days(trip, views, fan)),
        comparison=tuple(comparison), recommended=recommended, cautions=tuple(cautions_for(TRIP_CAUTIONS)),
        citations=tuple(plan.citations) + (PRC_CITATION,), kind="trip", message=plan.message,
        context=tuple(Period(f"flight {f.origin.name} → {f.destination.name}", f.depart, f.arrive, f.origin.zone)
                      for f in trip.flights))
