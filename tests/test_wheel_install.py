"""The built wheel carries the parameter sets (they load from an installed copy) and the web app's files."""

import json
import subprocess
import sys
import zipfile
from pathlib import Path

REPO = Path(__file__).resolve().parent.parent


def test_models_load_from_an_installed_wheel(tmp_path):
    wheels = tmp_path / "wheels"
    target = tmp_path / "site"
    subprocess.run([sys.executable, "-m", "pip", "wheel", "--quiet", "--no-deps", "--no-build-isolation",
                    "-w", str(wheels), str(REPO)], check=True)
    wheel = next(wheels.glob("phaseplan-*.whl"))
    # the web app's templates and static files travel in the wheel (nothing is fetched at run time)
    with zipfile.ZipFile(wheel) as archive:
        names = set(archive.namelist())
    for folder in ("templates", "static"):
        shipped = {f"planner/web/{folder}/{p.name}" for p in (REPO / "planner" / "web" / folder).iterdir()}
        assert shipped and shipped <= names, shipped - names
    subprocess.run([sys.executable, "-m", "pip", "install", "--quiet", "--no-deps", "--target", str(target),
                    str(wheel)], check=True)
    probe = ("import json, planner; from planner.engine.parameters import available_models, load_model; "
             "from planner.trips.scenario import builtin_scenario_paths, load_trip; "
             "from planner.rosters.scenario import builtin_roster_paths, load_roster; "
             "print(json.dumps({'file': planner.__file__, "
             "'models': {m: load_model(m).file.citation.doi for m in available_models()}, "
             "'scenarios': {k: [str(p), load_trip(p)[1].name] for k, p in builtin_scenario_paths().items()} | "
             "{k: [str(p), load_roster(p)[1].name] for k, p in builtin_roster_paths().items()}}))")
    out = subprocess.run([sys.executable, "-c", probe], cwd=target, env={"PYTHONPATH": str(target), "PATH": ""},
                         capture_output=True, text=True, check=True)
    found = json.loads(out.stdout)
    assert Path(found["file"]).resolve().is_relative_to(target.resolve())
    # the three published parameter sets and their DOIs: Forger et al. 1999 and Jewett et al. 1999,
    # J Biol Rhythms 14(6); Hannay et al. 2019, J Biol Rhythms 34(6) (the journals' DOI records)
    assert found["models"] == {"forger1999": "10.1177/074873099129000867",
                               "hannay2019": "10.1177/0748730419878298",
                               "jewett1999": "10.1177/074873049901400608"}
    # the demo trips and rosters of the source tree's scenarios/ folder, loaded from the installed copy
    shipped = sorted(p.stem for p in (REPO / "scenarios").glob("*.toml"))
    assert shipped and sorted(found["scenarios"]) == shipped
    for path, name in found["scenarios"].values():
        assert Path(path).resolve().is_relative_to(target.resolve()) and name
