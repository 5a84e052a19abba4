"""Writing a plan document's files: iCalendar (one per worker group when asked), HTML report and chart.

Every file is refused when it exists and ``force`` is not set, and written atomically
(:func:`planner.outputs.write_atomic`). The writers never look at trips or rosters.
"""

from __future__ import annotations

import re
from dataclasses import dataclass
from pathlib import Path
from typing import Any

from planner.errors import InputError
from planner.outputs import check_target, write_atomic
from planner.plans.document import PlanDocument
from planner.plans.ics import DEFAULT_ALARM_MINUTES, calendar_bytes, calendars_by_group, previous_events


@dataclass(frozen=True)
class PlanFiles:
    """The plan files a command was asked to write (the values of the command-line options or web form fields).

    Attributes
    ----------
    ics, report, chart : Path or None
    force : bool
    alarm_minutes : float  [min]
    no_alarms : bool
    group : str or None
        A roster's worker group (or chosen worker) whose calendar alone is written.
    """

    ics: Path | None = None
    report: Path | None = None
    chart: Path | None = None
    force: bool = False
    alarm_minutes: float = DEFAULT_ALARM_MINUTES
    no_alarms: bool = False
    group: str | None = None

    def check(self) -> None:
        """Refuse unwritable targets before any planning is done (InputError, exit 2)."""
        if self.chart is not None:
            from planner.plans.report import chart_format  # matplotlib only when a chart is asked for

            chart_format(self.chart)
        for path in (self.ics, self.report, self.chart):
            if path is not None:
                check_target(path, force=self.force)


def group_path(path: Path, group: str | None) -> Path:
    if group is None:
        return path
    slug = re.sub(r"[^A-Za-z0-9]+", "-", group).strip("-").lower() or "group"
    return path.with_name(f"{path.stem}-{slug}{path.suffix or '.ics'}")


def write_plan_files(document: PlanDocument, files: PlanFiles) -> dict[str, Any]:
    """Write the calendar(s), report and chart of a plan document as ``files`` asks.

    Any planner's command calls this with its :class:`~planner.plans.document.PlanDocument`
    (trips here, rosters with their worker groups). Each file is refused when it exists and
    ``files.force`` is not set, and written atomically. When an existing calendar is replaced, its
    events' SEQUENCE numbers are carried on (:func:`planner.plans.ics.build_calendar`).

    Returns
    -------
    dict
        ``{"ics": [paths], "report": path or None, "chart": path or None}`` for ``--json``.
    """
    written: dict[str, Any] = {"ics": [], "report": None, "chart": None}
    if files.ics is not None:
        alarm = None if files.no_alarms else files.alarm_minutes
        groups = calendars_by_group(document, files.group)
        for group, events in groups.items():
            path = group_path(files.ics, group if len(groups) > 1 else None)
            check_target(path, force=files.force)
            previous = path.read_bytes() if path.is_file() else None
            try:
                previous_events(previous)
            except InputError:   # --force over a file that is no calendar: nothing to carry on
                previous = None
            name = document.title if group is None else f"{document.title} — {group}"
            data = calendar_bytes(document, events, name=name, alarm_minutes=alarm, previous=previous)
            written["ics"].append(str(write_atomic(path, data, force=files.force)))
    if files.report is not None or files.chart is not None:
        from planner.plans.report import chart_bytes, chart_format, report_html  # matplotlib only when asked

        if files.report is not None:
            written["report"] = str(write_atomic(files.report, report_html(document), force=files.force))
        if files.chart is not None:
            data = chart_bytes(document, chart_format(files.chart))
            written["chart"] = str(write_atomic(files.chart, data, force=files.force))
    return written
