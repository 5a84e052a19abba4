"""``phaseplan places``: look a place up by name in the offline gazetteer (parse, call the service, render)."""

from __future__ import annotations

from typing import Annotated

import typer
from rich import box
from rich.markup import escape
from rich.table import Table

from planner import service
from planner.cli.app import app
from planner.cli.common import JsonOption, emit_json, stderr_console
from planner.world.gazetteer import MIN_POPULATION, gazetteer_source

#: Matches listed by default.
DEFAULT_LIMIT = 10


@app.command("places", help=(
    f"Look up towns and cities (GeoNames, {MIN_POPULATION:,} people or more, offline) by name, e.g. \"Sydney\", "
    "\"London, GB\", \"Portland, US-OR\": what a scenario's place = \"...\" or trip --from/--to would use, "
    "and the other places of that name."))
def places_command(
    query: Annotated[str, typer.Argument(metavar="QUERY", help="A name, optionally with country or state "
                                                                "after commas.")],
    limit: Annotated[int, typer.Option("--limit", "-n", min=1, max=100, help="Most matches listed.")] = DEFAULT_LIMIT,
    json_out: JsonOption = False,
) -> None:
    """Look up places by name (help text on the decorator)."""
    outcome = service.find_places(query, limit)
    if json_out:
        emit_json(outcome.to_json())
        return
    console = stderr_console()
    table = Table(box=box.SIMPLE_HEAD, caption=f"Source: {escape(gazetteer_source())}.", caption_justify="left")
    for header in ("", "write", "time zone", "lat, lon", "people"):
        table.add_column(header, justify="right" if header == "people" else "left")
    write = outcome.write()
    for match in outcome.matches:
        place = match.place
        mark = "→" if outcome.chosen is not None and place.geonameid == outcome.chosen.geonameid else ""
        name = escape(write[place.geonameid]) + ("" if match.matched == "name" else f" [dim]({match.matched})[/dim]")
        table.add_row(mark, name, escape(place.time_zone), f"{place.latitude:.2f}, {place.longitude:.2f}",
                      f"{place.population:,}")
    console.print(table)
    if outcome.chosen is not None:
        console.print(f'"{escape(query.strip())}" means [bold]{escape(outcome.chosen.describe())}[/bold]')
    else:
        console.print(f"[yellow]{escape(outcome.reason or '')}[/yellow]")
