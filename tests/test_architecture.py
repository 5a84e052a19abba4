"""The package's layers: each imports only from layers below it, and nothing imports in a cycle.

The layers, lowest first (README "Architecture"):

0. base — errors, version, reading TOML input, writing output files, shipped data, interval helpers;
1. ``planner.world`` — places, local time, sun, light schedules, light logs;
2. ``planner.engine`` — parameter sets, Process L, oscillators, integrator, markers, entrainment, PRC, populations;
3. ``planner.scenariofile`` and ``planner.plans`` — what scenario files share; the plan document and its renderers;
4. ``planner.trips`` and ``planner.rosters`` — the two planners, side by side (neither imports the other);
5. ``planner.service`` — the use cases;
6. front ends — ``planner.cli`` (and any other front end), ``planner.__main__``.

The rule is checked on the source (``ast``), so a lazy import inside a function counts too.
"""

from __future__ import annotations

import ast
from pathlib import Path

import pytest

PACKAGE = Path(__file__).resolve().parent.parent / "planner"

BASE = {"planner._version", "planner.errors", "planner.tomlfile", "planner.outputs", "planner.shipped",
        "planner.intervals", "planner.hashing"}
FRONT_ENDS = ("planner.cli", "planner.web", "planner.__main__")


def layer(module: str) -> tuple[int, str]:
    """(layer number, side) of a module; two modules of one layer but different sides must not import each other."""
    if module in BASE:
        return 0, "base"
    for number, prefixes in ((1, ("planner.world",)), (2, ("planner.engine",)),
                             (3, ("planner.scenariofile", "planner.plans")),
                             (4, ("planner.trips", "planner.rosters")), (5, ("planner.service",)),
                             (6, FRONT_ENDS)):
        for prefix in prefixes:
            if module == prefix or module.startswith(prefix + "."):
                return number, prefix
    if module == "planner":
        return 6, "planner"   # the public API re-exports from below
    raise AssertionError(f"{module} belongs to no layer; add it to tests/test_architecture.py and the README")


def modules() -> dict[str, Path]:
    found = {}
    for path in PACKAGE.rglob("*.py"):
        parts = path.relative_to(PACKAGE.parent).with_suffix("").parts
        name = ".".join(parts[:-1] if parts[-1] == "__init__" else parts)
        found[name] = path
    return found


def imports_of(name: str, path: Path, known: set[str]) -> set[str]:
    package = name if path.name == "__init__.py" else name.rsplit(".", 1)[0]
    targets = set()
    for node in ast.walk(ast.parse(path.read_text(encoding="utf-8"))):
        if isinstance(node, ast.ImportFrom):
            base = node.module or ""
            if node.level:
                parts = package.split(".")[: len(package.split(".")) - node.level + 1]
                base = ".".join(parts + ([base] if base else []))
            candidates = [base] + [f"{base}.{alias.name}" for alias in node.names]
        elif isinstance(node, ast.Import):
            candidates = [alias.name for alias in node.names]
        else:
            continue
        # the most specific known module each import names (``from planner.cli import app`` is planner.cli)
        targets |= {c for c in candidates if c in known}
    return {t for t in targets if t != name and not name.startswith(t + ".")}


GRAPH = {name: imports_of(name, path, set(modules())) for name, path in modules().items()}


def test_every_module_has_a_layer():
    for name in GRAPH:
        layer(name)


@pytest.mark.parametrize("name", sorted(GRAPH))
def test_imports_only_from_lower_layers(name):
    # layering rule of this project (README "Architecture")
    mine, side = layer(name)
    for target in GRAPH[name]:
        theirs, their_side = layer(target)
        assert theirs <= mine, f"{name} (layer {mine}) imports {target} (layer {theirs}), a higher layer"
        if theirs == mine and mine in (3, 4):
            assert their_side == side, f"{name} imports {target}: the sides of layer {mine} stay apart"


def test_no_import_cycles():
    # a cycle makes the import order decide what works: common practice, no single source
    state: dict[str, int] = {}
    stack: list[str] = []

    def visit(node: str) -> None:
        state[node] = 1
        stack.append(node)
        for target in sorted(GRAPH[node]):
            if state.get(target) == 1:
                cycle = stack[stack.index(target):] + [target]
                raise AssertionError("import cycle: " + " -> ".join(cycle))
            if not state.get(target):
                visit(target)
        stack.pop()
        state[node] = 2

    for node in sorted(GRAPH):
        if not state.get(node):
            visit(node)


def test_the_checker_sees_a_violation():
    # guards the test itself: an engine module importing the service must be caught
    assert layer("planner.engine.integrate")[0] < layer("planner.service")[0]
    assert "planner.plans.document" in GRAPH["planner.trips.document"]


def test_command_functions_are_short():
    # the CLI only parses, calls the service and renders (issue: no command function over ~60 lines)
    for path in (PACKAGE / "cli").glob("*.py"):
        tree = ast.parse(path.read_text(encoding="utf-8"))
        for node in tree.body:
            if isinstance(node, ast.FunctionDef) and any(
                    isinstance(d, ast.Call) and getattr(d.func, "attr", "") in ("command", "callback")
                    for d in node.decorator_list):
                length = node.end_lineno - node.lineno + 1
                assert length <= 60, f"{path.name}:{node.name} is {length} lines"
