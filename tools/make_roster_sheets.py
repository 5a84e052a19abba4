"""Write the demo roster harbour-cranes as spreadsheets: scenarios/harbour-cranes.xlsx and one CSV file per draft.

The files follow the README's "Roster spreadsheets" layout, written straight from the TOML file with
openpyxl and the csv module (not with the planner's own reader or template): a ``settings`` sheet
(settings, then the shift table) and one sheet per draft (one row per crew, one column per date, an
empty cell for a day off); the first CSV file holds the settings above its grid, the second only its
grid. ``phaseplan roster`` plans them as it plans the TOML file (tests/test_rostersheet.py).

Usage: python tools/make_roster_sheets.py [FOLDER]   (default: scenarios/)
"""

from __future__ import annotations

import csv
import sys
import tomllib
from datetime import date, timedelta
from pathlib import Path

import openpyxl

REPO = Path(__file__).resolve().parent.parent
DEMO = REPO / "scenarios" / "harbour-cranes.toml"


def settings_rows(data: dict) -> list[list]:
    """The roster's settings, habits and shift table as sheet rows (labels as the README lists them)."""
    site, workers = data["site"], data["workers"]
    rows = [["# settings of an invented crew (see harbour-cranes.toml)"],
            ["name", data["name"]], ["description", data["description"]], ["model", data["model"]],
            ["site", site["name"]], ["time zone", site["time_zone"]], ["latitude", site["latitude"]],
            ["longitude", site["longitude"]], ["crew size", workers["count"]], ["bed", workers["sleep"]["bed"]],
            ["wake", workers["sleep"]["wake"]], ["sleep hours", workers["sleep_hours"]],
            ["commute minutes", workers["commute_minutes"]]]
    rows += [[key.replace("_", " "), value] for key, value in data.get("light", {}).items()]
    rows += [[key.replace("_", " "), ("yes" if value else "no") if isinstance(value, bool) else value]
             for key, value in data.get("countermeasures", {}).items()]
    rows += [[], ["shift", "start", "end", "label", "sleep bed", "sleep wake"]]
    for code, shift in data["shifts"].items():
        sleep = shift.get("sleep", {})
        rows.append([code, shift["start"], shift["end"], shift.get("label", ""), sleep.get("bed"), sleep.get("wake")])
    return rows


def grid_rows(data: dict, draft: dict, as_dates: bool) -> list[list]:
    """One row per crew, its rotated pattern under consecutive dates (None for a day off)."""
    start = date.fromisoformat(str(data["start_date"]))
    days = len(draft["pattern"]) * draft["cycles"]
    dates = [start + timedelta(days=d) for d in range(days)]
    rows = [["crew"] + [d if as_dates else d.isoformat() for d in dates]]
    for crew in data.get("crews") or [{"name": "all", "offset_days": 0}]:
        k = crew["offset_days"] % len(draft["pattern"])
        rotated = (draft["pattern"][k:] + draft["pattern"][:k]) * draft["cycles"]
        rows.append([crew["name"]] + [None if code == "off" else code for code in rotated])
    return rows


def write_workbook(data: dict, path: Path) -> Path:
    """Settings on a sheet of their own, one sheet per draft named after it."""
    book = openpyxl.Workbook()
    settings = book.active
    settings.title = "settings"
    for row in settings_rows(data):
        settings.append(row)
    for draft in data["drafts"]:
        sheet = book.create_sheet(draft["name"])
        for row in grid_rows(data, draft, as_dates=True):
            sheet.append(row)
    book.save(path)
    return path


def write_csv_files(data: dict, folder: Path, stem: str, delimiters: tuple[str, ...] = (",",)) -> list[Path]:
    """One CSV file per draft (``stem-<first word of the draft's name>.csv``); the first holds the settings."""
    written = []
    for k, draft in enumerate(data["drafts"]):
        path = folder / f"{stem}-{draft['name'].split()[0]}.csv"
        with path.open("w", newline="", encoding="utf-8") as stream:
            writer = csv.writer(stream, delimiter=delimiters[k % len(delimiters)])
            if k == 0:
                writer.writerows(settings_rows(data) + [[]])
            writer.writerows(grid_rows(data, draft, as_dates=False))
        written.append(path)
    return written


def main(folder: Path) -> None:
    data = tomllib.loads(DEMO.read_text(encoding="utf-8"))
    print(write_workbook(data, folder / "harbour-cranes.xlsx"))
    for path in write_csv_files(data, folder, "harbour-cranes"):
        print(path)


if __name__ == "__main__":
    main(Path(sys.argv[1]) if len(sys.argv) > 1 else REPO / "scenarios")
