"""A plan as a document that calendars, reports and charts are made from, whatever planner made it.

Any planner (trips today, shift rotations next) hands its result over as a
:class:`PlanDocument`: the events the person must follow (:class:`PlanEvent`, instants in UTC with
the zone of where the person is), one :class:`DayRow` per day with the predicted CBTmin against
its target, a comparison of strategies, the cautions and the citations.  The writers
(:mod:`planner.ics`, :mod:`planner.report`) know nothing about trips or rosters.

No science here: every number in a document comes from the planner's result.  The trip adapter is
:func:`document_from_trip`.
"""

from __future__ import annotations

import hashlib
import math
import re
from dataclasses import dataclass, field
from datetime import date, datetime, timedelta, timezone, tzinfo
from typing import Literal, Mapping

from planner.cautions import Caution, TRIP_CAUTIONS, cautions_for
from planner.errors import InputError
from planner.scenario import ScenarioInfo
from planner.trip import Trip, Window
from planner.tripplan import TripPlanResult
from planner.tripview import (DayView, clock_change_h, day_views, local, movement, place_at, settling, strategy_name,
                              zone_label)

UTC = timezone.utc

EventKind = Literal["sleep", "bright_light", "light_avoidance", "work"]

#: Event kinds in words, as calendar categories and legend labels.
KIND_LABELS: dict[str, str] = {"sleep": "Sleep", "bright_light": "Bright light",
                               "light_avoidance": "Light avoidance", "work": "Work"}

#: The phase-response rule behind every window placement (the planner's own, planner.tripplan).
PRC_CITATION = ("Khalsa SBS, Jewett ME, Cajochen C, Czeisler CA (2003). A phase response curve to single bright "
                "light pulses in human subjects. J Physiol 549(3):945-952. doi:10.1113/jphysiol.2003.040477")


@dataclass(frozen=True)
class PlanEvent:
    """One thing the person does at a set time: sleep, bright light, light avoidance or work.

    Attributes
    ----------
    kind : {"sleep", "bright_light", "light_avoidance", "work"}
    start, end : datetime
        Aware instants in UTC; ``end`` after ``start``.
    zone : tzinfo
        The clock of where the person is at ``start`` (a :class:`zoneinfo.ZoneInfo` so that calendars
        can name it by its IANA key; other tzinfo objects are written in UTC).
    place : str
        Where the person is at ``start`` (in flight: the airport left).
    day : date
        The local date of the :class:`DayRow` the event belongs to.
    summary : str
        A short title, e.g. ``"Bright light: light box"``.
    action : str
        What to do, in plain words.
    purpose : str
        Why, in plain words (e.g. "moves the body clock earlier (a phase advance) ...").
    source : str
        What gives the light or the period: ``"light box"``, ``"daylight"``, ``"dark glasses"``,
        ``"sleep"``, a shift name...
    lux : float or None
        Light at the eye [lux] (0 for sleep); None when it does not apply.
    transmission : float or None
        Fraction of light the dark glasses pass [0..1] (light avoidance only).
    key : str
        Stable within the plan, e.g. ``"2027-03-08/bright_light/1"`` (local date, kind, ordinal): the
        same event of an edited plan keeps its key, which keeps its calendar UID.
    """

    kind: EventKind
    start: datetime
    end: datetime
    zone: tzinfo
    place: str
    day: date
    summary: str
    action: str
    purpose: str
    source: str
    lux: float | None
    key: str
    transmission: float | None = None

    def __post_init__(self):
        if self.start.tzinfo is None or self.end.tzinfo is None:
            raise InputError("event times must carry a time zone (floating times are not allowed)", field=self.key)
        if self.end <= self.start:
            raise InputError("event ends before it starts", field=self.key)
        if self.kind not in KIND_LABELS:
            raise InputError(f"unknown event kind {self.kind!r}; allowed: {', '.join(KIND_LABELS)}", field=self.key)

    @property
    def minutes(self) -> float:
        """Real duration [min] (computed in UTC, so a clock change inside the event does not count)."""
        return (self.end.astimezone(UTC) - self.start.astimezone(UTC)).total_seconds() / 60.0

    def local_start(self) -> datetime:
        return self.start.astimezone(self.zone)

    def local_end(self) -> datetime:
        return self.end.astimezone(self.zone)

    def clock_text(self, row_zone: tzinfo | None = None) -> str:
        """Local start–end on the event's clock, e.g. ``"06:30–07:30"``; the zone's abbreviation is added
        when it is not the clock of ``row_zone`` at the event's start."""
        return span_text(self.start, self.end, self.zone, row_zone)

    def light_text(self) -> str:
        """The light level and its source in words, e.g. ``"10,000 lux at the eye (light box)"``."""
        if self.transmission is not None:
            return f"{self.source} passing {self.transmission:.0%} of the light"
        if self.lux is None:
            return self.source
        if self.kind == "sleep":
            return "dark, eyes closed (0 lux)"
        return f"{self.lux:,.0f} lux at the eye ({self.source})"


@dataclass(frozen=True)
class DayRow:
    """One day of the plan as the day-by-day table and the chart show it.

    Attributes
    ----------
    date : date
        Local date where the day starts.
    zone : tzinfo
        The clock the row is shown on (where the person is at the day's start).
    zone_text : str
        The clock in words, e.g. ``"WET +00:00"`` or ``"WET +00:00 → JST +09:00"`` on a travel day.
    label : str
        Kind of day: ``"preparation"``, ``"travel"``, ``"stay"``, a shift name, ``"off"``...
    place : str
    cbtmin : datetime or None
        Predicted CBTmin of the day (UTC instant); None when the minimum moved past the day.
    target : datetime or None
        The target CBTmin nearest the predicted one (UTC instant): where CBTmin should be that day.
    target_place : str
        Whose clock the target belongs to.
    error_h : float
        CBTmin minus target, in (−12, 12] [h]; + means the body clock is later than the target.
        NaN without a CBTmin.
    band : tuple of float or None
        (10th percentile, median, 90th percentile) of CBTmin in a simulated population, as local clock
        hours of ``zone`` [h]; None for a single person.
    cbtmin_zone : tzinfo or None
        The clock of where the person is at the predicted CBTmin (it can differ from ``zone`` on a
        travel day); None means ``zone``.
    """

    date: date
    zone: tzinfo
    zone_text: str
    label: str
    place: str
    cbtmin: datetime | None
    target: datetime | None
    target_place: str
    error_h: float
    band: tuple[float, float, float] | None = None
    cbtmin_zone: tzinfo | None = None

    @property
    def marker_zone(self) -> tzinfo:
        """The clock the CBTmin and target markers are shown on."""
        return self.cbtmin_zone if self.cbtmin_zone is not None else self.zone


@dataclass(frozen=True)
class Section:
    """An extra table shown side by side with its siblings in a report (e.g. a roster's drafts).

    Attributes
    ----------
    title : str
    columns : tuple of str
    rows : tuple of tuple of str
    note : str
    """

    title: str
    columns: tuple[str, ...]
    rows: tuple[tuple[str, ...], ...]
    note: str = ""


@dataclass(frozen=True)
class Period:
    """A fixed period the plan works around, e.g. a flight (shown in the chart, not in calendars).

    Attributes
    ----------
    label : str
        What it is, e.g. ``"flight Lisbon → Tokyo"``; the chart's legend uses the first word.
    start, end : datetime
        Aware instants (UTC).
    zone : tzinfo
        The clock it is drawn on (for a flight: the departure airport's, as the day table shows it).
    """

    label: str
    start: datetime
    end: datetime
    zone: tzinfo


@dataclass(frozen=True)
class PlanDocument:
    """A finished plan, ready for calendars and reports.

    Attributes
    ----------
    plan_id : str
        Stable identifier of the plan, from the scenario (not from its results): the same scenario
        planned again, even after edits, keeps its ``plan_id``, so calendars update instead of
        duplicating. Letters, digits, ``-`` and ``.`` only.
    title : str
    summary : tuple of (str, str)
        Label/value lines of the job summary (route, clock change, model, recommendation...).
    events : tuple of PlanEvent
        Every event of the plan, in time order (for a roster: every group's).
    days : tuple of DayRow
    comparison : tuple of dict
        Strategy comparison, one dict per row with the same keys in display order (column headers).
    recommended : int or None
        Index of the recommended row of ``comparison``.
    cautions : tuple of Caution
    citations : tuple of str
    kind : str
        ``"trip"`` or ``"roster"``; says which words the report uses.
    groups : mapping of str to tuple of PlanEvent, optional
        For a roster: each worker group's (or chosen worker's) events; one calendar per group.
    sections : tuple of Section
        Extra tables shown side by side (a roster's drafts, the population spread).
    message : str
        The planner's result in one sentence (reached or not, and by how much).
    context : tuple of Period
        Fixed periods the plan works around (flights), drawn in the chart but never written to
        calendars (the person has them already).
    """

    plan_id: str
    title: str
    summary: tuple[tuple[str, str], ...]
    events: tuple[PlanEvent, ...]
    days: tuple[DayRow, ...]
    comparison: tuple[dict, ...] = ()
    recommended: int | None = None
    cautions: tuple[Caution, ...] = ()
    citations: tuple[str, ...] = ()
    kind: str = "trip"
    groups: Mapping[str, tuple[PlanEvent, ...]] = field(default_factory=dict)
    sections: tuple[Section, ...] = ()
    message: str = ""
    context: tuple["Period", ...] = ()

    def __post_init__(self):
        if not re.fullmatch(r"[A-Za-z0-9][A-Za-z0-9.-]*", self.plan_id):
            raise InputError(f"plan id {self.plan_id!r} may hold only letters, digits, '-' and '.'", field="plan_id")
        keys = [e.key for e in self.events]
        if len(set(keys)) != len(keys):
            raise InputError("two events share a key; keys must be unique within a plan", field="events")

    def first_date(self) -> date:
        """Earliest local date of the plan (of its days and events)."""
        return min([d.date for d in self.days] + [e.local_start().date() for e in self.events])

    def last_date(self) -> date:
        """Latest local date of the plan (of its days and events)."""
        # an event ending at midnight ends on the date before (its last instant is then)
        ends = [(e.end - timedelta(microseconds=1)).astimezone(e.zone).date() for e in self.events]
        return max([d.date for d in self.days] + ends)


def clock_text(moment: datetime, zone: tzinfo, row_zone: tzinfo | None = None) -> str:
    """``moment`` as HH:MM on the clock of ``zone``, with the zone abbreviation when ``row_zone`` shows
    another clock at that moment."""
    at = moment.astimezone(zone)
    text = at.strftime("%H:%M")
    if row_zone is not None and zone_label(moment.astimezone(row_zone)) != zone_label(at):
        text += f" {zone_label(at).split()[0]}"
    return text


def span_text(start: datetime, end: datetime, zone: tzinfo, row_zone: tzinfo | None = None) -> str:
    """``start``–``end`` on the clock of ``zone`` (see :func:`clock_text`)."""
    first = clock_text(start, zone, row_zone)
    last = clock_text(end, zone, row_zone)
    if first.count(" ") and last.count(" ") and first.split()[1] == last.split()[1]:
        return f"{first.split()[0]}–{last}"
    return f"{first}–{last}"


def stable_id(kind: str, name: str) -> str:
    """A plan id from a scenario's kind and name: readable slug plus a short hash of the exact name."""
    slug = re.sub(r"[^a-z0-9]+", "-", name.lower()).strip("-")[:40].strip("-") or "plan"
    digest = hashlib.sha256(f"{kind}\x1f{name}".encode("utf-8")).hexdigest()[:10]
    return f"{kind}-{slug}-{digest}"


# --------------------------------------------------------------------------- trips

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
    action = (f"Wear the dark glasses for {minutes} min (they pass {window.lux:.0%} of the light) or stay in "
              "dim light indoors.")
    if strategy == "delay":
        purpose = (f"Light in these hours, after {_cbtmin_note(trip, view)}, would move the body clock earlier "
                   "and undo the planned delay; avoiding it keeps the clock moving later.")
    else:
        purpose = (f"Light in these hours, before {_cbtmin_note(trip, view)}, would move the body clock later "
                   "and undo the planned advance; avoiding it keeps the clock moving earlier.")
    return dict(kind="light_avoidance", summary="Avoid light: dark glasses", action=action, purpose=purpose,
                source=window.source, lux=None, transmission=float(window.lux))


def _sleep_event(trip: Trip, view: DayView, strategy: str) -> dict:
    if strategy == "home":
        purpose = "Home sleep hours, kept while away, hold the body clock on home time."
    else:
        purpose = (f"Sleep in the dark at the planned hours, part of the {strategy_name(strategy)} plan toward "
                   f"{_target_words(view)}; closed eyes also keep light out at the wrong time.")
    return dict(kind="sleep", summary="Sleep", action="Lights out and eyes closed; keep the room dark.",
                purpose=purpose, source="sleep", lux=0.0, transmission=None)


def trip_plan_id(info: ScenarioInfo) -> str:
    """The stable plan id of a trip scenario (from its name)."""
    return stable_id("trip", info.name)


def _trip_events(trip: Trip, views: list[DayView], strategy: str) -> list[PlanEvent]:
    events = []
    for view in views:
        day = view.day.local_date
        items = [((a, b), _sleep_event(trip, view, strategy)) for a, b in view.sleep]
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

    The fan is on the clock of the day's target place (:class:`planner.robust.PlanStats`); the row shows
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
            # error = CBTmin − target (planner.tripplan), so the target instant is CBTmin − error
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
              "body clock": movement(outcome, plan.alternatives)} for name, outcome in rows]
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
        ``(stats, starting)`` from :func:`planner.robust.population_report`; the recommended plan's
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
