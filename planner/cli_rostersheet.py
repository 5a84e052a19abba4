"""Roster spreadsheets on the command line: which loader a roster command uses, and ``roster --template``.

Parse and call :mod:`planner.rostersheet`; planning and output stay in :mod:`planner.cli_roster`.
"""

from __future__ import annotations

import json
import sys
from datetime import date
from pathlib import Path
from typing import Annotated

import typer

from planner.errors import InputError
from planner.outputs import write_atomic
from planner.roster import Roster
from planner.rosterfile import RosterInfo, load_roster
from planner.rostersheet import is_sheet_path, next_monday, template_workbook

TemplateOption = Annotated[Path | None, typer.Option(
    "--template", metavar="FILE.xlsx",
    help="Write an empty roster workbook to fill (settings, shift types, a grid of dates) and stop.")]
TemplateStartOption = Annotated[str | None, typer.Option(
    "--start", metavar="YYYY-MM-DD", help="First date of the template's grid (default: next Monday).")]


def roster_paths(paths: list[str] | None) -> str | list[str]:
    """The roster command's files: one TOML file, or one or more spreadsheets."""
    if not paths:
        raise InputError("give a roster file (.toml) or spreadsheets (.xlsx, .csv), or --template FILE.xlsx",
                         field="roster")
    if any(not is_sheet_path(p) for p in paths):
        if len(paths) > 1:
            raise InputError("several files are compared only as spreadsheets (.xlsx, .csv), each sheet a draft; "
                             "a roster .toml file holds its drafts itself", field="roster")
        return paths[0]
    return list(paths)


def load_any_roster(path: str | list[str]) -> tuple[Roster, RosterInfo]:
    """A roster from a TOML file or from spreadsheets (by the files' suffixes)."""
    from planner.rostersheet import load_roster_sheets

    if isinstance(path, list) or is_sheet_path(path):
        return load_roster_sheets(path)
    return load_roster(path)


def write_template(target: Path, start: str | None, force: bool, json_out: bool, paths: list[str] | None) -> None:
    """``roster --template FILE.xlsx``: write the empty workbook (never over a file without ``--force``)."""
    if paths:
        raise InputError("--template writes an empty workbook; give no roster files with it", field="--template")
    if target.suffix.lower() != ".xlsx":
        raise InputError("the template is a workbook; give a file name ending in .xlsx", field="--template")
    try:
        first = next_monday() if start is None else date.fromisoformat(start)
    except ValueError:
        raise InputError(f'"{start}" is not a date; allowed: YYYY-MM-DD', field="--start") from None
    written = write_atomic(target, template_workbook(first), force=force)
    if json_out:
        from planner.cli import SCHEMA_VERSION

        sys.stdout.write(json.dumps({"schema_version": SCHEMA_VERSION, "command": "roster", "template": str(written),
                                     "start": first.isoformat()}) + "\n")
        return
    sys.stderr.write(f"wrote {written}: fill in the settings sheet (column B), the shift table and the draft sheet "
                     f"(one row per crew, one column per date from {first.isoformat()}), then run "
                     f"'phaseplan roster {written}'\n")
