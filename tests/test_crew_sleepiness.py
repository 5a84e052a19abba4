"""Sleepiness per crew: each crew of a roster works the draft from another day of the pattern, so each gets the
forecast of its own shifts, in the JSON (``crews.<name>.sleepiness``), its calendar, its report section and the
command's human output.

One search of the harbour-cranes demo (four staggered crews) serves the module.
"""

from __future__ import annotations

import json
import re
from datetime import date, datetime

import pytest
from conftest import memoised_searches
from test_calendar import vobject_read
from typer.testing import CliRunner

from planner import service
from planner.cli import app
from planner.engine.sleepiness import SLEEPY_KSS
from planner.plans.ics import calendar_bytes
from test_roster_outputs import CRANES


@pytest.fixture(scope="module")
def planned():
    """The harbour-cranes demo planned once (the search memoised for the command-line runs below)."""
    patch = memoised_searches()
    try:
        outcome = service.plan_roster(service.RosterRequest(str(CRANES)))
        printed = CliRunner().invoke(app, ["roster", str(CRANES)])
        yield outcome, outcome.to_json(), outcome.document(), printed
    finally:
        patch.undo()


def _nights(rows: list[dict]) -> list[list[dict]]:
    """Runs of night shifts on consecutive dates."""
    runs: list[list[dict]] = []
    for row in rows:
        if row["kind"] != "night":
            continue
        day = date.fromisoformat(row["date"])
        if runs and (day - date.fromisoformat(runs[-1][-1]["date"])).days == 1:
            runs[-1].append(row)
        else:
            runs.append([row])
    return runs


def test_each_crew_gets_the_forecast_of_its_own_shifts(planned):
    outcome, document, _, _ = planned
    crews = document["crews"]
    assert set(crews) == {crew.name for crew in outcome.roster.crews} and len(crews) > 1
    nights_by_crew = {}
    for name, crew in crews.items():
        rows = crew["sleepiness"]["shifts"]
        # one row per shift the crew works, on its own dates (arithmetic of the staggered pattern)
        worked = [(day["date"], day["shift"]) for day in crew["days"] if day["work"] is not None]
        assert [(row["date"], row["shift"]) for row in rows] == worked
        summary = crew["sleepiness"]["summary"]
        assert summary["drives_home"] == len(rows)
        assert summary["highest_kss"] == max(row["peak_kss"] for row in rows)
        assert summary["sleepiest_shift"]["peak_kss"] == summary["highest_kss"]
        nights_by_crew[name] = tuple(row["date"] for row in rows if row["kind"] == "night")
    # staggered crews work their nights on other dates (the demo's offsets of 0, 2, 4 and 6 days)
    assert len(set(nights_by_crew.values())) == len(crews)
    # a crew starting the pattern on its first day works the draft as planned: the very same forecast
    # (same plan, same simulation: arithmetic)
    first = next(crew.name for crew in outcome.roster.crews if crew.offset_in(outcome.chosen.draft) == 0)
    assert crews[first]["sleepiness"] == document["ranking"][0]["plan"]["sleepiness"]


def test_each_crews_sleepiest_shift_is_a_night_and_its_kss_falls_over_a_run_of_nights(planned):
    _, document, _, _ = planned
    for name, crew in document["crews"].items():
        # alertness is lowest at night, near the circadian trough and after a long time awake
        # (Åkerstedt & Folkard 1997, Chronobiol Int 14:115)
        assert crew["sleepiness"]["summary"]["sleepiest_shift"]["kind"] == "night", name
        for run in _nights(crew["sleepiness"]["shifts"]):
            peaks = [row["peak_kss"] for row in run]
            # KSS at the end of the night is highest on the first night of a run and falls as the clock adapts
            # to the plan's daytime sleep (common practice, no single source; issue 15's expectation)
            assert peaks[0] == max(peaks) and peaks[-1] < peaks[0], (name, peaks)


def test_sleepy_drives_home_follow_night_shifts(planned):
    _, document, _, _ = planned
    flagged = [row for crew in document["crews"].values() for row in crew["sleepiness"]["shifts"]
               if row["drive_home_sleepy"]]
    for crew in document["crews"].values():
        for row in crew["sleepiness"]["shifts"]:
            # the flag is KSS 7 or more on the commute after the shift (Åkerstedt & Gillberg 1990's "sleepy"),
            # decided on KSS as reported to one decimal, so a drive shown as 7.0 is always flagged
            assert (round(row["drive_home_kss"], 1) >= SLEEPY_KSS) == row["drive_home_sleepy"]
    # the drowsy drive is the one home after a night shift (common practice, no single source)
    assert all(row["kind"] == "night" for row in flagged)
    assert sum(crew["sleepiness"]["summary"]["sleepy_drives_home"] for crew in document["crews"].values()) == \
        len(flagged)


def test_each_crews_calendar_and_report_carry_its_own_forecast(planned):
    _, document, plan_document, _ = planned
    for name, crew in document["crews"].items():
        rows = {row["date"]: row for row in crew["sleepiness"]["shifts"]}
        part = plan_document.for_group(name)
        work = [event for event in part.events if event.kind == "work"]
        assert len(work) == len(rows)
        for event in work:
            row = rows[event.day.isoformat()]
            # the report's band under every shift is the crew's own forecast (README "Sleepiness forecast")
            assert event.kss and max(k for _, k in event.kss) == pytest.approx(row["peak_kss"], abs=0.01)
            night_line = f"Forecast sleepiness (KSS 1-9): highest {row['peak_kss']:.1f}"
            assert (night_line in event.purpose) == (row["kind"] == "night"), (name, event.day)
    # the report's side-by-side tables hold one row per crew with its own sleepiest shift (README "Sleepiness forecast")
    (section,) = [s for s in plan_document.sections if s.title.startswith("Sleepiness by crew")]
    assert [row[0] for row in section.rows] == list(document["crews"])
    for row in section.rows:
        worst = document["crews"][row[0]]["sleepiness"]["summary"]["sleepiest_shift"]
        assert f"KSS {worst['peak_kss']:.1f}" in row[2] and worst["shift"] in row[2]
    # the line reaches the crew's calendar file as an independent parser reads it (vobject)
    name = sorted(document["crews"])[1]
    first_night = next(row for row in document["crews"][name]["sleepiness"]["shifts"] if row["kind"] == "night")
    calendar = vobject_read(calendar_bytes(plan_document.for_group(name)).decode("utf-8"))
    descriptions = [event.description.value for event in calendar.contents["vevent"]
                    if "description" in event.contents and isinstance(event.dtstart.value, datetime)
                    and event.dtstart.value.date().isoformat() == first_night["date"]]
    assert any(f"highest {first_night['peak_kss']:.1f}" in text for text in descriptions)


def test_human_output_lists_each_crews_sleepiness(planned):
    _, document, _, printed = planned
    assert printed.exit_code == 0, printed.stderr
    text = printed.stderr
    assert "Sleepiness by crew" in text
    section = text[text.index("Sleepiness by crew"):]
    for name, crew in document["crews"].items():
        worst = crew["sleepiness"]["summary"]["sleepiest_shift"]
        shown = datetime.fromisoformat(worst["date"]).strftime("%a %d %b")
        assert re.search(rf"^\s*{re.escape(name)}\s+.*{re.escape(shown)}", section, flags=re.M), name


def test_crew_sleepiness_keys_are_json(planned):
    _, document, _, _ = planned
    # one JSON document: the new keys serialise as plain JSON (RFC 8259)
    assert json.loads(json.dumps(document["crews"])) == document["crews"]
    # without --people there is no spread across workers to report
    assert all(crew["population_sleepiness"] is None for crew in document["crews"].values())


def test_each_crews_sleepiness_across_simulated_workers():
    result = CliRunner().invoke(app, ["roster", str(CRANES), "--people", "8", "--seed", "3", "--json"])
    assert result.exit_code == 0, result.stderr
    document = json.loads(result.stdout)
    draft_spread = document["ranking"][0]["population"]["sleepiness"]
    for name, crew in document["crews"].items():
        spread = crew["population_sleepiness"]
        for key, values in spread.items():
            # percentiles in order (arithmetic)
            assert values["p10"] <= values["median"] <= values["p90"], (name, key)
        # the sleepy drives of a crew's workers are counted over the crew's own shifts (arithmetic)
        assert 0 <= spread["sleepy_drives_home"]["p90"] <= crew["sleepiness"]["summary"]["drives_home"]
    # the crew working the draft as drawn is the population run of the draft itself (same workers, same plan)
    first = next(name for name, crew in document["crews"].items()
                 if [d["shift"] for d in crew["days"]] == [d["shift"] for d in document["days"]])
    assert document["crews"][first]["population_sleepiness"] == draft_spread
