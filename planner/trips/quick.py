"""Quick trips: a one-way trip from a few facts (two places, the flight's local times), without a file.

:func:`quick_trip_scenario` turns the facts into the same scenario data a trip file holds (the
places looked up in :mod:`planner.world.gazetteer` and written out with their coordinates and zones);
:func:`scenario_text` writes it as TOML, and :func:`load_quick_trip` sends that text through the
normal loader (:func:`planner.trips.scenario.load_trip_text`), so a quick trip plans exactly as the saved
file does.  Problems are reported against the command-line options they came from (``--depart``).

Defaults (a minimal trip file's): home sleep 23:00-07:00, kept at the destination; no preparation
days; :data:`DEFAULT_STAY_DAYS` full days at the destination after the arrival day.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Any

from planner.errors import InputError
from planner.world.gazetteer import NamedPlace, gazetteer_source, place_fields, resolve_place
from planner.world.localtime import parse_clock
from planner.scenariofile import DEFAULT_MODEL
from planner.trips.scenario import DESTINATION, HOME, ScenarioInfo, load_trip_text
from planner.tomlfile import InputFileError, Problem, dumps_scenario
from planner.trips.model import Trip

#: Full days planned at the destination after the arrival day when none is given (a stated default).
DEFAULT_STAY_DAYS = 7
#: Habitual sleep when none is given (the planner's default day, see planner.entrainment.DEFAULT_DAY).
DEFAULT_SLEEP = "23:00-07:00"
#: Where problems of a quick trip are said to come from.
SOURCE = "command line"
#: Scenario fields and the options that set them, for messages.
OPTION_OF_FIELD = {
    "name": "--name",
    "model": "--model",
    "traveller.sleep": "--sleep",
    "traveller.preparation_days": "--prepare",
    "destination.stay_days": "--stay",
    "flights.0.depart": "--depart",
    "flights.0.arrive": "--arrive",
    "flights.0": "--depart/--arrive",
    "flights": "--depart/--arrive",
}


@dataclass(frozen=True)
class QuickTrip:
    """The facts of a quick trip and what the gazetteer made of its places."""

    scenario: dict[str, Any]
    origin: NamedPlace
    destination: NamedPlace
    origin_query: str
    destination_query: str

    def text(self) -> str:
        """The scenario as a trip file (see :func:`scenario_text`)."""
        return scenario_text(self)


def parse_sleep(text: str, option: str = "--sleep") -> dict[str, str]:
    """``"23:00-07:00"`` as a scenario's sleep table ``{"bed": "23:00", "wake": "07:00"}``.

    Raises
    ------
    InputError
        When the text is not two clock times joined by a hyphen.
    """
    parts = [part.strip() for part in str(text).replace("–", "-").split("-")]
    if len(parts) != 2:
        raise InputError(f'"{text}" is not a sleep window; write bed and wake time as "23:00-07:00"', field=option)
    for part in parts:
        parse_clock(part, field=option)
    return {"bed": parts[0], "wake": parts[1]}


def _lookup(query: str, option: str) -> NamedPlace:
    try:
        return resolve_place(query)
    except InputError as exc:
        raise type(exc)(exc.message, field=option, **({"candidates": exc.candidates}
                                                       if hasattr(exc, "candidates") else {})) from None


def quick_trip_scenario(origin: str, destination: str, depart: str, arrive: str, *,
                        stay_days: int = DEFAULT_STAY_DAYS, sleep: str = DEFAULT_SLEEP, preparation_days: int = 0,
                        name: str | None = None, model: str = DEFAULT_MODEL) -> QuickTrip:
    """The scenario of a one-way trip given by its places and the flight's local times.

    Parameters
    ----------
    origin, destination : str
        Place queries for :func:`planner.world.gazetteer.resolve_place` (``"Sydney"``, ``"London, GB"``).
    depart, arrive : str
        ``"YYYY-MM-DD HH:MM"``, each on the local clock of its own airport.
    stay_days : int
        Full days planned at the destination after the arrival day (1..30).
    sleep : str
        Habitual sleep at home, ``"23:00-07:00"``; kept at the destination.
    preparation_days : int
        Days before departure the traveller will prepare (0..14).
    name : str, optional
        The scenario's name (default ``"<origin> to <destination>"``).
    model : str
        Built-in model id or model file.

    Returns
    -------
    QuickTrip
        ``scenario`` holds the data of a trip file (validated only when loaded).

    Raises
    ------
    InputError
        An unknown or ambiguous place (field ``--from`` / ``--to``; the ambiguity lists the candidates) or a
        malformed ``sleep``.
    """
    home = _lookup(origin, "--from")
    away = _lookup(destination, "--to")
    if home.geonameid == away.geonameid:
        raise InputError(f'--from and --to are both {home.label}; a trip goes from one place to another',
                         field="--to")
    scenario: dict[str, Any] = {
        "kind": "trip",
        "name": name or f"{home.name} to {away.name}",
        "description": f"A quick trip: {home.label} to {away.label}.",
        "model": model,
        "traveller": {"sleep": parse_sleep(sleep), "preparation_days": preparation_days},
        "home": place_fields(home),
        "destination": {**place_fields(away), "stay_days": stay_days},
        "flights": [{"from": HOME, "to": DESTINATION, "depart": depart, "arrive": arrive}],
    }
    return QuickTrip(scenario, home, away, origin, destination)


def scenario_text(quick: QuickTrip) -> str:
    """The quick trip as a trip file, with where each place came from in comments."""
    header = ("A one-way trip written by 'phaseplan trip --from ... --to ...'.\n"
              "Check it with 'phaseplan check FILE', plan it with 'phaseplan trip FILE'; edit freely\n"
              "(the README's 'Trip scenario files' lists every field).")
    comments = {"home": f'"{quick.origin_query}": {quick.origin.describe()}\nfrom {gazetteer_source()}',
                "destination": f'"{quick.destination_query}": {quick.destination.describe()}\n'
                               f"from {gazetteer_source()}",
                "flights": "depart on the clock of the place left, arrive on the clock of the place reached"}
    return dumps_scenario(quick.scenario, comments, header)


def _option_problem(problem: Problem) -> Problem:
    field = problem.field
    for key in sorted(OPTION_OF_FIELD, key=len, reverse=True):
        if field == key or field.startswith(key + "."):
            field = OPTION_OF_FIELD[key]
            break
    return Problem(SOURCE, field, problem.message)


def load_quick_trip(quick: QuickTrip) -> tuple[Trip, ScenarioInfo]:
    """Validate and build the quick trip through the trip-file loader.

    Raises
    ------
    InputFileError
        Every problem, each named by the command-line option it came from (``--depart``, ``--stay``).
    """
    try:
        return load_trip_text(scenario_text(quick), SOURCE)
    except InputFileError as exc:
        raise InputFileError([_option_problem(p) for p in exc.problems]) from None


__all__ = ["QuickTrip", "quick_trip_scenario", "scenario_text", "load_quick_trip", "parse_sleep",
           "DEFAULT_STAY_DAYS", "DEFAULT_SLEEP"]
