"""The ``phaseplan places`` command: look a place up in the gazetteer (parse, call :mod:`planner.gazetteer`, format).

Registered on the main app by :mod:`planner.cli` (imported at its end).
"""

from __future__ import annotations

from typing import Annotated, Any

import typer
from rich import box
from rich.markup import escape
from rich.table import Table

from planner.cli import JsonOption, _emit_json, _stderr, app
from planner.errors import InputError
from planner.gazetteer import (MIN_POPULATION, NamedPlace, PlaceMatch, UnknownPlaceError, gazetteer_source,
                               picking_queries, resolve_place, search_places)

#: Matches listed by default.
DEFAULT_LIMIT = 10


def place_entry(place: NamedPlace) -> dict[str, Any]:
    """A gazetteer place as JSON."""
    return {"name": place.name, "country_code": place.country_code, "country": place.country,
            "admin1": place.admin1, "qualified": place.qualified, "latitude": place.latitude,
            "longitude": place.longitude, "time_zone": place.time_zone, "population": place.population,
            "geonameid": place.geonameid}


def _resolution(query: str) -> tuple[NamedPlace | None, str | None]:
    """The place ``query`` resolves to, or None and the reason (ambiguous or unknown by exact name)."""
    try:
        return resolve_place(query), None
    except InputError as exc:
        if type(exc) is InputError:   # a bad qualifier: the query itself is wrong
            raise
        return None, exc.message


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
    matches: list[PlaceMatch] = search_places(query, limit)
    if not matches:
        raise UnknownPlaceError(f'no place called "{query.strip()}" and none whose name begins so, in the '
                                f"gazetteer (towns of {MIN_POPULATION:,} people or more); check the spelling or "
                                "the country, or give latitude, longitude and time_zone instead")
    chosen, reason = _resolution(query)
    write = picking_queries([m.place for m in matches])
    if json_out:
        _emit_json({"command": "places", "query": query, "source": gazetteer_source(),
                    "resolves_to": None if chosen is None else place_entry(chosen), "unresolved_reason": reason,
                    "matches": [{**place_entry(m.place), "write": write[m.place.geonameid], "matched": m.matched}
                                for m in matches]})
        return
    console = _stderr()
    table = Table(box=box.SIMPLE_HEAD, caption=f"Source: {escape(gazetteer_source())}.", caption_justify="left")
    for header in ("", "write", "time zone", "lat, lon", "people"):
        table.add_column(header, justify="right" if header == "people" else "left")
    for match in matches:
        place = match.place
        mark = "→" if chosen is not None and place.geonameid == chosen.geonameid else ""
        name = escape(write[place.geonameid]) + ("" if match.matched == "name" else f" [dim]({match.matched})[/dim]")
        table.add_row(mark, name, escape(place.time_zone), f"{place.latitude:.2f}, {place.longitude:.2f}",
                      f"{place.population:,}")
    console.print(table)
    if chosen is not None:
        console.print(f'"{escape(query.strip())}" means [bold]{escape(chosen.describe())}[/bold]')
    else:
        console.print(f"[yellow]{escape(reason or '')}[/yellow]")
