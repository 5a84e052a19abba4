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

#: Version of the JSON documents' layout; bumped when a key changes meaning or name (2: one vocabulary for
#: trips and rosters, README "JSON schema version 2").
SCHEMA_VERSION = 2

#: The one sign convention of phase shifts in every document, as in a phase response curve.
PHASE_SHIFT_SIGN = ("phase shifts are + for an advance (the body clock moves earlier) and - for a delay "
                    "(later), as in a phase response curve")


def number(value: Any) -> float | None:
    """A float for JSON; None for NaN or infinity."""
    value = float(value)
    return value if math.isfinite(value) else None


def phase_shift_h(later_h: Any) -> float | None:
    """A movement of CBTmin given as + later [h] in the documents' sign (+ advance), to 0.01 h; None if not finite."""
    value = number(later_h)
    return None if value is None else hours(-value)


def hours(value: Any) -> float | None:
    """Hours [h] to 0.01 h (36 s: finer than any model's accuracy); None if not finite."""
    value = number(value)
    return None if value is None else round(value, 2) + 0.0


def whole_minutes(value: Any) -> int | None:
    """Minutes [min] rounded to whole minutes (plans are set in whole minutes); None if not finite."""
    value = number(value)
    return None if value is None else int(round(value))


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
             "minutes": whole_minutes(window.minutes), "source": window.source}
    if window.source in ("dark glasses", "eye mask"):   # light-avoidance: the fraction of light passed
        entry["transmission"] = window.lux
    else:
        entry["lux"] = window.lux
    return entry
