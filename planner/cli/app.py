"""The ``phaseplan`` application object and its error handling: one place maps errors to exit codes.

Exit codes: 0 ok, 1 a computation failed (:class:`planner.errors.ComputationError`), 2 bad input
(:class:`planner.errors.InputError` and its subclasses, and usage errors), 130 interrupted. An error is
printed as one line on stderr, never as a traceback.
"""

from __future__ import annotations

import sys
from collections.abc import Sequence
from typing import Annotated, Any, NoReturn

import typer
from typer.core import TyperGroup

from planner._version import __version__
from planner.errors import ComputationError, InputError, PhaseplanError

try:  # recent typer carries its own copy of click; its errors derive from TyperException
    from typer import TyperException as _UsageProblem
except ImportError:  # pragma: no cover - older typer builds on click itself
    from click import ClickException as _UsageProblem

PROGRAM = "phaseplan"

#: Exit statuses of the command line.
EXIT_OK = 0
EXIT_COMPUTATION_FAILED = 1
EXIT_BAD_INPUT = 2
EXIT_INTERRUPTED = 130


# --------------------------------------------------------------------------- errors and exit codes

def one_line(text: str) -> str:
    """``text`` with every run of white space (newlines included) folded to one space."""
    return " ".join(str(text).split())


def _fail(prefix: str, text: str, code: int) -> int:
    sys.stderr.write(f"{PROGRAM}: {prefix}: {one_line(text)}\n")
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
