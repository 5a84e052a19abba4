"""Shared fixtures: a fixed UTC epoch, the built-in model ids, entrained start states, model-file copies."""

from __future__ import annotations

from datetime import datetime, timedelta, timezone
from pathlib import Path
from typing import Callable

import numpy as np
import pytest

from planner.engine.parameters import builtin_model_paths, load_model

#: The three built-in parameter sets (models/*.toml).
MODELS = ("forger1999", "jewett1999", "hannay2019")

#: An arbitrary aware epoch; tests only use times relative to it.
T0 = datetime(2027, 1, 4, tzinfo=timezone.utc)


def lisbon_trip_toml(destination: str, time_zone: str, latitude: float, longitude: float, *, stay_days: int,
                     preparation_days: int, depart: str, arrive: str, extra: str = "") -> str:
    """A one-way trip file for an invented tester flying from Lisbon (sleep 23:00-07:00), plus ``extra`` tables."""
    return f"""\
kind = "trip"
name = "Invented tester: Lisbon to {destination}"
model = "forger1999"
[traveller]
sleep = {{ bed = "23:00", wake = "07:00" }}
preparation_days = {preparation_days}
[home]
name = "Lisbon"
time_zone = "Europe/Lisbon"
latitude = 38.72
longitude = -9.14
[destination]
name = "{destination}"
time_zone = "{time_zone}"
latitude = {latitude}
longitude = {longitude}
stay_days = {stay_days}
[[flights]]
from = "home"
to = "destination"
depart = "{depart}"
arrive = "{arrive}"
{extra}
"""


def at(hours: float) -> datetime:
    """``T0`` plus ``hours`` of real time."""
    return T0 + timedelta(hours=hours)


@pytest.fixture(scope="session")
def entrained_states() -> dict[str, np.ndarray]:
    """State (3,) at a UTC midnight after entrainment to the planner's default day, per model."""
    from planner.engine.entrainment import entrain

    states = {}
    for name in MODELS:
        result = entrain(load_model(name))
        assert result.success, result.message
        states[name] = result.state[:, 0].copy()
    return states


@pytest.fixture(scope="session")
def planned_demos() -> Callable[[str], tuple]:
    """``get(name) -> (trip, info, TripPlanResult)``: a shipped demo trip planned with the model its file names
    and the auto strategy, at most once per test session (planning a demo takes seconds)."""
    from planner.trips.scenario import demo_path, load_trip
    from planner.trips.search import plan_trip

    cache: dict[str, tuple] = {}

    def get(name: str) -> tuple:
        if name not in cache:
            trip, info = load_trip(demo_path(name))
            cache[name] = (trip, info, plan_trip(trip, load_model(info.model)))
        return cache[name]

    return get


@pytest.fixture
def model_copy(tmp_path: Path) -> Callable[[Callable[[str], str], str], Path]:
    """Write an edited copy of a built-in model file into ``tmp_path``; return its path.

    Usage: ``model_copy(lambda text: text.replace(...), "forger1999")``.
    """
    def write(edit: Callable[[str], str], base: str = "forger1999", name: str = "edited.toml") -> Path:
        text = builtin_model_paths()[base].read_text(encoding="utf-8")
        edited = edit(text)
        assert edited != text, "the edit changed nothing; the test would not test what it says"
        path = tmp_path / name
        path.write_text(edited, encoding="utf-8")
        return path

    return write


def memoised_searches() -> pytest.MonkeyPatch:
    """Memoise the service's trip and roster searches by scenario name and arguments (undo the returned patch).

    Modules whose tests plan the same scenario through several front ends use it: they check what the front
    ends make of a plan, not the search again.
    """
    import planner.service

    patch = pytest.MonkeyPatch()
    for name in ("search_trip", "search_roster"):
        real, cache = getattr(planner.service, name), {}

        def memo(*args, _real=real, _cache=cache, **kwargs):
            key = (args[0].name if hasattr(args[0], "name") else id(args[0]), repr(args[1:]),
                   repr(sorted((k, v) for k, v in kwargs.items() if k not in ("progress", "processes"))))
            if key not in _cache:
                _cache[key] = _real(*args, **kwargs)
            return _cache[key]

        patch.setattr(planner.service, name, memo)
    return patch


def pytest_configure(config):
    config.addinivalue_line("markers", "packaging: builds and installs the wheel offline (no network); runs in CI")
