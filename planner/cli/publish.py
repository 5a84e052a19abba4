"""``phaseplan publish``: put a calendar file's events into a CalDAV collection."""

from __future__ import annotations

import os
import sys
from pathlib import Path
from typing import Annotated

import typer
from rich.markup import escape

from planner.cli.app import app
from planner.cli.common import JsonOption, emit_json, print_facts, stderr_console
from planner.errors import InputError


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
    from planner.plans.caldav import PASSWORD_VARIABLE, collection_url, publish

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
        emit_json({"command": "publish", "file": str(path), "url": result.url, **counts,
                    "uids": {"created": list(result.created), "updated": list(result.updated),
                             "unchanged": list(result.unchanged), "deleted": list(result.deleted)},
                    "http_status": result.statuses})
        return
    console = stderr_console()
    console.print(f"published {escape(str(path))} to {escape(result.url)}")
    print_facts(console, None, [(label.replace("_", " "), str(count)) for label, count in counts.items()])
