"""``phaseplan prc``: the phase response curve of one pulse type, as a table with a text bar."""

from __future__ import annotations

import math
from typing import Annotated

import typer
from rich import box
from rich.markup import escape
from rich.table import Table

from planner import service
from planner.cli.app import PROGRAM, app
from planner.cli.common import (
    JsonOption,
    ModelOption,
    emit_json,
    from_cbtmin,
    print_citations,
    print_facts,
    signed,
    stderr_console,
)
from planner.engine.entrainment import DEFAULT_DAY
from planner.engine.prc import DEFAULT_MEASURE_AFTER_DAYS
from planner.plans.entries import clock, describe_pattern, lux_text
from planner.scenariofile import DEFAULT_MODEL

#: Half-width of the PRC table's text bar [characters].
BAR_WIDTH = 12


def _bar(shift: float, scale: float) -> str:
    cells = min(BAR_WIDTH, round(abs(shift) / scale)) if scale > 0 else 0
    if shift < 0:
        return f"{' ' * (BAR_WIDTH - cells)}[dark_orange]{'█' * cells}[/dark_orange]│{' ' * BAR_WIDTH}"
    return f"{' ' * BAR_WIDTH}│[dodger_blue2]{'█' * cells}[/dodger_blue2]{' ' * (BAR_WIDTH - cells)}"


@app.command("prc", help=(
    "Phase response curve: the shift of CBTmin after a single light pulse centred at each phase.\n\n"
    "Protocol (as in the human PRC studies): entrain to the default day, then constant dim light from wake; "
    "one pulse per run; the shift is the unpulsed control's CBTmin minus the pulsed CBTmin, read days after "
    "the pulse (+ advance, − delay)."))
def prc(
    model_name: ModelOption = DEFAULT_MODEL,
    hours: Annotated[float, typer.Option("--hours", metavar="H",
                                         help="Pulse duration in hours (0 < H ≤ 16).")] = 6.7,
    lux: Annotated[float, typer.Option("--lux", metavar="L", help="Pulse illuminance at the eye, in lux.")] = 10_000.0,
    background: Annotated[float, typer.Option("--background", metavar="B",
                                              help="Dim constant light before, around and after the pulse, in lux.")] = 10.0,
    step: Annotated[float, typer.Option("--step", metavar="S",
                                        help="Spacing of the pulse phases in hours (0.1 to 6).")] = 1.0,
    json_out: JsonOption = False,
) -> None:
    """Phase response curve of one pulse type (help text on the decorator)."""
    outcome = service.prc(model_name, hours=hours, lux=lux, background=background, step=step)
    if json_out:
        emit_json(outcome.to_json())
        return
    _print_prc(outcome)


def _print_prc(outcome: service.PrcOutcome) -> None:
    model, response, summary = outcome.model, outcome.response, outcome.summary
    hours, lux, background = outcome.hours, outcome.lux, outcome.background
    reference_clock_h = outcome.reference_clock_h
    points = outcome.points()
    console = stderr_console()
    console.print(f"[bold]Phase response curve[/bold] — {escape(model.id)}")
    print_facts(console, None, [
        ("pulse", f"{hours:g} h of {lux_text(lux)} lux on a {lux_text(background)}-lux background"),
        ("entrained to", escape(describe_pattern(DEFAULT_DAY))),
        ("then", f"{lux_text(background)} lux constant from wake; one pulse per run, centred at each phase"),
        ("phase", f"pulse centre in hours from the control's CBTmin (day 1, {clock(reference_clock_h)}); "
                  "− before, + after"),
        ("shift", f"control CBTmin minus pulsed CBTmin, read {DEFAULT_MEASURE_AFTER_DAYS} days after the pulse "
                  "(+ advance, − delay)"),
    ])
    largest = max((abs(s) for s in response.shifts_h if math.isfinite(s)), default=0.0)
    scale = largest / BAR_WIDTH if largest > 0 else 0.0
    table = Table(box=box.SIMPLE_HEAD)
    table.add_column("phase\n(h)", justify="right", no_wrap=True)
    table.add_column("pulse\n(clock)", justify="center", no_wrap=True)
    table.add_column("shift\n(h)", justify="right", no_wrap=True)
    table.add_column(f"\n{'delay ◀':>{BAR_WIDTH}} {'▶ advance':<{BAR_WIDTH}}", no_wrap=True)
    for point, shift in zip(points, response.shifts_h):
        table.add_row(signed(point["phase_h"], 1), f"{point['pulse_start_clock']}–{point['pulse_end_clock']}",
                      signed(float(shift)), _bar(float(shift), scale))
    console.print(table)
    if scale > 0:
        console.print(f"  bar: one █ ≈ {scale:.2f} h")
    crossover = ("none found" if summary.crossover_h is None
                 else f"pulse centred {from_cbtmin(summary.crossover_h)}")
    dead_zone = ("none" if summary.dead_zone_h == 0
                 else f"{summary.dead_zone_h:.1f} h (longest run of pulse phases)")
    print_facts(console, "Summary", [
        ("largest advance", f"[bold]{signed(summary.max_advance_h)} h[/bold], pulse centred "
                            f"{from_cbtmin(summary.max_advance_phase_h)}"),
        ("largest delay", f"[bold]{signed(summary.max_delay_h)} h[/bold], pulse centred "
                          f"{from_cbtmin(summary.max_delay_phase_h)}"),
        ("delay→advance crossover", crossover),
        ("peak-to-trough", f"{summary.peak_to_trough_h:.2f} h"),
        (f"dead zone (|shift| < {summary.dead_zone_threshold_h:g} h)", dead_zone),
        ("note", f"a model prediction for an average adult; see '{PROGRAM} models show "
                 f"{escape(model.id)}' for the model's validity notes"),
    ])
    print_citations(console, [model])
