"""Options of ``phaseplan trip`` for a quick trip without a file, and the step that turns them into a trip.

Parse and call :mod:`planner.quicktrip`; the plan itself runs exactly as for a file (``planner.cli``).
"""

from __future__ import annotations

from pathlib import Path
from typing import Annotated

import typer

from planner.outputs import check_target, write_atomic
from planner.quicktrip import DEFAULT_SLEEP, DEFAULT_STAY_DAYS, load_quick_trip, quick_trip_scenario
from planner.scenario import DEFAULT_MODEL, ScenarioInfo
from planner.trip import Trip

_QUICK = "Quick trip (instead of FILE)"

FromOption = Annotated[str | None, typer.Option(
    "--from", metavar="PLACE", rich_help_panel=_QUICK,
    help='Home, by name: "Sydney", "London, GB", "Portland, US-OR" (see phaseplan places).')]
ToOption = Annotated[str | None, typer.Option(
    "--to", metavar="PLACE", rich_help_panel=_QUICK, help="Destination, by name.")]
DepartOption = Annotated[str | None, typer.Option(
    "--depart", metavar='"YYYY-MM-DD HH:MM"', rich_help_panel=_QUICK, help="Departure, local time at home.")]
ArriveOption = Annotated[str | None, typer.Option(
    "--arrive", metavar='"YYYY-MM-DD HH:MM"', rich_help_panel=_QUICK,
    help="Arrival, local time at the destination.")]
StayOption = Annotated[int | None, typer.Option(
    "--stay", metavar="DAYS", rich_help_panel=_QUICK,
    help=f"Full days planned at the destination after the arrival day, 1..30 (default {DEFAULT_STAY_DAYS}).")]
SleepOption = Annotated[str | None, typer.Option(
    "--sleep", metavar="BED-WAKE", rich_help_panel=_QUICK,
    help=f"Habitual sleep at home, kept at the destination (default {DEFAULT_SLEEP}).")]
PrepareOption = Annotated[int | None, typer.Option(
    "--prepare", metavar="DAYS", rich_help_panel=_QUICK,
    help="Days before departure the traveller will prepare, 0..14 (default 0).")]
SaveOption = Annotated[Path | None, typer.Option(
    "--save", metavar="FILE.toml", rich_help_panel=_QUICK,
    help="Also write the trip as a scenario file (not over an existing file without --force).")]


def quick_trip(origin: str | None, destination: str | None, depart: str | None, arrive: str | None,
               stay: int | None, sleep: str | None, prepare: int | None, model_name: str | None,
               save: Path | None, force: bool) -> tuple[tuple[Trip, ScenarioInfo], str | None]:
    """Build, validate and (with ``save``) write the quick trip; return the loaded trip and the file written."""
    from planner.errors import InputError

    missing = [name for name, value in (("--from", origin), ("--to", destination), ("--depart", depart),
                                        ("--arrive", arrive)) if value is None]
    if missing:
        raise InputError(f"a quick trip needs --from, --to, --depart and --arrive; missing: {', '.join(missing)}",
                         field="trip")
    if save is not None:
        check_target(save, force=force)
    model = DEFAULT_MODEL if model_name is None else model_name
    if model_name is not None and Path(model_name).is_file():
        model = str(Path(model_name).resolve())
    quick = quick_trip_scenario(origin, destination, depart, arrive,
                                stay_days=DEFAULT_STAY_DAYS if stay is None else stay,
                                sleep=DEFAULT_SLEEP if sleep is None else sleep,
                                preparation_days=0 if prepare is None else prepare, model=model)
    loaded = load_quick_trip(quick)
    written = None
    if save is not None:
        written = str(write_atomic(save, quick.text(), force=force))
    return loaded, written
