"""Reading TOML input files and turning validation failures into one-line errors.

Shared by every input file the planner reads (model parameter sets, scenarios):
the file is parsed with :mod:`tomllib`, validated with a pydantic model, and
each problem is reported with the file, the dotted field, the line where the
field stands (found by a search of the file's text, since :mod:`tomllib` keeps
no positions) and what is allowed.
"""

from __future__ import annotations

import re
import tomllib
from dataclasses import dataclass
from pathlib import Path
from typing import Any, TypeVar

import pydantic

from planner.errors import InputError

ModelT = TypeVar("ModelT", bound=pydantic.BaseModel)


@dataclass(frozen=True)
class Problem:
    """One problem found in an input file."""

    source: str
    field: str
    message: str
    line: int | None = None

    def one_line(self) -> str:
        where = self.source if self.line is None else f"{self.source}:{self.line}"
        return f"{where}: {self.field}: {self.message}" if self.field else f"{where}: {self.message}"


class InputFileError(InputError):
    """An input file with one or more problems; ``problems`` lists them all."""

    def __init__(self, problems: list[Problem]):
        self.problems = problems
        first = problems[0]
        super().__init__(first.message, source=first.source, field=first.field)

    def one_line(self) -> str:  # noqa: D102 - documented on the base class
        if not getattr(self, "problems", None):
            return super().one_line()
        more = len(self.problems) - 1
        tail = f" (and {more} more problem{'s' if more > 1 else ''})" if more else ""
        return self.problems[0].one_line() + tail


def read_toml(path: str | Path) -> tuple[dict[str, Any], str]:
    """Parse a TOML file; return its data and its text.

    Raises
    ------
    InputFileError
        When the file cannot be read or is not valid TOML.
    """
    path = Path(path)
    try:
        text = path.read_text(encoding="utf-8")
    except FileNotFoundError:
        raise InputFileError([Problem(str(path), "", "file not found")]) from None
    except (OSError, UnicodeDecodeError) as exc:
        raise InputFileError([Problem(str(path), "", f"cannot read the file ({exc})")]) from None
    try:
        data = tomllib.loads(text)
    except tomllib.TOMLDecodeError as exc:
        line = _decode_error_line(str(exc))
        raise InputFileError([Problem(str(path), "", f"not valid TOML: {exc}", line)]) from None
    return data, text


def _decode_error_line(message: str) -> int | None:
    match = re.search(r"line (\d+)", message)
    return int(match.group(1)) if match else None


def locate_line(text: str, field: tuple[str | int, ...]) -> int | None:
    """Best-effort line number of a dotted field in TOML text.

    Looks for the deepest string key of ``field`` written as ``key =`` after
    the table header of its parents, falling back to the header itself.
    """
    keys = [str(k) for k in field if isinstance(k, str)]
    if not keys:
        return None
    lines = text.splitlines()
    start = 0
    # Walk table headers such as [parameters] or [parameters.tau_x] first.
    for depth in range(len(keys), 0, -1):
        header = re.compile(r"^\s*\[\[?\s*" + r"\s*\.\s*".join(map(re.escape, keys[:depth])) + r"\s*\]\]?\s*(#.*)?$")
        for number, line in enumerate(lines):
            if header.match(line):
                if depth == len(keys):
                    return number + 1
                start = number
                remaining = keys[depth:]
                return _find_key(lines, start, remaining) or number + 1
    return _find_key(lines, 0, keys)


def _find_key(lines: list[str], start: int, keys: list[str]) -> int | None:
    """Find each key in turn, each search starting where the previous key was found."""
    found = None
    for key in keys:
        pattern = re.compile(r"(^|[\s{,])" + re.escape(key) + r"\s*=")
        for number in range(start, len(lines)):
            if pattern.search(lines[number]):
                found = start = number
                break
        else:
            break
    return None if found is None else found + 1


def _describe(error: dict[str, Any]) -> str:
    kind = error.get("type", "")
    if kind == "missing":
        return "required field is missing"
    if kind == "extra_forbidden":
        return "unknown field (not allowed here; check the spelling)"
    return str(error.get("msg", "invalid value"))


def validate(model: type[ModelT], data: dict[str, Any], text: str, source: str) -> ModelT:
    """Validate parsed TOML ``data`` against a pydantic ``model``.

    Raises
    ------
    InputFileError
        Listing every problem pydantic found, each with its line.
    """
    try:
        return model.model_validate(data)
    except pydantic.ValidationError as exc:
        problems = []
        for error in exc.errors():
            location = tuple(error.get("loc", ()))
            field = ".".join(str(part) for part in location)
            problems.append(Problem(source, field, _describe(error), locate_line(text, location)))
        raise InputFileError(problems) from None


def load(model: type[ModelT], path: str | Path) -> tuple[ModelT, str]:
    """Read and validate a TOML file; return the validated object and the file's text."""
    data, text = read_toml(path)
    return validate(model, data, text, str(path)), text
