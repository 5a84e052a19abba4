"""Working-time rules on roster drafts: checked before any circadian score, reported with the rule, its
source and the days, breaking drafts ranked after every conforming one (or refused with --strict).

The roster is an invented packing plant (real town and time zone, made-up crew).
"""

from __future__ import annotations

import json
from datetime import date

import pytest
from test_cli import one_json_document
from typer.testing import CliRunner

from planner import load_model
from planner.cli import app
from planner.rosters.rules import check_draft
from planner.rosters.scenario import builtin_roster_paths, load_roster
from planner.rosters.search import plan_roster

FACTORY = """\
kind = "roster"
name = "Invented packing plant, three drafts"
model = "forger1999"
start_date = "2027-02-01"
[site]
name = "Leeds"
time_zone = "Europe/London"
latitude = 53.80
longitude = -1.55
[workers]
sleep = {{ bed = "23:00", wake = "07:00" }}
commute_minutes = 30
[shifts.M]
start = "06:00"
end = "14:00"
[shifts.L]
start = "13:00"
end = "21:00"
[shifts.N]
start = "22:00"
end = "08:00"
ends_next_day = true
{rules}
[[drafts]]
name = "quick return"
pattern = ["L", "M", "off", "off", "off", "off", "off"]
cycles = 1
[[drafts]]
name = "night into morning"
pattern = ["N", "M", "off", "off", "off", "off", "off"]
cycles = 1
[[drafts]]
name = "steady"
pattern = ["M", "M", "L", "L", "off", "off", "off"]
cycles = 1
"""


@pytest.fixture
def factory(tmp_path):
    def write(rules: str = "", extra_drafts: str = "") -> str:
        path = tmp_path / "factory.toml"
        path.write_text(FACTORY.format(rules=rules) + extra_drafts, encoding="utf-8")
        return str(path)
    return write


def breaches_by_draft(path: str) -> dict:
    roster, _ = load_roster(path)
    return {d.name: check_draft(roster, d) for d in roster.drafts}


def test_a_night_shift_running_into_a_morning_shift_is_an_overlap(factory):
    # N ends 08:00, M starts 06:00 the same morning: two hours of double booking before any commute
    # (a shift cannot start before the previous one ends; common sense, the first report)
    found = breaches_by_draft(factory())["night into morning"]
    assert [b.rule for b in found] == ["overlap"]
    assert found[0].first_day == date(2027, 2, 1) and found[0].last_day == date(2027, 2, 2)
    assert "08:00" in found[0].message and "06:00" in found[0].message


def test_nine_hours_between_shifts_breaks_the_eleven_hour_daily_rest(factory):
    # L ends 21:00, M starts 06:00: 9 h of rest; Directive 2003/88/EC Art. 3 asks for 11 consecutive hours
    found = breaches_by_draft(factory())["quick return"]
    assert [b.rule for b in found] == ["daily_rest"]
    assert found[0].source.startswith("Directive 2003/88/EC, Art. 3")
    assert "9 h between" in found[0].message and "Mon 01 Feb" in found[0].message and "Tue 02 Feb" in found[0].message


def test_rules_are_configurable_in_the_roster_file(factory):
    # a site working under a collective agreement allowing 9 h (Directive 2003/88/EC Art. 18 allows
    # derogations by collective agreement; from memory): the quick return then conforms
    found = breaches_by_draft(factory(rules="[rules]\ndaily_rest_h = 9"))
    assert found["quick return"] == [] and [b.rule for b in found["night into morning"]] == ["overlap"]


def test_runs_of_nights_and_working_days_and_weekly_rest(factory):
    # seven nights in a row: more than 4 consecutive nights (HSE 2006, HSG256 appendix 1, from memory) and,
    # with seven days worked, no 35-h rest in the seven days (Directive 2003/88/EC Art. 5: 24 h + 11 h)
    extra = '[[drafts]]\nname = "long nights"\npattern = ["N", "N", "N", "N", "N", "N", "N", "N", "off"]\ncycles = 1\n'
    found = breaches_by_draft(factory(rules="[rules]\nmax_consecutive_work_days = 6", extra_drafts=extra))
    rules = {b.rule for b in found["long nights"]}
    assert rules == {"consecutive_nights", "consecutive_work_days", "weekly_rest"}
    weekly = next(b for b in found["long nights"] if b.rule == "weekly_rest")
    assert "35 h" in weekly.message and weekly.source.startswith("Directive 2003/88/EC, Art. 5")
    assert found["steady"] == []


def test_the_shipped_harbour_drafts_keep_the_rules():
    # regression snapshot (measured here): both crane drafts keep the default rules for every crew
    roster, _ = load_roster(builtin_roster_paths()["harbour-cranes"])
    assert all(check_draft(roster, d) == [] for d in roster.drafts)


def test_the_conforming_draft_ranks_first_even_against_a_lower_score(factory):
    roster, _ = load_roster(factory())
    result = plan_roster(roster, load_model("forger1999"))
    names = [d.draft.name for d in result.drafts]
    assert names[0] == "steady"
    assert all(not d.conforms for d in result.drafts[1:])
    # the quick return scores lower (less disruption) yet ranks after the conforming draft
    scores = {d.draft.name: d.rank_score for d in result.drafts}
    assert scores["quick return"] < scores["steady"]
    assert "break" in result.reason and "rank last" in result.reason


def test_json_lists_the_breaches_and_strict_refuses(factory):
    path = factory()
    runner = CliRunner()
    refused = runner.invoke(app, ["roster", path, "--strict"], env={"COLUMNS": "200"})
    assert refused.exit_code == 2
    assert "--strict" in refused.output and "Directive 2003/88/EC" in refused.output
    assert "Traceback" not in refused.output
    planned = runner.invoke(app, ["roster", path, "--json"], env={"COLUMNS": "200"})
    assert planned.exit_code == 0, planned.output
    document = one_json_document(planned.stdout)
    ranking = {entry["draft"]: entry["working_time"] for entry in document["ranking"]}
    assert ranking["steady"] == {"conforms": True, "breaches": []}
    assert [b["rule"] for b in ranking["night into morning"]["breaches"]] == ["overlap"]
    assert document["working_time_rules"]["daily_rest_h"] == 11.0
    json.dumps(document)


def test_scores_say_whose_they_are_and_when_drafts_are_within_the_spread(factory):
    # A difference smaller than the spread between workers does not single out one draft for a crew
    # (common practice of reading percentile ranges, no single source).
    from types import SimpleNamespace

    from planner.rosters.search import ranking_reason, within_spread, whose_score

    def draft(name, p10, median, p90, size=40):
        population = SimpleNamespace(size=size, score={"p10": p10, "median": median, "p90": p90})
        return SimpleNamespace(draft=SimpleNamespace(name=name), population=population, rank_score=median,
                               best_strategy="nights", conforms=True, breaches=(),
                               rank_by="disruption")

    a, b, far = draft("A", 5.0, 6.0, 8.0), draft("B", 5.5, 6.6, 9.0), draft("C", 9.0, 11.0, 12.0)
    assert within_spread(a, b) and not within_spread(a, far)
    assert whose_score(a) == "the median of 40 workers"
    close = ranking_reason([a, b])
    assert "median of 40 workers" in close and "within the population spread of each other" in close
    assert "0.6 h/wk" in close
    assert "larger than the spread between workers" in ranking_reason([a, far])
    alone = SimpleNamespace(draft=SimpleNamespace(name="A"), population=None, rank_score=6.0, best_strategy="nights",
                            conforms=True, breaches=(), rank_by="disruption")
    assert within_spread(alone, alone) is None
    assert "average worker only" in ranking_reason([alone, alone])
