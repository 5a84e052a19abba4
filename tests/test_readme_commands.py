"""Every command the README shows runs as written and does what its line says.

The README is the contract with the user: each ``phaseplan`` line of its shell blocks is executed here, in a
scratch folder holding the files the examples name (``my-trip.toml`` is the README's own trip example,
``my-roster.toml`` a copy of the harbour-cranes demo, ``path/to/subject07.toml`` the README's parameter-file
example). ``publish`` goes to a Radicale server on 127.0.0.1 instead of the example host. The two set-up
commands (install, test) are the ones ``.ci/run`` runs, checked below.

Searches already made for the same trip and options are reused within this module (the commands differ in
what they print, not in what they plan), so the module stays quick.
"""

from __future__ import annotations

import json
import re
import shlex
import shutil
import socket
import subprocess
import sys
import time
import urllib.request
from pathlib import Path

import pytest
from conftest import memoised_searches
from test_caldav import PASSWORD, USER, call, radicale  # noqa: F401  (the Radicale server fixture)
from typer.testing import CliRunner

from planner.cli import app

REPO = Path(__file__).resolve().parent.parent
README = (REPO / "README.md").read_text(encoding="utf-8")
EXAMPLE_HOST = "https://dav.example.org/ana/plans/"


def shell_blocks() -> list[str]:
    return re.findall(r"^```(?:sh|bash)\n(.*?)^```", README, flags=re.S | re.M)


def commands() -> list[str]:
    """Each phaseplan command of the README (comments dropped), in order."""
    found = []
    for block in shell_blocks():
        for line in block.splitlines():
            line = re.sub(r"\s+#.*$", "", line).strip()
            if line and not line.startswith("#") and "phaseplan " in line and not line.startswith(
                    ("python3 -m venv", ".venv/")):
                found.append(line)
    return found


def test_the_readme_shows_commands():
    # the README is the contract: it shows the planners' commands (README.md)
    shown = commands()
    assert len(shown) >= 30
    for command in ("check", "trip", "demo", "roster", "publish", "models", "prc", "serve"):
        assert any(line.split()[1] == command or f" {command} " in line for line in shown), command


def test_ci_runs_the_readme_setup_and_test_commands():
    # the two set-up commands of the README's "Set-up on a fresh machine" are what CI runs (.ci/run)
    install, tests = (block.strip() for block in shell_blocks()[:2])
    script = (REPO / ".ci" / "run").read_text(encoding="utf-8")
    assert install.startswith("python3 -m venv .venv") and "phaseplan demo" in install
    assert tests == ".venv/bin/python -m pytest -q"
    assert install in script and tests in script


@pytest.fixture(scope="module")
def workdir(tmp_path_factory) -> Path:
    folder = tmp_path_factory.mktemp("readme")
    toml_blocks = re.findall(r"^```toml\n(.*?)^```", README, flags=re.S | re.M)
    trip = next(block for block in toml_blocks if block.startswith('kind = "trip"'))
    (folder / "my-trip.toml").write_text(trip, encoding="utf-8")
    subject = next(block for block in toml_blocks if block.startswith('id = "subject07"'))
    (folder / "path" / "to").mkdir(parents=True)
    (folder / "path" / "to" / "subject07.toml").write_text(subject, encoding="utf-8")
    shutil.copy(REPO / "scenarios" / "harbour-cranes.toml", folder / "my-roster.toml")
    shutil.copytree(REPO / "scenarios", folder / "scenarios")
    return folder


@pytest.fixture(scope="module")
def reuse_searches():
    """Memoise the trip and roster searches by their arguments for this module."""
    patch = memoised_searches()
    yield
    patch.undo()


def serve_and_stop(words: list[str], workdir: Path) -> None:
    """Start a long-running ``phaseplan serve`` line as a process, see it answer /healthz with 200, stop it.

    A free port replaces the default (other test runs may hold 8150) and the saved plans go to the scratch folder.
    """
    with socket.socket() as probe:
        probe.bind(("127.0.0.1", 0))
        port = probe.getsockname()[1]
    command = [sys.executable, "-m", "planner", *words, "--port", str(port), "--data", str(workdir / "desk")]
    server = subprocess.Popen(command, stdout=subprocess.PIPE, stderr=subprocess.PIPE)
    try:
        deadline = time.monotonic() + 60
        while True:
            assert server.poll() is None, server.stderr.read().decode()
            try:
                with urllib.request.urlopen(f"http://127.0.0.1:{port}/healthz", timeout=2) as answer:
                    assert answer.status == 200
                    break
            except OSError:
                assert time.monotonic() < deadline, "phaseplan serve did not answer /healthz within 60 s"
                time.sleep(0.3)
    finally:
        server.terminate()
        server.wait(timeout=30)
    assert (workdir / "desk" / "plans.sqlite3").is_file()


@pytest.mark.parametrize("line", commands())
def test_readme_command_runs(line, workdir, reuse_searches, radicale, monkeypatch):  # noqa: F811
    # each command of the README exits 0 and keeps stdout to one JSON document when it asks for JSON
    # (the README's promise; README.md "Command line")
    monkeypatch.chdir(workdir)
    words = shlex.split(line)
    environment = {}
    while "=" in words[0]:
        key, _, value = words.pop(0).partition("=")
        environment[key] = PASSWORD if value == "..." else value
    assert words.pop(0) == "phaseplan"
    if words[0] == "serve":
        serve_and_stop(words, workdir)
        return
    target = None
    if ">" in words:
        target = words[words.index(">") + 1]
        words = words[:words.index(">")]
    if "publish" in words:
        url = f"{radicale}readme-{abs(hash(line)) % 10_000}/"
        assert call("MKCALENDAR", url)[0] == 201   # RFC 4791 §5.3.1.2
        words = [url if word == EXAMPLE_HOST else word for word in words]
        assert words[words.index("--user") + 1] == USER
        if not (workdir / "plan.ics").exists():
            pytest.skip("needs the plan.ics that the README's --ics lines write first")
    for path in ("plan.ics", "crane-a.ics", "crew-b.ics", "crane.html", "phase.svg", "plan.html"):
        if "--force" not in words and path in line and "--ics" in words and path == words[words.index("--ics") + 1]:
            (workdir / path).unlink(missing_ok=True)
    for option in ("--report", "--chart"):
        if option in words:
            (workdir / words[words.index(option) + 1]).unlink(missing_ok=True)
    result = CliRunner().invoke(app, words, env=environment)
    assert result.exit_code == 0, f"{line}\n{result.stderr}"
    if "--json" in words:
        document = json.loads(result.stdout)
        assert document["schema_version"] >= 1
        if target:
            (workdir / target).write_text(result.stdout, encoding="utf-8")
    else:
        assert result.stdout.strip() == "" or words[0] == "--version"
    for option in ("--ics", "--report", "--chart"):
        if option in words:
            written = workdir / words[words.index(option) + 1]
            assert written.exists() or list(workdir.glob(written.stem + "-*" + written.suffix)), written
