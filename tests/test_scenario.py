"""Trip scenario files: the loader, the planned period, local times, and `phaseplan check`.

The demo files in scenarios/ are invented trips; the tests edit copies of them one line at a
time and check that every bad input gives one clear line with file, line and field (exit 2).
"""

from __future__ import annotations

from datetime import datetime, timedelta, timezone
from pathlib import Path

import pytest
from test_cli import assert_one_line_error, one_json_document
from typer.testing import CliRunner

from planner.cli import app
from planner.scenariofile import DEFAULT_MODEL
from planner.tomlfile import InputFileError
from planner.trips.model import trip_days
from planner.trips.scenario import DEFAULT_DEMO, builtin_scenario_paths, demo_path, load_trip

REPO = Path(__file__).resolve().parent.parent
SCENARIOS = REPO / "scenarios"
UTC = timezone.utc


def run(*args: str):
    return CliRunner().invoke(app, list(args), env={"COLUMNS": "200"})


def edited(tmp_path: Path, base: str, old: str, new: str, name: str = "edited.toml") -> tuple[Path, int]:
    """A copy of a demo scenario with ``old`` replaced by ``new`` once; returns the path and the
    1-based line of the replacement (the line an error about it must name)."""
    text = (SCENARIOS / f"{base}.toml").read_text(encoding="utf-8")
    assert old in text, f"{old!r} not in {base}.toml; the test would not test what it says"
    changed = text.replace(old, new, 1)
    path = tmp_path / name
    path.write_text(changed, encoding="utf-8")
    return path, text[:text.index(old)].count("\n") + 1


# --------------------------------------------------------------------------- the demo files

def test_every_demo_file_loads_and_says_it_is_invented():
    demos = builtin_scenario_paths()
    assert {"lisbon-tokyo", "frankfurt-vancouver", "madrid-newyork-short"} <= set(demos)
    assert demo_path() == demos[DEFAULT_DEMO]
    for path in demos.values():
        assert "invented" in path.read_text(encoding="utf-8").lower()   # project rule for demo data
        trip, info = load_trip(path)
        # the demos show the default model, the one the validation table ranks first (README "Validation table")
        assert info.name and info.model == DEFAULT_MODEL and info.path == str(path)


def test_lisbon_tokyo_flight_times_become_utc_instants():
    trip, info = load_trip(SCENARIOS / "lisbon-tokyo.toml")
    flight = trip.flights[0]
    # Lisbon keeps UTC+0 in winter until the last Sunday of March; Tokyo is UTC+9 all year (IANA tz database)
    assert flight.depart == datetime(2027, 3, 10, 11, 0, tzinfo=UTC)
    assert flight.arrive == datetime(2027, 3, 10, 22, 0, tzinfo=UTC)
    # the planned period starts at home midnight `preparation_days` (3) before departure (the file's rule)
    assert trip.start == datetime(2027, 3, 7, 0, 0, tzinfo=UTC)
    # one-way: it ends at Tokyo midnight closing the 10th full day after the arrival day (the file's rule);
    # Tokyo midnight is 15:00 UTC the day before (IANA tz database)
    assert trip.end == datetime(2027, 3, 21, 15, 0, tzinfo=UTC)
    assert not info.round_trip
    assert [b.label for b in trip.busy] == ["residency opening"]
    # 09:00-17:00 local in Tokyo is 01:00-07:00 UTC (UTC+9, IANA tz database)
    assert trip.busy[0].start == datetime(2027, 3, 12, 1, 0, tzinfo=UTC)


def test_round_trip_ends_days_after_return_at_home_midnight():
    trip, info = load_trip(SCENARIOS / "madrid-newyork-short.toml")
    assert info.round_trip
    assert trip.flights[-1].destination is trip.home
    # Madrid is UTC+2 in June (CEST), New York UTC-4 (EDT) (IANA tz database)
    assert trip.flights[1].depart == datetime(2027, 6, 17, 22, 0, tzinfo=UTC)
    assert trip.flights[1].arrive == datetime(2027, 6, 18, 5, 30, tzinfo=UTC)
    # return lands on 18 June; 2 days after return -> Madrid midnight closing 20 June (the file's rule)
    assert trip.end == datetime(2027, 6, 20, 22, 0, tzinfo=UTC)
    kinds = [day.kind for day in trip_days(trip)]
    assert kinds.count("travel") == 2 and "preparation" not in kinds   # two flights, preparation_days = 0


def test_stops_make_a_multi_leg_route(tmp_path):
    path, _ = edited(tmp_path, "madrid-newyork-short", '''[[flights]]
from = "destination"
to = "home"''', '''[[stops]]
name = "Boston"
time_zone = "America/New_York"
latitude = 42.36
longitude = -71.06

[[flights]]
from = "destination"
to = "Boston"
depart = "2027-06-17 13:30"
arrive = "2027-06-17 14:45"

[[flights]]
from = "Boston"
to = "home"''')
    trip, _ = load_trip(path)
    assert [f.destination.name for f in trip.flights] == ["New York", "Boston", "Madrid"]
    assert trip.flights[1].destination is trip.flights[2].origin


# --------------------------------------------------------------------------- bad input: one line, exit 2

BAD_INPUTS = [
    # (demo, old text, new text, field, words the message must contain)
    ("lisbon-tokyo", 'time_zone = "Asia/Tokyo"', 'time_zone = "Asia/Tokio"', "destination.time_zone",
     ("unknown time zone", "IANA")),
    ("lisbon-tokyo", 'arrive = "2027-03-11 07:00"', 'arrive = "2027-03-10 07:00"', "flights.0.arrive",
     ("not after departure",)),
    ("lisbon-tokyo", 'sleep = { bed = "23:00", wake = "07:00" }\npreparation_days',
     'sleep = { bed = "22:00", wake = "15:00" }\npreparation_days', "traveller.sleep", ("17 h", "at most 16 h")),
    ("lisbon-tokyo", 'sleep = { bed = "23:00", wake = "07:00" }\npreparation_days',
     'sleep = { bed = "23:00", wake = "23:00" }\npreparation_days', "traveller.sleep", ("empty",)),
    ("lisbon-tokyo", "indoor_lux = 150", "indoor_lux = -5", "light.indoor_lux", ("greater than or equal to 0", "-5")),
    ("lisbon-tokyo", "glasses_transmission = 0.1", "glasses_transmission = 1.5", "light.glasses_transmission",
     ("less than or equal to 1",)),
    ("lisbon-tokyo", "latitude = 35.68", "latitude = 135.68", "destination.latitude", ("less than or equal to 90",)),
    ("lisbon-tokyo", "longitude = -9.14", "longitude = -189.14", "home.longitude", ("greater than or equal to -180",)),
    ("lisbon-tokyo", 'arrive = "2027-03-11 07:00"     # Tokyo time\n', "", "flights.0.arrive", ("required field",)),
    ("lisbon-tokyo", "stay_days = 10", "stay_days = 10\nstay_nights = 3", "destination.stay_nights",
     ("unknown field",)),
    ("lisbon-tokyo", 'end = "2027-03-12 16:00"', 'end = "2027-03-12 09:00"', "busy.0.end", ("not after start",)),
    ("lisbon-tokyo", 'bed = "23:00", wake = "07:00" }\nstay_days', 'bed = "11 pm", wake = "07:00" }\nstay_days',
     "destination.sleep.bed", ("not a clock time", "HH:MM")),
    ("madrid-newyork-short", 'depart = "2027-06-17 18:00"', 'depart = "2027-06-14 11:00"', "flights.1.depart",
     ("before the previous flight lands",)),
    ("madrid-newyork-short", 'to = "home"', 'to = "Boston"', "flights.1.to", ('unknown place "Boston"',)),
    ("madrid-newyork-short", "days_after_return = 2", "days_after_return = 2\n[destination]\nstay_days = 2",
     "", ("not valid TOML",)),
    ("madrid-newyork-short", "longitude = -74.01", "longitude = -74.01\nstay_days = 3", "destination.stay_days",
     ("round trip",)),
    ("lisbon-tokyo", 'model = "jewett1999"', 'model = "jewett2000"', "model", ("neither a built-in model",)),
]


@pytest.mark.parametrize("command", ["check", "trip"])
@pytest.mark.parametrize("base,old,new,field,words", BAD_INPUTS, ids=[f"{b[3] or 'toml'}-{i}" for i, b in
                                                                      enumerate(BAD_INPUTS)])
def test_bad_input_gives_one_line_with_file_field_and_line(tmp_path, command, base, old, new, field, words):
    path, line = edited(tmp_path, base, old, new)
    message = assert_one_line_error(run(command, str(path)))
    assert message.startswith(f"phaseplan: error: {path}:")
    if field:
        assert f": {field}: " in message
        # the line of the edited text (of its line naming the key), or for a removed key the header of its table
        key = field.rsplit(".", 1)[-1]
        line += next((k for k, text in enumerate(new.splitlines()) if key in text), 0)
        named = int(message.split(f"{path}:")[1].split(":")[0])
        assert named == line or (not new and named < line)
    for word in words:
        assert word in message


def test_check_reports_every_problem_each_on_its_line(tmp_path):
    path, _ = edited(tmp_path, "lisbon-tokyo", "indoor_lux = 150", "indoor_lux = -5")
    text = path.read_text(encoding="utf-8").replace("latitude = 35.68", "latitude = 135.68")
    path.write_text(text, encoding="utf-8")
    result = run("check", str(path))
    assert result.exit_code == 2 and result.stdout == ""
    lines = result.stderr.strip().splitlines()
    assert len(lines) == 2 and "Traceback" not in result.stderr
    assert any(": destination.latitude: " in line for line in lines)
    assert any(": light.indoor_lux: " in line for line in lines)
    # `trip` stops at the first problem in one line and says how many more there are
    assert "(and 1 more problem)" in assert_one_line_error(run("trip", str(path)))


def test_check_json_lists_the_problems(tmp_path):
    path, line = edited(tmp_path, "lisbon-tokyo", 'time_zone = "Asia/Tokyo"', 'time_zone = "Asia/Tokio"')
    result = run("check", str(path), "--json")
    assert result.exit_code == 2
    document = one_json_document(result.stdout)
    assert document["valid"] is False
    assert document["problems"] == [{"file": str(path), "line": line, "field": "destination.time_zone",
                                     "message": document["problems"][0]["message"]}]


def test_check_of_a_good_file_summarises_on_stderr():
    result = run("check", str(SCENARIOS / "lisbon-tokyo.toml"))
    assert result.exit_code == 0 and result.stdout == ""
    assert "ok" in result.stderr and "9 h east" in result.stderr   # Lisbon UTC+0 -> Tokyo UTC+9 (IANA tz)
    document = one_json_document(run("check", str(SCENARIOS / "frankfurt-vancouver.toml"), "--json").stdout)
    assert document["valid"] is True and document["problems"] == []
    # Frankfurt UTC+2 -> Vancouver UTC-7 in May: 9 h west (IANA tz database)
    assert document["summary"]["clock_change_h"] == -9.0
    assert document["summary"]["flights"][0]["depart"] == "2027-05-10T10:15+02:00"


def test_a_file_of_another_kind_is_refused(tmp_path):
    path, line = edited(tmp_path, "lisbon-tokyo", 'kind = "trip"', 'kind = "rotation"')
    message = assert_one_line_error(run("check", str(path)))
    assert f"{path}:{line}: kind: " in message and 'kind = "trip"' in message


def test_text_from_the_file_is_shown_literally(tmp_path):
    path, _ = edited(tmp_path, "lisbon-tokyo", 'name = "Lisbon"', 'name = "Lisbon [red]old town[/red]"')
    result = run("check", str(path))
    assert result.exit_code == 0, result.stderr
    assert "Lisbon [red]old town[/red]" in result.stderr   # rich markup in user text is escaped, not applied


def test_missing_file_is_one_line():
    message = assert_one_line_error(run("trip", "no/such/trip.toml"))
    assert "no/such/trip.toml" in message and "file not found" in message


def test_unknown_demo_lists_the_demos():
    message = assert_one_line_error(run("demo", "atlantis"))
    assert "lisbon-tokyo" in message and "atlantis" in message


# --------------------------------------------------------------------------- clock changes in local times

def test_a_time_in_the_spring_forward_gap_is_refused(tmp_path):
    # Lisbon springs forward from 01:00 to 02:00 on the last Sunday of March, 2027-03-28 (EU rule, IANA tz)
    path, line = edited(tmp_path, "lisbon-tokyo", 'depart = "2027-03-10 11:00"', 'depart = "2027-03-28 01:30"')
    message = assert_one_line_error(run("check", str(path)))
    assert f"{path}:{line}: flights.0.depart: " in message
    assert "does not exist in Europe/Lisbon" in message and "01:00 to 02:00" in message


def fall_back_trip(tmp_path: Path, fold: str) -> Path:
    text = (SCENARIOS / "lisbon-tokyo.toml").read_text(encoding="utf-8")
    text = (text.replace('depart = "2027-03-10 11:00"', f'depart = "2027-10-31 01:30"{fold}')
                .replace('arrive = "2027-03-11 07:00"', 'arrive = "2027-11-01 07:00"')
                .replace("2027-03-12", "2027-11-02"))
    path = tmp_path / f"fold{len(fold)}{fold[-1:]}.toml"
    path.write_text(text, encoding="utf-8")
    return path


def test_a_repeated_time_needs_a_fold(tmp_path):
    # Lisbon falls back from 02:00 to 01:00 on the last Sunday of October, 2027-10-31 (EU rule, IANA tz)
    message = assert_one_line_error(run("check", str(fall_back_trip(tmp_path, ""))))
    assert "flights.0.depart: " in message and "occurs twice" in message
    assert "depart_fold = 0" in message and "depart_fold = 1" in message
    first, _ = load_trip(fall_back_trip(tmp_path, "\ndepart_fold = 0"))
    second, _ = load_trip(fall_back_trip(tmp_path, "\ndepart_fold = 1"))
    # 01:30 WEST (UTC+1) is 00:30 UTC; 01:30 WET (UTC+0) an hour later (IANA tz database)
    assert first.flights[0].depart == datetime(2027, 10, 31, 0, 30, tzinfo=UTC)
    assert second.flights[0].depart - first.flights[0].depart == timedelta(hours=1)


def test_load_trip_raises_input_file_error_with_every_problem(tmp_path):
    path, _ = edited(tmp_path, "lisbon-tokyo", "cabin_lux = 50", "cabin_lux = -1")
    with pytest.raises(InputFileError) as caught:
        load_trip(path)
    assert [p.field for p in caught.value.problems] == ["light.cabin_lux"]
    assert caught.value.problems[0].line is not None


def test_bad_strategy_and_unknown_model_option_are_one_line():
    demo = str(SCENARIOS / "lisbon-tokyo.toml")
    message = assert_one_line_error(run("trip", demo, "--strategy", "sideways"))
    assert "--strategy" in message and "advance" in message and "delay" in message   # the allowed values
    message = assert_one_line_error(run("trip", demo, "--model", "nosuch"))
    assert "nosuch" in message and "forger1999" in message   # the message lists the built-in ids
