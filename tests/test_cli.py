"""The phaseplan command line: JSON on stdout, human text on stderr, exit codes, published facts.

Most tests go through ``typer.testing.CliRunner``, which enters the app the same
way the console script does (the top-level group's ``main``) and keeps stdout
and stderr apart (``result.stdout`` / ``result.stderr``).  A few run
``python -m planner`` in a subprocess to check the real streams and exit codes.
"""

from __future__ import annotations

import json
import re
import subprocess
import sys
from pathlib import Path

import pytest
from typer.testing import CliRunner

import planner.service
from planner import __version__
from planner.cli import app
from planner.engine.parameters import builtin_model_paths
from planner.errors import ComputationError

REPO = Path(__file__).resolve().parent.parent

# Published DOIs of the three parameter sets (checked against the papers' records).
DOIS = {
    "forger1999": "10.1177/074873099129000867",  # Forger, Jewett & Kronauer 1999, J Biol Rhythms 14:533
    "jewett1999": "10.1177/074873049901400608",  # Jewett, Forger & Kronauer 1999, J Biol Rhythms 14:493
    "hannay2019": "10.1177/0748730419878298",  # Hannay, Booth & Forger 2019, J Biol Rhythms 34:658
}


def run(*args: str):
    return CliRunner().invoke(app, list(args))


def one_json_document(text: str) -> dict:
    """The single JSON document that makes up ``text``; fails on anything before or after it."""
    document, end = json.JSONDecoder().raw_decode(text.lstrip())
    assert text.lstrip()[end:].strip() == "", "more than one JSON document (or trailing text) on stdout"
    assert document["schema_version"] == 1
    return document


def assert_one_line_error(result, code: int = 2) -> str:
    assert result.exit_code == code, (result.exit_code, result.stdout, result.stderr)
    lines = [line for line in result.stderr.splitlines() if line.strip()]
    assert len(lines) == 1, result.stderr
    assert "Traceback" not in result.stderr
    assert result.stdout == ""
    return lines[0]


def edited_model_file(tmp_path: Path, name: str, old: str, new: str) -> Path:
    """A copy of the built-in forger1999 file with one line's text replaced."""
    text = builtin_model_paths()["forger1999"].read_text(encoding="utf-8")
    assert old in text
    path = tmp_path / name
    path.write_text(text.replace(old, new, 1), encoding="utf-8")
    return path


# --------------------------------------------------------------------------- version and models list

def test_version_prints_the_package_version():
    result = run("--version")
    assert result.exit_code == 0
    # the package's own version string (planner/_version.py)
    assert result.stdout.strip() == f"phaseplan {__version__}"


def test_models_json_lists_the_three_models_with_their_dois():
    result = run("models", "--json")
    assert result.exit_code == 0, result.stderr
    document = one_json_document(result.stdout)
    listed = {entry["id"]: entry for entry in document["models"]}
    assert set(DOIS) <= set(listed)
    for model_id, doi in DOIS.items():
        assert listed[model_id]["citation"]["doi"] == doi  # published DOI (see DOIS)
        assert listed[model_id]["equations"] == model_id
    assert {c["doi"] for c in document["citations"]} >= set(DOIS.values())


def test_models_human_output_goes_to_stderr_with_citations():
    result = run("models")
    assert result.exit_code == 0
    assert result.stdout == ""
    for model_id, doi in DOIS.items():
        assert model_id in result.stderr
        assert doi in result.stderr.replace("\n", "")  # the DOI may be wrapped in a narrow table


# --------------------------------------------------------------------------- models show

@pytest.fixture(scope="module")
def forger_show():
    result = run("models", "show", "forger1999", "--json")
    assert result.exit_code == 0, result.stderr
    return one_json_document(result.stdout)


def test_models_show_reports_the_dark_free_running_period(forger_show):
    runs = {run_["lux"]: run_["period_h"] for run_ in forger_show["properties"]["free_running"]}
    # tau_x = 24.2 h, the model's dark period by construction: Forger et al. 1999, J Biol Rhythms 14:533;
    # compare the measured human mean 24.18 h: Czeisler et al. 1999, Science 284:2177
    assert runs[0.0] == pytest.approx(24.20, abs=0.01)


def test_models_show_light_shortens_the_free_running_period(forger_show):
    runs = {run_["lux"]: run_["period_h"] for run_ in forger_show["properties"]["free_running"]}
    # constant light shortens the period of a day-active species (Aschoff's rule; from memory):
    # 24.11 h at 10 lux, regression snapshot (measured here)
    assert runs[10.0] == pytest.approx(24.11, abs=0.02)
    assert runs[10.0] < runs[0.0]


def test_models_show_entrained_cbtmin_and_dlmo(forger_show):
    steady = forger_show["properties"]["entrainment"]
    assert steady["success"], steady["message"]
    assert steady["day"]["sleep_start_h"] == 23.0 and steady["day"]["sleep_end_h"] == 7.0
    # CBTmin about 2-3 h before habitual wake at 07:00 (common practice, no single source)
    assert 3.5 <= steady["cbtmin_clock_h"] <= 5.5
    assert re.fullmatch(r"\d\d:\d\d", steady["cbtmin_clock"])
    # DLMO = CBTmin - 7 h, the model file's marker rule (Eastman, Burgess and colleagues; from memory)
    assert (steady["cbtmin_clock_h"] - steady["dlmo_clock_h"]) % 24 == pytest.approx(7.0, abs=1e-6)


def test_models_show_lists_parameters_with_units_and_sources(forger_show):
    tau = forger_show["parameters"]["tau_x"]
    # tau_x = 24.2 h: Forger et al. 1999, J Biol Rhythms 14:533
    assert tau["value"] == 24.2 and tau["units"] == "h" and tau["source"]
    assert forger_show["citations"][0]["doi"] == DOIS["forger1999"]
    assert forger_show["numerics"]["step_minutes"] > 0
    assert forger_show["validity"]


def test_models_show_human_output(tmp_path):
    result = run("models", "show", "hannay2019")
    assert result.exit_code == 0
    assert result.stdout == ""
    text = result.stderr
    for expected in ("Parameters", "Phase markers", "free-running period in darkness", "entrained",
                     "CBTmin", "DLMO", "Validity", DOIS["hannay2019"]):
        assert expected in text.replace("\n", " "), expected
    assert re.search(r"CBTmin \d\d:\d\d", text)


def test_group_level_json_flag_reaches_models_show():
    result = run("models", "--json", "show", "jewett1999")
    assert result.exit_code == 0, result.stderr
    assert one_json_document(result.stdout)["model"]["id"] == "jewett1999"


def test_user_model_file_with_a_measured_tau(tmp_path):
    path = edited_model_file(tmp_path, "subject.toml", 'tau_x = { value = 24.2,', 'tau_x = { value = 24.6,')
    result = run("models", "show", str(path), "--json")
    assert result.exit_code == 0, result.stderr
    runs = {run_["lux"]: run_["period_h"] for run_ in one_json_document(result.stdout)["properties"]["free_running"]}
    # an individually measured tau; the model's tau_x is its dark period by construction (Forger et al. 1999)
    assert runs[0.0] == pytest.approx(24.6, abs=0.02)


def test_markup_in_a_model_file_is_shown_literally(tmp_path):
    name = "Subject [/] [bold]07[/bold] refit"
    path = edited_model_file(tmp_path, "markup.toml",
                             'name = "Forger, Jewett & Kronauer 1999 simpler van der Pol model with Process L"',
                             f'name = "{name}"')
    result = run("models", "show", str(path))
    assert result.exit_code == 0, result.stderr
    # rich would raise on the stray "[/]" or swallow "[bold]" if the text were not escaped
    assert name in result.stderr


# --------------------------------------------------------------------------- prc

@pytest.fixture(scope="module")
def khalsa_prc():
    # 6.7-h ~10,000-lux pulse on a dim background: Khalsa et al. 2003, J Physiol 549:945
    result = run("prc", "--model", "forger1999", "--hours", "6.7", "--lux", "10000", "--background", "10", "--json")
    assert result.exit_code == 0, result.stderr
    return one_json_document(result.stdout)


def test_prc_delays_before_cbtmin_and_advances_after(khalsa_prc):
    points = khalsa_prc["points"]
    before = [p["shift_h"] for p in points if -9 <= p["phase_h"] <= -1]
    after = [p["shift_h"] for p in points if 1 <= p["phase_h"] <= 9]
    # delays when centred before CBTmin, advances after: Khalsa et al. 2003, J Physiol 549:945
    assert before and all(shift < 0 for shift in before)
    assert after and all(shift > 0 for shift in after)


def test_prc_summary_and_citation(khalsa_prc):
    summary = khalsa_prc["summary"]
    # crossover at CBTmin (within 1 h): Khalsa et al. 2003, J Physiol 549:945
    assert summary["crossover_h"] is not None and abs(summary["crossover_h"]) <= 1.0
    assert summary["max_delay_phase_h"] < 0 < summary["max_advance_phase_h"]
    # the models' type 1 curves are smaller than the published 5.02-h peak-to-trough
    # (about +1.5 / -1.8 h at a dim background: science reference, measured here)
    assert 2.0 < summary["peak_to_trough_h"] < 5.02
    assert khalsa_prc["citations"] == [{"model": "forger1999", "text": khalsa_prc["citations"][0]["text"],
                                        "doi": DOIS["forger1999"]}]
    # the default step of 1 h gives 24 phases from -12 to +11 h (the library's protocol)
    assert [p["phase_h"] for p in khalsa_prc["points"]] == [float(h) for h in range(-12, 12)]


def test_prc_human_table_on_stderr():
    result = run("prc", "--model", "jewett1999", "--step", "3")
    assert result.exit_code == 0, result.stderr
    assert result.stdout == ""
    text = result.stderr
    assert "Phase response curve" in text and "largest advance" in text and "largest delay" in text
    assert DOIS["jewett1999"] in text.replace("\n", "")
    # one table row per phase -12, -9, ..., +9 h, each with a pulse window in clock time
    rows = re.findall(r"^\s*([+-]?\d+\.\d)\s+(\d\d:\d\d)–(\d\d:\d\d)\s+([+-]?\d+\.\d\d)", text, flags=re.M)
    assert [float(r[0]) for r in rows] == [-12.0, -9.0, -6.0, -3.0, 0.0, 3.0, 6.0, 9.0]


# --------------------------------------------------------------------------- bad input: exit 2, one line

@pytest.mark.parametrize("args", [
    ["prc", "--hours", "0"],
    ["prc", "--hours", "-1"],
    ["prc", "--lux", "-5"],
    ["prc", "--background", "-1"],
    ["prc", "--step", "0"],
    ["prc", "--hours", "abc"],
    ["prc", "--no-such-option"],
    ["models", "show"],
])
def test_bad_prc_and_usage_input_is_one_line_and_exit_2(args):
    line = assert_one_line_error(run(*args, "--json") if args[0] == "prc" else run(*args))
    assert line.startswith("phaseplan: error:")


def test_prc_duration_message_names_the_option():
    line = assert_one_line_error(run("prc", "--hours", "0"))
    assert "hours" in line and "greater than 0" in line


def test_unknown_model_id_lists_the_valid_ids():
    line = assert_one_line_error(run("prc", "--model", "forger2099"))
    assert "forger2099" in line
    for model_id in DOIS:
        assert model_id in line


def test_missing_model_file():
    line = assert_one_line_error(run("models", "show", "no/such/file.toml"))
    assert "no such model file" in line


@pytest.mark.parametrize("old, new, field", [
    ("mu = { value = 0.23,", "# mu removed", "parameters.mu"),
    ('tau_x = { value = 24.2, units = "h"', 'tau_x = { value = 24.2, units = "min"', "parameters.tau_x.units"),
    ("beta = { value = 0.0075,", "beta = { value = -0.0075,", "parameters.beta.value"),
    ("[markers]", "[markers", ""),
])
@pytest.mark.parametrize("command", [["models", "show", "{path}"], ["prc", "--model", "{path}", "--json"]])
def test_malformed_model_file_is_one_line_and_exit_2(tmp_path, old, new, field, command):
    path = edited_model_file(tmp_path, "broken.toml", old, new)
    line = assert_one_line_error(run(*[part.format(path=path) for part in command]))
    assert str(path) in line
    assert field in line


# --------------------------------------------------------------------------- other exit codes

def test_computation_failure_exits_1_with_one_line(monkeypatch):
    def fail(*_args, **_kwargs):
        raise ComputationError("cannot start the PRC protocol: not entrained")
    monkeypatch.setattr(planner.service, "phase_response_curve", fail)
    line = assert_one_line_error(run("prc", "--json"), code=1)
    assert "not entrained" in line


def test_interrupt_exits_130(monkeypatch):
    def interrupt(*_args, **_kwargs):
        raise KeyboardInterrupt
    monkeypatch.setattr(planner.service, "load_model", interrupt)
    result = run("prc")
    assert result.exit_code == 130
    assert "Traceback" not in result.stderr


# --------------------------------------------------------------------------- the real process

def run_module(*args: str) -> subprocess.CompletedProcess:
    return subprocess.run([sys.executable, "-m", "planner", *args], capture_output=True, text=True,
                          cwd=REPO, timeout=300)


def test_python_m_planner_keeps_stdout_to_one_json_document():
    completed = run_module("models", "show", "hannay2019", "--json")
    assert completed.returncode == 0, completed.stderr
    document = one_json_document(completed.stdout)
    assert document["citations"][0]["doi"] == DOIS["hannay2019"]
    assert completed.stderr == ""


def test_python_m_planner_bad_input_exit_code_and_one_line():
    completed = run_module("prc", "--lux", "-5")
    assert completed.returncode == 2
    assert completed.stdout == ""
    lines = [line for line in completed.stderr.splitlines() if line.strip()]
    assert len(lines) == 1 and "lux" in lines[0] and "Traceback" not in completed.stderr
