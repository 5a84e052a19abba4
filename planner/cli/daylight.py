"""``phaseplan daylight``: solar elevation and daylight at the eye through one local day."""

from __future__ import annotations

from enum import Enum
from typing import Annotated

import typer
from rich import box
from rich.markup import escape
from rich.table import Table

from planner import service
from planner.cli.app import app
from planner.cli.common import JsonOption, emit_json, stderr_console
from planner.world.daylight import SKIES, load_daylight_model


class SkyChoice(str, Enum):
    all = "all"
    clear = "clear"
    partly = "partly"
    overcast = "overcast"


class ExposureChoice(str, Enum):
    open = "open"
    shade = "shade"
    window = "window"


@app.command("daylight", help=(
    "Solar elevation and daylight at the eye through one local day at a place (IES 1984 daylight availability "
    "model with the NOAA sun position): clear, partly cloudy and overcast skies, outdoors in the open, in shade or "
    "behind a window."))
def daylight_command(
    day: Annotated[str, typer.Option("--date", metavar="YYYY-MM-DD", help="Local date.")],
    place: Annotated[str | None, typer.Option("--place", metavar="NAME", help=(
        'A town by name, e.g. "Tokyo" or "Portland, US-OR" (see phaseplan places); or give latitude, longitude '
        "and time zone."))] = None,
    latitude: Annotated[float | None, typer.Option("--latitude", min=-90.0, max=90.0,
                                                   help="Latitude, north positive [deg].")] = None,
    longitude: Annotated[float | None, typer.Option("--longitude", min=-180.0, max=180.0,
                                                    help="Longitude, east positive [deg].")] = None,
    time_zone: Annotated[str | None, typer.Option("--time-zone", metavar="ZONE",
                                                  help="IANA time zone of the clock to show, e.g. Asia/Tokyo.")] = None,
    sky: Annotated[SkyChoice, typer.Option("--sky", case_sensitive=False,
                                           help="Sky type to show (all: the three side by side).")] = SkyChoice.all,
    exposure: Annotated[ExposureChoice, typer.Option(
        "--exposure", case_sensitive=False, help="How the time is spent: open sky, shade, or behind a window.")
    ] = ExposureChoice.open,
    step: Annotated[float, typer.Option("--step", min=5.0, max=240.0, metavar="MINUTES",
                                        help="Minutes between rows.")] = 30.0,
    json_out: JsonOption = False,
) -> None:
    """Daylight through a day (help text on the decorator)."""
    skies = SKIES if sky == SkyChoice.all else (sky.value,)
    latitude, longitude, time_zone, name = service.daylight_site(place, latitude, longitude, time_zone)
    profile = service.daylight_day(latitude, longitude, time_zone, day, skies=skies, exposure=exposure.value,
                                   step_minutes=step)
    if json_out:
        emit_json(service.daylight_json(profile, time_zone, name))
        return
    model = load_daylight_model()
    table = Table(box=box.SIMPLE_HEAD, title=f"Daylight at the eye, {profile.day.isoformat()} "
                  f"({escape(name + ', ') if name else ''}{latitude:.2f}°, {longitude:.2f}°, {escape(time_zone)}), {exposure.value}", title_justify="left",
                  caption=f"{escape(model.citation)}; NOAA sun position. Model means, not measurements: a real "
                          "sky varies from half to twice these values.", caption_justify="left")
    table.add_column("time", no_wrap=True)
    table.add_column(escape("sun [deg]"), justify="right")
    for s in skies:
        table.add_column(escape(f"{s} [lux]"), justify="right")
    for k, (t, e) in enumerate(zip(profile.times, profile.elevation_deg)):
        table.add_row(t.strftime("%H:%M"), f"{e:.1f}", *(f"{profile.lux[s][k]:,.0f}" for s in skies))
    stderr_console().print(table)
