"""Building blocks of the JSON documents every front end writes (command line ``--json``, web API).

One place for the shapes both planners share — numbers that may be non-finite, clock times, models and
their citations, light windows, file problems — so a trip and a roster write them alike.
"""

from __future__ import annotations

import math
from collections.abc import Callable
from datetime import datetime
from typing import Any

from planner.engine.entrainment import DailyPattern
from planner.engine.parameters import ModelSpec
from planner.tomlfile import Problem
from planner.world.light import Window

#: Version of the JSON documents' layout; bumped when a key changes meaning or name.
SCHEMA_VERSION = 1


def number(value: Any) -> float | None:
    """A float for JSON; None for NaN or infinity."""
    value = float(value)
    return value if math.isfinite(value) else None


def clock(hours: Any) -> str:
    """Clock hours as HH:MM (wrapped to the day); 'n/a' when not finite."""
    value = float(hours)
    if not math.isfinite(value):
        return "n/a"
    minutes = round(value * 60.0) % (24 * 60)
    return f"{minutes // 60:02d}:{minutes % 60:02d}"


def lux_text(value: float) -> str:
    return f"{value:,.0f}" if value >= 10 or value == int(value) else f"{value:g}"


def citation_entry(model: ModelSpec) -> dict[str, Any]:
    return {"model": model.id, "text": model.citation, "doi": model.file.citation.doi or None}


def model_entry(model: ModelSpec) -> dict[str, Any]:
    return {"id": model.id, "name": model.file.name, "equations": model.file.equations,
            "based_on": model.file.based_on or None, "path": model.path}


def pattern_entry(pattern: DailyPattern) -> dict[str, Any]:
    return {
        "sleep_start_h": pattern.sleep_start_h,
        "sleep_end_h": pattern.sleep_end_h,
        "sleep_lux": 0.0,
        "indoor_lux": pattern.indoor_lux,
        "daylight": [{"start_h": start, "end_h": end, "lux": lux} for start, end, lux in pattern.daylight],
        "description": describe_pattern(pattern),
    }


def describe_pattern(pattern: DailyPattern) -> str:
    parts = [f"sleep {clock(pattern.sleep_start_h)}–{clock(pattern.sleep_end_h)} (eyes closed, 0 lux)",
             f"{lux_text(pattern.indoor_lux)} lux indoors while awake"]
    parts += [f"{lux_text(lux)} lux daylight {clock(start)}–{clock(end)}" for start, end, lux in pattern.daylight]
    return "; ".join(parts)


def problem_entry(problem: Problem) -> dict[str, Any]:
    return {"file": problem.source, "line": problem.line, "field": problem.field or None, "message": problem.message}


def window_entry(window: Window, iso: Callable[[datetime], str]) -> dict[str, Any]:
    """A light window for JSON, its times written by ``iso`` (on the local clock of the plan's person)."""
    entry = {"start": iso(window.start), "end": iso(window.end),
             "minutes": number(window.minutes), "source": window.source}
    if window.source == "dark glasses":
        entry["transmission"] = window.lux
    else:
        entry["lux"] = window.lux
    return entry
