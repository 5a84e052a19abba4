"""Rosters from spreadsheets: the layout a planner already keeps, read into the same roster as a TOML file.

:func:`load_roster_sheets` reads one or more ``.xlsx`` workbooks (openpyxl) or ``.csv`` files, turns
them into the data of a roster file and sends it through the roster file's own validation
(:class:`planner.rosters.scenario.RosterFile` and :func:`planner.rosters.scenario.build_roster`), so a sheet and
a TOML file saying the same thing give the same :class:`~planner.rosters.model.Roster`.  Every problem names
its cell as ``sheet!cell`` (``'fast 2-2-4'!E3``; a CSV file's sheet is its file name without ``.csv``).
:func:`template_workbook` makes an empty workbook to fill.

Layout
------
A sheet holds blocks of rows, each starting in column A, separated by empty rows, in any order:

- **settings**: a label in A and its value in B (C and beyond are free for notes), e.g.
  ``time zone | Europe/Amsterdam``; the labels are :data:`SETTINGS` (each is a field of the roster
  file; ``place`` looks the site up by name instead of ``time zone``, ``latitude``, ``longitude``);
- **shift types**: a header row ``shift | start | end | label | sleep bed | sleep wake`` (columns
  found by name; ``label`` and the sleep columns optional), then one row per shift code; a shift whose
  end is not after its start ends the next day;
- **the roster grid**: a header row ``crew`` followed by one date per column (date cells or
  ``YYYY-MM-DD``, consecutive days), then one row per crew or worker: its name, then a shift code or
  ``off`` (an empty cell is a day off) under each date.

A row whose first cell starts with ``#`` is a note.  Settings and shift types may stand on any
sheet (the template keeps them on a sheet called ``settings``); each sheet with a grid is one
**draft** (named after the sheet; a CSV file is one sheet), so several sheets or files are compared
as drafts.  Given several files, a file without settings uses those of the others, and settings
given twice must agree.

A grid's first row is the draft's rotation: its shortest repeating pattern (e.g. 8 days × 3 cycles).
Every other row is a crew working the same rotation from another day of it; its offset is found
from its cells (all sheets list the same crews; a crew staggered otherwise on a later sheet gets that
draft's offset, as a roster file's ``[[crews]]`` ``draft_offsets``).  All grids start on the same date.
"""

from __future__ import annotations

import csv
import io
import re
from collections.abc import Iterable, Sequence
from dataclasses import dataclass, field
from datetime import date, datetime, time, timedelta
from pathlib import Path
from typing import Any

import pydantic

from planner.errors import InputError
from planner.world.localtime import parse_clock
from planner.rosters.model import Roster
from planner.rosters.scenario import OFF, RosterFile, RosterInfo, build_roster
from planner.scenariofile import DEFAULT_MODEL
from planner.tomlfile import InputFileError, Problem, describe_error

#: File types read.
SHEET_SUFFIXES = (".xlsx", ".csv")

#: The settings: label in column A -> (field of the roster file, what it is).
SETTINGS: dict[str, tuple[tuple[str, ...], str]] = {
    "name": (("name",), "the roster's name (default: the first file's name)"),
    "description": (("description",), "free text"),
    "model": (("model",), "a built-in model id (forger1999, jewett1999, hannay2019) or a model file"),
    "site": (("site", "name"), "the work site's name"),
    "place": (("site", "place"), 'the site looked up by name, e.g. "Rotterdam, NL" (instead of time zone, '
                                 "latitude and longitude)"),
    "time zone": (("site", "time_zone"), "IANA time zone of the site, e.g. Europe/Amsterdam"),
    "latitude": (("site", "latitude"), "degrees north, -90..90"),
    "longitude": (("site", "longitude"), "degrees east, -180..180"),
    "crew size": (("workers", "count"), "workers the roster is for (informative)"),
    "bed": (("workers", "sleep", "bed"), "habitual bedtime on free days, HH:MM"),
    "wake": (("workers", "sleep", "wake"), "habitual wake time on free days, HH:MM"),
    "sleep hours": (("workers", "sleep_hours"), "main sleep aimed for on work days [h], 4..10 (default 7.5)"),
    "commute minutes": (("workers", "commute_minutes"), "each way [min], 0..180 (default 30)"),
    "indoor lux": (("light", "indoor_lux"), "at home while awake [lux] (default 150)"),
    "work lux": (("light", "work_lux"), "at work [lux] (default 300)"),
    "daylight lux": (("light", "daylight_lux"), "a cap on outdoor daylight [lux] (default: as the sky gives it)"),
    "sky": (("light", "sky"), "the daylight model's sky: clear, partly or overcast (default overcast)"),
    "daylight exposure": (("light", "daylight_exposure"), "outdoors in the open, in shade or behind a window: "
                                                          "open, shade or window (default open)"),
    "night outdoor lux": (("light", "night_outdoor_lux"), "outdoors after dark [lux] (default 10)"),
    "light box": (("countermeasures", "light_box"), "a light box at work: yes or no (default yes)"),
    "box lux": (("countermeasures", "box_lux"), "[lux] at the eye (default 10000)"),
    "box max minutes": (("countermeasures", "box_max_minutes"), "per shift [min] (default 120)"),
    "dark glasses": (("countermeasures", "dark_glasses"), "for the way home after nights: yes or no (default yes)"),
    "glasses transmission": (("countermeasures", "glasses_transmission"), "0..1 (default 0.1)"),
    "blackout bedroom": (("countermeasures", "blackout_bedroom"), "yes or no (default yes)"),
    "daylight": (("countermeasures", "daylight"), "may the plan prescribe time outdoors: yes or no (default yes)"),
    "daylight max minutes": (("countermeasures", "daylight_max_minutes"), "per day [min] (default 60)"),
}
#: Columns of the shift-type table (the first three required).
SHIFT_COLUMNS = ("shift", "start", "end", "label", "sleep bed", "sleep wake")
#: First header cell of a roster grid.
GRID_HEADERS = ("crew", "worker", "group")
#: Cell texts read as yes/no.
_BOOLEAN = {"yes": True, "y": True, "true": True, "1": True, "no": False, "n": False, "false": False, "0": False}


def _label(value: Any) -> str:
    return " ".join(str(value).replace("_", " ").split()).casefold() if value is not None else ""


def _column_letter(index: int) -> str:
    """Column letters of a 1-based index (1 -> A, 27 -> AA)."""
    letters = ""
    while index:
        index, rest = divmod(index - 1, 26)
        letters = chr(65 + rest) + letters
    return letters


def sheet_ref(sheet: str, row: int, column: int) -> str:
    """``sheet!B7`` in spreadsheet notation (a sheet name with spaces or punctuation in single quotes)."""
    name = sheet if re.fullmatch(r"[A-Za-z_][A-Za-z0-9_.]*", sheet) else "'" + sheet.replace("'", "''") + "'"
    return f"{name}!{_column_letter(column)}{row}"


@dataclass
class Sheet:
    """One sheet's cells: ``rows[r][c]`` is the value at row r + 1, column c + 1 (None when empty)."""

    file: Path
    name: str
    rows: list[list[Any]]


def _empty(value: Any) -> bool:
    return value is None or (isinstance(value, str) and not value.strip())


def _file_problem(path: Path, message: str) -> InputFileError:
    return InputFileError([Problem(str(path), "", message)])


def read_sheets(path: str | Path) -> list[Sheet]:
    """Every sheet of an ``.xlsx`` workbook, or a ``.csv`` file as one sheet named after the file.

    Raises
    ------
    InputFileError
        For a missing or unreadable file or another file type (one problem naming the file).
    """
    path = Path(path)
    suffix = path.suffix.lower()
    if suffix not in SHEET_SUFFIXES:
        raise _file_problem(path, f"not a spreadsheet; rosters are read from {', '.join(SHEET_SUFFIXES)} (or a "
                                  ".toml roster file)")
    if not path.is_file():
        raise _file_problem(path, "file not found")
    if suffix == ".csv":
        try:
            text = path.read_text(encoding="utf-8-sig")
        except (OSError, UnicodeDecodeError) as exc:
            raise _file_problem(path, f"cannot read the file ({exc}); save it as UTF-8 CSV") from None
        try:   # spreadsheet programs in many locales write ";" between cells
            dialect = csv.Sniffer().sniff(text[:4096], delimiters=",;\t")
        except csv.Error:
            dialect = csv.excel
        rows = [list(row) for row in csv.reader(io.StringIO(text), dialect)]
        return [Sheet(path, path.stem, [[None if _empty(v) else v for v in row] for row in rows])]
    import openpyxl

    try:
        book = openpyxl.load_workbook(path, read_only=True, data_only=True)
    except Exception as exc:   # openpyxl raises many kinds for a damaged or foreign file
        raise _file_problem(path, f"cannot read the workbook ({exc.__class__.__name__}: {exc})") from None
    try:
        return [Sheet(path, ws.title, [list(row) for row in ws.iter_rows(values_only=True)]) for ws in book.worksheets]
    finally:
        book.close()


# --------------------------------------------------------------------------- reading the blocks

@dataclass
class _Reading:
    """What the sheets say, with the cell each field came from, and the problems found."""

    data: dict[str, Any] = field(default_factory=dict)
    cells: dict[tuple, tuple[Sheet, int, int]] = field(default_factory=dict)
    blanks: dict[tuple, tuple[Sheet, int, int]] = field(default_factory=dict)   # settings rows left empty
    problems: list[Problem] = field(default_factory=list)
    shift_rows: dict[str, tuple[Sheet, int]] = field(default_factory=dict)
    grids: list[tuple[Sheet, int, list[date], list[tuple[str, int, list[str | None]]]]] = field(default_factory=list)

    def problem(self, sheet: Sheet, row: int, column: int, message: str) -> None:
        self.problems.append(Problem(str(sheet.file), sheet_ref(sheet.name, row, column), message))

    def set(self, path: tuple[str, ...], value: Any, sheet: Sheet, row: int, column: int) -> None:
        if path in self.cells:
            earlier_sheet, earlier_row, earlier_column = self.cells[path]
            earlier = _lookup(self.data, path)
            if earlier != value:
                self.problem(sheet, row, column, f"{value!r} differs from {earlier!r} at "
                                                 f"{earlier_sheet.file.name}: "
                                                 f"{sheet_ref(earlier_sheet.name, earlier_row, earlier_column)}; "
                                                 "drafts compared together share one site, shifts and habits")
            return
        target = self.data
        for key in path[:-1]:
            target = target.setdefault(key, {})
        target[path[-1]] = value
        self.cells[path] = (sheet, row, column)


def _lookup(data: dict, path: Sequence) -> Any:
    for key in path:
        data = data[key]
    return data


def _cell(row: list[Any], column: int) -> Any:
    return row[column - 1] if column - 1 < len(row) else None


def _text(value: Any) -> str:
    """A cell as text: clock times as HH:MM, whole numbers without a decimal point."""
    if isinstance(value, time):
        return value.strftime("%H:%M")
    if isinstance(value, datetime):
        return value.strftime("%H:%M") if value.date() == date(1899, 12, 30) else value.isoformat(sep=" ")
    if isinstance(value, float) and value.is_integer():
        return str(int(value))
    return str(value).strip()


def _setting_value(path: tuple[str, ...], value: Any) -> Any:
    """A settings cell as the roster file's value (yes/no for switches; numbers stay numbers)."""
    if path[-1] in ("light_box", "dark_glasses", "blackout_bedroom", "daylight") and isinstance(value, str):
        return _BOOLEAN.get(value.strip().casefold(), value.strip())
    if isinstance(value, (bool, int, float)) and path[-1] not in ("name", "place", "time_zone", "bed", "wake",
                                                                   "description", "model"):
        return value
    return _text(value)


def _block_end(sheet: Sheet, start: int) -> int:
    """Index after the last row of the block starting at row index ``start`` (the next empty row)."""
    end = start
    while end < len(sheet.rows) and not all(_empty(v) for v in sheet.rows[end]):
        end += 1
    return end


def _read_sheet(sheet: Sheet, reading: _Reading) -> None:
    r = 0
    while r < len(sheet.rows):
        row = sheet.rows[r]
        if all(_empty(v) for v in row):
            r += 1
            continue
        first = _cell(row, 1)
        label = _label(first)
        if label.startswith("#"):
            r += 1
        elif label == SHIFT_COLUMNS[0]:
            end = _block_end(sheet, r)
            _read_shifts(sheet, r, end, reading)
            r = end
        elif label in GRID_HEADERS:
            end = _block_end(sheet, r)
            _read_grid(sheet, r, end, reading)
            r = end
        elif label in SETTINGS:
            path, _ = SETTINGS[label]
            value = _cell(row, 2)
            if not _empty(value):
                reading.set(path, _setting_value(path, value), sheet, r + 1, 2)
            else:
                reading.blanks.setdefault(path, (sheet, r + 1, 2))
            r += 1
        elif _empty(first):
            reading.problem(sheet, r + 1, 1, "empty, but the row holds values; a row starts in column A with a "
                                             'setting, "shift" or "crew" (or "#" for a note)')
            r += 1
        else:
            reading.problem(sheet, r + 1, 1, f'"{_text(first)}" is not a setting; allowed: '
                                             + ", ".join(SETTINGS) + ', a "shift" or "crew" table header, or '
                                             '"#" for a note')
            r += 1


def _read_shifts(sheet: Sheet, header: int, end: int, reading: _Reading) -> None:
    columns: dict[str, int] = {}
    for c, value in enumerate(sheet.rows[header], start=1):
        name = _label(value)
        if name in SHIFT_COLUMNS and name not in columns:
            columns[name] = c
        elif not _empty(value):
            reading.problem(sheet, header + 1, c, f'"{_text(value)}" is not a column of the shift table; allowed: '
                                                  + ", ".join(SHIFT_COLUMNS))
    reading.cells.setdefault(("shifts",), (sheet, header + 1, 1))
    for needed in SHIFT_COLUMNS[1:3]:
        if needed not in columns:
            reading.problem(sheet, header + 1, 1, f'the shift table has no "{needed}" column; its header is '
                                                  + " | ".join(SHIFT_COLUMNS) + " (label and sleep optional)")
            return
    for r in range(header + 1, end):
        row = sheet.rows[r]
        if _label(_cell(row, 1)).startswith("#"):
            continue
        code = _text(_cell(row, 1)) if not _empty(_cell(row, 1)) else ""
        if not code:
            reading.problem(sheet, r + 1, 1, "no shift code; each row of the shift table starts with its code, "
                                             'e.g. "D" or "N"')
            continue
        if code == OFF or code in reading.shift_rows:
            what = f'"{OFF}" marks a day off' if code == OFF else f'shift "{code}" is already defined'
            reading.problem(sheet, r + 1, 1, f"{what}; each shift needs its own code")
            continue
        reading.shift_rows[code] = (sheet, r + 1)
        entry: dict[str, Any] = {}
        for name, key in (("start", "start"), ("end", "end"), ("label", "label")):
            if name in columns and not _empty(_cell(row, columns[name])):
                entry[key] = _text(_cell(row, columns[name]))
                reading.cells[("shifts", code, key)] = (sheet, r + 1, columns[name])
        bed, wake = (_cell(row, columns[n]) if n in columns else None for n in ("sleep bed", "sleep wake"))
        if not _empty(bed) or not _empty(wake):
            entry["sleep"] = {"bed": "" if _empty(bed) else _text(bed), "wake": "" if _empty(wake) else _text(wake)}
            where = columns["sleep bed" if "sleep bed" in columns else "sleep wake"]
            reading.cells[("shifts", code, "sleep")] = (sheet, r + 1, where)
            for key, name in (("bed", "sleep bed"), ("wake", "sleep wake")):
                if name in columns:
                    reading.cells[("shifts", code, "sleep", key)] = (sheet, r + 1, columns[name])
        try:   # in a sheet the clock says it: an end not after the start is on the next day
            entry["ends_next_day"] = parse_clock(entry.get("end", "")) <= parse_clock(entry.get("start", ""))
        except InputError:
            pass   # the clock itself is reported by the validation
        reading.cells[("shifts", code, "ends_next_day")] = (sheet, r + 1, columns["end"])
        reading.cells[("shifts", code)] = (sheet, r + 1, 1)
        reading.data.setdefault("shifts", {})[code] = entry


def _date(value: Any) -> date | None:
    if isinstance(value, datetime):
        return value.date()
    if isinstance(value, date):
        return value
    if isinstance(value, str):
        try:
            return date.fromisoformat(value.strip()[:10]) if re.fullmatch(r"\d{4}-\d{2}-\d{2}", value.strip()[:10]) \
                else None
        except ValueError:
            return None
    return None


def _read_grid(sheet: Sheet, header: int, end: int, reading: _Reading) -> None:
    head = sheet.rows[header]
    last = max((c for c, v in enumerate(head, start=1) if not _empty(v)), default=1)
    dates: list[date] = []
    for c in range(2, last + 1):
        value = _cell(head, c)
        day = _date(value)
        if day is None:
            shown = "empty" if _empty(value) else f'"{_text(value)}" is not a date'
            reading.problem(sheet, header + 1, c, f"{shown}; allowed: a date cell or YYYY-MM-DD, one column per day")
            return
        if dates and day != dates[-1] + timedelta(days=1):
            reading.problem(sheet, header + 1, c, f"{day.isoformat()} follows {dates[-1].isoformat()}; allowed: "
                                                  f"{(dates[-1] + timedelta(days=1)).isoformat()} (one column per "
                                                  "day, consecutive dates)")
            return
        dates.append(day)
    if not dates:
        reading.problem(sheet, header + 1, 2, "no dates; the crew header is followed by one date per column")
        return
    crews: list[tuple[str, int, list[str | None]]] = []
    for r in range(header + 1, end):
        row = sheet.rows[r]
        name = _cell(row, 1)
        if _label(name).startswith("#"):
            continue
        if _empty(name):
            reading.problem(sheet, r + 1, 1, "no crew name; each row of the grid starts with the crew's or "
                                             "worker's name")
            continue
        for c in range(last + 1, len(row) + 1):
            if not _empty(_cell(row, c)):
                reading.problem(sheet, r + 1, c, "no date above this cell; add the date to the header row or "
                                                 "clear the cell")
        days: list[str | None] = []
        for c in range(2, last + 1):
            value = _cell(row, c)
            text = "" if _empty(value) else _text(value)
            days.append(None if text in ("", OFF) or text.casefold() == OFF else text)
        crews.append((_text(name), r + 1, days))
    if not crews:
        reading.problem(sheet, header + 1, 1, "the grid has no crew rows; add one row per crew or worker below it")
        return
    reading.grids.append((sheet, header + 1, dates, crews))


# --------------------------------------------------------------------------- grids to drafts and crews

def shortest_period(days: Sequence[Any]) -> int:
    """The length of the shortest pattern whose repetition gives ``days`` exactly."""
    n = len(days)
    for period in range(1, n + 1):
        if n % period == 0 and all(days[i] == days[i % period] for i in range(n)):
            return period
    return n


def _rotation(reference: Sequence[Any], days: Sequence[Any], period: int) -> tuple[int, int | None]:
    """(offset, first mismatching index) of the rotation of ``reference`` closest to ``days``."""
    best: tuple[int, int, int] | None = None   # (mismatches, offset, first mismatch)
    n = len(days)
    for offset in range(period):
        wrong = [i for i in range(n) if reference[(i + offset) % n] != days[i]]
        if not wrong:
            return offset, None
        if best is None or len(wrong) < best[0]:
            best = (len(wrong), offset, wrong[0])
    return best[1], best[2]


def _grids_to_drafts(reading: _Reading, names: list[str]) -> None:
    codes = set(reading.data.get("shifts", {}))
    allowed = ", ".join(f'"{c}"' for c in sorted(codes)) + f', "{OFF}" or an empty cell (a day off)'
    drafts, crews_seen = [], {}
    draft_offsets: dict[str, dict[str, int]] = {}   # crew -> draft name -> offset, where not the first draft's
    start: tuple[date, Sheet, int] | None = None
    for k, ((sheet, header, dates, crews), name) in enumerate(zip(reading.grids, names)):
        if start is None:
            start = (dates[0], sheet, header)
        elif dates[0] != start[0]:
            reading.problem(sheet, header, 2, f"this grid starts on {dates[0].isoformat()}, another on "
                                              f"{start[0].isoformat()} ({sheet_ref(start[1].name, start[2], 2)}); "
                                              "drafts compared together start on the same date")
        for crew, row, days in crews:
            for i, code in enumerate(days):
                if code is not None and code not in codes:
                    reading.problem(sheet, row, i + 2, f'"{code}" is not a shift code; allowed: {allowed}')
        first_name, first_row, reference = crews[0]
        period = shortest_period(reference)
        pattern = [OFF if code is None else code for code in reference[:period]]
        drafts.append({"name": name, "pattern": pattern, "cycles": len(reference) // period})
        reading.cells[("drafts", k)] = (sheet, header, 1)
        reading.cells[("drafts", k, "name")] = (sheet, header, 1)
        reading.cells[("drafts", k, "cycles")] = (sheet, header, len(reference) + 1)
        for i in range(period):
            reading.cells[("drafts", k, "pattern", i)] = (sheet, first_row, i + 2)
        reading.cells[("drafts", k, "pattern")] = (sheet, first_row, 1)
        offsets = {}
        for crew, row, days in crews:
            if crew in offsets:
                reading.problem(sheet, row, 1, f'crew "{crew}" has another row on this sheet; one row per crew')
                continue
            offset, wrong = _rotation(reference, days, period)
            if wrong is not None:
                reading.problem(sheet, row, wrong + 2,
                                f'crew "{crew}" does not work the rotation of crew "{first_name}" (row {first_row}) '
                                f"from another day of it; allowed: the same rotation shifted by whole days "
                                "(put a different rotation on its own sheet)")
            offsets[crew] = (offset, row)
        if k == 0:
            crews_seen = {crew: (offset, sheet, row) for crew, (offset, row) in offsets.items()}
            continue
        for crew, (offset, row) in offsets.items():
            if crew not in crews_seen:
                reading.problem(sheet, row, 1, f'crew "{crew}" is not on the first draft\'s sheet; every draft lists '
                                               "the same crews")
            elif crews_seen[crew][0] % period != offset:   # staggered otherwise on this draft
                draft_offsets.setdefault(crew, {})[name] = offset
        for crew, (_, first_sheet, row) in crews_seen.items():
            if crew not in offsets:
                reading.problem(sheet, header, 1, f'crew "{crew}" ({sheet_ref(first_sheet.name, row, 1)}) has no row '
                                                  "on this sheet; every draft lists the same crews")
    reading.data["drafts"] = drafts
    reading.data["start_date"] = start[0] if start else None
    if len(crews_seen) > 1:
        reading.data["crews"] = [{"name": crew, "offset_days": offset, "draft_offsets": draft_offsets.get(crew, {})}
                                 for crew, (offset, _, _) in crews_seen.items()]
        for k, (crew, (_, sheet, row)) in enumerate(crews_seen.items()):
            reading.cells[("crews", k)] = (sheet, row, 1)
            reading.cells[("crews", k, "name")] = (sheet, row, 1)


class _CellProblems:
    """Semantic problems of :func:`planner.rosters.scenario.build_roster`, placed at the cells their fields came from."""

    def __init__(self, reading: _Reading):
        self.reading = reading
        self.items: list[Problem] = []

    def where(self, field: Sequence) -> tuple[Sheet, int, int] | None:
        key = tuple(field)
        while key:
            if key in self.reading.cells:
                return self.reading.cells[key]
            blank = [cell for path, cell in self.reading.blanks.items() if path[:len(key)] == key]
            if blank:
                return blank[0]
            key = key[:-1]
        return None

    def add(self, field: Sequence, message: str) -> None:
        found = self.where(field)
        label = _field_label(field)
        if found is None:
            sheet = self.reading.grids[0][0] if self.reading.grids else None
            source = str(sheet.file) if sheet else ""
            self.items.append(Problem(source, label, message))
        else:
            sheet, row, column = found
            self.items.append(Problem(str(sheet.file), sheet_ref(sheet.name, row, column), f"{label}: {message}"))

    def raise_if_any(self) -> None:
        if self.items:
            raise InputFileError(self.items)


def _field_label(field: Sequence) -> str:
    """A roster-file field in the sheet's words (``site.time_zone`` -> ``time zone``)."""
    key = tuple(str(part) for part in field)
    for label, (path, _) in SETTINGS.items():
        if key == path:
            return label
    if key and key[0] == "shifts" and len(key) >= 3:
        return f"shift {key[1]} {' '.join(key[2:]).replace('_', ' ')}"
    if key and key[0] == "workers" and key[1:2] == ("sleep",):
        return "bed and wake"
    if key and key[0] == "drafts":
        return "rotation"
    return ".".join(key)


def _validate(reading: _Reading) -> RosterFile:
    try:
        return RosterFile.model_validate(reading.data)
    except pydantic.ValidationError as exc:
        cells = _CellProblems(reading)
        for error in exc.errors():
            location = tuple(error.get("loc", ()))
            message = describe_error(error)
            if error.get("type") == "missing":
                message = f"required, but not given; {_missing_hint(location)}"
            cells.add(location, message)
        raise InputFileError(cells.items) from None


def _missing_hint(location: tuple) -> str:
    key = tuple(str(part) for part in location)
    for label, (path, meaning) in SETTINGS.items():
        if path == key or path[:len(key)] == key:
            return f'fill in "{label}" ({meaning}) in column B of the settings'
    if key[:1] == ("shifts",):
        return "add a row per shift type under the header shift | start | end (label and sleep optional)"
    return "see the layout in the README"


def load_roster_sheets(paths: str | Path | Iterable[str | Path]) -> tuple[Roster, RosterInfo]:
    """Read roster spreadsheets (see the module docstring) into a validated roster.

    Parameters
    ----------
    paths : path or iterable of paths
        ``.xlsx`` and ``.csv`` files; each sheet with a grid becomes a draft.

    Returns
    -------
    (Roster, RosterInfo)
        As :func:`planner.rosters.scenario.load_roster` gives for the same roster written as TOML.

    Raises
    ------
    InputFileError
        Every problem, each with its file and cell (``sheet!B7``), what is wrong and what is allowed.
    InputError
        A file that cannot be read.
    """
    files = [Path(paths)] if isinstance(paths, (str, Path)) else [Path(p) for p in paths]
    if not files:
        raise InputError("no roster file given", field="roster")
    reading = _Reading(data={"kind": "roster"})
    sheets = [sheet for path in files for sheet in read_sheets(path)]
    for sheet in sheets:
        _read_sheet(sheet, reading)
    if not reading.grids and not reading.problems:
        raise InputFileError([Problem(str(files[0]), "", 'no roster grid: a row starting with "crew" followed by one '
                                                         "date per column, then one row per crew")])
    _grids_to_drafts(reading, _draft_names(reading))
    reading.data.setdefault("name", files[0].stem)
    if reading.problems:
        raise InputFileError(reading.problems)
    spec = _validate(reading)
    roster, info = build_roster(spec, _CellProblems(reading), files[0])
    return roster, RosterInfo(info.name, info.description, info.model, ", ".join(str(p) for p in files))


def _draft_names(reading: _Reading) -> list[str]:
    """Each grid's draft name: the sheet's (a CSV file's stem), with the file's stem when two files share it."""
    names = [sheet.name for sheet, *_ in reading.grids]
    return [f"{sheet.file.stem} {name}" if names.count(name) > 1 else name
            for (sheet, *_), name in zip(reading.grids, names)]


def is_sheet_path(path: str | Path) -> bool:
    """Whether ``path`` names a spreadsheet this module reads (by its suffix)."""
    return Path(path).suffix.lower() in SHEET_SUFFIXES


# --------------------------------------------------------------------------- template

#: Days in the template's grid.
TEMPLATE_DAYS = 28


def next_monday(today: date | None = None) -> date:
    """The first Monday after ``today`` (the template's first date by default)."""
    today = today or date.today()
    return today + timedelta(days=7 - today.weekday())


def template_workbook(start: date | None = None, days: int = TEMPLATE_DAYS) -> bytes:
    """An empty roster workbook to fill: a ``settings`` sheet (every setting with its meaning, the defaults
    written in, the shift table's header) and a ``draft 1`` sheet (the grid's header with ``days`` dates from
    ``start``, by default :func:`next_monday`, and a row for crew A).  Returns the ``.xlsx`` file's bytes."""
    import openpyxl
    from openpyxl.styles import Font

    start = start or next_monday()
    book = openpyxl.Workbook()
    settings = book.active
    settings.title = "settings"
    bold = Font(bold=True)
    settings.append(["# Fill in column B (column C says what each setting is). Give the site by place or by time "
                     "zone, latitude and longitude."])
    settings.append(["# Each other sheet is one draft rotation: one row per crew, one column per date, a shift "
                     "code or off (empty = off) in each cell."])
    settings.append([])
    defaults = {"sleep hours": 7.5, "commute minutes": 30, "crew size": 1, "model": DEFAULT_MODEL}
    for label, (_, meaning) in SETTINGS.items():
        settings.append([label, defaults.get(label), meaning])
    settings.append([])
    settings.append(list(SHIFT_COLUMNS))
    for cell in settings[settings.max_row]:
        cell.font = bold
    settings.append(["# one row per shift type, e.g.", "07:00", "19:00", "day"])
    settings.column_dimensions["A"].width = 22
    settings.column_dimensions["B"].width = 22
    settings.column_dimensions["C"].width = 80
    grid = book.create_sheet("draft 1")
    grid.append(["crew"] + [start + timedelta(days=d) for d in range(days)])
    for cell in grid[1]:
        cell.font = bold
        if cell.column > 1:
            cell.number_format = "yyyy-mm-dd"
    grid.append(["A"])
    for column in range(2, days + 2):
        grid.column_dimensions[_column_letter(column)].width = 11
    buffer = io.BytesIO()
    book.save(buffer)
    return buffer.getvalue()


__all__ = ["load_roster_sheets", "read_sheets", "template_workbook", "is_sheet_path", "shortest_period", "sheet_ref",
           "next_monday", "SETTINGS", "SHIFT_COLUMNS", "Sheet"]
