"""`phaseplan check` on every kind of file the tool reads, and the input contract under mutation.

The contract (README "Command line"): a valid file exits 0 with a summary (one JSON document with
``--json``); a bad one exits 2 with one line per problem naming file and field; never a traceback.
The property test mutates the shipped scenario and model files value by value (hypothesis, bounded).
"""

from __future__ import annotations

import json
import re
from datetime import datetime, timedelta, timezone
from pathlib import Path
from zoneinfo import ZoneInfo

import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st
from test_cli import assert_one_line_error
from typer.testing import CliRunner

from planner.cli import app
from planner.errors import InputError
from planner.trips.model import Flight, Trip
from planner.trips.views import clock_change_h
from planner.world.light import LightOptions
from planner.world.lightlog import read_light_log
from planner.world.places import Place

REPO = Path(__file__).resolve().parent.parent
SHIPPED = sorted((REPO / "scenarios").glob("*.toml")) + sorted((REPO / "models").glob("*.toml"))


def run(*args: str):
    return CliRunner().invoke(app, list(args), env={"COLUMNS": "200"})


@pytest.mark.parametrize("path", SHIPPED, ids=lambda p: p.name)
def test_every_shipped_file_passes_check(path):
    # the demo scenarios and the published parameter sets are valid input (models/*.toml cite their papers)
    human = run("check", str(path))
    assert human.exit_code == 0, human.stderr
    assert human.stderr.startswith("ok ") and human.stdout == ""
    document = json.loads(run("check", str(path), "--json").stdout)
    expected = "model" if path.parent.name == "models" else ("roster" if "kind = \"roster\"" in path.read_text()
                                                             else "trip")
    assert document["valid"] is True and document["kind"] == expected and document["problems"] == []
    assert document["summary"]["kind"] == expected


# --------------------------------------------------------------------------- crash classes found by fuzzing

def edited(tmp_path: Path, base: str, old: str, new: str) -> Path:
    text = (REPO / "scenarios" / base).read_text(encoding="utf-8")
    assert old in text, "the edit changed nothing; the test would not test what it says"
    path = tmp_path / base
    path.write_text(text.replace(old, new, 1), encoding="utf-8")
    return path


def test_a_date_beyond_the_planning_range_is_one_line(tmp_path):
    path = edited(tmp_path, "lisbon-tokyo.toml", 'end = "2027-03-12 16:00"', 'end = "9999-12-31 23:59"')
    line = assert_one_line_error(run("check", str(path)))
    # NOAA sun algorithm valid 1901-2099 (NOAA solar calculation details; from memory)
    assert "busy" in line and "1901-01-01 to 2099-12-31" in line


def test_a_roster_start_beyond_the_planning_range_is_one_line(tmp_path):
    path = edited(tmp_path, "harbour-cranes.toml", "start_date = ", "start_date = 9999-01-01\n_old_start = ")
    result = run("check", str(path))
    assert result.exit_code == 2 and "Traceback" not in result.stderr
    assert "start_date" in result.stderr and "2099-12-31" in result.stderr


@pytest.mark.parametrize("name", ["Ana\r\nEND:VEVENT", "Ana\x00", "Ana\x1b[31m"])
def test_control_characters_in_a_name_are_refused(tmp_path, name):
    path = edited(tmp_path, "lisbon-tokyo.toml", 'name = "Marta Quintela: Lisbon to Tokyo for a ceramics residency"',
                  f"name = {json.dumps(name)}")
    line = assert_one_line_error(run("check", str(path)))
    # RFC 5545 §3.1: a content line ends at CRLF, so a CR or LF in a name would start a new calendar line
    assert "name" in line and "control character" in line


def test_a_multi_line_description_is_still_fine(tmp_path):
    path = edited(tmp_path, "lisbon-tokyo.toml", 'description = """', 'description = """First line.\n')
    assert run("check", str(path)).exit_code == 0   # TOML 1.0: multi-line basic strings hold line feeds


def test_light_log_stamps_outside_the_planning_range_are_skipped_and_reported(tmp_path):
    rows = ["timestamp,lux", "0001-01-01T00:00+00:00,100", "9999-12-31T23:00+00:00,100",
            "2027-03-01T07:00+00:00,100", "2027-03-01T08:00+00:00,200"]
    (tmp_path / "log.csv").write_text("\n".join(rows) + "\n", encoding="utf-8")
    log = read_light_log(tmp_path / "log.csv", ZoneInfo("Europe/Lisbon"))
    finding = next(f for f in log.findings if f.kind == "out_of_range")
    assert "2 row(s)" in finding.message   # the two stamps out of range (rows of this test)


def test_a_light_log_with_one_distinct_time_stamp_is_refused(tmp_path):
    rows = ["timestamp,lux"] + ["2027-03-01T07:00+00:00,100"] * 4
    (tmp_path / "log.csv").write_text("\n".join(rows) + "\n", encoding="utf-8")
    with pytest.raises(InputError, match="fewer than two distinct samples"):
        read_light_log(tmp_path / "log.csv", ZoneInfo("Europe/Lisbon"))


def test_a_vanishing_step_is_refused(tmp_path, model_copy):
    path = model_copy(lambda text: re.sub(r"step_minutes = [0-9.]+", "step_minutes = 1e-6", text))
    line = assert_one_line_error(run("check", str(path)))
    assert "step_minutes" in line


def test_parameters_that_blow_the_oscillator_up_are_bad_input(tmp_path, model_copy):
    path = model_copy(lambda text: re.sub(r"^mu = \{ value = [0-9.]+", "mu = { value = 2300.0", text, flags=re.M))
    for args in (("check", str(path)), ("prc", "--model", str(path), "--step", "6")):
        line = assert_one_line_error(run(*args))
        # a van der Pol oscillator with stiffness mu ~ 10^4 overflows at a 10-min explicit step (analytic:
        # RK4 stability needs mu * h small)
        assert "non-finite" in line and str(path) in line


def test_a_date_line_move_without_a_time_shift_is_no_shift():
    # Honolulu is UTC-10 and Kiritimati UTC+14 all year (IANA tz database): the same clock hour, one day on
    honolulu = Place("Honolulu", ZoneInfo("Pacific/Honolulu"), 21.31, -157.86)
    kiritimati = Place("Kiritimati", ZoneInfo("Pacific/Kiritimati"), 1.87, -157.43)
    depart = datetime(2027, 5, 3, 20, 0, tzinfo=timezone.utc)
    flight = Flight(honolulu, kiritimati, depart, depart + timedelta(hours=3))
    trip = Trip("invented hop", honolulu, (flight,), 0, 1.0, depart + timedelta(days=4), LightOptions())
    assert clock_change_h(trip) == 0.0


# --------------------------------------------------------------------------- the contract under mutation

NASTY = ['""', '"x"', "0", "-1", "1e308", "-1e308", "nan", "inf", "true", "[]", "{}", '"9999-12-31 23:59"',
         '"0001-01-01 00:00"', "9999-12-31", "0001-01-01", '"25:61"', '"23:00"', '"Etc/Nowhere"', '"a\\r\\nb"',
         '"\\u0000"', '"' + "x" * 500 + '"', "2027-03-01T00:00:00", '"forger1999"', '"../../etc/passwd"', "1000000"]


def mutate(text: str, choice: int, value: str, mode: int) -> str:
    """Replace the value of one ``key = value`` line, drop the line, or add an unknown key after it."""
    lines = text.splitlines()
    keyed = [k for k, line in enumerate(lines) if re.match(r"^\s*[A-Za-z_][\w-]*\s*=", line)]
    k = keyed[choice % len(keyed)]
    key = lines[k].split("=", 1)[0]
    if mode == 0:
        lines[k] = f"{key}= {value}"
    elif mode == 1:
        del lines[k]
    else:
        lines.insert(k + 1, f"unexpected_key_{choice} = {value}")
    return "\n".join(lines) + "\n"


@settings(max_examples=60, deadline=None, suppress_health_check=[HealthCheck.function_scoped_fixture])
@given(base=st.sampled_from(SHIPPED), choice=st.integers(0, 10_000), value=st.sampled_from(NASTY),
       mode=st.integers(0, 2))
def test_check_keeps_its_contract_on_mutated_files(tmp_path, base, choice, value, mode):
    # the input contract of the brief: exit 0 with valid output, or exit 2 with one error line per problem,
    # never a traceback (common practice for command-line tools, no single source)
    path = tmp_path / base.name
    text = base.read_text(encoding="utf-8")
    path.write_text(mutate(text, choice, value, mode), encoding="utf-8")
    if base.name == "porto-singapore-lightlog.toml":
        (tmp_path / "rui-week-light.csv").write_bytes((base.parent / "rui-week-light.csv").read_bytes())
    result = run("check", str(path), "--json")
    assert "Traceback" not in result.stderr and result.exception is None or isinstance(result.exception, SystemExit)
    assert result.exit_code in (0, 2), (result.exit_code, result.stderr)
    document = json.loads(result.stdout)
    assert document["valid"] is (result.exit_code == 0)
    if result.exit_code == 2:
        lines = [line for line in result.stderr.splitlines() if line.strip()]
        assert lines and all(line.startswith("phaseplan: error: ") for line in lines)
        assert len(lines) == len(document["problems"])


def test_a_model_reference_too_long_for_a_file_name_is_one_line(tmp_path):
    path = edited(tmp_path, "lisbon-tokyo.toml", 'model = "jewett1999"', f'model = "{"x" * 500}.toml"')
    line = assert_one_line_error(run("check", str(path)))
    # NAME_MAX is 255 bytes on common file systems (POSIX limits.h): such a name can be no model file
    assert "model" in line
