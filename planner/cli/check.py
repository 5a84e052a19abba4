"""``phaseplan check``: every problem of a trip, roster or model file, or a short summary of it."""

from __future__ import annotations

import sys
from typing import Annotated, Any

import typer
from rich.markup import escape

from planner import service
from planner.cli.app import EXIT_BAD_INPUT, PROGRAM, app, one_line
from planner.cli.common import JsonOption, emit_json, print_facts, stderr_console

CheckArgument = Annotated[str, typer.Argument(metavar="FILE", help=(
    "Trip or roster scenario file (.toml, kind = \"trip\" or \"roster\"), or a model parameter file."))]


@app.command("check", help=("Check a trip or roster scenario file or a model parameter file: every problem is listed "
                            "with its file, line and field (exit 2 if there is any); otherwise a short summary."))
def check(path: CheckArgument, json_out: JsonOption = False) -> None:
    """Validate an input file (help text on the decorator)."""
    report = service.check_file(path)
    if json_out:
        emit_json(report.to_json())
    if not report.valid:
        for problem in report.problems:
            sys.stderr.write(f"{PROGRAM}: error: {one_line(problem.one_line())}\n")
        sys.stderr.flush()
        raise typer.Exit(EXIT_BAD_INPUT)
    if not json_out:
        console = stderr_console()
        console.print(f"[green]ok[/green] {escape(path)}: [bold]{escape(report.summary['name'])}[/bold]")
        print_facts(console, None, _SUMMARY_ROWS[report.kind](report.summary))


def _trip_rows(summary: dict[str, Any]) -> list[tuple[str, str]]:
    rows = [("flight", f"{escape(f['from'])} {_stamp(f['depart'])} → {escape(f['to'])} {_stamp(f['arrive'])}")
            for f in summary["flights"]]
    change = summary["clock_change_h"]
    rows += [("clock change", f"{abs(change):g} h {'east' if change > 0 else 'west'} at the first arrival"
                              if change else "none"),
             ("planned", f"{_stamp(summary['start'])} to {_stamp(summary['end'])} ({summary['days']} days, "
                         f"{summary['preparation_days']} of preparation)"),
             ("busy periods", str(summary["busy"])), ("model", escape(summary["model"])),
             ("starting phase", {"dlmo": "measured DLMO", "light_log": "light log",
                                 "habitual": "habitual sleep and typical light"}[summary["person"]["evidence"]])]
    return rows


def _roster_rows(summary: dict[str, Any]) -> list[tuple[str, str]]:
    rows = [("site", f"{escape(summary['site'])} ({escape(summary['time_zone'])}), from {summary['start_date']}")]
    rows += [("shift", f"{escape(s['code'])} ({escape(s['label'])}) {s['start']}–{s['end']}, {s['hours']:g} h, "
                       f"{s['kind']}") for s in summary["shifts"]]
    rows += [("draft", f"{escape(d['name'])}: {escape(' '.join(d['pattern']))} ×{d['cycles']} ({d['days']} days)")
             for d in summary["drafts"]]
    rows.append(("model", escape(summary["model"])))
    return rows


def _model_rows(summary: dict[str, Any]) -> list[tuple[str, str]]:
    return [("equations", escape(summary["equations"])), ("parameters", str(summary["parameters"])),
            ("step", f"{summary['step_minutes']:g} min"),
            ("entrained", f"CBTmin {summary['entrained_cbtmin_clock']}, DLMO {summary['entrained_dlmo_clock']} "
                          "on the default day" if summary["entrains"]
                          else f"not to the default day: {escape(summary['entrainment_message'])}"),
            ("citation", escape(summary["citation"]))]


def _stamp(iso: str) -> str:
    """An ISO 8601 local time as "YYYY-MM-DD HH:MM ±HH:MM"."""
    return f"{iso[:10]} {iso[11:16]} {iso[16:]}"


_SUMMARY_ROWS = {"trip": _trip_rows, "roster": _roster_rows, "model": _model_rows}
