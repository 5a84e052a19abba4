"""The README's examples run as written."""

from __future__ import annotations

import re
from pathlib import Path

import pytest

from planner import free_running_period, read_model_file
from planner.trips.scenario import load_trip

REPO = Path(__file__).resolve().parent.parent
README = (REPO / "README.md").read_text(encoding="utf-8")


def code_blocks(language: str) -> list[str]:
    return re.findall(rf"^```{language}\n(.*?)^```", README, flags=re.S | re.M)


def section(title: str) -> str:
    match = re.search(rf"^## {re.escape(title)}\n(.*?)(?=^## |\Z)", README, flags=re.S | re.M)
    assert match, f"README has no section {title!r}"
    return match.group(1)


def test_python_example_entrains_cbtmin_before_wake(capsys):
    namespace: dict = {}
    exec(compile(code_blocks("python")[0], "README.md (first python block)", "exec"), namespace)
    # CBTmin about 2-3 h before habitual wake (07:00 on the default day): common practice, no single source;
    # the window 02:00-07:00 leaves room for the models' differences
    assert 2.0 <= namespace["cbtmin"] <= 7.0
    # the example's PRC has delays before CBTmin and advances after: Khalsa et al. 2003, J Physiol 549:945
    assert namespace["summary"].max_delay_phase_h < 0 < namespace["summary"].max_advance_phase_h
    printed = capsys.readouterr().out
    # the example prints its model's citation (Jewett, Forger & Kronauer 1999, J Biol Rhythms 14:493)
    assert "entrained CBTmin" in printed and "doi:10.1177/074873049901400608" in printed


def test_light_schedule_example_applies_its_layers(capsys):
    namespace: dict = {}
    exec(compile(code_blocks("python")[1], "README.md (second python block)", "exec"), namespace)
    levels = [lux for _, _, lux in namespace["schedule"].intervals()]
    # the layers' own arithmetic: 150 lux background, 3,000-lux daylight, a 10,000-lux box,
    # glasses passing 10 % of 150 lux, sleep at 0 lux (README's example values)
    assert sorted(set(levels)) == [0.0, 15.0, 150.0, 3000.0, 10_000.0]


def test_parameter_file_example_is_valid_and_free_runs_at_its_tau(tmp_path):
    path = tmp_path / "subject07.toml"
    example = next(block for block in code_blocks("toml") if block.startswith('id = "subject07"'))
    path.write_text(example, encoding="utf-8")
    model = read_model_file(path)
    # the model's tau_x is its dark free-running period by construction: Forger et al. 1999, J Biol Rhythms 14:533
    assert float(free_running_period(model).period_h[0]) == pytest.approx(24.6, abs=0.02)


def test_trip_file_example_is_valid(tmp_path):
    example = next(block for block in code_blocks("toml") if block.startswith('kind = "trip"'))
    path = tmp_path / "osaka.toml"
    path.write_text(example, encoding="utf-8")
    trip, info = load_trip(path)
    # Lisbon is UTC+1 and Osaka (Asia/Tokyo) UTC+9 in September (IANA tz database)
    assert trip.flights[0].depart.hour == 9 and trip.flights[0].arrive.hour == 23
    # 7 full days after the arrival day (the README's rule); Osaka midnight is 15:00 UTC
    assert (trip.end.day, trip.end.hour) == (28, 15) and len(trip.busy) == 1


def test_set_up_is_two_one_line_commands():
    commands = re.findall(r"^```sh\n(.*?)^```", section("Set-up on a fresh machine"), flags=re.S | re.M)
    assert [len(c.strip().splitlines()) for c in commands] == [1, 1]
    assert "pip install" in commands[0] and commands[0].strip().endswith("phaseplan demo")
    assert commands[1].strip() == ".venv/bin/python -m pytest -q"


def test_ci_runs_the_readme_test_command():
    ci = REPO / ".ci" / "run"
    if not ci.exists():
        pytest.skip(".ci/run not written yet")
    assert "python -m pytest -q" in ci.read_text(encoding="utf-8")


def test_roster_file_example_is_valid(tmp_path):
    from planner.rosters.scenario import load_roster
    example = next(block for block in code_blocks("toml") if block.startswith('kind = "roster"'))
    path = tmp_path / "halden.toml"
    path.write_text(example, encoding="utf-8")
    roster, info = load_roster(path)
    # the example's own numbers: 7-day pattern × 4 cycles; 22:00-06:00 has 5 h in 00:00-05:00, a night
    # shift by the EU night period (Directive 2003/88/EC, from memory)
    assert roster.drafts[0].days == 28
    assert roster.shift("N").kind == "night" and roster.shift("D").kind == "day"
    assert [(c.name, c.offset_days) for c in roster.crews] == [("A", 0), ("B", 3)]   # the example's crews


def test_the_speed_section_names_the_switches_and_scripts_that_exist():
    # the README is the contract (README.md "Speed"): the environment variables it names are the ones
    # the code reads, and the benchmark scripts it names are in the repository
    from planner.engine.integrate import KERNEL_ENVIRONMENT, KERNELS
    from planner.engine.workers import WORKERS_ENVIRONMENT

    speed = section("Speed")
    assert f"`{KERNEL_ENVIRONMENT}=numpy`" in speed and "numpy" in KERNELS
    assert f"`{WORKERS_ENVIRONMENT}`" in speed
    named = set(re.findall(r"`(\w+\.py)`", speed)) - {"integrate.py", "kernel_numba.py"}
    assert named == {path.name for path in (REPO / "benchmarks").glob("*.py")} - {"kernels.py"}
