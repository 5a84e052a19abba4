"""Exception hierarchy of phaseplan.

Every error the library raises on purpose derives from :class:`PhaseplanError`,
so a caller (the CLI, a notebook) can catch one class.  Input problems carry
the file, the field and what is allowed, so that the CLI can print them as one
line and exit with status 2.
"""

from __future__ import annotations


class PhaseplanError(Exception):
    """Base class of all phaseplan errors."""


class InputError(PhaseplanError, ValueError):
    """Input that breaks a documented rule (bad file, bad field, bad value).

    Parameters
    ----------
    message : str
        What is wrong and what is allowed.
    source : str, optional
        The file (or other origin) the bad input came from.
    field : str, optional
        Dotted name of the offending field, e.g. ``parameters.tau_x.value``.
    """

    def __init__(self, message: str, *, source: str | None = None, field: str | None = None):
        self.message = message
        self.source = source
        self.field = field
        super().__init__(self.one_line())

    def one_line(self) -> str:
        """The error as a single line: ``source: field: message``."""
        parts = [p for p in (self.source, self.field) if p]
        return ": ".join(parts + [self.message])


class ModelFileError(InputError):
    """A parameter-set (model) file that cannot be used."""


class UnknownModelError(InputError):
    """A model id that is neither a built-in parameter set nor a readable file."""


class ScheduleError(InputError):
    """A light schedule that breaks its rules (negative lux, reversed interval, ...)."""


class ComputationError(PhaseplanError):
    """A computation that could not produce a trustworthy result."""
