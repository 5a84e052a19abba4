"""Shared pieces of the command line: consoles, the JSON writer, options used by several commands, and the
small text formatters of tables and facts. House rules in :mod:`planner.cli`."""

from __future__ import annotations

import json
import sys
from collections.abc import Sequence
from pathlib import Path
from typing import Annotated, Any

import typer
from rich.console import Console
from rich.markup import escape
from rich.progress import (
    BarColumn,
    MofNCompleteColumn,
    Progress,
    SpinnerColumn,
    TextColumn,
    TimeElapsedColumn,
    TimeRemainingColumn,
)
from rich.table import Table

from planner.engine.parameters import ModelSpec, available_models
from planner.plans.cautions import Caution
from planner.plans.entries import SCHEMA_VERSION
from planner.trips.robust import SEARCH_PEOPLE

JsonOption = Annotated[bool, typer.Option(
    "--json", help="Write one JSON document (schema_version 1) to stdout instead of tables on stderr.")]
ModelOption = Annotated[str, typer.Option(
    "--model", "-m", metavar="ID_OR_PATH",
    help=f"Built-in model id ({', '.join(available_models())}) or the path of a model .toml file.")]


def stderr_console() -> Console:
    """A console on the current stderr (looked up per call, so test runners can swap it)."""
    return Console(stderr=True, highlight=False)


def emit_json(document: dict[str, Any]) -> None:
    document = {"schema_version": SCHEMA_VERSION, **document}
    sys.stdout.write(json.dumps(document, indent=2, ensure_ascii=False, allow_nan=False) + "\n")
    sys.stdout.flush()


def signed(hours: float, digits: int = 2) -> str:
    text = f"{hours:+.{digits}f}"
    return text[1:] if float(text) == 0 else text


def from_cbtmin(phase_h: float) -> str:
    if abs(phase_h) < 0.005:
        return "at CBTmin"
    return f"{abs(phase_h):.1f} h {'before' if phase_h < 0 else 'after'} CBTmin"


def print_facts(console: Console, title: str | None, rows: Sequence[tuple[str, str]]) -> None:
    """Label/value lines whose values wrap under themselves (markup already escaped)."""
    if title:
        console.print(f"\n[bold]{title}[/bold]")
    grid = Table.grid(padding=(0, 2))
    grid.add_column(no_wrap=True)
    grid.add_column()
    for label, value in rows:
        grid.add_row(f"  {label}", value)
    console.print(grid)


def print_citations(console: Console, models: Sequence[ModelSpec]) -> None:
    label = "Citation" if len(models) == 1 else "Citations"
    console.print(f"\n[bold]{label}[/bold]")
    grid = Table.grid(padding=(0, 2))
    grid.add_column(no_wrap=True)
    grid.add_column()
    for model in models:
        grid.add_row(f"  {escape(model.id)}", escape(model.citation))
    console.print(grid)
IcsOption = Annotated[Path | None, typer.Option(
    "--ics", metavar="FILE",
    help=("Write the plan as an iCalendar file (RFC 5545): one event per sleep, bright-light and "
          "light-avoidance window, with reminders; stable UIDs, so importing again updates the events. "
          "A plan with worker groups writes one file per group (FILE-group.ics) unless one group is chosen."))]
ReportOption = Annotated[Path | None, typer.Option(
    "--report", metavar="FILE.html",
    help="Write a self-contained HTML report (summary, day-by-day plan, chart, comparison, cautions).")]
ChartOption = Annotated[Path | None, typer.Option(
    "--chart", metavar="FILE.png|svg", help="Write the phase chart alone (PNG or SVG, by the file's suffix).")]
ForceOption = Annotated[bool, typer.Option(
    "--force", help="Replace existing --ics/--report/--chart files (an existing calendar's SEQUENCE numbers "
                    "are carried on).")]
AlarmOption = Annotated[float, typer.Option(
    "--alarm-minutes", metavar="MIN", min=0, max=1440,
    help="Calendar reminder this many minutes before each event.")]
NoAlarmsOption = Annotated[bool, typer.Option("--no-alarms", help="Calendar events without reminders.")]


#: For planners whose documents have groups (rosters): write only this group's calendar.
GroupOption = Annotated[str | None, typer.Option(
    "--group", metavar="NAME", help="Write the calendar of this worker group (or worker) only, to FILE as named.")]


def print_written(console: Console, written: dict[str, Any]) -> None:
    for label, value in (("calendar", written["ics"]), ("report", written["report"]), ("chart", written["chart"])):
        for path in ([value] if isinstance(value, str) else value or []):
            console.print(f"  wrote {label}: {escape(path)}")
PeopleOption = Annotated[int, typer.Option(
    "--people", metavar="N", min=0, max=100_000,
    help=("Simulate N people (intrinsic period, light sensitivity and starting phase drawn per person) and report "
          "how likely the plan works; 0 = off."))]
SeedOption = Annotated[int, typer.Option("--seed", metavar="S", min=0, help="Seed of the population draw (same seed, same people).")]
RobustOption = Annotated[bool, typer.Option(
    "--robust", help=(f"Also search a plan robust to who the traveller is, scored over {SEARCH_PEOPLE} simulated "
                      "people, and show it beside the average-person plan."))]
ModelsOption = Annotated[str | None, typer.Option(
    "--models", metavar="LIST",
    help="Run the recommended plan under each of these models (comma-separated ids or files) and show where they disagree.")]


#: Cell text of the trip tables for "nothing".
NONE_TEXT = "—"


def print_cautions(console: Console, cautions: Sequence[Caution], models: Sequence[ModelSpec]) -> None:
    """The cautions with their sources, then the citations of the models used."""
    console.print("\n[bold]Cautions[/bold]")
    for caution in cautions:
        console.print(f"  • [bold]{escape(caution.title)}.[/bold] {escape(caution.text)} "
                      f"[dim]({escape('; '.join(caution.sources))})[/dim]")
    print_citations(console, models)


def progress_bar(console: Console):
    """A rich progress bar on stderr and the callback that drives it (one task per description)."""
    bar = Progress(SpinnerColumn(), TextColumn("{task.description}"), BarColumn(), MofNCompleteColumn(),
                   TimeElapsedColumn(), TimeRemainingColumn(), console=console, transient=True)
    tasks: dict[str, Any] = {}

    def update(description: str, completed: int, total: int) -> None:
        if description not in tasks:
            tasks[description] = bar.add_task(description, total=total)
        bar.update(tasks[description], completed=completed, total=total)

    return bar, update


def with_written(document: dict[str, Any], written: dict[str, Any]) -> dict[str, Any]:
    """A JSON document with the files written, when any were."""
    if written["ics"] or written["report"] or written["chart"]:
        document["written"] = written
    return document


def model_list(text: str | None) -> tuple[str, ...]:
    """The names of a comma-separated ``--models`` value (checked by the service)."""
    return () if text is None else tuple(text.split(","))
