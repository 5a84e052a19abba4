"""Quick trips on the command line: the same plan as the equivalent trip file, and --save round-trips."""

from __future__ import annotations

import json
import shlex
import tomllib
from pathlib import Path

import pytest
from typer.testing import CliRunner

from planner.cli import app
from planner.scenariofile import DEFAULT_MODEL
from planner.trips.quick import load_quick_trip, parse_sleep, quick_trip_scenario
from planner.trips.scenario import load_trip
from tests.test_cli import assert_one_line_error, one_json_document

# An invented traveller: Sydney to London in the southern autumn; the flight's times are each on the
# local clock of its airport (Sydney AEDT +11:00, London GMT +00:00 on these dates: IANA tz database).
QUICK = ["--from", "Sydney", "--to", "London, GB", "--depart", "2027-03-10 15:00", "--arrive", "2027-03-11 06:00",
         "--stay", "5"]
README = (Path(__file__).resolve().parent.parent / "README.md").read_text(encoding="utf-8")

#: The same trip written by hand as a scenario file, with the places by name and the default model named.
EQUIVALENT_TOML = f"""\
kind = "trip"
name = "Sydney to London"
model = "{DEFAULT_MODEL}"
""" + """\

[traveller]
sleep = { bed = "23:00", wake = "07:00" }

[home]
place = "Sydney"

[destination]
place = "London, GB"
stay_days = 5

[[flights]]
from = "home"
to = "destination"
depart = "2027-03-10 15:00"
arrive = "2027-03-11 06:00"
"""


def run(*args: str):
    return CliRunner().invoke(app, list(args))


def _plan_part(document: dict) -> dict:
    """The plan without the scenario's own description and path (the only parts that say where it came from)."""
    return {key: value for key, value in document.items() if key not in ("scenario", "saved_scenario")}


def test_quick_trip_plans_as_the_equivalent_file_and_save_round_trips(tmp_path):
    saved = tmp_path / "sydney-london.toml"
    quick = run("trip", *QUICK, "--save", str(saved), "--json")
    assert quick.exit_code == 0, quick.stderr
    quick_doc = one_json_document(quick.stdout)
    assert quick_doc["saved_scenario"] == str(saved)

    hand = tmp_path / "by-hand.toml"
    hand.write_text(EQUIVALENT_TOML, encoding="utf-8")
    from_file = run("trip", str(hand), "--json")
    assert from_file.exit_code == 0, from_file.stderr
    file_doc = one_json_document(from_file.stdout)
    # The same days, windows, CBTmin and comparison: nothing in the plan depends on how the trip was given.
    assert _plan_part(quick_doc) == _plan_part(file_doc)
    # a quick trip plans with the default model, as a file naming none would (README "Quick trips")
    assert quick_doc["model"]["id"] == DEFAULT_MODEL
    # Sydney -> London in March is 11 h west (AEDT +11 to GMT, IANA tz database).
    assert quick_doc["clock_change_h"] == pytest.approx(-11.0)

    # --save round-trips: the saved file is accepted by check and builds the very same trip.
    checked = run("check", str(saved), "--json")
    assert checked.exit_code == 0, checked.stderr
    assert one_json_document(checked.stdout)["valid"] is True
    assert load_trip(saved)[0] == load_trip(hand)[0]
    data = tomllib.loads(saved.read_text(encoding="utf-8"))
    # GeoNames' Sydney and London: Australia/Sydney at 33.87 S 151.21 E, Europe/London at 51.51 N 0.13 W (from memory).
    assert data["home"]["time_zone"] == "Australia/Sydney" and data["destination"]["time_zone"] == "Europe/London"
    assert abs(data["home"]["latitude"] + 33.87) < 0.05 and abs(data["destination"]["longitude"] + 0.13) < 0.05


def test_save_never_overwrites_without_force(tmp_path):
    saved = tmp_path / "trip.toml"
    saved.write_text("# the user's own file\n", encoding="utf-8")
    line = assert_one_line_error(run("trip", *QUICK, "--save", str(saved)))
    assert "exists; use --force" in line
    assert saved.read_text(encoding="utf-8") == "# the user's own file\n"


def test_readme_shows_the_quick_trip_first_after_the_demo():
    after_set_up = README.split("## Set-up on a fresh machine", 1)[1].split("```sh\n")
    # the set-up section's two blocks (install + demo, tests), then the first example: this very quick trip
    first_example = after_set_up[3].split("```")[0].strip()
    assert after_set_up[1].split("```")[0].strip().endswith("phaseplan demo")
    assert shlex.split(first_example) == [".venv/bin/phaseplan", "trip", *QUICK]


def test_quick_trip_library_builds_the_file_loader_trip():
    quick = quick_trip_scenario("Sydney", "London, GB", "2027-03-10 15:00", "2027-03-11 06:00", stay_days=3,
                                sleep="23:30-07:30")
    trip, info = load_quick_trip(quick)
    assert info.name == "Sydney to London"
    # 15:00 AEDT (+11:00) is 04:00 UTC; 06:00 GMT is 06:00 UTC (IANA tz database).
    assert trip.flights[0].depart.hour == 4 and trip.flights[0].arrive.hour == 6
    assert json.loads(json.dumps(quick.scenario)) == quick.scenario   # plain data, as a web form would send
    assert parse_sleep("22:00-06:30") == {"bed": "22:00", "wake": "06:30"}


@pytest.mark.parametrize("args, expected", [
    (["--from", "Portland", "--to", "London, GB", "--depart", "2027-03-10 15:00", "--arrive", "2027-03-11 06:00"],
     '--from: "Portland" is ambiguous'),
    (["--from", "Sydney", "--to", "Qwertzuiop", "--depart", "2027-03-10 15:00", "--arrive", "2027-03-11 06:00"],
     "--to: no place called"),
    (["--from", "Sydney", "--to", "London, GB", "--depart", "2027-03-10 15:00", "--arrive", "2027-03-09 06:00"],
     "--arrive: arrival"),
    (["--from", "Sydney", "--to", "London, GB", "--depart", "2027-03-10 15:00", "--arrive", "2027-03-11 06:00",
      "--stay", "40"], "--stay:"),
    (["--from", "Sydney", "--to", "London, GB", "--depart", "2027-03-10 15:00", "--arrive", "2027-03-11 06:00",
      "--sleep", "late"], "--sleep:"),
    (["--from", "Sydney", "--to", "London, GB", "--depart", "10/03/2027 15:00", "--arrive", "2027-03-11 06:00"],
     "--depart:"),
    (["--from", "Sydney", "--depart", "2027-03-10 15:00"], "missing: --to, --arrive"),
    ([], "give a trip scenario FILE"),
])
def test_quick_trip_problems_are_one_line_naming_the_option(args, expected):
    line = assert_one_line_error(run("trip", *args))
    assert expected in line, line


def test_file_and_quick_options_together_are_refused(tmp_path):
    hand = tmp_path / "trip.toml"
    hand.write_text(EQUIVALENT_TOML, encoding="utf-8")
    line = assert_one_line_error(run("trip", str(hand), "--from", "Sydney"))
    assert "not both" in line and "--from" in line


def test_scenario_place_names_are_checked_on_their_line(tmp_path):
    path = tmp_path / "trip.toml"
    path.write_text(EQUIVALENT_TOML.replace('place = "London, GB"', 'place = "Portland"'), encoding="utf-8")
    line = assert_one_line_error(run("check", str(path)))
    # Line 12 holds destination.place; Portland, Oregon and Portland, Maine are both candidates (GeoNames).
    assert f"{path}:12: destination.place:" in line and "Portland, US-OR" in line and "Portland, US-ME" in line
    path.write_text(EQUIVALENT_TOML.replace('place = "Sydney"', 'place = "Sydney"\nlatitude = -33.9'),
                    encoding="utf-8")
    line = assert_one_line_error(run("check", str(path)))
    assert "home:" in line and "give either place or" in line
