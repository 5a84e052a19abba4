"""The ``phaseplan`` command line: parse the arguments, call the library, format the result.

No science lives here: every number comes from :mod:`planner`.  House rules:

- ``--json`` writes exactly one JSON document (with ``"schema_version": 1``) to
  stdout; tables, notes and errors go to stderr, so stdout stays clean.
- Exit codes: 0 ok, 1 a computation failed (:class:`planner.errors.ComputationError`),
  2 bad input (:class:`planner.errors.InputError` and its subclasses, and usage
  errors), 130 interrupted.  An error is printed as one line on stderr, never
  as a traceback.
- Text from model files (names, sources, paths) is escaped before it reaches
  rich markup.
"""

from __future__ import annotations

import contextlib
import json
import math
import os
import re
import sys
from collections.abc import Callable, Sequence
from dataclasses import dataclass
from pathlib import Path
from datetime import datetime, timedelta
from enum import Enum
from typing import Annotated, Any, NoReturn

import typer
from rich import box
from rich.console import Console
from rich.markup import escape
from rich.panel import Panel
from rich.progress import (BarColumn, MofNCompleteColumn, Progress, SpinnerColumn, TextColumn, TimeElapsedColumn,
                           TimeRemainingColumn)
from rich.table import Table
from typer.core import TyperGroup

from planner._version import __version__
from planner.entrainment import DEFAULT_DAY, DailyPattern, entrain, free_running_period
from planner.errors import ComputationError, InputError, PhaseplanError
from planner.parameters import ModelSpec, available_models, load_model
from planner.prc import DEFAULT_MEASURE_AFTER_DAYS, phase_response_curve, summarise
from planner.cautions import cautions_for
from planner.ics import DEFAULT_ALARM_MINUTES, calendar_bytes, calendars_by_group, previous_events
from planner.outputs import check_target, write_atomic
from planner.plandoc import PlanDocument, document_from_trip
from planner.rosterfile import builtin_roster_paths, load_roster
from planner.scenario import DEFAULT_DEMO, ScenarioInfo, builtin_scenario_paths, demo_path, load_trip
from planner.tomlfile import InputFileError, Problem, declared_kind
from planner.trip import Place, Trip, Window, trip_days
from planner.tripplan import REENTRAINMENT_TOLERANCE_H, TripPlanResult, plan_trip
from planner.tripview import (DayView, clock_change_h, day_views, days_text, local, movement, settling, shorter_way,
                              strategy_name, zone_label, zone_name)
from planner.evidence import StartingPhase, person_model, starting_phase
from planner.lightlog import read_light_log
from planner.robust import (SEARCH_PEOPLE, EnsembleResult, PlanStats, RobustResult, distribution_spec, model_ensemble,
                            population_report, robust_plan)

try:  # recent typer carries its own copy of click; its errors derive from TyperException
    from typer import TyperException as _UsageProblem
except ImportError:  # pragma: no cover - older typer builds on click itself
    from click import ClickException as _UsageProblem

SCHEMA_VERSION = 1
PROGRAM = "phaseplan"

#: Exit statuses of the command line.
EXIT_OK = 0
EXIT_COMPUTATION_FAILED = 1
EXIT_BAD_INPUT = 2
EXIT_INTERRUPTED = 130

#: Constant light levels at which ``models show`` reports the free-running period [lux].
FREE_RUN_LEVELS_LUX = (0.0, 10.0)

#: Half-width of the PRC table's text bar [characters].
BAR_WIDTH = 12


# --------------------------------------------------------------------------- errors and exit codes

def _one_line(text: str) -> str:
    return " ".join(str(text).split())


def _fail(prefix: str, text: str, code: int) -> int:
    sys.stderr.write(f"{PROGRAM}: {prefix}: {_one_line(text)}\n")
    sys.stderr.flush()
    return code


class _PhaseplanGroup(TyperGroup):
    """The top-level group: maps library errors to exit codes in one place.

    Both the console script (:func:`main`) and ``typer.testing.CliRunner`` enter
    through this ``main``, so the mapping is the same for both.
    """

    def main(self, args: Sequence[str] | None = None, prog_name: str | None = None,
             complete_var: str | None = None, standalone_mode: bool = True, **extra: Any) -> Any:
        if not standalone_mode:
            return super().main(args=args, prog_name=prog_name, complete_var=complete_var,
                                standalone_mode=False, **extra)
        sys.exit(self._status(args, prog_name, complete_var, extra))

    def _status(self, args: Sequence[str] | None, prog_name: str | None, complete_var: str | None,
                extra: dict[str, Any]) -> int:
        """Run non-standalone and turn every outcome into an exit status."""
        try:
            result = super().main(args=args, prog_name=prog_name, complete_var=complete_var,
                                  standalone_mode=False, **extra)
        except InputError as exc:
            return _fail("error", exc.one_line(), EXIT_BAD_INPUT)
        except ComputationError as exc:
            return _fail("computation failed", str(exc), EXIT_COMPUTATION_FAILED)
        except PhaseplanError as exc:
            return _fail("error", str(exc), EXIT_COMPUTATION_FAILED)
        except _UsageProblem as exc:
            context = getattr(exc, "ctx", None)
            hint = f" (see '{context.command_path} --help')" if context is not None else ""
            return _fail("error", exc.format_message() + hint, getattr(exc, "exit_code", EXIT_BAD_INPUT))
        except typer.Abort:
            return _fail("error", "aborted", EXIT_COMPUTATION_FAILED)
        except KeyboardInterrupt:
            return _fail("error", "interrupted", EXIT_INTERRUPTED)
        # Non-standalone typer returns the status of a typer.Exit, or the command's return value (None).
        return result if isinstance(result, int) else EXIT_OK


# --------------------------------------------------------------------------- apps and shared options

app = typer.Typer(
    name=PROGRAM,
    cls=_PhaseplanGroup,
    help=("Simulate human circadian phase with published models (forger1999, jewett1999, hannay2019) "
          "driven by the light a person sees.\n\n"
          "Human-readable output goes to stderr; [bold]--json[/bold] writes one JSON document to stdout."),
    epilog="Exit codes: 0 ok, 1 computation failed, 2 bad input, 130 interrupted.",
    rich_markup_mode="rich",
    add_completion=False,
    pretty_exceptions_enable=False,
)
models_app = typer.Typer(help=("List the built-in models (id, equation family, DOI, citation); "
                               "[bold]models show ID_OR_PATH[/bold] shows one in detail."),
                         rich_markup_mode="rich")
app.add_typer(models_app, name="models")

JsonOption = Annotated[bool, typer.Option(
    "--json", help="Write one JSON document (schema_version 1) to stdout instead of tables on stderr.")]
ModelOption = Annotated[str, typer.Option(
    "--model", "-m", metavar="ID_OR_PATH",
    help=f"Built-in model id ({', '.join(available_models())}) or the path of a model .toml file.")]


def _version_callback(value: bool) -> None:
    if value:
        sys.stdout.write(f"{PROGRAM} {__version__}\n")
        raise typer.Exit(EXIT_OK)


@app.callback(invoke_without_command=True)
def _root(
    ctx: typer.Context,
    version: Annotated[bool, typer.Option("--version", is_eager=True, callback=_version_callback,
                                          help="Print the version and exit.")] = False,
) -> None:
    """Simulate human circadian phase with published models driven by the light a person sees."""
    if ctx.invoked_subcommand is None:
        sys.stdout.write(ctx.get_help())  # as for --help (rich help prints itself and returns "")


# --------------------------------------------------------------------------- formatting helpers

def _stderr() -> Console:
    """A console on the current stderr (looked up per call, so test runners can swap it)."""
    return Console(stderr=True, highlight=False)


def _emit_json(document: dict[str, Any]) -> None:
    document = {"schema_version": SCHEMA_VERSION, **document}
    sys.stdout.write(json.dumps(document, indent=2, ensure_ascii=False, allow_nan=False) + "\n")
    sys.stdout.flush()


def _number(value: Any) -> float | None:
    """A float for JSON; None for NaN or infinity."""
    value = float(value)
    return value if math.isfinite(value) else None


def _clock(hours: Any) -> str:
    """Clock hours as HH:MM (wrapped to the day); 'n/a' when not finite."""
    value = float(hours)
    if not math.isfinite(value):
        return "n/a"
    minutes = round(value * 60.0) % (24 * 60)
    return f"{minutes // 60:02d}:{minutes % 60:02d}"


def _signed(hours: float, digits: int = 2) -> str:
    text = f"{hours:+.{digits}f}"
    return text[1:] if float(text) == 0 else text


def _from_cbtmin(phase_h: float) -> str:
    if abs(phase_h) < 0.005:
        return "at CBTmin"
    return f"{abs(phase_h):.1f} h {'before' if phase_h < 0 else 'after'} CBTmin"


def _lux(value: float) -> str:
    return f"{value:,.0f}" if value >= 10 or value == int(value) else f"{value:g}"


def _citation_entry(model: ModelSpec) -> dict[str, Any]:
    return {"model": model.id, "text": model.citation, "doi": model.file.citation.doi or None}


def _model_entry(model: ModelSpec) -> dict[str, Any]:
    return {"id": model.id, "name": model.file.name, "equations": model.file.equations,
            "based_on": model.file.based_on or None, "path": model.path}


def _pattern_entry(pattern: DailyPattern) -> dict[str, Any]:
    return {
        "sleep_start_h": pattern.sleep_start_h,
        "sleep_end_h": pattern.sleep_end_h,
        "sleep_lux": 0.0,
        "indoor_lux": pattern.indoor_lux,
        "daylight": [{"start_h": start, "end_h": end, "lux": lux} for start, end, lux in pattern.daylight],
        "description": _describe_pattern(pattern),
    }


def _describe_pattern(pattern: DailyPattern) -> str:
    parts = [f"sleep {_clock(pattern.sleep_start_h)}–{_clock(pattern.sleep_end_h)} (eyes closed, 0 lux)",
             f"{_lux(pattern.indoor_lux)} lux indoors while awake"]
    parts += [f"{_lux(lux)} lux daylight {_clock(start)}–{_clock(end)}" for start, end, lux in pattern.daylight]
    return "; ".join(parts)


def _print_facts(console: Console, title: str | None, rows: Sequence[tuple[str, str]]) -> None:
    """Label/value lines whose values wrap under themselves (markup already escaped)."""
    if title:
        console.print(f"\n[bold]{title}[/bold]")
    grid = Table.grid(padding=(0, 2))
    grid.add_column(no_wrap=True)
    grid.add_column()
    for label, value in rows:
        grid.add_row(f"  {label}", value)
    console.print(grid)


def _print_citations(console: Console, models: Sequence[ModelSpec]) -> None:
    label = "Citation" if len(models) == 1 else "Citations"
    console.print(f"\n[bold]{label}[/bold]")
    grid = Table.grid(padding=(0, 2))
    grid.add_column(no_wrap=True)
    grid.add_column()
    for model in models:
        grid.add_row(f"  {escape(model.id)}", escape(model.citation))
    console.print(grid)


# --------------------------------------------------------------------------- models

@models_app.callback(invoke_without_command=True)
def models(ctx: typer.Context, json_out: JsonOption = False) -> None:
    """List the built-in models: id, name, equation family and citation."""
    if ctx.invoked_subcommand is not None:
        ctx.obj = {"json": json_out}
        return
    specs = [load_model(name) for name in available_models()]
    if json_out:
        _emit_json({
            "command": "models",
            "models": [{**_model_entry(spec), "citation": {**spec.file.citation.model_dump(), "text": spec.citation}}
                       for spec in specs],
            "citations": [_citation_entry(spec) for spec in specs],
        })
        return
    console = _stderr()
    table = Table(title="Built-in models", box=box.SIMPLE_HEAD, show_lines=False)
    table.add_column("id", style="bold", no_wrap=True)
    table.add_column("equations", no_wrap=True)
    table.add_column("DOI", no_wrap=True)
    table.add_column("name")
    for spec in specs:
        table.add_row(escape(spec.id), escape(spec.file.equations), escape(spec.file.citation.doi or "—"),
                      escape(spec.file.name))
    console.print(table)
    _print_citations(console, specs)
    console.print(f"\nDetails: [bold]{PROGRAM} models show ID[/bold]  (or a path to your own .toml file)")


@models_app.command("show", help=(
    "Show one model: parameters with units and sources, phase markers, numerics and validity notes, "
    "plus its free-running period (darkness and 10 lux) and its entrained CBTmin and DLMO on the default day "
    f"({_describe_pattern(DEFAULT_DAY)})."))
def models_show(
    ctx: typer.Context,
    model_name: Annotated[str, typer.Argument(metavar="ID_OR_PATH",
                                              help="Built-in model id or the path of a model .toml file.")],
    json_out: JsonOption = False,
) -> None:
    """Show one model in detail (help text on the decorator)."""
    json_out = json_out or bool((ctx.obj or {}).get("json"))
    model = load_model(model_name)
    free_runs = [free_running_period(model, lux) for lux in FREE_RUN_LEVELS_LUX]
    steady = entrain(model, DEFAULT_DAY)
    rules = model.family.parameter_rules
    markers = model.file.markers
    if json_out:
        _emit_json({
            "command": "models show",
            "model": _model_entry(model),
            "citation": {**model.file.citation.model_dump(), "text": model.citation},
            "parameters": {name: {**p.model_dump(), "meaning": rules[name].meaning if name in rules else None}
                           for name, p in model.file.parameters.items()},
            "markers": markers.model_dump(),
            "numerics": model.file.numerics.model_dump(),
            "validity": list(model.file.validity),
            "properties": {
                "free_running": [{"lux": run.lux, "period_h": _number(run.period_h[0]), "cycles": run.cycles}
                                 for run in free_runs],
                "entrainment": {
                    "day": _pattern_entry(DEFAULT_DAY),
                    "success": steady.success,
                    "message": steady.message,
                    "days_simulated": steady.days_simulated,
                    "cbtmin_clock_h": _number(steady.cbtmin_clock_h[0]),
                    "cbtmin_clock": _clock(steady.cbtmin_clock_h[0]),
                    "dlmo_clock_h": _number(steady.dlmo_clock_h[0]),
                    "dlmo_clock": _clock(steady.dlmo_clock_h[0]),
                },
            },
            "citations": [_citation_entry(model)],
        })
        return

    console = _stderr()
    console.print(f"[bold]{escape(model.id)}[/bold] — {escape(model.file.name)}")
    about = [("equations", escape(model.file.equations))]
    if model.file.based_on:
        about.append(("based on", escape(model.file.based_on)))
    about.append(("file", escape(model.path)))
    _print_facts(console, None, about)

    console.print()
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

    _print_facts(console, "Numerics", [
        ("step", f"{model.file.numerics.step_minutes:g} min — {escape(model.file.numerics.source)}")])

    properties = []
    for run in free_runs:
        where = "in darkness" if run.lux == 0 else f"at {_lux(run.lux)} lux"
        period = float(run.period_h[0])
        shown = f"[bold]{period:.2f} h[/bold] ({run.cycles} cycles)" if math.isfinite(period) else "n/a (too few cycles)"
        properties.append((f"free-running period {where}", shown))
    properties.append(("default day", escape(_describe_pattern(DEFAULT_DAY))))
    if steady.success:
        properties.append(("entrained", f"CBTmin [bold]{_clock(steady.cbtmin_clock_h[0])}[/bold], "
                                        f"DLMO [bold]{_clock(steady.dlmo_clock_h[0])}[/bold]"))
        properties.append(("", escape(steady.message)))
    else:
        properties.append(("entrained", f"[bold]no[/bold] — {escape(steady.message)}"))
    _print_facts(console, "Computed properties", properties)

    if model.file.validity:
        _print_facts(console, "Validity", [("•", escape(note)) for note in model.file.validity])
    _print_citations(console, [model])


# --------------------------------------------------------------------------- prc

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
    model_name: ModelOption = "forger1999",
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
    model = load_model(model_name)
    response = phase_response_curve(model, duration_h=hours, lux=lux, background_lux=background, step_h=step)
    summary = summarise(response)
    reference_clock_h = response.reference_cbtmin_h % 24.0
    half = hours / 2.0
    points = [{
        "phase_h": float(phase),
        "shift_h": _number(shift),
        "pulse_start_clock": _clock(reference_clock_h + phase - half),
        "pulse_end_clock": _clock(reference_clock_h + phase + half),
    } for phase, shift in zip(response.phases_h, response.shifts_h)]
    protocol = {
        "pulse_hours": hours,
        "pulse_lux": lux,
        "background_lux": background,
        "phase_step_h": step,
        "entrained_to": _pattern_entry(DEFAULT_DAY),
        "measure_after_days": DEFAULT_MEASURE_AFTER_DAYS,
        "reference_cbtmin_clock_h": _number(reference_clock_h),
        "reference_cbtmin_clock": _clock(reference_clock_h),
    }
    if json_out:
        _emit_json({
            "command": "prc",
            "model": _model_entry(model),
            "protocol": protocol,
            "conventions": {
                "phase_h": "pulse centre in hours from the control's CBTmin; negative = before CBTmin",
                "shift_h": "phase shift of CBTmin in hours; positive = advance, negative = delay",
                "clock": "local clock on the protocol day, HH:MM",
            },
            "points": points,
            "summary": {key: (_number(value) if isinstance(value, float) else value)
                        for key, value in vars(summary).items()},
            "citations": [_citation_entry(model)],
        })
        return

    console = _stderr()
    console.print(f"[bold]Phase response curve[/bold] — {escape(model.id)}")
    _print_facts(console, None, [
        ("pulse", f"{hours:g} h of {_lux(lux)} lux on a {_lux(background)}-lux background"),
        ("entrained to", escape(_describe_pattern(DEFAULT_DAY))),
        ("then", f"{_lux(background)} lux constant from wake; one pulse per run, centred at each phase"),
        ("phase", f"pulse centre in hours from the control's CBTmin (day 1, {_clock(reference_clock_h)}); "
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
        table.add_row(_signed(point["phase_h"], 1), f"{point['pulse_start_clock']}–{point['pulse_end_clock']}",
                      _signed(float(shift)), _bar(float(shift), scale))
    console.print(table)
    if scale > 0:
        console.print(f"  bar: one █ ≈ {scale:.2f} h")
    crossover = ("none found" if summary.crossover_h is None
                 else f"pulse centred {_from_cbtmin(summary.crossover_h)}")
    dead_zone = ("none" if summary.dead_zone_h == 0
                 else f"{summary.dead_zone_h:.1f} h (longest run of pulse phases)")
    _print_facts(console, "Summary", [
        ("largest advance", f"[bold]{_signed(summary.max_advance_h)} h[/bold], pulse centred "
                            f"{_from_cbtmin(summary.max_advance_phase_h)}"),
        ("largest delay", f"[bold]{_signed(summary.max_delay_h)} h[/bold], pulse centred "
                          f"{_from_cbtmin(summary.max_delay_phase_h)}"),
        ("delay→advance crossover", crossover),
        ("peak-to-trough", f"{summary.peak_to_trough_h:.2f} h"),
        (f"dead zone (|shift| < {summary.dead_zone_threshold_h:g} h)", dead_zone),
        ("note", f"a model prediction for an average adult; see '{PROGRAM} models show "
                 f"{escape(model.id)}' for the model's validity notes"),
    ])
    _print_citations(console, [model])


# --------------------------------------------------------------------------- plan files: calendar, report, chart

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


@dataclass(frozen=True)
class PlanFiles:
    """The plan files a command was asked to write (the values of the options above).

    Attributes
    ----------
    ics, report, chart : Path or None
    force : bool
    alarm_minutes : float  [min]
    no_alarms : bool
    group : str or None
        A roster's worker group (or chosen worker) whose calendar alone is written.
    """

    ics: Path | None = None
    report: Path | None = None
    chart: Path | None = None
    force: bool = False
    alarm_minutes: float = DEFAULT_ALARM_MINUTES
    no_alarms: bool = False
    group: str | None = None

    def check(self) -> None:
        """Refuse unwritable targets before any planning is done (InputError, exit 2)."""
        if self.chart is not None:
            from planner.report import chart_format   # matplotlib only when a chart is asked for

            chart_format(self.chart)
        for path in (self.ics, self.report, self.chart):
            if path is not None:
                check_target(path, force=self.force)


def _group_path(path: Path, group: str | None) -> Path:
    if group is None:
        return path
    slug = re.sub(r"[^A-Za-z0-9]+", "-", group).strip("-").lower() or "group"
    return path.with_name(f"{path.stem}-{slug}{path.suffix or '.ics'}")


def write_plan_files(document: PlanDocument, files: PlanFiles) -> dict[str, Any]:
    """Write the calendar(s), report and chart of a plan document as ``files`` asks.

    Any planner's command calls this with its :class:`~planner.plandoc.PlanDocument`
    (trips here, rosters with their worker groups). Each file is refused when it exists and
    ``files.force`` is not set, and written atomically. When an existing calendar is replaced, its
    events' SEQUENCE numbers are carried on (:func:`planner.ics.build_calendar`).

    Returns
    -------
    dict
        ``{"ics": [paths], "report": path or None, "chart": path or None}`` for ``--json``.
    """
    written: dict[str, Any] = {"ics": [], "report": None, "chart": None}
    if files.ics is not None:
        alarm = None if files.no_alarms else files.alarm_minutes
        groups = calendars_by_group(document, files.group)
        for group, events in groups.items():
            path = _group_path(files.ics, group if len(groups) > 1 else None)
            check_target(path, force=files.force)
            previous = path.read_bytes() if path.is_file() else None
            try:
                previous_events(previous)
            except InputError:   # --force over a file that is no calendar: nothing to carry on
                previous = None
            name = document.title if group is None else f"{document.title} — {group}"
            data = calendar_bytes(document, events, name=name, alarm_minutes=alarm, previous=previous)
            written["ics"].append(str(write_atomic(path, data, force=files.force)))
    if files.report is not None or files.chart is not None:
        from planner.report import chart_bytes, chart_format, report_html   # matplotlib only when asked

        if files.report is not None:
            written["report"] = str(write_atomic(files.report, report_html(document), force=files.force))
        if files.chart is not None:
            data = chart_bytes(document, chart_format(files.chart))
            written["chart"] = str(write_atomic(files.chart, data, force=files.force))
    return written


def _print_written(console: Console, written: dict[str, Any]) -> None:
    for label, value in (("calendar", written["ics"]), ("report", written["report"]), ("chart", written["chart"])):
        for path in ([value] if isinstance(value, str) else value or []):
            console.print(f"  wrote {label}: {escape(path)}")


# --------------------------------------------------------------------------- trips: check, trip, demo

class StrategyChoice(str, Enum):
    """Values of --strategy."""

    auto = "auto"
    advance = "advance"
    delay = "delay"


StrategyOption = Annotated[StrategyChoice, typer.Option(
    "--strategy", "-s", case_sensitive=False,
    help=("auto plans both directions and recommends one (and, for a short trip back home, compares staying "
          "on home time); advance or delay plans only that direction."))]
TripModelOption = Annotated[str | None, typer.Option(
    "--model", "-m", metavar="ID_OR_PATH",
    help="Model to use instead of the scenario's own (a built-in id or the path of a model .toml file).")]

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
ByDayOption = Annotated[int | None, typer.Option(
    "--by-day", metavar="K", min=0, max=60,
    help="Day after arrival by which re-entrainment counts as success (default: the end of the stay).")]

#: Cell text of the trip tables for "nothing".
NONE_TEXT = "—"


def _problem_entry(problem: Problem) -> dict[str, Any]:
    return {"file": problem.source, "line": problem.line, "field": problem.field or None, "message": problem.message}


def _scenario_problems(path: str, loader=None) -> tuple[list[Problem], tuple[Any, Any] | None]:
    """Every problem of a scenario file (its model file included); the loaded scenario when there are none."""
    try:
        loaded = (loader or load_trip)(path)
    except InputFileError as exc:
        return list(exc.problems), None
    try:
        load_model(loaded[1].model)
    except InputFileError as exc:
        return list(exc.problems), None
    except InputError as exc:
        return [Problem(path, "model", _one_line(exc.one_line()))], None
    person = getattr(loaded[1], "person", None)   # a roster has no traveller
    if person is not None and person.light_log is not None:
        try:
            read_light_log(person.light_log, person.light_log_time_zone or loaded[0].home.zone)
        except InputError as exc:
            return [Problem(exc.source or path, exc.field or "person.light_log", exc.message)], None
    return [], loaded


def _hhmm(moment: datetime) -> str:
    return moment.strftime("%H:%M")


def _wall(trip: Trip, moment: datetime) -> str:
    """A moment as local date, time and zone where the traveller is, e.g. "2027-03-10 11:00 WET"."""
    at = local(trip, moment)
    return f"{at.strftime('%Y-%m-%d %H:%M')} {zone_label(at).split()[0]}"


def _local_iso(trip: Trip, moment: datetime) -> str:
    return local(trip, moment).isoformat(timespec="minutes")


def _outcome_entry(result: Any, alternatives: dict) -> dict[str, Any]:
    outcome = result.outcome if hasattr(result, "outcome") else result
    entry = {
        "aim": outcome.aim,
        "reentrainment_days": outcome.reentrainment_days,
        "box_minutes": _number(outcome.box_minutes),
        "near_low_amplitude": bool(outcome.near_low_amplitude),
        "min_amplitude_ratio": _number(outcome.min_amplitude_ratio),
        "direction": outcome.direction,
        "net_shift_h": _number(outcome.net_shift_h),
        "max_error_while_away_h": _number(outcome.max_away_error_h),
        "movement": movement(outcome, alternatives),
    }
    if hasattr(result, "outcome"):
        entry.update({"strategy": result.strategy, "refined": bool(result.refined),
                      "required_shift_h": _number(result.required_shift_h)})
    return entry


def _window_entry(window: Window, iso: Callable[[datetime], str]) -> dict[str, Any]:
    """A light window for JSON, its times written by ``iso`` (on the local clock of the plan's person)."""
    entry = {"start": iso(window.start), "end": iso(window.end),
             "minutes": _number(window.minutes), "source": window.source}
    if window.source == "dark glasses":
        entry["transmission"] = window.lux
    else:
        entry["lux"] = window.lux
    return entry


def _day_entry(trip: Trip, view: DayView) -> dict[str, Any]:
    day = view.day
    return {
        "index": day.index,
        "date": day.local_date.isoformat(),
        "kind": day.kind,
        "place": day.place.name,
        "time_zone": zone_name(day.place),
        "arrival_place": day.end_place.name if day.end_place != day.place else None,
        "arrival_time_zone": zone_name(day.end_place) if day.end_place != day.place else None,
        "start": _local_iso(trip, day.start),
        "end": _local_iso(trip, day.end),
        "target_place": view.target_place.name,
        "sleep": [{"start": _local_iso(trip, a), "end": _local_iso(trip, b)} for a, b in view.sleep],
        "bright_light": [_window_entry(w, lambda m: _local_iso(trip, m)) for w in view.bright],
        "light_avoidance": [_window_entry(w, lambda m: _local_iso(trip, m)) for w in view.avoid],
        "cbtmin": _local_iso(trip, view.cbtmin) if view.cbtmin is not None else None,
        "phase_error_h": _number(view.error_h),
    }


def _trip_document(command: str, trip: Trip, info: ScenarioInfo, model: ModelSpec, plan: TripPlanResult,
                   views: list[DayView]) -> dict[str, Any]:
    chosen = plan.recommended
    return {
        "command": command,
        "scenario": {"name": info.name, "description": info.description, "path": info.path,
                     "round_trip": info.round_trip},
        "model": {**_model_entry(model), "citation": model.citation},
        "citations": [_citation_entry(model)],
        "strategy": plan.strategy,
        "aim": chosen.outcome.aim,
        "success": bool(plan.success),
        "message": plan.message,
        "reason": plan.reason,
        "reentrainment_days": chosen.outcome.reentrainment_days if chosen.outcome.aim == "route" else None,
        "clock_change_h": _number(clock_change_h(trip)),
        "baseline": _outcome_entry(plan.baseline, plan.alternatives),
        "alternatives": {name: _outcome_entry(result, plan.alternatives) for name, result in plan.alternatives.items()},
        "days": [_day_entry(trip, view) for view in views],
        "simulated": plan.simulated,
        "cautions": [c.as_dict() for c in cautions_for()],
        "conventions": {
            "times": "ISO 8601 on the local clock of where the traveller is (while flying: the departure "
                     "airport's), with its UTC offset",
            "reentrainment_days": "days after the arrival day until CBTmin stays within 1 h of the target; "
                                  "null when not within the time away (for aim 'home': of home time)",
            "phase_error_h": "CBTmin minus the target place's entrained CBTmin, in (-12, 12]; + means the "
                             "body clock is later than the target (it must advance)",
            "net_shift_h": "net movement of CBTmin over the time away; + later (delay), - earlier (advance)",
        },
    }


def _clock_cell(trip: Trip, moment: datetime, row_zone: str) -> str:
    at = local(trip, moment)
    label = zone_label(at)
    return _hhmm(at) if label == row_zone else f"{_hhmm(at)} {label.split()[0]}"


def _span_cell(trip: Trip, a: datetime, b: datetime, row_zone: str) -> str:
    start, end = local(trip, a), local(trip, b)
    if zone_label(start) == zone_label(end) != row_zone:   # both on another clock: name it once
        return f"{_hhmm(start)}–{_hhmm(end)} {zone_label(end).split()[0]}"
    return f"{_clock_cell(trip, a, row_zone)}–{_clock_cell(trip, b, row_zone)}"


def _window_cell(trip: Trip, window: Window, row_zone: str) -> str:
    text = f"{_span_cell(trip, window.start, window.end, row_zone)} {window.minutes:.0f} min"
    if window.source == "dark glasses":
        return text + f"\ndark glasses {window.lux:.0%}"
    return text + f"\n{window.source} {_lux(window.lux)} lx"


def _error_cell(error: float, target: Place, named: bool) -> str:
    if not math.isfinite(error):
        return NONE_TEXT
    where = f" {escape(target.name)}" if named else ""
    if abs(error) <= REENTRAINMENT_TOLERANCE_H:
        return f"[green]{_signed(error, 1)} h ✓[/green]{where}"
    return f"{abs(error):.1f} h {'late' if error > 0 else 'early'}{where}"


def _day_table(trip: Trip, views: list[DayView], title: str) -> Table:
    """The day-by-day table of a plan (markup in ``title`` already escaped)."""
    targets = list(dict.fromkeys(view.target_place.name for view in views))
    named = len(targets) > 1
    aim = "the target" if named else escape(targets[0])
    table = Table(title=title, box=box.SIMPLE_HEAD,
                  title_justify="left", caption_justify="left",
                  caption=("Times on the local clock of where the traveller is (in flight: the departure "
                           "airport's); a zone name marks a time on another clock than the row's. CBTmin — : "
                           "the minimum moved past midnight that day. vs target: CBTmin against the entrained "
                           f"CBTmin {'of the place the day aims at' if named else 'at ' + aim}; ✓ within "
                           f"{REENTRAINMENT_TOLERANCE_H:g} h."))
    for header in ("day", "clock", "sleep", "bright light", "avoid light", "CBTmin", f"vs {aim}"):
        table.add_column(header, no_wrap=header in ("day", "clock", "CBTmin"), overflow="fold")
    for view in views:
        day = view.day
        start = local(trip, day.start)
        row_zone = zone_label(start)
        clock = row_zone
        date_text = start.strftime("%a %d %b")
        if day.end_place != day.place:
            end = day.end.astimezone(day.end_place.zone)
            if zone_label(end) != row_zone:
                clock = f"{row_zone}\n→ {zone_label(end)}"
            last = (day.end - timedelta(minutes=1)).astimezone(day.end_place.zone).strftime("%a %d %b")
            date_text += f"\n→ {last}" if last != date_text else ""
        sleep = "\n".join(_span_cell(trip, a, b, row_zone) for a, b in view.sleep) or NONE_TEXT
        bright = "\n".join(_window_cell(trip, w, row_zone) for w in view.bright) or NONE_TEXT
        avoid = "\n".join(_window_cell(trip, w, row_zone) for w in view.avoid) or NONE_TEXT
        cbtmin = _clock_cell(trip, view.cbtmin, row_zone) if view.cbtmin is not None else NONE_TEXT
        table.add_row(f"{date_text}\n[dim]{day.kind}[/dim]", escape(clock), sleep, bright, avoid, cbtmin,
                      _error_cell(view.error_h, view.target_place, named))
    return table


def _print_trip(console: Console, trip: Trip, info: ScenarioInfo, model: ModelSpec, plan: TripPlanResult,
                views: list[DayView]) -> None:
    change = clock_change_h(trip)
    way = "east" if change > 0 else "west"
    console.print(f"[bold]{escape(info.name)}[/bold]")
    if info.description:
        console.print(escape(info.description))
    route = " → ".join([escape(trip.home.name)] + [escape(f.destination.name) for f in trip.flights])
    facts = [("route", route),
             ("clock change", f"{abs(change):g} h {way} at the first arrival" if change else "none"),
             ("planned", f"{_wall(trip, trip.start)} to {_wall(trip, trip.end)} ({len(views)} days)"),
             ("model", escape(model.id))]
    _print_facts(console, None, facts)

    console.print(_day_table(trip, views, f"Day-by-day plan: {escape(strategy_name(plan.strategy))}"))

    comparison = Table(box=box.SIMPLE_HEAD)

    for header in ("plan", "re-entrains", "light box", "near low amplitude", "body clock"):
        comparison.add_column(header, no_wrap=header != "body clock")
    rows = [(name, result.outcome) for name, result in plan.alternatives.items()] + [("no plan", plan.baseline)]
    for name, outcome in rows:
        label = f"[bold]{strategy_name(name)}[/bold] ✓" if name == plan.strategy else strategy_name(name)
        comparison.add_row(label, settling(outcome), f"{outcome.box_minutes:.0f} min",
                           "yes" if outcome.near_low_amplitude else "no", escape(movement(outcome, plan.alternatives)))
    console.print(Panel(comparison, title="Advance, delay or no plan", title_align="left"))
    console.print(f"[bold]Recommended:[/bold] {escape(strategy_name(plan.strategy))} — {escape(plan.reason)}")
    if plan.success:
        console.print(f"[bold]Result:[/bold] {escape(plan.message)}")
    else:
        console.print(f"[bold yellow]Not reached:[/bold yellow] {escape(plan.message)}. This is the best plan "
                      "found; consider more preparation days, more light, or a longer stay.")
    console.print(f"  {plan.simulated:,} light schedules simulated")


def _print_cautions(console: Console, models: Sequence[ModelSpec]) -> None:
    console.print("\n[bold]Cautions[/bold]")
    for caution in cautions_for():
        console.print(f"  • [bold]{escape(caution.title)}.[/bold] {escape(caution.text)} "
                      f"[dim]({escape('; '.join(caution.sources))})[/dim]")
    _print_citations(console, models)


def _progress_bar(console: Console):
    """A rich progress bar on stderr and the callback that drives it (one task per description)."""
    bar = Progress(SpinnerColumn(), TextColumn("{task.description}"), BarColumn(), MofNCompleteColumn(),
                   TimeElapsedColumn(), TimeRemainingColumn(), console=console, transient=True)
    tasks: dict[str, Any] = {}

    def update(description: str, completed: int, total: int) -> None:
        if description not in tasks:
            tasks[description] = bar.add_task(description, total=total)
        bar.update(tasks[description], completed=completed, total=total)

    return bar, update


def _run_trip(command: str, path: str | None, strategy: StrategyChoice, model_name: str | None, json_out: bool,
              people: int = 0, seed: int = 0, robust: bool = False, models_list: str | None = None,
              by_day: int | None = None, files: PlanFiles = PlanFiles(),
              loaded: tuple[Trip, ScenarioInfo] | None = None, saved: str | None = None) -> None:
    trip, info = loaded or load_trip(path)
    base_model = load_model(model_name or info.model)
    ensemble_ids = _model_list(models_list)
    evidence = info.person
    try:
        start = starting_phase(trip, base_model, evidence)
    except InputError as exc:   # the scenario's [person] table: name the file
        if exc.source is None:
            raise InputError(exc.message, source=info.path, field=exc.field) from None
        raise
    model = person_model(base_model, evidence)
    files.check()
    wanted = StrategyChoice(strategy).value
    console = _stderr()
    if json_out:
        plan = plan_trip(trip, model, wanted, initial_state=start.state)
    else:
        with console.status(f"planning {escape(info.name)} with {escape(model.id)} …"):
            plan = plan_trip(trip, model, wanted, initial_state=start.state)
    views = day_views(trip, plan.recommended.outcome)
    bar, update = _progress_bar(console)
    robust_result = population = ensemble = None
    with (bar if robust or people or ensemble_ids else contextlib.nullcontext()):
        if robust:
            robust_result = robust_plan(trip, base_model, plan, evidence=evidence, seed=seed, by_day=by_day,
                                        progress=update)
        if people:
            named = _population_plans(plan, robust_result)
            stats, starting, _ = population_report(trip, base_model, named, size=people, seed=seed,
                                                   evidence=evidence, by_day=by_day, progress=update)
            population = (stats, starting)
        if ensemble_ids:
            update("model ensemble", 0, 1)
            ensemble = model_ensemble(trip, plan.recommended.outcome.plan, ensemble_ids,
                                      aim=plan.recommended.outcome.aim, evidence=evidence)
            update("model ensemble", 1, 1)
    models_used = [model] + [m.model for m in (ensemble.members if ensemble else []) if m.model.id != model.id]
    written = write_plan_files(document_from_trip(trip, info, plan, views, population=population), files)
    if json_out:
        document = _trip_document(command, trip, info, model, plan, views)
        document["citations"] = [_citation_entry(m) for m in models_used]
        document["starting_phase"] = _starting_entry(start)
        document["population"] = _population_entry(trip, people, seed, evidence, population)
        document["robust"] = _robust_entry(trip, robust_result, plan)
        document["ensemble"] = _ensemble_entry(trip, ensemble)
        document["cautions"] = document.pop("cautions")
        if written["ics"] or written["report"] or written["chart"]:
            document["written"] = written
        if saved is not None:
            document["saved_scenario"] = saved
        _emit_json(document)
        return
    if saved is not None:
        console.print(f"scenario saved to {escape(saved)} (phaseplan check / trip accept it)")
    _print_trip(console, trip, info, model, plan, views)
    _print_starting(console, start)
    if robust_result is not None:
        _print_robust(console, trip, robust_result, plan)
    elif robust:
        console.print("\n[bold]Robust plan:[/bold] none searched — the recommendation keeps home time, "
                      "with no light plan to make robust")
    if population is not None:
        _print_population(console, people, seed, population)
    if ensemble is not None:
        _print_ensemble(console, trip, ensemble)
    _print_cautions(console, models_used)
    _print_written(console, written)


def _person_entry(person) -> dict[str, Any]:
    return {"evidence": person.source, "dlmo": None if person.dlmo_h is None else _clock(person.dlmo_h),
            "dlmo_date": person.dlmo_date.isoformat() if person.dlmo_date else None, "dlmo_sd_min": person.dlmo_sd_min,
            "light_log": person.light_log, "tau_h": person.tau_h}


def _model_list(text: str | None) -> list[str]:
    """Model ids (or files) of --models, checked before any planning starts."""
    if text is None:
        return []
    names = [name.strip() for name in text.split(",") if name.strip()]
    if not names:
        raise InputError("give one or more model ids separated by commas, e.g. forger1999,jewett1999,hannay2019",
                         field="--models")
    for name in names:
        load_model(name)
    return list(dict.fromkeys(names))


def _population_plans(plan: TripPlanResult, robust_result: RobustResult | None) -> dict:
    """The plans a population run reports: the recommendation, the robust plan, no plan."""
    chosen = plan.recommended.outcome
    intended = plan.strategy if plan.strategy in ("advance", "delay") else "none"
    named = {"recommended": (chosen.plan, intended, chosen.aim)}
    if robust_result is not None:
        named["robust"] = (robust_result.plan, robust_result.strategy, "route")
    shorter = shorter_way(plan.alternatives)
    named["no_plan"] = (plan.baseline.plan, shorter[0] if shorter else intended, "route")
    return named


def _days_value(value: float) -> float | None:
    return float(value) if math.isfinite(value) else None


def _stats_entry(trip: Trip, stats: PlanStats) -> dict[str, Any]:
    return {
        "aim": stats.aim,
        "intended_direction": stats.intended,
        "by_day": stats.by_day,
        "probability_by_day_k": _number(stats.probability),
        "probability_by_stay_end": _number(stats.probability_by_stay_end),
        "probability_by_day": [_number(p) for p in stats.probability_by_day],
        "days": {"p10": _days_value(stats.days_p10), "median": _days_value(stats.days_median),
                 "p90": _days_value(stats.days_p90)},
        "wrong_direction_fraction": _number(stats.wrong_direction),
        "cbtmin": [{"date": d.isoformat(), "p10": _number(stats.cbtmin_clock["p10"][k]),
                    "median": _number(stats.cbtmin_clock["median"][k]), "p90": _number(stats.cbtmin_clock["p90"][k])}
                   for k, d in enumerate(stats.cbtmin_dates)],
    }


def _starting_entry(start: StartingPhase) -> dict[str, Any]:
    return {"source": start.source, "description": start.description,
            "dlmo_clock_h": _number(start.dlmo_clock_h[0]), "dlmo_clock": _clock(start.dlmo_clock_h[0]),
            "light_log_findings": [f.as_dict() for f in start.findings]}


def _population_entry(trip: Trip, people: int, seed: int, evidence, population) -> dict[str, Any] | None:
    if population is None:
        return None
    stats, starting = population
    return {
        "n": people,
        "seed": seed,
        "distribution": {**distribution_spec(evidence),
                         "starting_phase": {"source": starting.source, "extra_sd_h": starting.phase_sd_h}},
        "plans": {name: _stats_entry(trip, value) for name, value in stats.items()},
        "conventions": {
            "days": "days after the arrival day until CBTmin stays within 1 h of the person's own target; "
                    "null when that share of people does not re-entrain within the time away",
            "probability_by_day": "fraction re-entrained by each day of the time away (index 0 = arrival day)",
            "wrong_direction_fraction": "fraction whose clock moved the other way than the plan intends",
            "cbtmin": "10th, 50th and 90th percentile of CBTmin per day, hours of the local clock of the place "
                      "the day aims at; may lie outside 0-24 where the fan crosses midnight",
        },
    }


def _robust_entry(trip: Trip, result: RobustResult | None, plan: TripPlanResult) -> dict[str, Any] | None:
    if result is None:
        return None
    return {
        "strategy": result.strategy,
        "improved": bool(result.improved),
        "search_people": result.people,
        "simulated": result.simulated,
        "search": {"robust": _stats_entry(trip, result.search), "average_person_plan": _stats_entry(trip, result.seed_search)},
        "average_person": _outcome_entry(result.outcome, plan.alternatives),
        "days": [_day_entry(trip, view) for view in day_views(trip, result.outcome)],
    }


def _ensemble_entry(trip: Trip, ensemble: EnsembleResult | None) -> dict[str, Any] | None:
    if ensemble is None:
        return None
    members = []
    for member in ensemble.members:
        outcome = member.outcome
        members.append({"model": member.model.id, "citation": member.model.citation,
                        "reentrainment_days": outcome.reentrainment_days if outcome.aim == "route" else None,
                        "direction": outcome.direction, "net_shift_h": _number(outcome.net_shift_h),
                        "starting_dlmo_clock": _clock(member.starting.dlmo_clock_h[0]),
                        "cbtmin": [_local_iso(trip, d.cbtmin) if d.cbtmin is not None else None for d in outcome.days],
                        "phase_error_h": [_number(d.error_h) for d in outcome.days]})
    return {"models": members, "cbtmin_range_h": [_number(v) for v in ensemble.cbtmin_range_h],
            "disagreements": list(ensemble.disagreements)}


def _percent(value: float) -> str:
    return f"{100 * value:.0f} %"


def _days_range(stats: PlanStats) -> str:
    text = [("—" if not math.isfinite(v) else f"{v:.0f}") for v in (stats.days_p10, stats.days_median, stats.days_p90)]
    return " / ".join(text)


def _print_starting(console: Console, start: StartingPhase) -> None:
    rows = [("evidence", escape(start.description)),
            ("DLMO", f"[bold]{_clock(start.dlmo_clock_h[0])}[/bold] home clock on the first planned day "
                     "(habits kept)")]
    rows += [("light log", escape(f.message)) for f in start.findings]
    _print_facts(console, "Starting phase", rows)


def _population_table(rows: list[tuple[str, PlanStats]], caption: str) -> Table:
    table = Table(box=box.SIMPLE_HEAD, caption=caption, caption_justify="left")
    for header in ("plan", "re-entrained by stay end", "by day k", "days p10 / median / p90", "wrong way"):
        table.add_column(header, no_wrap=True)
    for name, stats in rows:
        table.add_row(escape(name), _percent(stats.probability_by_stay_end),
                      f"{_percent(stats.probability)} (k = {stats.by_day})", _days_range(stats),
                      _percent(stats.wrong_direction))
    return table


def _print_population(console: Console, people: int, seed: int, population) -> None:
    stats, starting = population
    labels = {"recommended": "recommended (average person)", "robust": "robust", "no_plan": "no plan"}
    caption = (f"{people:,} simulated people (seed {seed}): intrinsic period and light sensitivity drawn per "
               f"person, starting phase from the evidence (extra SD {starting.phase_sd_h:g} h). Days after the "
               "arrival day until CBTmin stays within 1 h of the person's own target; — : that share does not "
               "re-entrain within the stay. wrong way: the clock moved the other way than intended.")
    table = _population_table([(labels.get(k, k), v) for k, v in stats.items()], caption)
    console.print(Panel(table, title="How likely the plan works", title_align="left"))


def _print_robust(console: Console, trip: Trip, result: RobustResult, plan: TripPlanResult) -> None:
    views = day_views(trip, result.outcome)
    console.print(_day_table(trip, views, f"Robust plan: {escape(strategy_name(result.strategy))}"))
    caption = (f"Scored over the search population of {result.people} simulated people; the robust plan "
               "maximises the share re-entrained by day k and penalises a clock moving the wrong way.")
    table = _population_table([("average-person plan", result.seed_search), ("robust plan", result.search)], caption)
    console.print(Panel(table, title="Robust plan beside the average-person plan", title_align="left"))
    if not result.improved:
        console.print("  the search found no plan that does better over the population than the average-person "
                      "plan: it is kept as the robust plan")
    console.print(f"  robust plan for the average person: {days_text(result.outcome.reentrainment_days)}, "
                  f"{result.outcome.box_minutes:.0f} min of light box; {result.simulated:,} person-schedules "
                  "simulated")


def _print_ensemble(console: Console, trip: Trip, ensemble: EnsembleResult) -> None:
    table = Table(box=box.SIMPLE_HEAD)
    for header in ("model", "starting DLMO", "re-entrains", "body clock"):
        table.add_column(header, no_wrap=header != "body clock")
    for member in ensemble.members:
        outcome = member.outcome
        settles = (f"held within {outcome.max_away_error_h:.1f} h of home time" if outcome.aim == "home"
                   else days_text(outcome.reentrainment_days))
        table.add_row(escape(member.model.id), _clock(member.starting.dlmo_clock_h[0]), settles,
                      escape(movement(outcome, {})))
    console.print(Panel(table, title="The recommended plan under each model", title_align="left"))
    if ensemble.disagreements:
        for note in ensemble.disagreements:
            console.print(f"  [yellow]models disagree:[/yellow] {escape(note)}")
    else:
        console.print("  the models agree within 1 h on every day's CBTmin and on the days to re-entrain")


ScenarioArgument = Annotated[str | None, typer.Argument(metavar="[FILE]", help=(
    "Trip scenario file (.toml, kind = \"trip\"); or leave it out and give --from, --to, --depart, --arrive."))]
from planner.cli_quicktrip import (ArriveOption, DepartOption, FromOption, PrepareOption, SaveOption,  # noqa: E402
                                   SleepOption, StayOption, ToOption)
CheckArgument = Annotated[str, typer.Argument(metavar="FILE", help=(
    "Scenario file (.toml, kind = \"trip\" or \"roster\"), or a roster spreadsheet (.xlsx, .csv)."))]


@app.command("check", help=("Check a trip or roster scenario file: every problem is listed with its file, line and "
                            "field (exit 2 if there is any); otherwise a short summary."))
def check(path: CheckArgument, json_out: JsonOption = False) -> None:
    """Validate a trip or roster scenario (help text on the decorator)."""
    from planner.cli_rostersheet import load_any_roster
    from planner.rostersheet import is_sheet_path

    roster_file = is_sheet_path(path) or declared_kind(path) == "roster"
    problems, loaded = _scenario_problems(path, load_any_roster if roster_file else None)
    if problems:
        if json_out:
            _emit_json({"command": "check", "valid": False, "problems": [_problem_entry(p) for p in problems]})
        for problem in problems:
            sys.stderr.write(f"{PROGRAM}: error: {_one_line(problem.one_line())}\n")
        sys.stderr.flush()
        raise typer.Exit(EXIT_BAD_INPUT)
    if roster_file:
        from planner.cli_roster import check_roster
        check_roster(path, json_out)
        return
    trip, info = loaded
    flights = [{"from": f.origin.name, "to": f.destination.name,
                "depart": f.depart.astimezone(f.origin.zone).isoformat(timespec="minutes"),
                "arrive": f.arrive.astimezone(f.destination.zone).isoformat(timespec="minutes")}
               for f in trip.flights]
    days = trip_days(trip)
    summary = {"name": info.name, "model": info.model, "round_trip": info.round_trip,
               "clock_change_h": _number(clock_change_h(trip)),
               "start": _local_iso(trip, trip.start), "end": _local_iso(trip, trip.end), "days": len(days),
               "preparation_days": trip.preparation_days, "flights": flights, "busy": len(trip.busy),
               "person": _person_entry(info.person)}
    if json_out:
        _emit_json({"command": "check", "valid": True, "problems": [], "summary": summary})
        return
    console = _stderr()
    console.print(f"[green]ok[/green] {escape(path)}: [bold]{escape(info.name)}[/bold]")
    rows = [("flight", f"{escape(f.origin.name)} {_wall(trip, f.depart)} → {escape(f.destination.name)} "
                       f"{f.arrive.astimezone(f.destination.zone).strftime('%Y-%m-%d %H:%M')} "
                       f"{zone_label(f.arrive.astimezone(f.destination.zone)).split()[0]}") for f in trip.flights]
    rows += [("clock change", f"{abs(summary['clock_change_h']):g} h "
                              f"{'east' if summary['clock_change_h'] > 0 else 'west'} at the first arrival"),
             ("planned", f"{_wall(trip, trip.start)} to {_wall(trip, trip.end)} ({len(days)} days, "
                         f"{trip.preparation_days} of preparation)"),
             ("busy periods", str(len(trip.busy))), ("model", escape(info.model)),
             ("starting phase", {"dlmo": "measured DLMO", "light_log": "light log",
                                 "habitual": "habitual sleep and typical light"}[info.person.source])]
    _print_facts(console, None, rows)


@app.command("trip", help=(
    "Plan light and sleep for a trip across time zones: a day-by-day table on the local clock, the advance, "
    "delay and no-plan comparison, the recommendation and the cautions."))
def trip_command(path: ScenarioArgument = None, strategy: StrategyOption = StrategyChoice.auto,
                 model_name: TripModelOption = None,
                 people: PeopleOption = 0, seed: SeedOption = 0, robust: RobustOption = False,
                 models_list: ModelsOption = None, by_day: ByDayOption = None, json_out: JsonOption = False,
                 ics: IcsOption = None, report: ReportOption = None, chart: ChartOption = None,
                 force: ForceOption = False, alarm_minutes: AlarmOption = DEFAULT_ALARM_MINUTES,
                 no_alarms: NoAlarmsOption = False,
                 origin: FromOption = None, destination: ToOption = None, depart: DepartOption = None,
                 arrive: ArriveOption = None, stay: StayOption = None, sleep: SleepOption = None,
                 prepare: PrepareOption = None, save: SaveOption = None) -> None:
    """Plan a trip scenario (help text on the decorator)."""
    files = PlanFiles(ics, report, chart, force, alarm_minutes, no_alarms)
    if path is not None or origin is None and destination is None and depart is None and arrive is None:
        quick_only = {"--stay": stay, "--sleep": sleep, "--prepare": prepare, "--save": save,
                      "--from": origin, "--to": destination, "--depart": depart, "--arrive": arrive}
        extra = [name for name, value in quick_only.items() if value is not None]
        if path is None or extra:
            raise InputError("give a trip scenario FILE, or --from, --to, --depart and --arrive for a quick trip"
                             + (f" (not both: {', '.join(extra)} are quick-trip options)" if path and extra else ""),
                             field="trip")
        _run_trip("trip", path, strategy, model_name, json_out, people, seed, robust, models_list, by_day, files)
        return
    from planner.cli_quicktrip import quick_trip
    loaded, saved = quick_trip(origin, destination, depart, arrive, stay, sleep, prepare, model_name, save, force)
    _run_trip("trip", None, strategy, model_name, json_out, people, seed, robust, models_list, by_day, files,
              loaded=loaded, saved=saved)


@app.command("demo", help=(
    "Plan a built-in demo trip (invented traveller) exactly as 'trip' does, or a demo roster (invented crew) "
    f"as 'roster' does; without NAME the {DEFAULT_DEMO} trip. --list names the demos."))
def demo(
    name: Annotated[str | None, typer.Argument(metavar="[NAME]", help="Demo trip or roster name (see --list).")] = None,
    strategy: StrategyOption = StrategyChoice.auto,
    model_name: TripModelOption = None,
    people: PeopleOption = 0,
    seed: SeedOption = 0,
    robust: RobustOption = False,
    models_list: ModelsOption = None,
    by_day: ByDayOption = None,
    list_demos: Annotated[bool, typer.Option("--list", help="List the demo trips and exit.")] = False,
    json_out: JsonOption = False,
    ics: IcsOption = None,
    report: ReportOption = None,
    chart: ChartOption = None,
    force: ForceOption = False,
    alarm_minutes: AlarmOption = DEFAULT_ALARM_MINUTES,
    no_alarms: NoAlarmsOption = False,
) -> None:
    """Run a demo trip (help text on the decorator)."""
    rosters = builtin_roster_paths()
    if list_demos:
        demos = [(key, "trip", p) for key, p in builtin_scenario_paths().items()]
        demos = sorted(demos + [(key, "roster", p) for key, p in rosters.items()])
        if json_out:
            _emit_json({"command": "demo", "demos": [{"name": key, "kind": kind, "path": str(p)}
                                                     for key, kind, p in demos]})
            return
        console = _stderr()
        for key, kind, p in demos:
            console.print(f"  [bold]{escape(key)}[/bold]  {kind}  {escape(str(p))}")
        return
    if name in rosters:
        if StrategyChoice(strategy) != StrategyChoice.auto:
            raise InputError(f"--strategy {StrategyChoice(strategy).value} is for trips; plan a roster with "
                             f"'phaseplan roster {rosters[name]} --strategy nights|compromise|day'", field="--strategy")
        if by_day is not None:
            raise InputError("--by-day is for trips (days after arrival); a roster has no arrival", field="--by-day")
        from planner.cli_roster import run_roster
        # --people draws that many workers, as 'roster --workers' does; --robust and --models work alike.
        run_roster(str(rosters[name]), "auto", people, seed, model_name, None, json_out,
                   PlanFiles(ics, report, chart, force, alarm_minutes, no_alarms), robust, models_list)
        return
    _run_trip("demo", str(demo_path(name)), strategy, model_name, json_out, people, seed, robust, models_list, by_day,
              PlanFiles(ics, report, chart, force, alarm_minutes, no_alarms))


# --------------------------------------------------------------------------- publish

@app.command("publish", help=(
    "Put the events of a calendar file written by --ics into a CalDAV calendar collection. Publishing an "
    "edited plan again updates its events and removes the ones it dropped; other events in the calendar "
    "are left alone. The password is read from the environment variable PHASEPLAN_CALDAV_PASSWORD or "
    "asked for (hidden); it is never a command-line argument."))
def publish_command(
    path: Annotated[Path, typer.Argument(metavar="FILE.ics", help="Calendar file written by --ics.")],
    url: Annotated[str, typer.Option("--url", metavar="URL", help="The calendar collection, e.g. "
                                     "https://dav.example.org/ana/plans/.")],
    user: Annotated[str | None, typer.Option("--user", metavar="USER",
                                             help="User name for the server (HTTP Basic); none by default.")] = None,
    json_out: JsonOption = False,
) -> None:
    """Publish a calendar file to CalDAV (help text on the decorator)."""
    from planner.caldav import PASSWORD_VARIABLE, collection_url, publish

    collection_url(url)
    try:
        data = path.read_bytes()
    except OSError as exc:
        raise InputError(f"cannot read: {exc.strerror or exc}", source=str(path)) from None
    password = None
    if user is not None:
        password = os.environ.get(PASSWORD_VARIABLE)
        if password is None:
            if not sys.stdin.isatty():
                raise InputError(f"no password: set {PASSWORD_VARIABLE} (no terminal to ask on)", field="--user")
            password = typer.prompt(f"password for {user}", hide_input=True, err=True)
    result = publish(data, url, user=user, password=password, source=str(path))
    counts = {"created": len(result.created), "updated": len(result.updated), "unchanged": len(result.unchanged),
              "deleted": len(result.deleted), "others_left_alone": result.others}
    if json_out:
        _emit_json({"command": "publish", "file": str(path), "url": result.url, **counts,
                    "uids": {"created": list(result.created), "updated": list(result.updated),
                             "unchanged": list(result.unchanged), "deleted": list(result.deleted)},
                    "http_status": result.statuses})
        return
    console = _stderr()
    console.print(f"published {escape(str(path))} to {escape(result.url)}")
    _print_facts(console, None, [(label.replace("_", " "), str(count)) for label, count in counts.items()])


# --------------------------------------------------------------------------- rosters

from planner import cli_roster  # noqa: E402,F401  (registers the roster command on app)
from planner import cli_places  # noqa: E402,F401  (registers the places command on app)


# --------------------------------------------------------------------------- entry point

def main(argv: Sequence[str] | None = None) -> NoReturn:
    """Console-script entry point: run the app and exit with its status (see the module docstring)."""
    try:
        app(args=argv, prog_name=PROGRAM)
    except KeyboardInterrupt:  # raised before typer took over (e.g. while importing)
        sys.exit(_fail("error", "interrupted", EXIT_INTERRUPTED))
    sys.exit(EXIT_OK)  # pragma: no cover - the group's main always exits


if __name__ == "__main__":  # pragma: no cover
    main()
