"""iCalendar (RFC 5545) files from a :class:`~planner.plans.document.PlanDocument`.

One VEVENT per sleep, bright-light, light-avoidance (and, for rosters, work) event, with:

- **Real time zones.** DTSTART and DTEND carry the TZID of where the person is at the event's start
  (an IANA zone key), with one VTIMEZONE per zone used, covering only the plan's own dates
  (:meth:`icalendar.Calendar.add_missing_timezones` with the plan's first and last date, each onset
  as its own RDATE line: some independent readers take only the first value of a comma-separated
  RDATE list). A zone
  without an IANA key is written in UTC (``Z``). Floating (zone-less) times are never written.
  An event across a clock change therefore keeps its real duration in any conforming reader.
- **Stable UIDs.** ``UID`` is a hash of the plan id and the event's key plus the suffix
  ``@phaseplan.invalid`` (a reserved, never-resolving domain, RFC 2606), so exporting the same plan
  again gives the same UIDs and a calendar updates its events instead of adding copies.
- **SEQUENCE** (RFC 5545 §3.8.7.4) starts at 0 and rises by one when an event's content changes.
  The previous export is the memory: pass its bytes as ``previous`` (the CLI does when ``--force``
  replaces an existing file). Each event carries ``X-PHASEPLAN-DIGEST``, a hash of what a person sees
  (times, zone, summary, description, alarm, categories); an unchanged event keeps its SEQUENCE,
  DTSTAMP and LAST-MODIFIED, a changed one gets SEQUENCE + 1 and new stamps.
- ``X-PHASEPLAN-PLAN`` names the plan on every event, so that :mod:`planner.plans.caldav` can tell the
  events of this plan from anything else in a calendar collection.
- A DISPLAY alarm (RFC 5545 §3.6.6) ``alarm_minutes`` before the start, or none.
- The calendar's DESCRIPTION (RFC 7986 §5.2) and ``X-WR-CALDESC`` carry the full cautions and the
  citations; each event's description ends with its one-line caution and a pointer to them.

Times are written to the second (DATE-TIME has no fractions); fractions are dropped.
"""

from __future__ import annotations

import hashlib
from datetime import datetime, timedelta, timezone
from typing import Iterable, Sequence

import icalendar

from planner._version import __version__
from planner.errors import InputError
from planner.plans.cautions import CAUTIONS, EVENT_CAUTION
from planner.plans.document import KIND_LABELS, PlanDocument, PlanEvent

UTC = timezone.utc

#: Right-hand side of every UID: a reserved domain that never resolves (RFC 2606 §2).
UID_DOMAIN = "phaseplan.invalid"
#: Non-standard properties (RFC 5545 §3.8.8.2) that mark this planner's events.
PLAN_PROPERTY = "X-PHASEPLAN-PLAN"
DIGEST_PROPERTY = "X-PHASEPLAN-DIGEST"
#: Default reminder before each event [min] (the issue's default).
DEFAULT_ALARM_MINUTES = 15
PRODID = f"-//phaseplan//phaseplan {__version__}//EN"


def event_uid(plan_id: str, key: str) -> str:
    """The UID of an event: a hash of the plan id and the event key, ``@phaseplan.invalid``."""
    digest = hashlib.sha256(f"{plan_id}\x1f{key}".encode("utf-8")).hexdigest()[:32]
    return f"{digest}@{UID_DOMAIN}"


def _zone_key(event: PlanEvent) -> str | None:
    key = getattr(event.zone, "key", None)
    return key if isinstance(key, str) and key else None


def _on_clock(moment: datetime, event: PlanEvent) -> datetime:
    """An instant on the event's clock (its IANA zone) or in UTC, to the second."""
    moment = moment.replace(microsecond=0)
    return moment.astimezone(event.zone) if _zone_key(event) else moment.astimezone(UTC)


def caution_pointer(document: PlanDocument) -> str:
    return (f"Full cautions and sources: the calendar's description and the plan report ({document.title}).")


def event_description(document: PlanDocument, event: PlanEvent) -> str:
    """What to do, the light level and source, why, and a one-line caution with a pointer to the full ones."""
    lines = [f"What to do: {event.action}", f"Light: {event.light_text()}.", f"Why: {event.purpose}"]
    caution = CAUTIONS.get(EVENT_CAUTION.get(event.kind, ""))
    if caution is not None:
        lines.append(f"Caution: {caution.short}")
    lines.append(caution_pointer(document))
    return "\n".join(lines)


def calendar_description(document: PlanDocument) -> str:
    """The calendar-level text: summary, every caution in full with its sources, and the citations."""
    lines = [document.title, ""]
    lines += [f"{label}: {value}" for label, value in document.summary]
    lines += ["", "CAUTIONS"]
    for caution in document.cautions:
        lines.append(f"- {caution.title}. {caution.text} ({'; '.join(caution.sources)})")
    if document.citations:
        lines += ["", "CITATIONS"]
        lines += [f"- {citation}" for citation in document.citations]
    return "\n".join(lines)


def _digest(fields: Sequence[str]) -> str:
    return hashlib.sha256("\x1f".join(fields).encode("utf-8")).hexdigest()[:24]


def previous_events(data: bytes | None) -> dict[str, tuple[int, str, datetime | None]]:
    """UID → (SEQUENCE, content digest, DTSTAMP) of the events in an earlier export; {} without one.

    Raises
    ------
    InputError
        When ``data`` is not an iCalendar file.
    """
    if not data:
        return {}
    try:
        calendars = icalendar.Calendar.from_ical(data, multiple=True)
    except ValueError as exc:
        raise InputError(f"not an iCalendar file ({exc})") from None
    found = {}
    for calendar in calendars:
        for component in calendar.walk("VEVENT"):
            stamp = component.get("DTSTAMP")
            found[str(component.get("UID"))] = (int(component.get("SEQUENCE", 0)), str(component.get(DIGEST_PROPERTY, "")),
                                                stamp.dt if stamp is not None else None)
    return found


def build_calendar(document: PlanDocument, events: Iterable[PlanEvent] | None = None, *, name: str | None = None,
                   alarm_minutes: float | None = DEFAULT_ALARM_MINUTES, previous: bytes | None = None,
                   now: datetime | None = None) -> icalendar.Calendar:
    """The plan (or some of its events) as an :class:`icalendar.Calendar`.

    Parameters
    ----------
    document : PlanDocument
    events : iterable of PlanEvent, optional
        The events to write; default all of ``document.events`` (a roster passes one group's).
    name : str, optional
        Calendar name (``X-WR-CALNAME``); default the document's title.
    alarm_minutes : float or None
        A display alarm this many minutes [min] before each event; None for no alarms.
    previous : bytes, optional
        An earlier export of the same plan: unchanged events keep their SEQUENCE and DTSTAMP,
        changed ones get SEQUENCE + 1 (see the module docstring).
    now : datetime, optional
        DTSTAMP of new and changed events (UTC); default the current time.

    Returns
    -------
    icalendar.Calendar
    """
    if alarm_minutes is not None and not 0 <= alarm_minutes <= 24 * 60:
        raise InputError(f"alarm minutes must be between 0 and 1440, got {alarm_minutes:g}", field="alarm_minutes")
    chosen = list(document.events if events is None else events)
    stamp_now = (now or datetime.now(UTC)).astimezone(UTC).replace(microsecond=0)
    earlier = previous_events(previous)
    calendar = icalendar.Calendar()
    calendar.add("PRODID", PRODID)
    calendar.add("VERSION", "2.0")
    calendar.add("CALSCALE", "GREGORIAN")
    calendar.add("X-WR-CALNAME", name or document.title)
    description = calendar_description(document)
    calendar.add("DESCRIPTION", description)
    calendar.add("X-WR-CALDESC", icalendar.vText(description))
    for event in sorted(chosen, key=lambda e: (e.start, e.key)):
        calendar.add_component(_vevent(document, event, alarm_minutes, earlier, stamp_now))
    if chosen:
        first = min(e.start for e in chosen).date() - timedelta(days=1)
        last = max(e.end for e in chosen).date() + timedelta(days=2)
        calendar.add_missing_timezones(first, last)
        _one_rdate_per_line(calendar)
    return calendar


def _one_rdate_per_line(calendar: icalendar.Calendar) -> None:
    """Write each VTIMEZONE onset as its own RDATE property (RFC 5545 §3.8.5.2 allows both forms):
    some readers (vobject, and servers built on it) take only the first value of a comma-separated
    list, which would lose every later clock change of a plan spanning more than one."""
    for zone in calendar.walk("VTIMEZONE"):
        for observance in zone.subcomponents:
            if "RDATE" not in observance:
                continue
            values = observance["RDATE"] if isinstance(observance["RDATE"], list) else [observance["RDATE"]]
            onsets = [item.dt for value in values for item in value.dts]
            del observance["RDATE"]
            for onset in onsets:
                observance.add("RDATE", onset)


def _vevent(document: PlanDocument, event: PlanEvent, alarm_minutes: float | None,
            earlier: dict, stamp_now: datetime) -> icalendar.Event:
    uid = event_uid(document.plan_id, event.key)
    start, end = _on_clock(event.start, event), _on_clock(event.end, event)
    description = event_description(document, event)
    summary = event.summary
    categories = ["phaseplan", KIND_LABELS[event.kind]]
    seen = [start.isoformat(), str(_zone_key(event)), end.isoformat(), summary, description, event.place,
            ",".join(categories), "" if alarm_minutes is None else f"{alarm_minutes:g}"]
    digest = _digest(seen)
    sequence, stamp = 0, stamp_now
    if uid in earlier:
        old_sequence, old_digest, old_stamp = earlier[uid]
        if old_digest == digest:
            sequence, stamp = old_sequence, old_stamp or stamp_now
        else:
            sequence = old_sequence + 1
    vevent = icalendar.Event()
    vevent.add("UID", uid)
    vevent.add("DTSTAMP", stamp)
    vevent.add("LAST-MODIFIED", stamp)
    vevent.add("SEQUENCE", sequence)
    vevent.add("DTSTART", start)
    vevent.add("DTEND", end)
    vevent.add("SUMMARY", summary)
    vevent.add("DESCRIPTION", description)
    vevent.add("LOCATION", event.place)
    vevent.add("CATEGORIES", categories)
    vevent.add("TRANSP", "OPAQUE" if event.kind in ("sleep", "work") else "TRANSPARENT")
    vevent.add(PLAN_PROPERTY, document.plan_id)
    vevent.add(DIGEST_PROPERTY, digest)
    if alarm_minutes is not None:
        alarm = icalendar.Alarm()
        alarm.add("ACTION", "DISPLAY")
        alarm.add("DESCRIPTION", f"{summary} in {alarm_minutes:g} min")
        alarm.add("TRIGGER", timedelta(minutes=-alarm_minutes))
        vevent.add_component(alarm)
    return vevent


def calendar_bytes(document: PlanDocument, events: Iterable[PlanEvent] | None = None, **options) -> bytes:
    """:func:`build_calendar` serialised (CRLF line ends, folded lines, RFC 5545 §3.1)."""
    return build_calendar(document, events, **options).to_ical()


def calendars_by_group(document: PlanDocument, group: str | None = None) -> dict[str | None, list[PlanEvent]]:
    """Which events go into which calendar: one per worker group of a roster (or just the chosen
    ``group``), or one calendar of every event (key None) when the document has no groups.

    Raises
    ------
    InputError
        For a ``group`` the document does not have (the message lists those it has).
    """
    if not document.groups:
        if group is not None:
            raise InputError(f"this plan has no groups; {group!r} cannot be chosen", field="group")
        return {None: list(document.events)}
    if group is None:
        return {name: list(events) for name, events in document.groups.items()}
    if group not in document.groups:
        raise InputError(f"no group {group!r}; choose one of: {', '.join(document.groups)}", field="group")
    return {group: list(document.groups[group])}
