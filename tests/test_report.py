"""The HTML report and the phase chart: self-contained, escaped, complete, and rendered for real in a headless
Chromium (Debian package ``chromium``, installed by .ci/run) with a screenshot.

The trip tests use the shipped demo frankfurt-vancouver (invented traveller), planned once per session.
"""

from __future__ import annotations

import html
import io
import json
import os
import re
import shutil
import subprocess
import xml.etree.ElementTree as ElementTree
from dataclasses import replace
from datetime import datetime, timedelta, timezone
from pathlib import Path
from zoneinfo import ZoneInfo

import matplotlib.colors
import matplotlib.pyplot as plt
import pytest
from PIL import Image
from test_calendar import run, stored_plans  # noqa: F401  (the fixture is used by name)
from test_cli import one_json_document

from planner.errors import InputError
from planner.plans.cautions import CAUTIONS, SHIFT_CAUTIONS, TRIP_CAUTIONS
from planner.plans.document import DayRow, PlanDocument, PlanEvent, Section
from planner.plans.report import STYLE, chart_bytes, chart_format, phase_figure, report_html
from planner.trips.document import document_from_trip

UTC = timezone.utc
WEST_DEMO = "frankfurt-vancouver"
BROWSERS = ("chromium", "chromium-headless-shell", "chromium-browser")


@pytest.fixture(scope="module")
def vancouver(planned_demos) -> PlanDocument:
    return document_from_trip(*planned_demos(WEST_DEMO))


@pytest.fixture(scope="module")
def vancouver_html(vancouver) -> str:
    return report_html(vancouver, generated=datetime(2027, 4, 1, tzinfo=UTC))


def roster_like_document() -> PlanDocument:
    """A small invented two-group rotation document with a population band and two drafts."""
    zone = ZoneInfo("Europe/Oslo")
    events, days = [], []
    for k in range(3):
        day = datetime(2027, 10, 4 + k, tzinfo=zone)
        work = PlanEvent(kind="work", start=(day + timedelta(hours=22)).astimezone(UTC),
                         end=(day + timedelta(hours=30)).astimezone(UTC), zone=zone, place="Bergen plant",
                         day=day.date(), summary="Night shift", action="Work the night shift.",
                         purpose="The rotation's night.", source="night shift", lux=300.0, key=f"{day.date()}/work/1")
        events.append(work)
        days.append(DayRow(day.date(), zone, "CEST +02:00", "night", "Bergen", None, None, "Bergen", float("nan"),
                           band=(5.5 + k, 6.5 + k, 8.0 + k)))
    return PlanDocument(plan_id="roster-test", title="Crew rotation <draft> & more (invented)",
                        summary=(("crews", "A and B"),), events=tuple(events), days=tuple(days),
                        cautions=tuple(CAUTIONS[k] for k in SHIFT_CAUTIONS), citations=("a model citation",),
                        kind="roster", groups={"A": tuple(events[:2]), "B": tuple(events[2:])},
                        sections=(Section("draft 1: forward rotation", ("week", "shifts"), (("1", "D D N N"),)),
                                  Section("draft 2: backward rotation", ("week", "shifts"), (("1", "N N D D"),))))


# --------------------------------------------------------------------------- page content

def test_report_is_self_contained(vancouver_html):
    # nothing fetched from elsewhere: every src/href is inline data or an in-page anchor
    references = re.findall(r"""(?:src|href)\s*=\s*['"]([^'"]*)""", vancouver_html)
    assert references and all(ref.startswith(("data:", "#")) for ref in references), references
    assert "<script" not in vancouver_html
    assert "@page" in vancouver_html and "@media print" in vancouver_html


def test_report_holds_the_plan_comparison_cautions_and_citations(vancouver, vancouver_html):
    days = re.search(r"<table class='days'>.*?</table>", vancouver_html, flags=re.S).group(0)
    assert days.count("<tr>") == len(vancouver.days) + 1  # header row plus one row per day
    assert vancouver_html.count("class='recommended'") == 1
    assert "delay ✓ recommended" in vancouver_html  # nine hours west: the plan delays (see test_trip.py)
    for key in TRIP_CAUTIONS:
        assert html.escape(CAUTIONS[key].text, quote=True) in vancouver_html
    assert "doi:10.1177/074873049901400608" in vancouver_html  # Jewett, Forger & Kronauer 1999, J Biol Rhythms 14:493


def test_user_text_is_escaped():
    page = report_html(roster_like_document())
    assert "<draft>" not in page and "Crew rotation &lt;draft&gt; &amp; more" in page


def test_roster_report_shows_drafts_side_by_side_and_the_spread():
    document = roster_like_document()
    page = report_html(document)
    assert "class='side-by-side'" in page
    assert "draft 1: forward rotation" in page and "draft 2: backward rotation" in page
    assert "05:30–08:00 (median 06:30)" in page  # the first day's band, as given above
    for key in SHIFT_CAUTIONS:
        assert html.escape(CAUTIONS[key].title, quote=True) in page
    legend = [text.get_text() for text in phase_figure(document).axes[0].get_legend().get_texts()]
    assert legend == ["Work", "predicted CBTmin", "target CBTmin", "CBTmin 10th–90th percentile"]


# --------------------------------------------------------------------------- chart

def relative_luminance(colour: str) -> float:
    """WCAG 2 relative luminance (W3C) of an sRGB colour."""
    def linear(c):
        return c / 12.92 if c <= 0.04045 else ((c + 0.055) / 1.055) ** 2.4
    r, g, b = (linear(c) for c in matplotlib.colors.to_rgb(colour))
    return 0.2126 * r + 0.7152 * g + 0.0722 * b


def test_chart_draws_a_sleepiness_band_along_shifts():
    # A shift's forecast KSS is charted as a band under its bar, coloured from green (alert) to red (KSS 9,
    # fighting sleep; Åkerstedt & Gillberg 1990, Int J Neurosci 52:29).
    plain = roster_like_document()
    work = plain.events[0]
    steps = [work.start + timedelta(minutes=30 * k) for k in range(17)]
    banded = replace(plain, events=(replace(work, kss=tuple((t, 4.0 + 0.3 * k) for k, t in enumerate(steps))),)
                     + plain.events[1:])
    figures = [phase_figure(doc) for doc in (plain, banded)]
    labels = [[t.get_text() for t in f.axes[0].get_legend().get_texts()] for f in figures]
    bars = [len(f.axes[0].patches) for f in figures]
    assert not any("KSS" in label for label in labels[0]) and any("KSS" in label for label in labels[1])
    assert bars[1] >= bars[0] + 16      # one band piece per half hour of the 8-h shift
    for figure in figures:
        plt.close(figure)


def test_event_colours_stay_apart_in_greyscale():
    lum = {kind: relative_luminance(style["color"]) for kind, style in STYLE.items()}
    # design rule of this planner: sleep dark, bright light light, the two mid tones told apart by hatching
    assert lum["sleep"] < 0.1 < 0.2 < lum["light_avoidance"] < 0.6 < lum["bright_light"]
    assert 0.2 < lum["work"] < 0.6
    assert STYLE["light_avoidance"]["hatch"] != STYLE["work"]["hatch"]


def test_chart_png_and_svg(vancouver):
    png = Image.open(io.BytesIO(chart_bytes(vancouver, "png"))).convert("L")
    width, height = png.size
    assert width > 800 and height > 400
    histogram = png.histogram()
    dark = sum(histogram[:100]) / (width * height)
    assert 0.02 < dark < 0.6  # ink on paper: neither blank nor a filled rectangle
    svg = ElementTree.fromstring(chart_bytes(vancouver, "svg"))
    assert svg.tag == "{http://www.w3.org/2000/svg}svg"
    assert chart_bytes(vancouver, "svg") == chart_bytes(vancouver, "svg")  # reproducible: no date, fixed ids
    legend = [text.get_text() for text in phase_figure(vancouver).axes[0].get_legend().get_texts()]
    # the demo's one flight is drawn for orientation, and said not to be a calendar event
    assert "flight (not in calendars)" in legend and len(vancouver.context) == 1


def test_chart_format_comes_from_the_suffix():
    assert chart_format("a/b.PNG") == "png" and chart_format("c.svg") == "svg"
    with pytest.raises(InputError, match=r"\.png or \.svg"):
        chart_format("plan.pdf")


def test_cli_writes_report_and_chart_and_refuses_to_overwrite(stored_plans, tmp_path):  # noqa: F811
    report, chart = tmp_path / "plan.html", tmp_path / "plan.png"
    result = run("demo", "madrid-newyork-short", "--report", str(report), "--chart", str(chart), "--json")
    assert result.exit_code == 0, result.stderr
    written = one_json_document(result.stdout)["written"]
    assert written == {"ics": [], "report": str(report), "chart": [str(chart)]}
    assert report.read_text(encoding="utf-8").startswith("<!DOCTYPE html>")
    assert chart.read_bytes().startswith(b"\x89PNG\r\n\x1a\n")  # PNG signature (PNG spec §5.2)
    result = run("demo", "madrid-newyork-short", "--report", str(report))
    assert result.exit_code == 2 and "exists; use --force to overwrite" in result.stderr


# --------------------------------------------------------------------------- a real browser

PROBE = """<script>
window.__errors = [];
window.addEventListener('error', function (e) {
  var what = e.message || (e.target && (e.target.src || e.target.href)) || 'error';
  window.__errors.push(String(what).slice(0, 200));
}, true);
(function () { var original = console.error; console.error = function () {
  window.__errors.push(Array.prototype.join.call(arguments, ' ')); original.apply(console, arguments); }; })();
window.addEventListener('load', function () {
  var img = document.getElementById('phase-chart');
  var result = {errors: window.__errors, found: !!img, width: img ? img.naturalWidth : 0, inked: 0};
  if (img && img.naturalWidth) {
    var c = document.createElement('canvas');
    c.width = 400; c.height = Math.round(400 * img.naturalHeight / img.naturalWidth);
    var g = c.getContext('2d'); g.fillStyle = '#fff'; g.fillRect(0, 0, c.width, c.height);
    g.drawImage(img, 0, 0, c.width, c.height);
    var d = g.getImageData(0, 0, c.width, c.height).data, n = 0;
    for (var i = 0; i < d.length; i += 4) { if (d[i] < 200 || d[i + 1] < 200 || d[i + 2] < 200) n++; }
    result.inked = n / (c.width * c.height);
  }
  var pre = document.createElement('pre'); pre.id = 'probe-result';
  pre.textContent = JSON.stringify(result); document.body.appendChild(pre);
});
</script>"""


def browser() -> str:
    for name in BROWSERS:
        found = shutil.which(name)
        if found:
            return found
    if os.environ.get("CI"):
        pytest.fail("no headless Chromium on this CI machine; .ci/run should have installed the 'chromium' package")
    pytest.skip("no Chromium here (installed by .ci/run in CI: apt-get install chromium)")


def headless(executable: str, profile: Path, *args: str) -> subprocess.CompletedProcess:
    command = [executable, "--headless", "--no-sandbox", "--disable-gpu", "--disable-quic", "--no-first-run",
               "--disable-background-networking", "--disable-component-update", "--disable-sync",
               "--disable-dev-shm-usage", f"--user-data-dir={profile}", "--enable-logging=stderr", "--v=0",
               *args]
    return subprocess.run(command, capture_output=True, text=True, timeout=120)


def test_report_renders_in_a_headless_browser(vancouver_html, tmp_path):
    executable = browser()
    page = tmp_path / "report.html"
    page.write_text(vancouver_html, encoding="utf-8")
    probe = tmp_path / "probe.html"
    probe.write_text(vancouver_html.replace("<head>", "<head>" + PROBE, 1), encoding="utf-8")

    dumped = headless(executable, tmp_path / "profile-1", "--virtual-time-budget=10000", "--dump-dom",
                      probe.as_uri())
    found = re.search(r'<pre id="probe-result">(.*?)</pre>', dumped.stdout, flags=re.S)
    assert found, dumped.stderr[-2000:]
    result = json.loads(html.unescape(found.group(1)))
    assert result["errors"] == []
    assert result["found"] and result["width"] > 0
    assert 0.02 < result["inked"] < 0.6  # the chart drew: ink on white, not blank, not a solid block

    shot = tmp_path / "report.png"
    rendered = headless(executable, tmp_path / "profile-2", "--hide-scrollbars", "--window-size=1000,1600",
                        f"--screenshot={shot}", page.as_uri())
    assert shot.is_file(), rendered.stderr[-2000:]
    assert "Uncaught" not in rendered.stderr and "CONSOLE" not in rendered.stderr
    image = Image.open(shot).convert("L")
    assert image.size == (1000, 1600)
    histogram = image.histogram()
    assert sum(histogram[:128]) / (1000 * 1600) > 0.01  # text and chart on the page, not a blank screen
    assert histogram[255] / (1000 * 1600) > 0.3  # mostly white paper
