"""A plan as a document that calendars, reports and charts are made from, whatever planner made it.

Any planner (trips today, shift rotations next) hands its result over as a
:class:`PlanDocument`: the events the person must follow (:class:`PlanEvent`, instants in UTC with
the zone of where the person is), one :class:`DayRow` per day with the predicted CBTmin against
its target, a comparison of strategies, the cautions and the citations.  The writers
(:mod:`planner.plans.ics`, :mod:`planner.plans.report`) know nothing about trips or rosters.

No science here: every number in a document comes from the planner's result.  The trip adapter is
:func:`document_from_trip`.
"""

from __future__ import annotations

import hashlib
import re
from dataclasses import dataclass, field, replace
from datetime import date, datetime, timedelta, timezone, tzinfo
from typing import Literal, Mapping

from planner.errors import InputError
from planner.plans.cautions import Caution
from planner.world.localtime import zone_label

UTC = timezone.utc

EventKind = Literal["sleep", "bright_light", "light_avoidance", "work"]

#: Event kinds in words, as calendar categories and legend labels.
KIND_LABELS: dict[str, str] = {"sleep": "Sleep", "bright_light": "Bright light",
                               "light_avoidance": "Light avoidance", "work": "Work"}

#: The phase-response rule behind every window placement (the planner's own, planner.trips.search).
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
    key : str
        Stable within the plan, e.g. ``"2027-03-08/bright_light/1"`` (local date, kind, ordinal): the
        same event of an edited plan keeps its key, which keeps its calendar UID.
    transmission : float or None
        Fraction of light the dark glasses pass [0..1] (light avoidance only).
    caution : str or None
        Key of the caution (:data:`planner.plans.cautions.CAUTIONS`) this event carries in calendars;
        None for the default of its kind and light source (:func:`planner.plans.cautions.event_caution`).
    kss : tuple of (datetime, float)
        Forecast sleepiness along a work event (instants in UTC, Karolinska Sleepiness Scale 1-9); empty
        when none (charted as a band along the shift, not written to calendars).
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
    caution: str | None = None
    kss: tuple = ()

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
        if self.transmission is not None:   # light-avoidance: dark glasses, or an eye mask (near darkness)
            dark = " (near darkness at the eye)" if self.transmission < 0.01 else ""
            return f"{self.source} passing {self.transmission:.0%} of the light{dark}"
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
    group_days : mapping of str to tuple of DayRow, optional
        For a roster with crews: each crew's own day rows (its shifts, its predicted CBTmin), so that a
        report shows one section per crew and never mixes one crew's rows with another's events.
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
    group_days: Mapping[str, tuple[DayRow, ...]] = field(default_factory=dict)

    def __post_init__(self):
        if not re.fullmatch(r"[A-Za-z0-9][A-Za-z0-9.-]*", self.plan_id):
            raise InputError(f"plan id {self.plan_id!r} may hold only letters, digits, '-' and '.'", field="plan_id")
        keys = [e.key for e in self.events]
        if len(set(keys)) != len(keys):
            raise InputError("two events share a key; keys must be unique within a plan", field="events")
        if set(self.group_days) - set(self.groups):
            raise InputError("day rows for a group without events", field="group_days")

    def for_group(self, group: str) -> "PlanDocument":
        """The document of one group (crew): its events and, when known, its own day rows."""
        if group not in self.groups:
            raise InputError(f"no group {group!r}; choose one of: {', '.join(self.groups)}", field="group")
        events = tuple(self.groups[group])
        return replace(self, title=f"{self.title} — {group}", events=events,
                       days=tuple(self.group_days.get(group, self.days)), groups={group: events},
                       group_days={group: self.group_days[group]} if group in self.group_days else {})

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
