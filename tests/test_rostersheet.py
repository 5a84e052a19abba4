"""Rosters from spreadsheets: the demo roster as .xlsx and .csv ranks as its TOML file; the template plans once filled.

The workbooks and CSV files are written by tools/make_roster_sheets.py with openpyxl and the csv module
straight from the demo's TOML (read with tomllib), following the layout the README documents, not with the
planner's own code.
"""

from __future__ import annotations

import importlib.util
import tomllib
from datetime import date, datetime, time
from pathlib import Path

import openpyxl
import pytest
from typer.testing import CliRunner

from planner.cli import app
from planner.engine.parameters import load_model
from planner.rosters.model import crew_draft
from planner.rosters.scenario import load_roster
from planner.rosters.search import plan_roster
from planner.rosters.sheet import load_roster_sheets, sheet_ref, shortest_period, template_workbook
from planner.scenariofile import PLACE_FIELDS
from planner.tomlfile import InputFileError
from tests.test_cli import assert_one_line_error, one_json_document

REPO = Path(__file__).resolve().parent.parent
DEMO = REPO / "scenarios" / "harbour-cranes.toml"


def _tool():
    """tools/make_roster_sheets.py, which writes the layout with openpyxl and csv (not with the planner's code)."""
    spec = importlib.util.spec_from_file_location("make_roster_sheets", REPO / "tools" / "make_roster_sheets.py")
    module = importlib.util.module_from_spec(spec)
    spec.loader.exec_module(module)
    return module


@pytest.fixture(scope="module")
def demo_data() -> dict:
    return tomllib.loads(DEMO.read_text(encoding="utf-8"))


@pytest.fixture(scope="module")
def demo_files(tmp_path_factory, demo_data):
    folder = tmp_path_factory.mktemp("sheets")
    tool = _tool()
    workbook = tool.write_workbook(demo_data, folder / "harbour.xlsx")
    # both separators spreadsheet programs write: "," in the first file, ";" in the second
    return workbook, tool.write_csv_files(demo_data, folder, "harbour", delimiters=(",", ";"))


def _ranking(roster) -> list[tuple[tuple, str, float]]:
    result = plan_roster(roster, load_model("forger1999"))
    return [(d.draft.pattern, d.best_strategy, round(d.rank_score, 9)) for d in result.drafts]


def test_demo_roster_as_xlsx_and_csv_ranks_as_the_toml(demo_files):
    workbook, csv_files = demo_files
    from_toml, _ = load_roster(DEMO)
    from_xlsx, xlsx_info = load_roster_sheets(workbook)
    from_csv, _ = load_roster_sheets(csv_files)
    # The sheets give the same site, shifts, habits, crews and rotations (8 days x 3 and 16 days x 2, as in the file).
    for sheets in (from_xlsx, from_csv):
        assert sheets.site == from_toml.site and sheets.shifts == from_toml.shifts and sheets.crews == from_toml.crews
        assert [(d.pattern, d.cycles) for d in sheets.drafts] == [(d.pattern, d.cycles) for d in from_toml.drafts]
        assert sheets.measures == from_toml.measures and sheets.start == from_toml.start
    assert [d.name for d in from_xlsx.drafts] == [d.name for d in from_toml.drafts]   # named by their sheets
    assert xlsx_info.name == from_toml.name
    # The same ranking: order, chosen strategy and score (regression against the TOML run, measured here).
    expected = _ranking(from_toml)
    assert _ranking(from_xlsx) == expected
    assert _ranking(from_csv) == expected


def test_shipped_demo_sheets_are_the_demo_roster():
    # scenarios/harbour-cranes.xlsx and its CSV files (tools/make_roster_sheets.py) say what the TOML says
    from_toml, _ = load_roster(DEMO)
    for paths in ([REPO / "scenarios" / "harbour-cranes.xlsx"],
                  [REPO / "scenarios" / "harbour-cranes-fast.csv", REPO / "scenarios" / "harbour-cranes-slow.csv"]):
        sheets, _ = load_roster_sheets(paths)
        assert (sheets.site, sheets.shifts, sheets.crews, sheets.start) == (from_toml.site, from_toml.shifts,
                                                                            from_toml.crews, from_toml.start)
        assert [(d.pattern, d.cycles) for d in sheets.drafts] == [(d.pattern, d.cycles) for d in from_toml.drafts]


def test_template_opens_in_openpyxl_and_plans_once_filled(tmp_path):
    path = tmp_path / "template.xlsx"
    path.write_bytes(template_workbook(date(2027, 3, 1), days=14))
    book = openpyxl.load_workbook(path)
    assert book.sheetnames == ["settings", "draft 1"]
    settings, grid = book["settings"], book["draft 1"]
    labels = {settings.cell(row=r, column=1).value: r for r in range(1, settings.max_row + 1)}
    # A planner fills it in: an invented ward in Rotterdam looked up by name, day and night shifts.
    for label, value in {"site": "Invented ward", "place": "Rotterdam, NL", "bed": time(23, 0), "wake": time(7, 0),
                         "name": "Test ward"}.items():
        settings.cell(row=labels[label], column=2, value=value)
    header = labels["shift"]
    settings.cell(row=header + 1, column=1, value="D")   # overwrite the example note
    for column, value in enumerate(["07:00", "19:00", "day"], start=2):
        settings.cell(row=header + 1, column=column, value=value)
    for column, value in enumerate(["N", "19:00", "07:00", "night", "08:30", "15:30"], start=1):
        settings.cell(row=header + 2, column=column, value=value)
    assert grid.cell(row=1, column=1).value == "crew"
    assert grid.cell(row=1, column=2).value.date() == date(2027, 3, 1)
    for k, code in enumerate(["D", "D", "N", "N", None, None, None] * 2):
        grid.cell(row=2, column=k + 2, value=code)
    book.save(path)
    roster, info = load_roster_sheets(path)
    # Rotterdam: Europe/Amsterdam (IANA tz database); the 7-day rotation is found twice over.
    assert str(roster.site.zone) == "Europe/Amsterdam" and roster.site.name == "Invented ward"
    assert roster.drafts[0].pattern == ("D", "D", "N", "N", None, None, None) and roster.drafts[0].cycles == 2
    assert [s.kind for s in roster.shifts] == ["day", "night"]   # 19:00-07:00 holds 5 h of 00:00-05:00 (EU rule)
    result = CliRunner().invoke(app, ["roster", str(path), "--json"])
    assert result.exit_code == 0, result.stderr
    document = one_json_document(result.stdout)
    assert [r["draft"] for r in document["ranking"]] == ["draft 1"]
    assert len(document["days"]) == 14   # schema version 2: the chosen plan's days at the top level


def test_template_is_written_once_without_force(tmp_path):
    path = tmp_path / "roster.xlsx"
    result = CliRunner().invoke(app, ["roster", "--template", str(path), "--start", "2027-03-01"])
    assert result.exit_code == 0, result.stderr
    assert openpyxl.load_workbook(path)["draft 1"].cell(row=1, column=2).value.date() == date(2027, 3, 1)
    line = assert_one_line_error(CliRunner().invoke(app, ["roster", "--template", str(path)]))
    assert "exists; use --force" in line


def _problems(paths) -> list[str]:
    with pytest.raises(InputFileError) as caught:
        load_roster_sheets(paths)
    return [p.one_line() for p in caught.value.problems]


def test_each_cell_problem_names_sheet_and_cell(demo_files, tmp_path):
    workbook, _ = demo_files
    book = openpyxl.load_workbook(workbook)
    book["fast 2-2-4"]["E3"] = "X"                 # crew B, a code no shift has
    book["slow 4-4-4-4"]["D1"] = datetime(2027, 2, 1)   # a date out of sequence
    broken = tmp_path / "broken.xlsx"
    book.save(broken)
    problems = _problems(broken)
    assert any("'fast 2-2-4'!E3: \"X\" is not a shift code; allowed: \"D\", \"N\"" in p for p in problems), problems
    assert any("'slow 4-4-4-4'!D1: 2027-02-01 follows 2027-01-12; allowed: 2027-01-13" in p for p in problems)

    book = openpyxl.load_workbook(workbook)
    settings = book["settings"]
    zone_row = next(r for r in range(1, settings.max_row + 1) if settings.cell(row=r, column=1).value == "time zone")
    settings.cell(row=zone_row, column=2, value="Europe/Amsterdm")
    book.save(broken)
    problems = _problems(broken)
    assert len(problems) == 1 and f"settings!B{zone_row}: time zone:" in problems[0]
    line = assert_one_line_error(CliRunner().invoke(app, ["roster", str(broken)]))
    assert f"settings!B{zone_row}" in line


def test_a_crew_off_the_rotation_is_pointed_at(demo_files, tmp_path):
    workbook, _ = demo_files
    book = openpyxl.load_workbook(workbook)
    book["fast 2-2-4"]["C4"] = "N"   # crew C (offset 4: off off off off D D N N) gets a night on its second day
    broken = tmp_path / "rotation.xlsx"
    book.save(broken)
    problems = _problems(broken)
    assert problems == [f"{broken}: 'fast 2-2-4'!C4: crew \"C\" does not work the rotation of crew \"A\" (row 2) "
                        "from another day of it; allowed: the same rotation shifted by whole days (put a different "
                        "rotation on its own sheet)"]


def test_check_accepts_a_sheet_and_reports_a_missing_site(tmp_path):
    path = tmp_path / "empty.xlsx"
    path.write_bytes(template_workbook(date(2027, 3, 1)))
    result = CliRunner().invoke(app, ["check", str(path), "--json"])
    assert result.exit_code == 2
    document = one_json_document(result.stdout)
    assert any(p["field"] == "settings!B7" for p in document["problems"]), document["problems"]


def test_shortest_period_and_sheet_refs():
    # An 8-day rotation worked three times over is one pattern of 8 (the roster file's pattern x cycles).
    assert shortest_period(list("DDNN....") * 3) == 8
    assert shortest_period(list("DDNN...D")) == 8
    assert shortest_period(["D"] * 5) == 1
    # Spreadsheet notation: quotes around names with spaces, column 27 is AA (common practice of spreadsheets).
    assert sheet_ref("fast 2-2-4", 3, 5) == "'fast 2-2-4'!E3"
    assert sheet_ref("settings", 7, 27) == "settings!AA7"
    assert PLACE_FIELDS == ("time_zone", "latitude", "longitude")


def test_crews_staggered_otherwise_on_another_draft(demo_files, demo_data, tmp_path):
    workbook, _ = demo_files
    tool = _tool()
    slow = demo_data["drafts"][1]
    # The slow 16-day rotation staggered 4 days apart (A 0, B 4, C 8, D 12) while the fast one keeps 0, 2, 4, 6.
    staggered = {**demo_data, "crews": [{"name": c["name"], "offset_days": 2 * c["offset_days"]}
                                        for c in demo_data["crews"]]}
    book = openpyxl.load_workbook(workbook)
    sheet = book[slow["name"]]
    for r, row in enumerate(tool.grid_rows(staggered, slow, as_dates=True), start=1):
        for c, value in enumerate(row, start=1):
            sheet.cell(row=r, column=c).value = value   # cell(value=None) would leave the old value
    path = tmp_path / "staggered.xlsx"
    book.save(path)
    roster, _ = load_roster_sheets(path)
    fast_draft, slow_draft = roster.drafts
    assert [c.offset_in(fast_draft) for c in roster.crews] == [0, 2, 4, 6]
    assert [c.offset_in(slow_draft) for c in roster.crews] == [0, 4, 8, 12]
    # Each crew's calendar rotation is its own row of the sheet (the rows written above).
    b_row = tool.grid_rows(staggered, slow, as_dates=True)[2][1:]
    assert list(crew_draft(slow_draft, roster.crews[1]).codes()) == b_row
    # The same crews written in a roster file with draft_offsets build the same roster.
    text = DEMO.read_text(encoding="utf-8")
    for name, offset in (("B", 4), ("C", 8), ("D", 12)):
        text = text.replace(f'name = "{name}"\n', f'name = "{name}"\ndraft_offsets = {{ "slow 4-4-4-4" = {offset} }}\n')
    toml_path = tmp_path / "staggered.toml"
    toml_path.write_text(text, encoding="utf-8")
    assert load_roster(toml_path)[0].crews == roster.crews


def test_draft_offsets_must_name_a_draft(tmp_path):
    text = DEMO.read_text(encoding="utf-8").replace('name = "B"\n', 'name = "B"\ndraft_offsets = { "weekly" = 3 }\n')
    path = tmp_path / "roster.toml"
    path.write_text(text, encoding="utf-8")
    line = assert_one_line_error(CliRunner().invoke(app, ["check", str(path)]))
    assert 'crews.1.draft_offsets: no draft named "weekly"; allowed: "fast 2-2-4", "slow 4-4-4-4"' in line
