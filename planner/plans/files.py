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
from planner.plans.ics import (
    DEFAULT_ALARM_KINDS,
    DEFAULT_ALARM_MINUTES,
    calendar_bytes,
    calendars_by_group,
    check_alarm_kinds,
    previous_events,
)


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
        A roster's worker group (or chosen worker) whose calendar, report and chart alone are written.
    alarm_kinds : tuple of str
        Event kinds that get a reminder (default: bright light, dark glasses, going to bed).
    paper : {"A4", "letter"}
        Page size the report's print rules ask for.
    """

    ics: Path | None = None
    report: Path | None = None
    chart: Path | None = None
    force: bool = False
    alarm_minutes: float = DEFAULT_ALARM_MINUTES
    no_alarms: bool = False
    group: str | None = None
    alarm_kinds: tuple[str, ...] = DEFAULT_ALARM_KINDS
    paper: str = "A4"

    def check(self) -> None:
        """Refuse unwritable targets before any planning is done (InputError, exit 2)."""
        check_alarm_kinds(self.alarm_kinds)
        if self.report is not None:
            from planner.plans.report import check_paper

            check_paper(self.paper)
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
        ``{"ics": [paths], "report": path or None, "chart": [paths]}`` for ``--json`` (a roster with crews
        writes one chart per crew, FILE-crew.png, as it writes one calendar per crew).
    """
    written: dict[str, Any] = {"ics": [], "report": None, "chart": []}
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
            data = calendar_bytes(document, events, name=name, alarm_minutes=alarm, alarm_kinds=files.alarm_kinds,
                                  previous=previous)
            written["ics"].append(str(write_atomic(path, data, force=files.force)))
    if files.report is not None or files.chart is not None:
        from planner.plans.report import chart_bytes, chart_format, report_html  # matplotlib only when asked

        if files.report is not None:
            page = report_html(document, group=files.group, paper=files.paper)
            written["report"] = str(write_atomic(files.report, page, force=files.force))
        if files.chart is not None:
            # one chart per crew (or the chosen one): a chart never overlays two crews' rows
            charts = calendars_by_group(document, files.group) if document.group_days else {None: None}
            paths = []
            for group in charts:
                path = group_path(files.chart, group if len(charts) > 1 else None)
                check_target(path, force=files.force)
                part = document.for_group(group) if group is not None else document
                paths.append(str(write_atomic(path, chart_bytes(part, chart_format(files.chart)), force=files.force)))
            written["chart"] = paths
    return written
