"""The ``phaseplan daylight`` and ``phaseplan models validate`` commands: parse, call the library, format.

Registered on the main app by :mod:`planner.cli` (imported at its end).  ``--json`` writes one document to
stdout; tables go to stderr.
"""

from __future__ import annotations

import math
from datetime import date
from enum import Enum
from typing import Annotated, Any

import typer
from rich import box
from rich.markup import escape
from rich.table import Table

from planner.cli import JsonOption, _emit_json, _number, _stderr, app, models_app
from planner.daylight import DEFAULT_EXPOSURE, SKIES, day_profile, load_daylight_model
from planner.errors import InputError
from planner.localtime import zone
from planner.parameters import available_models, load_model
from planner.scenario import DEFAULT_MODEL
from planner.validation import CHECKS, optimistic_preparation, recommended_default, validate


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
    latitude: Annotated[float, typer.Option("--latitude", min=-90.0, max=90.0,
                                            help="Latitude, north positive [deg].")],
    longitude: Annotated[float, typer.Option("--longitude", min=-180.0, max=180.0,
                                             help="Longitude, east positive [deg].")],
    time_zone: Annotated[str, typer.Option("--time-zone", metavar="ZONE",
                                           help="IANA time zone of the clock to show, e.g. Asia/Tokyo.")],
    day: Annotated[str, typer.Option("--date", metavar="YYYY-MM-DD", help="Local date.")],
    sky: Annotated[SkyChoice, typer.Option("--sky", case_sensitive=False,
                                           help="Sky type to show (all: the three side by side).")] = SkyChoice.all,
    exposure: Annotated[ExposureChoice, typer.Option(
        "--exposure", case_sensitive=False, help="How the time is spent: open sky, shade, or behind a window.")
    ] = ExposureChoice(DEFAULT_EXPOSURE),
    step: Annotated[float, typer.Option("--step", min=5.0, max=240.0, metavar="MINUTES",
                                        help="Minutes between rows.")] = 30.0,
    json_out: JsonOption = False,
) -> None:
    """Daylight through a day (help text on the decorator)."""
    try:
        when = date.fromisoformat(day)
    except ValueError:
        raise InputError(f"date {day!r} is not a date; give YYYY-MM-DD", field="--date") from None
    skies = SKIES if sky == SkyChoice.all else (sky.value,)
    profile = day_profile(when, latitude, longitude, zone(time_zone), step_minutes=step, skies=skies,
                          exposure=exposure.value)
    model = load_daylight_model()
    if json_out:
        _emit_json({
            "command": "daylight",
            "place": {"latitude": latitude, "longitude": longitude, "time_zone": time_zone},
            "date": when.isoformat(),
            "exposure": exposure.value,
            "model": {"id": model.id, "citation": model.citation, "doi": model.doi},
            "rows": [{"time": t.isoformat(timespec="minutes"), "solar_elevation_deg": round(float(e), 2),
                      "lux": {s: round(float(profile.lux[s][k]), 1) for s in skies}}
                     for k, (t, e) in enumerate(zip(profile.times, profile.elevation_deg))],
            "conventions": {"lux": "illuminance at the eye (vertical plane, averaged over the directions faced) "
                                   "[lux]; the sun's elevation is geometric, without refraction [deg]"},
        })
        return
    console = _stderr()
    table = Table(box=box.SIMPLE_HEAD, title=f"Daylight at the eye, {when.isoformat()} "
                  f"({latitude:.2f}°, {longitude:.2f}°, {escape(time_zone)}), {exposure.value}", title_justify="left",
                  caption=f"{escape(model.citation)}; NOAA sun position. Model means, not measurements: a real "
                          "sky varies from half to twice these values.", caption_justify="left")
    table.add_column("time", no_wrap=True)
    table.add_column(escape("sun [deg]"), justify="right")
    for s in skies:
        table.add_column(escape(f"{s} [lux]"), justify="right")
    for k, (t, e) in enumerate(zip(profile.times, profile.elevation_deg)):
        table.add_row(t.strftime("%H:%M"), f"{e:.1f}", *(f"{profile.lux[s][k]:,.0f}" for s in skies))
    console.print(table)


def _check_entry(check) -> dict[str, Any]:
    return {"key": check.key, "quantity": check.quantity, "published": _number(check.published),
            "model": _number(check.model), "band": [_number(check.low), _number(check.high)],
            "agrees": check.agrees, "source": check.source, "note": check.note}


@models_app.command("validate", help=(
    "Run every published check the tests hold (PRC amplitudes, dose-response ED50, pre-flight gradual advance, "
    "compromise phase, Santhi asymmetry) for each model and print the literature value beside the model's; "
    "recommends a default model from the table."))
def models_validate(
    ctx: typer.Context,
    model_names: Annotated[str | None, typer.Option(
        "--models", metavar="LIST", help="Comma-separated model ids or files (default: every built-in model).")
    ] = None,
    checks: Annotated[str | None, typer.Option(
        "--checks", metavar="LIST", help=f"Comma-separated checks (default: all of {', '.join(CHECKS)}).")] = None,
    json_out: JsonOption = False,
) -> None:
    """Validation table (help text on the decorator)."""
    json_out = json_out or bool((ctx.obj or {}).get("json"))
    names = [n.strip() for n in model_names.split(",") if n.strip()] if model_names else list(available_models())
    if not names:
        raise InputError("name at least one model", field="--models")
    wanted = [c.strip() for c in checks.split(",") if c.strip()] if checks else None
    results = [validate(load_model(name), wanted) for name in names]
    default, why = recommended_default(results)
    if json_out:
        _emit_json({
            "command": "models validate",
            "models": [{"model": v.model_id, "agreeing": v.agreeing, "checks_run": len(v.checks),
                        "success": v.success, "optimistic_preparation_days": optimistic_preparation(v),
                        "checks": [_check_entry(c) for c in v.checks]} for v in results],
            "recommended_default": {"model": default, "reason": why},
            "current_default": DEFAULT_MODEL,
        })
        return
    console = _stderr()
    for v in results:
        table = Table(box=box.SIMPLE_HEAD, title=f"{escape(v.model_id)}: {v.agreeing} of {len(v.checks)} checks agree",
                      title_justify="left")
        for header in ("check", "quantity", "published", "model", "band", "agrees", "source"):
            table.add_column(header, no_wrap=header in ("check", "published", "model", "agrees"))
        for c in v.checks:
            high = "∞" if math.isinf(c.high) else f"{c.high:g}"
            table.add_row(c.key, escape(c.quantity), f"{c.published:.2f}",
                          "none" if not math.isfinite(c.model) else f"{c.model:.2f}", f"{c.low:g}–{high}",
                          "yes" if c.agrees else "[bold]no[/bold]", escape(c.source))
        console.print(table)
        if optimistic_preparation(v):
            console.print(f"  [bold]{escape(v.model_id)}: preparation-day predictions are optimistic[/bold] — it "
                          "predicts more gradual pre-flight advance than published.")
    console.print(f"\n[bold]Recommended default:[/bold] {escape(why)}. Current default: {DEFAULT_MODEL}.")
