"""Publishing to a real CalDAV server: Radicale (PyPI), started on 127.0.0.1 with a throwaway folder and
stopped by its PID.  What the server stores is read back with a plain CalDAV REPORT and parsed with vobject
(an independent parser), not with the code under test.
"""

from __future__ import annotations

import base64
import dataclasses
import socket
import subprocess
import sys
import time
import urllib.error
import urllib.request
import uuid
import xml.etree.ElementTree as ElementTree
from datetime import datetime, timedelta, timezone
from zoneinfo import ZoneInfo

import icalendar
import pytest
import vobject
from test_calendar import night_document, to_second, vobject_events, vobject_read
from test_cli import assert_one_line_error
from typer.testing import CliRunner

from planner.cli import app
from planner.errors import InputError
from planner.plans.caldav import PublishError, publish
from planner.plans.cautions import CAUTIONS, SHIFT_CAUTIONS, TRIP_CAUTIONS
from planner.plans.ics import ABOUT_SUMMARY, calendar_bytes, event_uid
from planner.trips.document import document_from_trip

UTC = timezone.utc
USER, PASSWORD = "ana", "not-a-real-secret"


def free_port() -> int:
    with socket.socket() as probe:
        probe.bind(("127.0.0.1", 0))
        return probe.getsockname()[1]


def call(method: str, url: str, body: bytes | None = None, headers: dict | None = None,
         password: str = PASSWORD) -> tuple[int, bytes]:
    request = urllib.request.Request(url, data=body, method=method, headers=headers or {})
    token = base64.b64encode(f"{USER}:{password}".encode()).decode()
    request.add_header("Authorization", f"Basic {token}")
    try:
        with urllib.request.urlopen(request, timeout=10) as answer:
            return answer.status, answer.read()
    except urllib.error.HTTPError as exc:
        return exc.code, exc.read()


@pytest.fixture(scope="module")
def radicale(tmp_path_factory):
    """Base URL of a Radicale server on a free local port (htpasswd, plain-text users file)."""
    folder = tmp_path_factory.mktemp("radicale")
    users = folder / "users"
    users.write_text(f"{USER}:{PASSWORD}\n", encoding="utf-8")
    port = free_port()
    process = subprocess.Popen(
        [sys.executable, "-m", "radicale", "--config", "", "--server-hosts", f"127.0.0.1:{port}",
         "--storage-filesystem-folder", str(folder / "storage"), "--auth-type", "htpasswd",
         "--auth-htpasswd-filename", str(users), "--auth-htpasswd-encryption", "plain",
         "--logging-level", "warning"],
        stdout=subprocess.DEVNULL, stderr=subprocess.PIPE)
    try:
        deadline = time.monotonic() + 30
        while True:
            try:
                with socket.create_connection(("127.0.0.1", port), timeout=0.5):
                    break
            except OSError:
                if process.poll() is not None or time.monotonic() > deadline:
                    raise RuntimeError(f"Radicale did not start: {process.stderr.read().decode(errors='replace')}")
                time.sleep(0.1)
        yield f"http://127.0.0.1:{port}/{USER}/"
    finally:
        process.terminate()  # by its PID (Popen.terminate signals exactly this process)
        try:
            process.wait(timeout=10)
        except subprocess.TimeoutExpired:
            process.kill()
            process.wait(timeout=10)


@pytest.fixture
def collection(radicale) -> str:
    """A fresh, empty calendar collection on the server."""
    url = f"{radicale}{uuid.uuid4().hex[:12]}/"
    status, body = call("MKCALENDAR", url)
    assert status == 201, body  # RFC 4791 §5.3.1.2: MKCALENDAR answers 201 Created
    return url


def stored_events(url: str) -> dict[str, vobject.base.Component]:
    """UID -> VEVENT of everything in the collection, fetched with a CalDAV REPORT and read by vobject."""
    query = (b'<?xml version="1.0"?><c:calendar-query xmlns:d="DAV:" xmlns:c="urn:ietf:params:xml:ns:caldav">'
             b'<d:prop><c:calendar-data/></d:prop><c:filter><c:comp-filter name="VCALENDAR"/></c:filter>'
             b'</c:calendar-query>')
    status, body = call("REPORT", url, query, {"Depth": "1", "Content-Type": "application/xml"})
    assert status == 207, body  # RFC 4918 §13: Multi-Status
    found = {}
    for data in ElementTree.fromstring(body).iter("{urn:ietf:params:xml:ns:caldav}calendar-data"):
        for event in vobject_read(data.text).contents.get("vevent", []):
            found[event.uid.value] = event
    return found


@pytest.fixture(scope="module")
def tokyo_calendar(planned_demos) -> bytes:
    trip, info, plan = planned_demos("lisbon-tokyo")
    return calendar_bytes(document_from_trip(trip, info, plan))


def about_uid(data: bytes) -> str:
    """UID of the all-day "About this plan" event of a calendar file."""
    (about,) = [e for e in icalendar.Calendar.from_ical(data).walk("VEVENT") if str(e["SUMMARY"]) == ABOUT_SUMMARY]
    return str(about["UID"])


def test_radicale_accepts_every_event_and_returns_the_same_ones(collection, tokyo_calendar):
    result = publish(tokyo_calendar, collection, user=USER, password=PASSWORD)
    expected = vobject_events(tokyo_calendar)
    about = about_uid(tokyo_calendar)
    assert set(result.created) == set(expected) | {about}
    # RFC 4918 §9.7.1 / RFC 4791 §5.3.2: a PUT that creates a resource answers 201 Created
    assert set(result.statuses.values()) == {201}
    stored = stored_events(collection)
    assert set(stored) == set(expected) | {about}
    for uid, event in ((uid, event) for uid, event in stored.items() if uid != about):
        start, end, triggers = expected[uid]
        assert event.dtstart.value.astimezone(UTC) == start
        assert event.dtend.value.astimezone(UTC) == end
        assert [alarm.trigger.value for alarm in event.contents.get("valarm", [])] == triggers
    again = publish(tokyo_calendar, collection, user=USER, password=PASSWORD)
    assert (again.created, again.updated, again.deleted) == ((), (), ())
    assert set(again.unchanged) == set(expected) | {about}


def test_republishing_updates_removes_dropped_and_leaves_others_alone(collection):
    zone = ZoneInfo("Europe/Berlin")
    first_night = night_document(datetime(2027, 6, 1, 23, tzinfo=zone), datetime(2027, 6, 2, 7, tzinfo=zone))
    base = first_night.events[0]
    nights = tuple(dataclasses.replace(base, key=f"night/{k}", start=base.start + timedelta(days=k),
                                       end=base.end + timedelta(days=k)) for k in range(3))
    plan = dataclasses.replace(first_night, events=nights)
    # someone's own appointment in the same calendar, not made by phaseplan
    foreign = ("BEGIN:VCALENDAR\r\nVERSION:2.0\r\nPRODID:-//someone//EN\r\nBEGIN:VEVENT\r\nUID:dentist-1@example.org\r\n"
               "DTSTAMP:20270101T000000Z\r\nDTSTART:20270602T080000Z\r\nDTEND:20270602T090000Z\r\n"
               "SUMMARY:Dentist\r\nEND:VEVENT\r\nEND:VCALENDAR\r\n").encode()
    assert call("PUT", collection + "dentist.ics", foreign, {"Content-Type": "text/calendar"})[0] == 201
    first = calendar_bytes(plan)
    publish(first, collection, user=USER, password=PASSWORD)

    moved = dataclasses.replace(nights[1], end=nights[1].end + timedelta(hours=1))
    edited = dataclasses.replace(plan, events=(nights[0], moved))  # night 2 moved, night 3 dropped
    second = calendar_bytes(edited, previous=first)
    result = publish(second, collection, user=USER, password=PASSWORD)
    uid = {k: event_uid(plan.plan_id, f"night/{k}") for k in range(3)}
    about = about_uid(second)
    assert (result.unchanged, result.updated, result.deleted) == ((about, uid[0]), (uid[1],), (uid[2],))
    assert result.others == 1
    stored = stored_events(collection)
    assert set(stored) == {about, uid[0], uid[1], "dentist-1@example.org"}
    assert stored["dentist-1@example.org"].summary.value == "Dentist"
    assert stored[uid[1]].dtend.value.astimezone(UTC) == to_second(moved.end)
    assert int(stored[uid[1]].sequence.value) == 1  # RFC 5545 §3.8.7.4: revised once


def test_wrong_password_is_one_line_and_exit_2(collection, tmp_path, tokyo_calendar):
    path = tmp_path / "plan.ics"
    path.write_bytes(tokyo_calendar)
    result = CliRunner().invoke(app, ["publish", str(path), "--url", collection, "--user", USER],
                                env={"PHASEPLAN_CALDAV_PASSWORD": "wrong"})
    line = assert_one_line_error(result, 2)
    assert "HTTP 401" in line and "wrong" not in line
    assert stored_events(collection) == {}


def test_cli_publishes_with_the_password_from_the_environment(collection, tmp_path, tokyo_calendar):
    path = tmp_path / "plan.ics"
    path.write_bytes(tokyo_calendar)
    result = CliRunner().invoke(app, ["publish", str(path), "--url", collection, "--user", USER, "--json"],
                                env={"PHASEPLAN_CALDAV_PASSWORD": PASSWORD})
    assert result.exit_code == 0, result.stderr
    # every timed event plus the all-day "About this plan" event
    assert f'"created": {len(vobject_events(tokyo_calendar)) + 1}' in result.stdout
    assert len(stored_events(collection)) == len(vobject_events(tokyo_calendar)) + 1


def test_a_url_that_is_no_calendar_or_no_server(radicale, tokyo_calendar):
    with pytest.raises(InputError, match="not a calendar collection"):
        publish(tokyo_calendar, radicale + "missing/", user=USER, password=PASSWORD)
    with pytest.raises(InputError, match="not a calendar URL"):
        publish(tokyo_calendar, "ftp://127.0.0.1/x/")
    with pytest.raises(PublishError, match="cannot reach the server"):
        publish(tokyo_calendar, f"http://127.0.0.1:{free_port()}/x/")


def test_only_phaseplan_files_are_published(collection):
    with pytest.raises(InputError, match="not a phaseplan calendar"):
        publish(b"BEGIN:VCALENDAR\r\nVERSION:2.0\r\nPRODID:x\r\nBEGIN:VEVENT\r\nUID:a@b\r\nDTSTAMP:20270101T000000Z\r\n"
                b"DTSTART:20270101T000000Z\r\nEND:VEVENT\r\nEND:VCALENDAR\r\n", collection, user=USER,
                password=PASSWORD)


def test_without_a_password_and_no_terminal_the_cli_says_how_to_give_one(tmp_path, tokyo_calendar):
    path = tmp_path / "plan.ics"
    path.write_bytes(tokyo_calendar)
    result = CliRunner().invoke(app, ["publish", str(path), "--url", "http://127.0.0.1:9/x/", "--user", USER],
                                env={"PHASEPLAN_CALDAV_PASSWORD": None})
    line = assert_one_line_error(result, 2)
    assert "PHASEPLAN_CALDAV_PASSWORD" in line


def test_published_events_carry_their_cautions_to_the_server(collection, tokyo_calendar, tmp_path):
    """The cautions travel with the events: after publishing, what the server hands back holds every caution
    in full (the About event) and each event's own one-line caution (science reference §6)."""
    result = publish(tokyo_calendar, collection, user=USER, password=PASSWORD)
    assert result.created
    stored = stored_events(collection)   # read back by vobject, an independent parser (PyPI)
    (about,) = [e for e in stored.values() if e.summary.value == ABOUT_SUMMARY]
    text = about.description.value
    for key in TRIP_CAUTIONS:
        assert CAUTIONS[key].text in text, key
    assert "doi:10.1177/074873049901400608" in text   # Jewett, Forger & Kronauer 1999, J Biol Rhythms 14:493
    for event in stored.values():
        if event is about:
            continue
        description = event.description.value
        assert "Caution: " in description and ABOUT_SUMMARY in description, event.summary.value
    # a shift rotation: night shifts carry the driving caution (Lee et al. 2016, PNAS 113:176), the day
    # shifts do not
    from test_roster_outputs import CRANES, run   # the invented harbour-cranes crew

    written = run("roster", str(CRANES), "--draft", "fast 2-2-4", "--group", "B", "--ics", str(tmp_path / "b.ics"))
    assert written.exit_code == 0, written.stderr
    crew = f"{collection.rstrip('/')}-crew/"
    assert call("MKCALENDAR", crew)[0] == 201
    publish((tmp_path / "b.ics").read_bytes(), crew, user=USER, password=PASSWORD)
    shifts = [e for e in stored_events(crew).values() if e.summary.value.startswith("Shift ")]
    assert {"Shift D (day)", "Shift N (night)"} <= {e.summary.value for e in shifts}
    for event in shifts:
        night = "(night)" in event.summary.value
        assert (CAUTIONS["night_shift_driving"].short in event.description.value) == night
    (about,) = [e for e in stored_events(crew).values() if e.summary.value == ABOUT_SUMMARY]
    assert all(CAUTIONS[key].text in about.description.value for key in SHIFT_CAUTIONS)
