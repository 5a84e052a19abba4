"""``phaseplan serve``: the planning desk in the browser (:mod:`planner.web`)."""

from __future__ import annotations

import os
import sys
from pathlib import Path
from typing import Annotated

import typer

from planner.cli.app import app

#: Where ``serve`` listens unless told otherwise: this machine only.
DEFAULT_HOST = "127.0.0.1"
DEFAULT_PORT = 8150


def default_data_folder() -> Path:
    """The user's data folder for phaseplan (platformdirs), where saved plans live by default."""
    import platformdirs

    return Path(platformdirs.user_data_dir("phaseplan", appauthor=False))


@app.command("serve", help=(
    "Run the planning desk in the browser: trip and roster pages, saved plans, downloads and CalDAV publish, "
    "and POST /api/plan for scripts. Listens on 127.0.0.1:8150 (this machine only) unless told otherwise; "
    "another --host needs PHASEPLAN_SERVE_TOKEN, which every request must then carry. Stop it with Ctrl-C."))
def serve(
    host: Annotated[str, typer.Option("--host", help="Address to listen on.")] = DEFAULT_HOST,
    port: Annotated[int, typer.Option("--port", min=1, max=65535, help="Port to listen on.")] = DEFAULT_PORT,
    data: Annotated[Path | None, typer.Option(
        "--data", metavar="DIR", help="Folder of the saved plans (default: the user's data folder for phaseplan).")] = None,
) -> None:
    """Serve the web app until interrupted (help text on the decorator)."""
    from planner.web.app import Settings, serve as run
    from planner.web.security import TOKEN_VARIABLE, required_token

    token = required_token(host, os.environ.get(TOKEN_VARIABLE))
    folder = data or default_data_folder()
    sys.stderr.write(f"phaseplan: serving http://{host}:{port}/ (saved plans in {folder}); Ctrl-C stops\n")
    sys.stderr.flush()
    run(Settings(folder, token), host, port)
