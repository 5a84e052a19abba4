"""The ``phaseplan`` command line: parse the arguments, call :mod:`planner.service`, render the result.

One module per command group (:mod:`~planner.cli.models`, :mod:`~planner.cli.prc`, :mod:`~planner.cli.check`,
:mod:`~planner.cli.trip` with :mod:`~planner.cli.quicktrip`, :mod:`~planner.cli.roster`, :mod:`~planner.cli.places`,
:mod:`~planner.cli.publish`, :mod:`~planner.cli.daylight`, :mod:`~planner.cli.serve`), each registering its commands
on :data:`planner.cli.app.app`. No science and no file format lives here. House rules:

- ``--json`` writes exactly one JSON document (with ``"schema_version"``) to stdout; tables, progress,
  notes and errors go to stderr, so stdout stays clean.
- Exit codes: 0 ok, 1 a computation failed, 2 bad input (and usage errors), 130 interrupted; an error is
  one line on stderr, never a traceback (:mod:`planner.cli.app`).
- Text from files (names, sources, paths) is escaped before it reaches rich markup.
"""

from planner.cli import (  # noqa: F401  (each registers its commands)
    check, daylight, models, places, prc, publish, roster, serve, trip)
from planner.cli.app import PROGRAM, app, main

__all__ = ["PROGRAM", "app", "main"]
