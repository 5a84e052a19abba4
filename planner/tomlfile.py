"""Reading TOML input files and turning validation failures into one-line errors.

Shared by every input file the planner reads (model parameter sets, scenarios):
the file is parsed with :mod:`tomllib`, validated with a pydantic model, and
each problem is reported with the file, the dotted field, the line where the
field stands (found by a search of the file's text, since :mod:`tomllib` keeps
no positions) and what is allowed.
"""

from __future__ import annotations

import json
import math
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
    return parse_toml(text, str(path)), text


def parse_toml(text: str, source: str) -> dict[str, Any]:
    """Parse TOML ``text`` read from ``source``.

    Raises
    ------
    InputFileError
        When the text is not valid TOML (with the line).
    """
    try:
        return tomllib.loads(text)
    except tomllib.TOMLDecodeError as exc:
        line = _decode_error_line(str(exc))
        raise InputFileError([Problem(source, "", f"not valid TOML: {exc}", line)]) from None


def declared_kind(path: str | Path, default: str = "trip") -> str | None:
    """The ``kind`` a scenario file declares (``default`` when it names none), or None when it is no table.

    Raises
    ------
    InputFileError
        When the file cannot be read or is not TOML.
    """
    data, _ = read_toml(path)
    return data.get("kind", default) if isinstance(data, dict) else None


def require_kind(data: Any, text: str, source: str, kind: str, default: str | None = None) -> None:
    """Refuse a file that declares another ``kind`` than ``kind`` (``default``: the kind of a file naming none).

    Raises
    ------
    InputFileError
        Naming the kind found and the one wanted, with the line.
    """
    if not isinstance(data, dict):
        return
    found = data.get("kind", default)
    if found != kind:
        what = f'this is a "{found}" file' if found else "the file names no kind"
        raise InputFileError([Problem(source, "kind", f'{what}; a {kind} scenario has kind = "{kind}"',
                                      locate_line(text, ("kind",)))])


def _decode_error_line(message: str) -> int | None:
    match = re.search(r"line (\d+)", message)
    return int(match.group(1)) if match else None


_HEADER = re.compile(r"^\s*(\[\[?)\s*([^\[\]]+?)\s*\]\]?\s*(#.*)?$")


def _table_headers(lines: list[str]) -> list[tuple[int, tuple[str | int, ...]]]:
    """Every table header with its line index and its path; an array-of-tables entry
    ``[[flights]]`` gets its position, so the second reads ``("flights", 1)``."""
    headers: list[tuple[int, tuple[str | int, ...]]] = []
    counts: dict[tuple[str | int, ...], int] = {}
    for number, line in enumerate(lines):
        match = _HEADER.match(line)
        if not match:
            continue
        names = [part.strip().strip('"').strip("'") for part in match.group(2).split(".")]
        path: tuple[str | int, ...] = ()
        for name in names[:-1]:   # a parent that is an array of tables means its latest entry
            path += (name,)
            if path in counts:
                path += (counts[path] - 1,)
        path += (names[-1],)
        if match.group(1) == "[[":
            index = counts.get(path, 0)
            counts[path] = index + 1
            path += (index,)
        headers.append((number, path))
    return headers


def locate_line(text: str, field: tuple[str | int, ...]) -> int | None:
    """Best-effort line number of a dotted field in TOML text.

    Finds the table header that is the longest prefix of ``field`` (``[parameters]``,
    ``[parameters.tau_x]``, or the n-th ``[[flights]]`` for ``("flights", n, ...)``), then
    the remaining keys written as ``key =`` inside that table, falling back to the header
    itself.  Without a matching header the keys are searched from the top of the file.
    """
    field = tuple(field)
    if not any(isinstance(k, str) for k in field):
        return None
    lines = text.splitlines()
    headers = _table_headers(lines)
    best: tuple[int, int] | None = None   # (prefix length, header position in ``headers``)
    for position, (_, path) in enumerate(headers):
        if len(path) <= len(field) and tuple(str(k) for k in field[:len(path)]) == tuple(str(k) for k in path):
            if best is None or len(path) > best[0]:
                best = (len(path), position)
    if best is None:
        first_header = headers[0][0] if headers else len(lines)
        found = _find_key(lines, 0, [str(k) for k in field if isinstance(k, str)], first_header)
        return found or _find_key(lines, 0, [str(k) for k in field if isinstance(k, str)], len(lines))
    depth, position = best
    number = headers[position][0]
    stop = headers[position + 1][0] if position + 1 < len(headers) else len(lines)
    remaining = [str(k) for k in field[depth:] if isinstance(k, str)]
    if not remaining:
        return number + 1
    return _find_key(lines, number, remaining, stop) or number + 1


def _find_key(lines: list[str], start: int, keys: list[str], stop: int | None = None) -> int | None:
    """Find each key in turn, each search starting where the previous key was found."""
    stop = len(lines) if stop is None else stop
    found = None
    for key in keys:
        pattern = re.compile(r"(^|[\s{,])" + re.escape(key) + r"\s*=")
        for number in range(start, stop):
            if pattern.search(lines[number]):
                found = start = number
                break
        else:
            break
    return None if found is None else found + 1


def describe_error(error: dict[str, Any]) -> str:
    """A pydantic error (one item of ``ValidationError.errors()``) as what is wrong and what is allowed."""
    kind = error.get("type", "")
    if kind == "missing":
        return "required field is missing"
    if kind == "extra_forbidden":
        return "unknown field (not allowed here; check the spelling)"
    message = str(error.get("msg", "invalid value"))
    # A validator's own ValueError text is the message; pydantic prefixes it with "Value error, ".
    message = message.removeprefix("Value error, ")
    if kind in _BOUND_KINDS and "input" in error:
        message += f", got {error['input']!r}"
    return message


#: pydantic error kinds of a value outside its bounds, whose message gains the value given.
_BOUND_KINDS = frozenset({"greater_than", "greater_than_equal", "less_than", "less_than_equal",
                          "literal_error", "finite_number"})


def validate(model: type[ModelT], data: dict[str, Any], text: str, source: str) -> ModelT:
    """Validate parsed TOML ``data`` against a pydantic ``model``.

    Raises
    ------
    InputFileError
        Listing every problem pydantic found, each with its line.
    """
    problems = _control_character_problems(data, text, source)
    try:
        validated = model.model_validate(data)
    except pydantic.ValidationError as exc:
        for error in exc.errors():
            location = tuple(error.get("loc", ()))
            field = ".".join(str(part) for part in location)
            problems.append(Problem(source, field, describe_error(error), locate_line(text, location)))
        raise InputFileError(problems) from None
    if problems:
        raise InputFileError(problems)
    return validated


#: Keys whose text may run over several lines (a tab or a line feed is allowed there, nowhere else).
MULTILINE_KEYS = frozenset({"description"})
#: Control characters refused in any text: they would end up in calendar lines, reports and terminals.
_CONTROL = {chr(c) for c in (*range(0x00, 0x20), *range(0x7F, 0xA0))} | {"\u2028", "\u2029"}


def _control_character_problems(data: Any, text: str, source: str,
                                 location: tuple[str | int, ...] = ()) -> list[Problem]:
    """One problem per text value holding a control character (a tab or line feed is fine in a description)."""
    if isinstance(data, dict):
        return [p for key, value in data.items()
                for p in _control_character_problems(value, text, source, location + (key,))]
    if isinstance(data, list):
        return [p for k, value in enumerate(data)
                for p in _control_character_problems(value, text, source, location + (k,))]
    if not isinstance(data, str):
        return []
    allowed = {"\t", "\n"} if location and location[-1] in MULTILINE_KEYS else set()
    found = sorted({c for c in data if c in _CONTROL} - allowed)
    if not found:
        return []
    names = ", ".join(f"U+{ord(c):04X}" for c in found)
    where = "tab and line feed are allowed only in a description" if not allowed else "tab and line feed are allowed"
    return [Problem(source, ".".join(str(part) for part in location),
                    f"contains a control character ({names}); use printable text ({where})",
                    locate_line(text, location))]


def load(model: type[ModelT], path: str | Path) -> tuple[ModelT, str]:
    """Read and validate a TOML file; return the validated object and the file's text."""
    data, text = read_toml(path)
    return validate(model, data, text, str(path)), text


def load_scenario(model: type[ModelT], path: str | Path, kind: str, default: str | None = None) -> tuple[ModelT, str]:
    """Read a scenario file, refuse one of another ``kind`` (:func:`require_kind`), validate it."""
    _, text = read_toml(path)
    return scenario_from_text(model, text, str(path), kind, default), text


def scenario_from_text(model: type[ModelT], text: str, source: str, kind: str, default: str | None = None) -> ModelT:
    """:func:`load_scenario` for TOML text that did not come from a file (``source`` names its origin)."""
    data = parse_toml(text, source)
    require_kind(data, text, source, kind, default)
    return validate(model, data, text, source)


# --------------------------------------------------------------------------- writing

def _toml_value(value: Any) -> str:
    if isinstance(value, bool):
        return "true" if value else "false"
    if isinstance(value, (int, float)):
        if isinstance(value, float) and not math.isfinite(value):
            raise ValueError(f"TOML scenario values must be finite, got {value!r}")
        return repr(value)
    if isinstance(value, str):
        return json.dumps(value, ensure_ascii=False)   # a JSON string is a TOML basic string
    if isinstance(value, dict):
        return "{ " + ", ".join(f"{_toml_key(k)} = {_toml_value(v)}" for k, v in value.items()) + " }"
    if isinstance(value, (list, tuple)):
        return "[" + ", ".join(_toml_value(v) for v in value) + "]"
    raise TypeError(f"cannot write {type(value).__name__} to a scenario file")


def _toml_key(key: str) -> str:
    return key if re.fullmatch(r"[A-Za-z0-9_-]+", key) else json.dumps(key, ensure_ascii=False)


def dumps_scenario(data: dict[str, Any], comments: dict[str, str] | None = None, header: str = "") -> str:
    """A scenario as TOML text: scalars first, then ``[tables]`` (one level; deeper dicts written inline), then
    ``[[arrays of tables]]``.  ``comments`` puts ``# text`` lines above a table (by its key); ``header`` above all.

    Values are str, int, float, bool, and lists or dicts of them.
    """
    comments = comments or {}
    lines = [f"# {line}" if line else "#" for line in header.splitlines()]
    tables = []
    for key, value in data.items():
        if isinstance(value, dict):
            tables.append((key, [value], False))
        elif isinstance(value, list) and value and all(isinstance(v, dict) for v in value):
            tables.append((key, value, True))
        else:
            lines.append(f"{_toml_key(key)} = {_toml_value(value)}")
    for key, entries, array in tables:
        for entry in entries:
            lines.append("")
            lines += [f"# {line}" for line in comments.get(key, "").splitlines()]
            lines.append(f"[[{_toml_key(key)}]]" if array else f"[{_toml_key(key)}]")
            lines += [f"{_toml_key(k)} = {_toml_value(v)}" for k, v in entry.items()]
    return "\n".join(lines) + "\n"
