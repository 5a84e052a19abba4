"""``phaseplan models`` and ``phaseplan models show``: the built-in parameter sets and one set in detail."""

from __future__ import annotations

import math
from typing import Annotated

import typer
from rich import box
from rich.console import Console
from rich.markup import escape
from rich.table import Table

from planner import service
from planner.cli.app import PROGRAM, models_app
from planner.cli.common import JsonOption, emit_json, print_citations, print_facts, stderr_console
from planner.engine.entrainment import DEFAULT_DAY
from planner.plans.entries import clock, describe_pattern, lux_text


@models_app.callback(invoke_without_command=True)
def models(ctx: typer.Context, json_out: JsonOption = False) -> None:
    """List the built-in models: id, name, equation family and citation."""
    if ctx.invoked_subcommand is not None:
        ctx.obj = {"json": json_out}
        return
    specs = service.list_models()
    if json_out:
        emit_json(service.models_json(specs))
        return
    console = stderr_console()
    table = Table(title="Built-in models", box=box.SIMPLE_HEAD, show_lines=False)
    table.add_column("id", style="bold", no_wrap=True)
    table.add_column("equations", no_wrap=True)
    table.add_column("DOI", no_wrap=True)
    table.add_column("name")
    for spec in specs:
        table.add_row(escape(spec.id), escape(spec.file.equations), escape(spec.file.citation.doi or "—"),
                      escape(spec.file.name))
    console.print(table)
    print_citations(console, specs)
    console.print(f"\nDetails: [bold]{PROGRAM} models show ID[/bold]  (or a path to your own .toml file)")


@models_app.command("show", help=(
    "Show one model: parameters with units and sources, phase markers, numerics and validity notes, "
    "plus its free-running period (darkness and 10 lux) and its entrained CBTmin and DLMO on the default day "
    f"({describe_pattern(DEFAULT_DAY)})."))
def models_show(
    ctx: typer.Context,
    model_name: Annotated[str, typer.Argument(metavar="ID_OR_PATH",
                                              help="Built-in model id or the path of a model .toml file.")],
    json_out: JsonOption = False,
) -> None:
    """Show one model in detail (help text on the decorator)."""
    description = service.describe_model(model_name)
    if json_out or bool((ctx.obj or {}).get("json")):
        emit_json(description.to_json())
        return
    console = stderr_console()
    model = description.model
    console.print(f"[bold]{escape(model.id)}[/bold] — {escape(model.file.name)}")
    about = [("equations", escape(model.file.equations))]
    if model.file.based_on:
        about.append(("based on", escape(model.file.based_on)))
    about.append(("file", escape(model.path)))
    print_facts(console, None, about)
    console.print()
    _print_parameters(console, description)
    print_facts(console, "Numerics", [
        ("step", f"{model.file.numerics.step_minutes:g} min — {escape(model.file.numerics.source)}")])
    _print_properties(console, description)
    if model.file.validity:
        print_facts(console, "Validity", [("•", escape(note)) for note in model.file.validity])
    print_citations(console, [model])


def _print_parameters(console: Console, description: service.ModelDescription) -> None:
    model = description.model
    rules = model.family.parameter_rules
    parameters = Table(title="Parameters", box=box.SIMPLE_HEAD, title_justify="left")
    parameters.add_column("name", style="bold", no_wrap=True)
    parameters.add_column("value", justify="right", no_wrap=True)
    parameters.add_column("units", no_wrap=True)
    parameters.add_column("meaning")
    parameters.add_column("source")
    for name, parameter in model.file.parameters.items():
        meaning = rules[name].meaning if name in rules else ""
        parameters.add_row(escape(name), f"{parameter.value:g}", escape(parameter.units or "1"),
                           escape(meaning), escape(parameter.source))
    console.print(parameters)
    markers = model.file.markers
    marker_table = Table(title="Phase markers", box=box.SIMPLE_HEAD, title_justify="left")
    marker_table.add_column("marker", style="bold", no_wrap=True)
    marker_table.add_column("rule", no_wrap=True)
    marker_table.add_column("source")
    for label, rule in (("CBTmin", markers.cbtmin), ("DLMO", markers.dlmo)):
        how = rule.rule
        if rule.angle_rad is not None:
            how += f" {rule.angle_rad:.4f} rad"
        if rule.offset_h:
            how += f", offset {rule.offset_h:+g} h"
        marker_table.add_row(label, escape(how), escape(rule.source))
    console.print(marker_table)


def _print_properties(console: Console, description: service.ModelDescription) -> None:
    steady = description.steady
    properties = []
    for run in description.free_runs:
        where = "in darkness" if run.lux == 0 else f"at {lux_text(run.lux)} lux"
        period = float(run.period_h[0])
        shown = f"[bold]{period:.2f} h[/bold] ({run.cycles} cycles)" if math.isfinite(period) else "n/a (too few cycles)"
        properties.append((f"free-running period {where}", shown))
    properties.append(("default day", escape(describe_pattern(DEFAULT_DAY))))
    if steady.success:
        properties.append(("entrained", f"CBTmin [bold]{clock(steady.cbtmin_clock_h[0])}[/bold], "
                                        f"DLMO [bold]{clock(steady.dlmo_clock_h[0])}[/bold]"))
        properties.append(("", escape(steady.message)))
    else:
        properties.append(("entrained", f"[bold]no[/bold] — {escape(steady.message)}"))
    print_facts(console, "Computed properties", properties)
