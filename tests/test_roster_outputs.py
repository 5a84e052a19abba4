"""Roster plans handed over: iCalendar files per crew, the report and the chart."""

import html
import json
import re
from datetime import timezone
from pathlib import Path

import icalendar
import pytest
from test_calendar import icalendar_events, timed_events, to_second, vobject_events  # shared readers of calendar files
from test_report import PROBE, browser, headless
from typer.testing import CliRunner

from planner.cli import app

CRANES = Path(__file__).resolve().parent.parent / "scenarios" / "harbour-cranes.toml"
UTC = timezone.utc


def run(*args: str):
    return CliRunner().invoke(app, list(args), env={"COLUMNS": "200"})


@pytest.fixture(scope="module")
def written(tmp_path_factory):
    folder = tmp_path_factory.mktemp("crane")
    result = run("roster", str(CRANES), "--workers", "20", "--seed", "2", "--draft", "fast 2-2-4",
                 "--ics", str(folder / "crane.ics"),
                 "--report", str(folder / "crane.html"), "--chart", str(folder / "crane.png"), "--json")
    assert result.exit_code == 0, result.stderr
    return folder, json.loads(result.stdout)


def test_one_calendar_per_crew_reads_back_identically_with_icalendar_and_vobject(written):
    folder, document = written
    files = sorted(folder.glob("crane-*.ics"))
    assert [p.name for p in files] == ["crane-a.ics", "crane-b.ics", "crane-c.ics", "crane-d.ics"]   # the four crews
    assert sorted(document["written"]["ics"]) == sorted(str(p) for p in files)
    uids = set()
    for path in files:
        data = path.read_bytes()
        ours, theirs = icalendar_events(data), vobject_events(data)   # vobject: an independent parser (PyPI)
        assert ours.keys() == theirs.keys() and len(ours) > 40
        for uid, (start, end, alarms) in ours.items():
            assert (to_second(start), to_second(end)) == (to_second(theirs[uid][0]), to_second(theirs[uid][1]))
            assert alarms == theirs[uid][2] and len(alarms) <= 1   # none on shifts (tests/test_handouts.py)
        assert not uids & ours.keys()   # RFC 5545 §3.8.4.7: UIDs are globally unique
        uids |= ours.keys()
        calendar = icalendar.Calendar.from_ical(data)
        events = timed_events(calendar)   # the all-day "About this plan" event has a date, not a time
        # every time carries the site's zone (RFC 5545 §3.2.19 TZID), never floating
        assert all(e["DTSTART"].params.get("TZID") == "Europe/Amsterdam" for e in events)
        kinds = {str(c) for e in events for c in e.get("CATEGORIES").cats}   # RFC 5545 §3.8.1.2 CATEGORIES
        assert kinds >= {"Sleep", "Work", "Bright light"}


def test_crews_work_staggered_shifts(written):
    folder, _ = written
    # Crews B starts two days into the 2-2-4 pattern: its first shift is a night (the demo file's offsets).
    def first_work(path):
        calendar = icalendar.Calendar.from_ical(path.read_bytes())
        work = sorted((e for e in calendar.walk("VEVENT") if "Shift" in str(e.get("SUMMARY"))),
                      key=lambda e: e.decoded("DTSTART"))
        return work[0].decoded("DTSTART"), str(work[0].get("SUMMARY"))
    start_a, summary_a = first_work(folder / "crane-a.ics")
    start_b, summary_b = first_work(folder / "crane-b.ics")
    assert "day" in summary_a and "night" in summary_b
    assert start_a.hour == 7 and start_b.hour == 19   # the file's shift times, local (RFC 5545 TZID)


def test_uids_are_the_same_when_exported_again(written, tmp_path):
    folder, _ = written
    result = run("roster", str(CRANES), "--draft", "fast 2-2-4", "--ics", str(tmp_path / "again.ics"), "--group", "B")
    assert result.exit_code == 0, result.stderr
    assert [p.name for p in tmp_path.glob("*.ics")] == ["again.ics"]   # one chosen crew, the file as named
    # RFC 5545 §3.8.4.7: the same event keeps its UID, so re-importing updates instead of duplicating
    assert icalendar_events((tmp_path / "again.ics").read_bytes()).keys() == \
        icalendar_events((folder / "crane-b.ics").read_bytes()).keys()


def test_unknown_crew_is_bad_input(tmp_path):
    result = run("roster", str(CRANES), "--ics", str(tmp_path / "x.ics"), "--group", "Z")
    assert result.exit_code == 2
    assert len(result.stderr.strip().splitlines()) == 1 and '"A"' in result.stderr
    assert not list(tmp_path.iterdir())   # nothing written


def test_calendar_is_not_overwritten_without_force(written):
    folder, _ = written
    before = (folder / "crane.html").read_bytes()
    result = run("roster", str(CRANES), "--report", str(folder / "crane.html"))
    assert result.exit_code == 2 and "--force" in result.stderr   # the house rule: no overwrite without --force
    assert (folder / "crane.html").read_bytes() == before


def test_roster_report_shows_drafts_population_cautions_and_renders(written, tmp_path):
    folder, _ = written
    page = (folder / "crane.html").read_text(encoding="utf-8")
    assert "Drafts ranked" in page and "slow 4-4-4-4" in page and "fast 2-2-4" in page
    assert "simulated workers" in page and "Duffy" in page   # the population spread and its source
    assert "Lee ML et al. 2016" in page   # driving after night shifts (science reference §6)
    assert not re.search(r"""(src|href)=["']https?:""", page)   # self-contained
    executable = browser()
    probe = tmp_path / "probe.html"
    probe.write_text(page.replace("<head>", "<head>" + PROBE, 1), encoding="utf-8")
    dumped = headless(executable, tmp_path / "profile", "--virtual-time-budget=10000", "--dump-dom", probe.as_uri())
    found = re.search(r'<pre id="probe-result">(.*?)</pre>', dumped.stdout, flags=re.S)
    assert found, dumped.stderr[-2000:]
    result = json.loads(html.unescape(found.group(1)))
    assert result["errors"] == [] and result["found"]
    assert 0.02 < result["inked"] < 0.6   # the chart drew something, not a blank or solid block


def test_robust_roster_plan_beside_the_average_workers_plan(tmp_path):
    ward = CRANES.parent / "hospital-ward.toml"
    args = ("roster", str(ward), "--robust", "--draft", "fast forward 2-2-2", "--seed", "4", "--json")
    first, again = run(*args), run(*args)
    assert first.exit_code == 0, first.stderr
    robust = json.loads(first.stdout)["robust"]
    assert robust == json.loads(again.stdout)["robust"]   # reproducible for a fixed seed (common practice)
    assert robust["people"] == 32 and robust["candidates"] > 10
    average = robust["average_worker_plan"]
    # The 90th percentile lies above the mean for both plans: workers with periods far from the average
    # carry more of the burden (Duffy et al. 2011 spread; a right-skewed score).
    for plan in (robust, average):
        assert plan["population_p90_score_h_per_week"] > plan["population_mean_score_h_per_week"]
    # Regression snapshot (measured here, seed 4, jewett1999): where the average worker's plan stays
    # day-oriented without measures, the robust search puts a light box at the start of each night shift,
    # 23.7 against 25.1 h/wk over 32 workers.
    assert robust["changed"] is True and robust["settings_text"] != average["settings_text"]
    assert robust["population_mean_score_h_per_week"] == pytest.approx(23.7, abs=0.3)
    assert average["population_mean_score_h_per_week"] == pytest.approx(25.1, abs=0.3)


def test_model_ensemble_shows_where_the_models_disagree():
    result = run("roster", str(CRANES), "--models", "forger1999,jewett1999,hannay2019", "--json")
    assert result.exit_code == 0, result.stderr
    document = json.loads(result.stdout)
    ensemble = document["ensemble"]
    assert [m["model"] for m in ensemble["members"]] == ["forger1999", "jewett1999", "hannay2019"]
    # every model used is cited (house rule); DOIs of the three papers (the journals' DOI records)
    assert {c["doi"] for c in document["citations"]} == {"10.1177/074873099129000867", "10.1177/074873049901400608",
                                                         "10.1177/0748730419878298"}
    # the scenario's own model reproduces the main run exactly (same plan, same model: arithmetic)
    main = document["ranking"][0]["plan"]["disruption_score_h_per_week"]
    own = next(m for m in ensemble["members"] if m["model"] == document["model"]["id"])
    assert own["disruption_score_h_per_week"] == pytest.approx(main, abs=1e-9)
    spread = ensemble["cbtmin_spread_h"]
    flagged = [d for d, value in enumerate(spread) if value is None or value > ensemble["tolerance_h"]]
    assert ensemble["disagree_days"] == flagged
    # Regression snapshot (measured here): the three models part by more than 1 h on some nights.
    assert ensemble["disagree_days"]
