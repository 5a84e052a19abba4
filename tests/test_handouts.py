"""Handouts a worker, a traveller and a planner can trust: one crew per report section and chart, calendars
that remind only of what to do, with the caution that fits each event, and reports that print on A4 and
Letter (headless Chromium prints them; poppler's pdftotext and pdfinfo read the PDFs back).

The roster is the invented harbour-cranes crew (four crews staggered two days apart on the 2-2-4 draft);
the trip is the invented lisbon-tokyo traveller.
"""

from __future__ import annotations

import html
import re
import shutil
import subprocess
from datetime import datetime, timedelta, timezone
from pathlib import Path

import icalendar
import pytest
from test_calendar import timed_events
from test_report import browser, headless
from test_roster_outputs import CRANES, run

from planner.plans.cautions import CAUTIONS, SHIFT_CAUTIONS
from planner.plans.ics import ABOUT_SUMMARY, calendar_bytes
from planner.rosters.scenario import load_roster
from planner.trips.document import document_from_trip

UTC = timezone.utc
#: The crews' offsets into the 2-2-4 pattern, as the scenario file states them (invented crews).
CREW_OFFSETS = {"A": 0, "B": 2, "C": 4, "D": 6}
PATTERN = ["D", "D", "N", "N", "off", "off", "off", "off"]
#: Shift hours of the file: day 07:00-19:00, night 19:00-07:00.
SHIFT_TEXT = {"D": "07:00–19:00", "N": "19:00–07:00"}


@pytest.fixture(scope="module")
def crane_files(tmp_path_factory):
    """The four-crew roster's report (A4 and Letter) and calendars, planned once (average worker only)."""
    folder = tmp_path_factory.mktemp("crane-handouts")
    result = run("roster", str(CRANES), "--draft", "fast 2-2-4", "--ics", str(folder / "crane.ics"),
                 "--report", str(folder / "crane-a4.html"), "--chart", str(folder / "crane.png"))
    assert result.exit_code == 0, result.stderr
    result = run("roster", str(CRANES), "--draft", "fast 2-2-4", "--report", str(folder / "crane-letter.html"),
                 "--paper", "letter", "--group", "C")
    assert result.exit_code == 0, result.stderr
    return folder


@pytest.fixture(scope="module")
def tokyo_document(planned_demos):
    trip, info, plan = planned_demos("lisbon-tokyo")
    return trip, document_from_trip(trip, info, plan)


def crew_sections(page: str) -> dict[str, str]:
    """Crew name -> the HTML of its report section."""
    parts = re.split(r"<section class='crew'>|<section class='plan'>", page)[1:]
    found = {}
    for part in parts:
        name = re.search(r"<h2>Crew (\w+): body clock", part).group(1)
        found[name] = part.split("</section>")[0]
    return found


def table_rows(section: str) -> list[list[str]]:
    body = re.search(r"<tbody>(.*?)</tbody>", section, flags=re.S).group(1)
    rows = []
    for row in re.findall(r"<tr>(.*?)</tr>", body, flags=re.S):
        cells = [html.unescape(re.sub(r"<[^>]+>", " ", cell)).split() for cell in
                 re.findall(r"<td[^>]*>(.*?)</td>", row, flags=re.S)]
        rows.append([" ".join(cell) for cell in cells])
    return rows


# --------------------------------------------------------------------------- one crew per section

def test_each_crew_section_holds_only_its_own_shifts(crane_files):
    page = (crane_files / "crane-a4.html").read_text(encoding="utf-8")
    sections = crew_sections(page)
    assert list(sections) == ["A", "B", "C", "D"]   # the file's four crews, in its order
    roster, _ = load_roster(CRANES)
    for crew, section in sections.items():
        # the crew works the pattern from its own offset (the scenario file's [[crews]] offset_days)
        offset = CREW_OFFSETS[crew]
        expected = [PATTERN[(offset + k) % len(PATTERN)] for k in range(len(PATTERN) * 3)]
        rows = table_rows(section)[:len(expected)]
        assert len(rows) == len(expected)
        for k, (cells, code) in enumerate(zip(rows, expected)):
            day = roster.start + timedelta(days=k)
            assert cells[0] == f"{day:%a %d %b}"
            label, work = cells[1], cells[2]
            if code == "off":
                assert label == "off" and work == "—", (crew, cells)
            else:
                # one shift per date, this crew's, at the file's hours (never a second crew's "×2")
                kind = "day" if code == "D" else "night"
                assert label == f"{code} ({kind})" and work.startswith(SHIFT_TEXT[code]), (crew, cells)
                assert work.count("–") == 1
            sleeps = cells[3]
            assert sleeps.count("–") <= 2   # the main sleep and at most a nap, never four crews' sleeps


def test_a_chosen_crew_gets_its_own_report_and_one_chart_per_crew(crane_files):
    page = (crane_files / "crane-letter.html").read_text(encoding="utf-8")
    assert list(crew_sections(page)) == ["C"]
    assert "size: letter portrait" in page
    charts = sorted(p.name for p in crane_files.glob("crane-*.png"))
    assert charts == ["crane-a.png", "crane-b.png", "crane-c.png", "crane-d.png"]
    # crews A and C work the same pattern four days apart: their charts differ
    assert (crane_files / "crane-a.png").read_bytes() != (crane_files / "crane-c.png").read_bytes()


# --------------------------------------------------------------------------- calendars

def events_of(path: Path) -> list:
    return timed_events(icalendar.Calendar.from_ical(path.read_bytes()))


def test_alarms_only_for_actions_by_default(crane_files):
    events = events_of(crane_files / "crane-b.ics")
    by_kind: dict[str, list[int]] = {}
    for event in events:
        kind = [str(c) for c in event.get("CATEGORIES").cats if c != "phaseplan"][0]
        by_kind.setdefault(kind, []).append(len(event.walk("VALARM")))
    # shifts are already in the worker's calendar: no reminder; going to bed, light and glasses: one each
    assert set(by_kind["Work"]) == {0}
    for kind in ("Sleep", "Bright light"):
        assert set(by_kind[kind]) == {1}, kind
    sleep_alarm = next(e for e in events if e.walk("VALARM") and "Sleep" in str(e.get("CATEGORIES").cats))
    assert "Time for bed" in str(sleep_alarm.walk("VALARM")[0]["DESCRIPTION"])


def test_alarm_kinds_are_configurable(tokyo_document):
    _, document = tokyo_document
    only_sleep = icalendar.Calendar.from_ical(calendar_bytes(document, alarm_kinds=("sleep",)))
    for event in timed_events(only_sleep):
        is_sleep = "Sleep" in [str(c) for c in event.get("CATEGORIES").cats]
        assert len(event.walk("VALARM")) == (1 if is_sleep else 0)
    result = run("demo", "--ics", "/dev/null/x.ics", "--alarm-for", "sleep,naps")
    assert result.exit_code == 2 and "naps" in result.stderr and "light_avoidance" in result.stderr


def test_event_times_are_whole_minutes(crane_files, tokyo_document):
    _, document = tokyo_document
    for data in (calendar_bytes(document), (crane_files / "crane-a.ics").read_bytes()):
        text = data.decode("utf-8")
        stamps = re.findall(r"^(?:DTSTART|DTEND)[^:\r\n]*:(\d{8}T\d{6}Z?)\r$", text, flags=re.M)
        assert len(stamps) > 20
        # RFC 5545 §3.3.5 DATE-TIME: HHMMSS; the seconds are always 00
        assert all(stamp[13:15] == "00" for stamp in stamps), [s for s in stamps if s[13:15] != "00"][:3]


def test_each_event_carries_the_caution_of_its_kind(crane_files, tokyo_document):
    _, document = tokyo_document
    calendars = [icalendar.Calendar.from_ical(calendar_bytes(document))]
    calendars += [icalendar.Calendar.from_ical((crane_files / f"crane-{c}.ics").read_bytes()) for c in "ab"]
    seen = set()
    for calendar in calendars:
        for event in timed_events(calendar):
            summary, text = str(event["SUMMARY"]), str(event["DESCRIPTION"])
            caution = text.split("Caution: ", 1)[1].split("\n")[0]
            if summary == "Bright light: light box" or summary.startswith("Bright light: light box"):
                expected = "bright_light"
            elif summary.startswith("Bright light: daylight"):
                expected = "daylight"       # not the light box's UV filter (common practice, no single source)
            elif "glasses" in summary:
                expected = "dark_glasses"
            elif summary == "Dim light: eye mask":
                expected = "eye_mask"       # worn seated only (common practice, no single source)
            elif summary == "Sleep" or summary.startswith("Sleep "):   # also "Sleep in flight", "Sleep on the layover"
                expected = "sleep_loss"
            elif summary.endswith("(night)"):
                expected = "night_shift_driving"   # Lee et al. 2016, PNAS 113:176
            else:
                assert summary.endswith("(day)"), summary
                expected = "fatigue_rules"         # a day shift: no driving-after-nights warning
            assert caution == CAUTIONS[expected].short, (summary, caution)
            seen.add(expected)
    # an eye mask on the flight depends on where the plan's travel sleep falls (tests/test_trip_followable.py)
    assert seen - {"eye_mask"} == {"bright_light", "daylight", "dark_glasses", "sleep_loss", "night_shift_driving",
                                   "fatigue_rules"}


def test_the_about_event_carries_every_caution_in_full(crane_files):
    calendar = icalendar.Calendar.from_ical((crane_files / "crane-d.ics").read_bytes())
    (about,) = [e for e in calendar.walk("VEVENT") if str(e["SUMMARY"]) == ABOUT_SUMMARY]
    text = str(about["DESCRIPTION"])
    for key in SHIFT_CAUTIONS:
        assert CAUTIONS[key].text in text
    assert not about.walk("VALARM") and str(about["TRANSP"]) == "TRANSPARENT"   # RFC 5545 §3.8.2.7


def test_no_event_is_cut_by_the_plans_start_or_end(tokyo_document):
    trip, document = tokyo_document
    for event in document.events:
        assert event.start > trip.start, event.key     # the night running into the plan is the person's own
        if event.kind == "sleep" and event.summary not in ("Sleep in flight", "Sleep on the layover"):
            # a night in bed lasts as the place's habitual night, never "22:00-00:00" (sleep on board
            # is as long as the flight allows)
            assert event.minutes >= 4 * 60, (event.key, event.clock_text())
    last = max(document.events, key=lambda e: e.end)
    assert last.end > trip.end and last.kind == "sleep"


# --------------------------------------------------------------------------- print

def pdf_pages(path: Path) -> tuple[int, tuple[float, float]]:
    info = subprocess.run(["pdfinfo", str(path)], capture_output=True, text=True, check=True).stdout
    pages = int(re.search(r"^Pages:\s+(\d+)", info, flags=re.M).group(1))
    width, height = re.search(r"^Page size:\s+([\d.]+) x ([\d.]+) pts", info, flags=re.M).groups()
    return pages, (float(width), float(height))


def page_text(path: Path, page: int) -> str:
    return subprocess.run(["pdftotext", "-f", str(page), "-l", str(page), "-layout", str(path), "-"],
                          capture_output=True, text=True, check=True).stdout


#: ISO 216 A4 and ANSI Letter in PostScript points (1 pt = 1/72 in; 210 × 297 mm, 8.5 × 11 in).
PAPER_POINTS = {"A4": (595.3, 841.9), "letter": (612.0, 792.0)}


@pytest.mark.parametrize("paper", ["A4", "letter"])
def test_both_reports_print_on_a4_and_letter(crane_files, tokyo_document, paper, tmp_path):
    if not (shutil.which("pdftotext") and shutil.which("pdfinfo")):
        pytest.skip("poppler-utils (pdftotext, pdfinfo) missing; .ci/run installs them")
    executable = browser()
    from planner.plans.report import report_html

    _, trip_document = tokyo_document
    trip_page = report_html(trip_document, paper=paper, generated=datetime(2027, 3, 1, tzinfo=UTC))
    roster_page = (crane_files / "crane-a4.html").read_text(encoding="utf-8")
    if paper == "letter":
        roster_page = roster_page.replace("size: A4 portrait", "size: letter portrait")
    for name, page, most_pages in (("trip", trip_page, 6), ("roster", roster_page, 18)):
        source = tmp_path / f"{name}.html"
        source.write_text(page, encoding="utf-8")
        pdf = tmp_path / f"{name}-{paper}.pdf"
        printed = headless(executable, tmp_path / f"profile-{name}", "--no-pdf-header-footer",
                           f"--print-to-pdf={pdf}", source.as_uri())
        assert pdf.is_file(), printed.stderr[-2000:]
        pages, size = pdf_pages(pdf)
        assert abs(size[0] - PAPER_POINTS[paper][0]) < 2 and abs(size[1] - PAPER_POINTS[paper][1]) < 2
        assert 2 <= pages <= most_pages, pages   # regression bound (measured here: trip 4, roster 14)
        assert pdf.stat().st_size < 2_000_000    # raster charts: a printable file, not tens of megabytes
        first = page_text(pdf, 1)
        message = re.search(r"<p class='message'>(.*?)</p>", page).group(1)
        assert " ".join(html.unescape(message).split()[:4]) in " ".join(first.split())
        assert "What to do first" in first
        # nothing cut at the right margin: every printed word lies inside the page's side margins (12 mm = 34 pt)
        boxes = subprocess.run(["pdftotext", "-bbox", str(pdf), "-"], capture_output=True, text=True,
                               check=True).stdout
        right = [float(x) for x in re.findall(r'<word xMin="[\d.]+" yMin="[\d.]+" xMax="([\d.]+)"', boxes)]
        assert right and max(right) <= size[0] - 30, max(right)
