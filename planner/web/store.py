"""Saved plans: each plan's scenario and its result in one SQLite file under the data folder.

A saved plan is a row of ``plans`` (the scenario as TOML, or the roster spreadsheet as uploaded; the trip
form's fields when it came from the form; a label that stands in for the person's name) and at most one row of ``results`` (the JSON document
of ``phaseplan trip|roster --json``, the calendar files, the printable report and the chart). Deleting a
plan deletes both in one transaction. Nothing here plans: the rows are written by :mod:`planner.web.jobs`.

The schema is versioned with SQLite's ``PRAGMA user_version``; :data:`MIGRATIONS` brings a file of any
earlier version up to :data:`SCHEMA_VERSION` in order, each step in one transaction, so a file written by
an older phaseplan opens in a newer one with every plan kept. A file of a newer version than this code
knows is refused rather than guessed at.
"""

from __future__ import annotations

import json
import secrets
import sqlite3
import threading
from collections.abc import Iterator
from contextlib import contextmanager
from dataclasses import dataclass
from datetime import datetime, timezone
from pathlib import Path
from typing import Any

from planner.errors import InputError

#: File name of the database inside the data folder.
DATABASE_NAME = "plans.sqlite3"

#: Each step takes the schema from version k to k + 1 (index k).
MIGRATIONS: tuple[tuple[str, ...], ...] = (
    # 0 → 1: plans and their results
    ("""CREATE TABLE plans (
            id TEXT PRIMARY KEY,
            kind TEXT NOT NULL CHECK (kind IN ('trip', 'roster')),
            label TEXT NOT NULL,
            scenario_toml TEXT NOT NULL,
            form_json TEXT,
            created TEXT NOT NULL,
            updated TEXT NOT NULL)""",
     """CREATE TABLE results (
            plan_id TEXT PRIMARY KEY REFERENCES plans(id) ON DELETE CASCADE,
            document_json TEXT NOT NULL,
            ics BLOB,
            report_html TEXT,
            chart_svg BLOB,
            planned TEXT NOT NULL)"""),
    # 1 → 2: the options a plan was made with (strategy, population size...), and one calendar per crew
    ("ALTER TABLE plans ADD COLUMN options_json TEXT NOT NULL DEFAULT '{}'",
     "ALTER TABLE results ADD COLUMN calendars_json TEXT NOT NULL DEFAULT '{}'",
     # a version-1 result's single calendar becomes the whole plan's entry (key "")
     """UPDATE results SET calendars_json = json_object('', CAST(ics AS TEXT)) WHERE ics IS NOT NULL"""),
    # 2 → 3: a roster planned from a spreadsheet keeps the file as uploaded (name and bytes)
    ("ALTER TABLE plans ADD COLUMN scenario_name TEXT NOT NULL DEFAULT 'scenario.toml'",
     "ALTER TABLE plans ADD COLUMN scenario_file BLOB"),
)

#: The schema version this code writes.
SCHEMA_VERSION = len(MIGRATIONS)


def _now() -> str:
    return datetime.now(timezone.utc).replace(microsecond=0).isoformat()


def new_id() -> str:
    """A random, unguessable plan id (also used in URLs)."""
    return secrets.token_urlsafe(9)


@dataclass(frozen=True)
class SavedPlan:
    """A plan as stored: its scenario, and its result when it has been planned.

    Attributes
    ----------
    id : str
    kind : {"trip", "roster"}
    label : str
        What the user called it (no real name needed).
    scenario_toml : str
        The scenario's TOML text ("" for a spreadsheet).
    scenario_name : str
        The scenario's file name (its suffix says what it is: .toml, .xlsx, .csv).
    scenario_file : bytes or None
        A spreadsheet as uploaded (None for TOML).
    form : dict or None
        The trip form's fields, when the plan came from the form (to edit it there again).
    options : dict
        Planning options (strategy, population size, seed...).
    created, updated : str
        ISO 8601 UTC.
    document : dict or None
        The JSON document of the result (with ``schema_version``); None before planning.
    calendars : dict of str to str
        iCalendar text per crew ("" for a plan without crews).
    planned : str or None
    """

    id: str
    kind: str
    label: str
    scenario_toml: str
    scenario_name: str
    scenario_file: bytes | None
    form: dict[str, Any] | None
    options: dict[str, Any]
    created: str
    updated: str
    document: dict[str, Any] | None = None
    calendars: dict[str, str] | None = None
    planned: str | None = None


@dataclass(frozen=True)
class PlanResult:
    """What a finished plan stores besides its scenario."""

    document: dict[str, Any]
    calendars: dict[str, str]
    report_html: str
    chart_svg: bytes


def migrate(connection: sqlite3.Connection, target: int = SCHEMA_VERSION) -> int:
    """Bring the database up to ``target`` (default: the latest); return the version it had."""
    found = connection.execute("PRAGMA user_version").fetchone()[0]
    if found > SCHEMA_VERSION:
        raise InputError(f"the saved plans were written by a newer phaseplan (schema {found}; this one knows "
                         f"up to {SCHEMA_VERSION}); upgrade phaseplan or choose another --data folder",
                         field="data")
    for version in range(found, target):
        with connection:   # one transaction per step: a failed step leaves the previous version intact
            for statement in MIGRATIONS[version]:
                connection.execute(statement)
            connection.execute(f"PRAGMA user_version = {version + 1}")
    return found


class PlanStore:
    """The saved plans of one data folder (safe to share between the server's threads)."""

    def __init__(self, folder: str | Path):
        self.folder = Path(folder)
        self.folder.mkdir(parents=True, exist_ok=True)
        self.path = self.folder / DATABASE_NAME
        self._lock = threading.Lock()
        with self._connect() as connection:
            migrate(connection)

    @contextmanager
    def _connect(self) -> Iterator[sqlite3.Connection]:
        connection = sqlite3.connect(self.path, timeout=30)
        connection.row_factory = sqlite3.Row
        connection.execute("PRAGMA foreign_keys = ON")
        try:
            yield connection
        finally:
            connection.close()

    @contextmanager
    def _writing(self) -> Iterator[sqlite3.Connection]:
        with self._lock, self._connect() as connection, connection:
            yield connection

    def save(self, plan_id: str | None, kind: str, label: str, scenario: str | bytes, result: PlanResult, *,
             name: str = "scenario.toml", form: dict | None = None, options: dict | None = None) -> str:
        """Store a planned scenario (TOML text, or a spreadsheet's bytes) and its result in one transaction: a new
        plan, or a new version of ``plan_id`` (its result replaced). Return the plan's id."""
        stamp = _now()
        text, blob = (scenario, None) if isinstance(scenario, str) else ("", scenario)
        fields = (kind, label, text, name, blob, None if form is None else json.dumps(form), json.dumps(options or {}))
        with self._writing() as connection:
            exists = plan_id is not None and connection.execute(
                "SELECT 1 FROM plans WHERE id = ?", (plan_id,)).fetchone() is not None
            if exists:
                connection.execute(
                    "UPDATE plans SET kind = ?, label = ?, scenario_toml = ?, scenario_name = ?, scenario_file = ?, "
                    "form_json = ?, options_json = ?, updated = ? WHERE id = ?", (*fields, stamp, plan_id))
            else:
                plan_id = plan_id or new_id()
                connection.execute(
                    "INSERT INTO plans (id, kind, label, scenario_toml, scenario_name, scenario_file, form_json, "
                    "options_json, created, updated) VALUES (?, ?, ?, ?, ?, ?, ?, ?, ?, ?)",
                    (plan_id, *fields, stamp, stamp))
            whole = result.calendars.get("")
            connection.execute(
                "INSERT OR REPLACE INTO results (plan_id, document_json, ics, report_html, chart_svg, planned, "
                "calendars_json) VALUES (?, ?, ?, ?, ?, ?, ?)",
                (plan_id, json.dumps(result.document, ensure_ascii=False), None if whole is None else whole.encode(),
                 result.report_html, result.chart_svg, stamp, json.dumps(result.calendars, ensure_ascii=False)))
        return plan_id

    def get(self, plan_id: str) -> SavedPlan | None:
        with self._connect() as connection:
            row = connection.execute(
                "SELECT p.*, r.document_json, r.calendars_json, r.planned FROM plans p "
                "LEFT JOIN results r ON r.plan_id = p.id WHERE p.id = ?", (plan_id,)).fetchone()
        return None if row is None else _saved(row)

    def list(self) -> list[SavedPlan]:
        """Every saved plan, the most recently changed first (without the large result columns)."""
        with self._connect() as connection:
            rows = connection.execute(
                "SELECT p.id, p.kind, p.label, '' AS scenario_toml, p.scenario_name, NULL AS scenario_file, "
                "p.form_json, p.options_json, p.created, p.updated, NULL AS document_json, NULL AS calendars_json, "
                "r.planned FROM plans p "
                "LEFT JOIN results r ON r.plan_id = p.id ORDER BY p.updated DESC, p.created DESC").fetchall()
        return [_saved(row) for row in rows]

    def file(self, plan_id: str, column: str) -> bytes | str | None:
        """One stored rendering of a plan's result: ``report_html`` or ``chart_svg``."""
        if column not in ("report_html", "chart_svg"):
            raise ValueError(column)
        with self._connect() as connection:
            row = connection.execute(f"SELECT {column} FROM results WHERE plan_id = ?", (plan_id,)).fetchone()
        return None if row is None else row[0]

    def duplicate(self, plan_id: str, label: str) -> str | None:
        """A copy of a plan's scenario (and result) under a new id and label; None when there is no such plan."""
        original = self.get(plan_id)
        if original is None:
            return None
        copy_id = new_id()
        stamp = _now()
        with self._writing() as connection:
            connection.execute(
                "INSERT INTO plans (id, kind, label, scenario_toml, scenario_name, scenario_file, form_json, "
                "options_json, created, updated) SELECT ?, kind, ?, scenario_toml, scenario_name, scenario_file, "
                "form_json, options_json, ?, ? FROM plans WHERE id = ?", (copy_id, label, stamp, stamp, plan_id))
            connection.execute(
                "INSERT INTO results (plan_id, document_json, ics, report_html, chart_svg, planned, calendars_json) "
                "SELECT ?, document_json, ics, report_html, chart_svg, planned, calendars_json FROM results "
                "WHERE plan_id = ?", (copy_id, plan_id))
        return copy_id

    def delete(self, plan_id: str) -> bool:
        """Delete a plan's scenario and result; False when there was no such plan."""
        with self._writing() as connection:
            connection.execute("DELETE FROM results WHERE plan_id = ?", (plan_id,))
            return connection.execute("DELETE FROM plans WHERE id = ?", (plan_id,)).rowcount > 0

    def counts(self) -> tuple[int, int]:
        """(plans, results) stored."""
        with self._connect() as connection:
            return (connection.execute("SELECT COUNT(*) FROM plans").fetchone()[0],
                    connection.execute("SELECT COUNT(*) FROM results").fetchone()[0])


def _saved(row: sqlite3.Row) -> SavedPlan:
    return SavedPlan(row["id"], row["kind"], row["label"], row["scenario_toml"], row["scenario_name"],
                     row["scenario_file"], None if row["form_json"] is None else json.loads(row["form_json"]),
                     json.loads(row["options_json"]), row["created"], row["updated"],
                     None if row["document_json"] is None else json.loads(row["document_json"]),
                     None if row["calendars_json"] is None else json.loads(row["calendars_json"]),
                     row["planned"])
