"""iCalendar export: RFC 5545 rules, read back by icalendar and by an independent parser (vobject from
PyPI), stable UIDs and SEQUENCE, real durations across clock changes, atomic writing and the CLI options.

The trip tests use the shipped demo lisbon-tokyo (invented traveller), planned once per session.
"""

from __future__ import annotations

import dataclasses
import os
import re
from datetime import date, datetime, timedelta, timezone
from pathlib import Path
from zoneinfo import ZoneInfo

import icalendar
import pytest
import vobject
from test_cli import assert_one_line_error, one_json_document
from typer.testing import CliRunner

import planner.service
import planner.outputs
from planner.cli import app
from planner.plans.files import PlanFiles, write_plan_files
from planner.errors import InputError
from planner.outputs import write_atomic
from planner.plans.cautions import CAUTIONS, TRIP_CAUTIONS
from planner.plans.document import DayRow, PlanDocument, PlanEvent
from planner.plans.ics import UID_DOMAIN, calendar_bytes, calendars_by_group, event_uid
from planner.trips.document import document_from_trip
from planner.trips.views import place_at

UTC = timezone.utc
BERLIN = ZoneInfo("Europe/Berlin")
EAST_DEMO, SHORT_DEMO = "lisbon-tokyo", "madrid-newyork-short"


@pytest.fixture(scope="module")
def tokyo(planned_demos):
    """(trip, document) of the lisbon-tokyo demo."""
    trip, info, plan = planned_demos(EAST_DEMO)
    return trip, document_from_trip(trip, info, plan)


@pytest.fixture
def stored_plans(planned_demos, monkeypatch):
    """Let the CLI reuse the session's plans for the same demo trip (auto strategy, the file's own model)."""
    real = planner.service.search_trip

    def stand_in(trip, model, strategy="auto", **kwargs):
        for name in (EAST_DEMO, SHORT_DEMO):
            stored_trip, info, result = planned_demos(name)
            if stored_trip == trip and strategy == "auto" and model.id == info.model:
                return result
        return real(trip, model, strategy, **kwargs)

    monkeypatch.setattr(planner.service, "search_trip", stand_in)


def run(*args: str):
    return CliRunner().invoke(app, list(args), env={"COLUMNS": "200"})


def night_document(bed: datetime, wake: datetime, zone=BERLIN, plan_id: str = "test-night") -> PlanDocument:
    """A one-event plan: a night of sleep at a place in ``zone``."""
    event = PlanEvent(kind="sleep", start=bed.astimezone(UTC), end=wake.astimezone(UTC), zone=zone, place="Berlin",
                      day=bed.date(), summary="Sleep", action="Lights out.", purpose="Keeps the night dark.",
                      source="sleep", lux=0.0, key=f"{bed.date().isoformat()}/sleep/1")
    row = DayRow(bed.date(), zone, "CET", "stay", "Berlin", None, None, "Berlin", float("nan"))
    return PlanDocument(plan_id=plan_id, title="A night in Berlin (invented)", summary=(("place", "Berlin"),),
                        events=(event,), days=(row,), cautions=tuple(CAUTIONS[k] for k in TRIP_CAUTIONS),
                        citations=("a model citation",))


def icalendar_events(data: bytes) -> dict[str, tuple[datetime, datetime, list[timedelta]]]:
    """UID -> (start UTC, end UTC, alarm triggers) of the timed events as icalendar reads them (the all-day
    "About this plan" event is checked on its own)."""
    calendar = icalendar.Calendar.from_ical(data)
    found = {}
    for event in calendar.walk("VEVENT"):
        if not isinstance(event.get("DTSTART").dt, datetime):
            continue
        triggers = [alarm.get("TRIGGER").dt for alarm in event.walk("VALARM")]
        found[str(event.get("UID"))] = (event.get("DTSTART").dt.astimezone(UTC), event.get("DTEND").dt.astimezone(UTC),
                                        triggers)
    return found


def vobject_read(text: str):
    """The calendar as a fresh vobject reader sees it.

    vobject keeps the first VTIMEZONE it read for each TZID for the rest of the process
    (``TimezoneComponent.registerTzinfo`` registers only unknown TZIDs), so a second file's own
    definition of the same zone would be ignored; each file here is read with an empty registry.
    """
    registry = vars(vobject.icalendar)["__tzidMap"]
    saved = dict(registry)
    for tzid in [key for key in registry if key != "UTC"]:
        del registry[tzid]
    try:
        return vobject.readOne(text)
    finally:
        registry.clear()
        registry.update(saved)


def vobject_events(data: bytes) -> dict[str, tuple[datetime, datetime, list[timedelta]]]:
    """UID -> (start UTC, end UTC, alarm triggers) of the timed events as vobject (an independent parser)
    reads them."""
    calendar = vobject_read(data.decode("utf-8"))
    found = {}
    for event in calendar.contents.get("vevent", []):
        if not isinstance(event.dtstart.value, datetime):
            continue
        triggers = [alarm.trigger.value for alarm in event.contents.get("valarm", [])]
        found[event.uid.value] = (event.dtstart.value.astimezone(UTC), event.dtend.value.astimezone(UTC), triggers)
    return found


def to_second(moment: datetime) -> datetime:
    return moment.astimezone(UTC).replace(microsecond=0)


def to_minute(moment: datetime) -> datetime:
    """An instant rounded to the nearest whole minute, as calendars write event times."""
    return (moment.astimezone(UTC) + timedelta(seconds=30)).replace(second=0, microsecond=0)


def timed_events(calendar: icalendar.Calendar) -> list:
    """The plan's timed VEVENTs (without the all-day "About this plan" event)."""
    return [e for e in calendar.walk("VEVENT") if isinstance(e.get("DTSTART").dt, datetime)]


# --------------------------------------------------------------------------- reading back

def test_trip_calendar_reads_back_identically_with_icalendar_and_vobject(tokyo):
    trip, document = tokyo
    data = calendar_bytes(document)
    ours, theirs = icalendar_events(data), vobject_events(data)
    # vobject is an independent RFC 5545 parser (PyPI); both must see the same events
    assert len(ours) == len(theirs) == len(document.events) > 10
    assert ours == theirs
    for event in document.events:
        start, end, triggers = ours[event_uid(document.plan_id, event.key)]
        assert (start, end) == (to_minute(event.start), to_minute(event.end))
        # RFC 5545 §3.8.6.3: a negative TRIGGER duration fires before the start; 15 min is the default
        # for the actions the person takes (every event of a trip: sleep, light, glasses)
        assert triggers == [timedelta(minutes=-15)]


def test_every_time_carries_a_zone_never_floating(tokyo):
    _, document = tokyo
    text = calendar_bytes(document).decode("utf-8").replace("\r\n ", "").replace("\r\n", "\n")
    # VTIMEZONE observances are local by definition (RFC 5545 §3.6.5); the events' times are checked
    blocks = re.findall(r"^BEGIN:VEVENT$.*?^END:VEVENT$", text, flags=re.M | re.S)
    events = "\n".join(block for block in blocks if "DTSTART;VALUE=DATE:" not in block)
    times = re.findall(r"^(DTSTART|DTEND|DTSTAMP|LAST-MODIFIED)([;:].*)$", events, flags=re.M)
    assert len(times) == 4 * len(document.events)
    for name, rest in times:
        # RFC 5545 §3.3.5: form #1 (floating, no TZID and no Z) would move with the reader's zone
        assert rest.startswith(";TZID=") or rest.endswith("Z"), f"{name}{rest}"


def test_each_used_zone_has_one_vtimezone_covering_only_the_plan(tokyo):
    _, document = tokyo
    calendar = icalendar.Calendar.from_ical(calendar_bytes(document))
    used = {str(e.get("DTSTART").params["TZID"]) for e in timed_events(calendar)}
    zones = [str(z.get("TZID")) for z in calendar.walk("VTIMEZONE")]
    # RFC 5545 §3.6.5: every TZID referenced needs its VTIMEZONE; the trip is Lisbon -> Tokyo
    assert sorted(zones) == sorted(used) == ["Asia/Tokyo", "Europe/Lisbon"]
    first, last = document.first_date(), document.last_date()
    for zone in calendar.walk("VTIMEZONE"):
        for observance in zone.subcomponents:
            # only the plan's own dates (science reference §7: long RDATE lists trip up some readers)
            onset = observance.get("DTSTART").dt.date()
            assert first - timedelta(days=2) <= onset <= last + timedelta(days=2)


def test_trip_events_switch_tzid_at_the_flight(tokyo):
    trip, document = tokyo
    flight = trip.flights[0]
    calendar = icalendar.Calendar.from_ical(calendar_bytes(document))
    zones_seen = []
    for event in timed_events(calendar):
        start = event.get("DTSTART").dt
        tzid = str(event.get("DTSTART").params["TZID"])
        instant = start.astimezone(UTC)
        # before landing the traveller is in Lisbon (or in the air from it), after it in Tokyo
        expected = "Europe/Lisbon" if instant < flight.arrive else "Asia/Tokyo"
        assert tzid == expected, (instant, tzid)
        zones_seen.append(tzid)
    assert zones_seen.index("Asia/Tokyo") > 0
    assert set(zones_seen[zones_seen.index("Asia/Tokyo"):]) == {"Asia/Tokyo"}
    assert place_at(trip, flight.arrive).name == "Tokyo"


def test_night_across_the_spring_forward_lasts_seven_real_hours():
    # Europe/Berlin springs forward on 2027-03-28 at 01:00 UTC (02:00 CET -> 03:00 CEST): EU rule, last
    # Sunday of March (from memory; tzdata agrees), so 23:00-07:00 local is 7 real hours
    bed = datetime(2027, 3, 27, 23, 0, tzinfo=BERLIN)
    wake = datetime(2027, 3, 28, 7, 0, tzinfo=BERLIN)
    data = calendar_bytes(night_document(bed, wake))
    for reader in (icalendar_events, vobject_events):
        ((start, end, _),) = reader(data).values()
        assert end - start == timedelta(hours=7), reader.__name__
        assert start == datetime(2027, 3, 27, 22, 0, tzinfo=UTC)  # 23:00 CET = UTC+1
    text = data.decode("utf-8")
    assert "DTSTART;TZID=Europe/Berlin:20270327T230000" in text
    assert "DTEND;TZID=Europe/Berlin:20270328T070000" in text


def test_nights_across_several_clock_changes_keep_their_real_durations():
    # Europe/Berlin 2027-2029 (EU rule, last Sunday of March / October at 01:00 UTC; from memory, tzdata
    # agrees): spring forward 2027-03-28, 2028-03-26 and 2029-03-25 (7-h nights), fall back 2027-10-31
    # and 2028-10-29 (9-h nights), so the VTIMEZONE needs several onsets per observance
    nights = {date(2027, 3, 27): 7, date(2027, 10, 30): 9, date(2028, 3, 25): 7, date(2028, 10, 28): 9,
              date(2028, 6, 10): 8, date(2029, 3, 24): 7}
    events = []
    for k, (evening, hours) in enumerate(sorted(nights.items())):
        bed = datetime.combine(evening, datetime.min.time(), BERLIN).replace(hour=23)
        wake = datetime.combine(evening + timedelta(days=1), datetime.min.time(), BERLIN).replace(hour=7)
        events.append(dataclasses.replace(night_document(bed, wake).events[0], key=f"night/{k}"))
    document = dataclasses.replace(night_document(*[events[0].start, events[0].end]), events=tuple(events))
    data = calendar_bytes(document)
    assert not re.search(rb"RDATE:[^\r\n]*,", data)  # one onset per RDATE line
    for reader in (icalendar_events, vobject_events):
        durations = sorted((start, end - start) for start, end, _ in reader(data).values())
        assert [d.total_seconds() / 3600 for _, d in durations] == [nights[e] for e in sorted(nights)], \
            reader.__name__


def test_event_without_an_iana_zone_is_written_in_utc():
    fixed = timezone(timedelta(hours=5, minutes=30))
    bed = datetime(2027, 5, 1, 23, 0, tzinfo=fixed)
    data = calendar_bytes(night_document(bed, bed + timedelta(hours=8), zone=fixed))
    # RFC 5545 §3.3.5 form #2: UTC with Z; 23:00 at +05:30 is 17:30 UTC
    assert "DTSTART:20270501T173000Z" in data.decode("utf-8")


def test_floating_event_times_are_refused():
    with pytest.raises(InputError, match="time zone"):
        PlanEvent(kind="sleep", start=datetime(2027, 5, 1, 23), end=datetime(2027, 5, 2, 7), zone=BERLIN,
                  place="Berlin", day=date(2027, 5, 1), summary="Sleep", action="", purpose="", source="sleep",
                  lux=0.0, key="k")


# --------------------------------------------------------------------------- UIDs and SEQUENCE

def test_uids_are_identical_across_two_exports_and_two_documents(tokyo, planned_demos):
    trip, document = tokyo
    again = document_from_trip(*planned_demos(EAST_DEMO))
    first = icalendar_events(calendar_bytes(document))
    second = icalendar_events(calendar_bytes(again, now=datetime(2030, 1, 1, tzinfo=UTC)))
    assert first.keys() == second.keys()
    assert all(uid.endswith("@" + UID_DOMAIN) for uid in first)
    # RFC 5545 §3.8.4.7: a UID identifies one event; every event here has its own
    assert len(set(first)) == len(document.events)


def test_sequence_rises_only_for_changed_events():
    bed = datetime(2027, 6, 1, 23, 0, tzinfo=BERLIN)
    document = night_document(bed, bed + timedelta(hours=8))
    first = calendar_bytes(document, now=datetime(2027, 1, 1, tzinfo=UTC))
    same = calendar_bytes(document, previous=first, now=datetime(2027, 2, 1, tzinfo=UTC))
    moved_event = dataclasses.replace(document.events[0], end=document.events[0].end + timedelta(minutes=30))
    moved = dataclasses.replace(document, events=(moved_event,))
    changed = calendar_bytes(moved, previous=same, now=datetime(2027, 3, 1, tzinfo=UTC))
    again = calendar_bytes(moved, previous=changed, now=datetime(2027, 4, 1, tzinfo=UTC))

    def sequence_and_stamp(data):
        (event,) = timed_events(icalendar.Calendar.from_ical(data))
        return int(event.get("SEQUENCE")), event.get("DTSTAMP").dt

    # RFC 5545 §3.8.7.4: SEQUENCE starts at 0 and is incremented when the event is revised
    assert sequence_and_stamp(first) == (0, datetime(2027, 1, 1, tzinfo=UTC))
    assert sequence_and_stamp(same) == (0, datetime(2027, 1, 1, tzinfo=UTC))
    assert sequence_and_stamp(changed) == (1, datetime(2027, 3, 1, tzinfo=UTC))
    assert sequence_and_stamp(again) == (1, datetime(2027, 3, 1, tzinfo=UTC))


# --------------------------------------------------------------------------- content

def test_descriptions_carry_action_light_reason_and_caution(tokyo):
    _, document = tokyo
    calendar = icalendar.Calendar.from_ical(calendar_bytes(document))
    bright = [e for e in calendar.walk("VEVENT") if "Bright light" in str(e.get("CATEGORIES").to_ical())]
    assert bright
    text = str(bright[0].get("DESCRIPTION"))
    assert "What to do:" in text and "lux at the eye" in text and "Why:" in text
    # the east-bound plan advances: light after CBTmin (Khalsa et al. 2003, J Physiol 549:945)
    assert "earlier (a phase advance)" in text
    # daylight outdoors carries the daylight caution, not the light box's (common practice, no single source)
    assert "(daylight)" in text and CAUTIONS["daylight"].short in text and "light box" not in text.split("Caution:")[1]
    assert "Full cautions" in text and "About this plan" in text
    whole = str(calendar.get("DESCRIPTION"))
    for key in TRIP_CAUTIONS:
        assert CAUTIONS[key].text in whole
    assert "doi:10.1177/074873049901400608" in whole  # Jewett, Forger & Kronauer 1999, J Biol Rhythms 14:493


def test_alarm_minutes_and_no_alarms():
    bed = datetime(2027, 6, 1, 23, 0, tzinfo=BERLIN)
    document = night_document(bed, bed + timedelta(hours=8))
    ((_, _, triggers),) = vobject_events(calendar_bytes(document, alarm_minutes=40)).values()
    assert triggers == [timedelta(minutes=-40)]
    without = calendar_bytes(document, alarm_minutes=None)
    assert b"BEGIN:VALARM" not in without
    ((_, _, triggers),) = vobject_events(without).values()
    assert triggers == []


def two_group_document() -> PlanDocument:
    """Two nights, one for each of two invented crews."""
    bed = datetime(2027, 6, 1, 23, 0, tzinfo=BERLIN)
    night = night_document(bed, bed + timedelta(hours=8))
    first = night.events[0]
    other = dataclasses.replace(first, key="2027-06-02/sleep/1", start=first.start + timedelta(days=1),
                                end=first.end + timedelta(days=1), day=date(2027, 6, 2))
    return dataclasses.replace(night, events=(first, other), groups={"crew A": (first,), "crew B": (other,)})


def test_one_calendar_per_group_or_the_chosen_one():
    document = two_group_document()
    other = document.events[1]
    assert set(calendars_by_group(document)) == {"crew A", "crew B"}
    assert calendars_by_group(document, "crew B") == {"crew B": [other]}
    with pytest.raises(InputError, match="crew A, crew B"):
        calendars_by_group(document, "crew C")


def test_write_plan_files_writes_one_calendar_per_group(tmp_path):
    document = two_group_document()
    written = write_plan_files(document, PlanFiles(ics=tmp_path / "roster.ics"))
    assert sorted(Path(p).name for p in written["ics"]) == ["roster-crew-a.ics", "roster-crew-b.ics"]
    assert set(vobject_events((tmp_path / "roster-crew-b.ics").read_bytes())) == {
        event_uid(document.plan_id, "2027-06-02/sleep/1")}
    written = write_plan_files(document, PlanFiles(ics=tmp_path / "crew-b-only.ics", group="crew B"))
    assert written["ics"] == [str(tmp_path / "crew-b-only.ics")]  # the chosen group: the file as named


# --------------------------------------------------------------------------- writing files

def test_atomic_write_leaves_the_old_file_when_the_rename_fails(tmp_path, monkeypatch):
    target = tmp_path / "plan.ics"
    target.write_text("old", encoding="utf-8")

    def refuse(src, dst):
        raise PermissionError(13, "Permission denied")

    monkeypatch.setattr(planner.outputs.os, "replace", refuse)
    with pytest.raises(InputError, match="cannot write: Permission denied"):
        write_atomic(target, b"new", force=True)
    assert target.read_text(encoding="utf-8") == "old"
    assert os.listdir(tmp_path) == ["plan.ics"]  # no temporary file left behind


def test_atomic_write_refuses_an_existing_file_without_force(tmp_path):
    target = tmp_path / "plan.ics"
    target.write_text("old", encoding="utf-8")
    with pytest.raises(InputError, match="exists; use --force to overwrite"):
        write_atomic(target, b"new", force=False)
    write_atomic(target, b"new", force=True)
    assert target.read_bytes() == b"new"


def test_cli_writes_a_calendar_and_refuses_to_overwrite_it(stored_plans, tmp_path):
    target = tmp_path / "plan.ics"
    result = run("demo", SHORT_DEMO, "--ics", str(target), "--json")
    assert result.exit_code == 0, result.stderr
    document = one_json_document(result.stdout)
    assert document["written"]["ics"] == [str(target)]
    first = target.read_bytes()
    assert len(vobject_events(first)) > 3

    line = assert_one_line_error(run("demo", SHORT_DEMO, "--ics", str(target)))
    assert line == f"phaseplan: error: {target}: exists; use --force to overwrite"
    assert target.read_bytes() == first

    # a changed reminder changes every event: SEQUENCE 1 (RFC 5545 §3.8.7.4), same UIDs
    result = run("demo", SHORT_DEMO, "--ics", str(target), "--force", "--alarm-minutes", "30")
    assert result.exit_code == 0, result.stderr
    second = icalendar.Calendar.from_ical(target.read_bytes())
    assert {str(e.get("UID")) for e in timed_events(second)} == set(icalendar_events(first))
    assert {int(e.get("SEQUENCE")) for e in timed_events(second)} == {1}
    assert {alarm.get("TRIGGER").dt for alarm in second.walk("VALARM")} == {timedelta(minutes=-30)}

    result = run("demo", SHORT_DEMO, "--ics", str(target), "--force", "--no-alarms")
    assert result.exit_code == 0, result.stderr
    assert b"VALARM" not in target.read_bytes()


def test_force_over_a_file_that_is_no_calendar_starts_a_new_one(stored_plans, tmp_path):
    target = tmp_path / "notes.ics"
    target.write_text("not a calendar", encoding="utf-8")
    result = run("demo", SHORT_DEMO, "--ics", str(target), "--force")
    assert result.exit_code == 0, result.stderr
    calendar = icalendar.Calendar.from_ical(target.read_bytes())
    assert {int(e.get("SEQUENCE")) for e in calendar.walk("VEVENT")} == {0}  # RFC 5545 §3.8.7.4: new events


@pytest.mark.parametrize("option", ["--ics", "--report", "--chart"])
def test_unwritable_output_path_is_one_line_and_exit_2(option, tmp_path):
    blocker = tmp_path / "a-file"
    blocker.write_text("", encoding="utf-8")
    target = blocker / ("plan.png" if option == "--chart" else "plan.out")
    # refused before planning: no stand-in needed, the check comes first
    line = assert_one_line_error(run("demo", SHORT_DEMO, option, str(target)))
    assert str(target) in line and "cannot write" in line
