"""Options of ``phaseplan trip`` for a quick trip without a file, and the request they make.

Parse and call :mod:`planner.trips.quick`; the plan itself runs exactly as for a file (:mod:`planner.cli.trip`).
"""

from __future__ import annotations

from pathlib import Path
from typing import Annotated

import typer

from planner.errors import InputError
from planner.outputs import check_target
from planner.scenariofile import DEFAULT_MODEL
from planner.trips.quick import DEFAULT_SLEEP, DEFAULT_STAY_DAYS, QuickTrip, quick_trip_scenario

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


def quick_trip(path: str | None, origin: str | None, destination: str | None, depart: str | None,
               arrive: str | None, stay: int | None, sleep: str | None, prepare: int | None, model_name: str | None,
               save: Path | None, force: bool) -> QuickTrip | None:
    """The quick trip the options describe, or None when a scenario FILE is given (refusing a mix of both)."""
    options = {"--from": origin, "--to": destination, "--depart": depart, "--arrive": arrive, "--stay": stay,
               "--sleep": sleep, "--prepare": prepare, "--save": save}
    given = [name for name, value in options.items() if value is not None]
    if path is not None:
        if given:
            raise InputError(f"give a trip scenario FILE or a quick trip, not both: {', '.join(given)} are "
                             "quick-trip options", field="trip")
        return None
    missing = [name for name in ("--from", "--to", "--depart", "--arrive") if options[name] is None]
    if len(missing) == 4:
        raise InputError("give a trip scenario FILE, or --from, --to, --depart and --arrive for a quick trip",
                         field="trip")
    if missing:
        raise InputError(f"a quick trip needs --from, --to, --depart and --arrive; missing: {', '.join(missing)}",
                         field="trip")
    if save is not None:
        check_target(save, force=force)
    model = DEFAULT_MODEL if model_name is None else model_name
    if model_name is not None and Path(model_name).is_file():
        model = str(Path(model_name).resolve())
    return quick_trip_scenario(origin, destination, depart, arrive,
                               stay_days=DEFAULT_STAY_DAYS if stay is None else stay,
                               sleep=DEFAULT_SLEEP if sleep is None else sleep,
                               preparation_days=0 if prepare is None else prepare, model=model)
