"""The wheel ships the parameter sets: they load from an installed copy, away from the source tree.

Offline by construction: the wheel is built with ``--no-build-isolation`` (hatchling comes
with the test extras) and both pip calls use ``--no-index --no-deps``.
"""

from __future__ import annotations

import json
import os
import subprocess
import sys
from pathlib import Path

import pytest

from conftest import MODELS

REPO = Path(__file__).resolve().parent.parent

PROBE = """
import json, planner
from planner.parameters import available_models, load_model
models = {name: load_model(name) for name in available_models()}
print(json.dumps({
    "planner": planner.__file__,
    "ids": sorted(models),
    "paths": {name: spec.path for name, spec in models.items()},
    "dois": {name: spec.file.citation.doi for name, spec in models.items()},
}))
"""


def _pip(*args: str) -> None:
    subprocess.run([sys.executable, "-m", "pip", "--disable-pip-version-check", "--quiet", *args],
                   check=True, capture_output=True, text=True)


@pytest.mark.packaging
def test_models_load_from_the_installed_wheel(tmp_path):
    wheels, target = tmp_path / "wheels", tmp_path / "site"
    _pip("wheel", "--no-index", "--no-deps", "--no-build-isolation", "-w", str(wheels), str(REPO))
    built = sorted(wheels.glob("phaseplan-*.whl"))
    assert len(built) == 1, built
    _pip("install", "--no-index", "--no-deps", "--target", str(target), str(built[0]))

    env = {key: value for key, value in os.environ.items() if not key.startswith("PYTHON")}
    env["PYTHONPATH"] = str(target)
    out = subprocess.run([sys.executable, "-c", PROBE], cwd=target, env=env,
                         capture_output=True, text=True, check=True)
    found = json.loads(out.stdout)

    # the installed copy was imported, not the source tree
    site = target.resolve()
    assert Path(found["planner"]).resolve().is_relative_to(site), found["planner"]
    assert not Path(found["planner"]).resolve().is_relative_to(REPO / "planner")
    # all three built-in sets, read from the copy shipped inside the package (planner/models)
    assert found["ids"] == sorted(MODELS)
    for name in MODELS:
        path = Path(found["paths"][name]).resolve()
        assert path.is_relative_to(site / "planner" / "models"), path
        assert path.name == f"{name}.toml"
    # the published DOIs (journal records): the files arrived intact
    assert found["dois"] == {"forger1999": "10.1177/074873099129000867",
                             "jewett1999": "10.1177/074873049901400608",
                             "hannay2019": "10.1177/0748730419878298"}
