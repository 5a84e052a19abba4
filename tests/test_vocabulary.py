"""One vocabulary across trip and roster documents, and the README's examples checked against the program.

The list of shared concepts below is the contract: a concept both planners report carries the same JSON key
(README "JSON schema version 2").
"""

from __future__ import annotations

import json
import re
from pathlib import Path

import pytest
from test_roster_outputs import CRANES, run

from planner.plans.cautions import CAUTIONS
from planner.plans.entries import SCHEMA_VERSION

README = Path(__file__).resolve().parent.parent / "README.md"
MODELS = Path(__file__).resolve().parent.parent / "models"

#: Shared concept -> (path in the trip document, path in the roster document); "*" walks a list or mapping.
SHARED_CONCEPTS = {
    "the day-by-day plan": ("days", "days"),
    "a day's date": ("days.*.date", "days.*.date"),
    "a day's sleep episodes": ("days.*.sleep", "days.*.sleep"),
    "a day's bright-light windows": ("days.*.bright_light", "days.*.bright_light"),
    "a day's light-avoidance windows": ("days.*.light_avoidance", "days.*.light_avoidance"),
    "a day's predicted CBTmin": ("days.*.cbtmin", "days.*.cbtmin"),
    "minutes of light box a plan uses": ("alternatives.*.light_box_minutes", "ranking.*.plan.light_box_minutes"),
    "size of the simulated population": ("population.people", "ranking.*.population.people"),
    "size of the population asked for": ("population.people", "people"),
    "population draw seed": ("population.seed", "seed"),
    "whether the plan met its aim": ("success", "success"),
    "the result in one sentence": ("message", "message"),
    "the cautions with their sources": ("cautions", "cautions"),
    "the citations of the models used": ("citations", "citations"),
    "what each number means": ("conventions", "conventions"),
}


def walk(document, path: str) -> list:
    """Every value at ``path`` (dot-separated; ``*`` = every item of a list or mapping); [] when missing."""
    values = [document]
    for part in path.split("."):
        found = []
        for value in values:
            if part == "*":
                found += list(value.values()) if isinstance(value, dict) else list(value or [])
            elif isinstance(value, dict) and part in value:
                found.append(value[part])
        values = found
    return values


@pytest.fixture(scope="module")
def documents():
    trip = run("demo", "madrid-newyork-short", "--people", "8", "--json")
    assert trip.exit_code == 0, trip.stderr
    roster = run("roster", str(CRANES), "--people", "8", "--json")
    assert roster.exit_code == 0, roster.stderr
    return json.loads(trip.stdout), json.loads(roster.stdout)


@pytest.mark.parametrize("concept", sorted(SHARED_CONCEPTS))
def test_shared_concepts_have_one_key(documents, concept):
    trip, roster = documents
    trip_path, roster_path = SHARED_CONCEPTS[concept]
    assert trip_path.rsplit(".", 1)[-1] == roster_path.rsplit(".", 1)[-1]   # the same key name
    assert walk(trip, trip_path), f"trip has no {trip_path}"
    assert walk(roster, roster_path), f"roster has no {roster_path}"


def test_old_names_are_gone_and_the_schema_is_version_2(documents):
    trip, roster = documents
    assert trip["schema_version"] == roster["schema_version"] == SCHEMA_VERSION == 2
    text = json.dumps(trip) + json.dumps(roster)
    for old in ('"box_minutes"', '"net_shift_h"', '"workers"', '"search_people"', '"n"'):
        assert old not in text, old
    assert "days" not in roster["plan"]


def test_one_sign_for_phase_shifts(documents):
    trip, _ = documents
    # one convention, as in a phase response curve (+ advance): a west-bound trip's delay plan moves the clock
    # later, a negative shift (Khalsa et al. 2003, J Physiol 549:945)
    assert "+ for an advance" in trip["conventions"]["net_phase_shift_h"]
    assert trip["alternatives"]["delay"]["net_phase_shift_h"] < 0
    for entry in [trip["baseline"], *walk(trip, "alternatives.*")]:
        shift = entry["net_phase_shift_h"]
        assert {"advance": shift > 0, "delay": shift < 0, "none": abs(shift) < 1.0}[entry["direction"]]
        # the words say the same as the number: "(net -0.6 h)" for a clock 0.6 h later (arithmetic)
        stated = re.search(r"\(net ([+-]\d+\.\d) h\)", entry["movement"])
        assert stated is None or float(stated.group(1)) == pytest.approx(shift, abs=0.051)


def test_numbers_are_rounded_to_meaningful_precision(documents):
    trip, roster = documents
    for window in walk(trip, "days.*.bright_light.*") + walk(roster, "days.*.bright_light.*"):
        assert isinstance(window["minutes"], int)   # plans are set in whole minutes
    for value in walk(roster, "days.*.burden_h") + walk(trip, "days.*.phase_error_h"):
        assert value is None or value == round(value, 2)


def test_no_memory_notes_or_policy_in_user_facing_text():
    texts = [c.text + " ".join(c.sources) for c in CAUTIONS.values()]
    texts += [re.sub(r"(?m)^#.*$", "", path.read_text(encoding="utf-8")) for path in MODELS.glob("*.toml")]
    for text in texts:
        assert "from memory" not in text and "project policy" not in text


def test_help_has_no_type_placeholders_on_our_options():
    for command in ("trip", "roster", "demo", "prc", "check", "publish"):
        result = run(command, "--help")
        lines = [line for line in result.stdout.splitlines() if "--help" not in line]
        assert not [line for line in lines if "<bool>" in line], command


def test_roster_takes_people_and_the_old_workers_spelling():
    # --people as for trips and demos; --workers kept working for existing scripts
    for option in ("--people", "--workers"):
        result = run("roster", str(CRANES), option, "-1")
        # the option is known (a range error names it), not "No such option"
        assert result.exit_code == 2 and "No such option" not in result.stderr and "'--people' / '--workers'" in result.stderr


def test_readme_prc_excerpt_matches_the_program():
    text = README.read_text(encoding="utf-8")
    excerpt = re.search(r"An excerpt of `phaseplan prc --step 3`:\s*```text\n(.*?)```", text, flags=re.S).group(1)
    result = run("prc", "--step", "3")
    assert result.exit_code == 0, result.stderr
    printed = [line.rstrip() for line in result.stderr.splitlines()]
    wanted = [line.rstrip() for line in excerpt.splitlines() if line.strip()]
    start = printed.index(wanted[0])
    # regression snapshot (measured here): the README shows the program's own rows, character for character
    assert printed[start:start + len(wanted)] == wanted
