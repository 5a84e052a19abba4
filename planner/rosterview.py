"""A roster plan cut into days on the site's clock, and a compact text chart of it.

Shared by the command line and later calendars and reports; nothing here computes science:
every number comes from :mod:`planner.rosterplan`.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from datetime import datetime, timedelta


from planner.roster import Roster, RosterDay, RosterPlan
from planner.rosterplan import Metrics
from planner.trip import Window

#: A sleep or window belongs to the day holding its start less this (a sleep from 00:30 is the
#: night of the evening before), as in :mod:`planner.tripview`.
NIGHT_BELONGS_BACK = timedelta(hours=6)

#: Symbols of the text chart, in the order they overwrite each other (later wins).
CHART_SYMBOLS = (("sleep", "="), ("work", "#"), ("bright light", "*"), ("dark glasses", "o"), ("CBTmin", "V"))


@dataclass(frozen=True)
class RosterDayView:
    """One day of a worker's plan with its predicted markers (UTC instants)."""

    day: RosterDay
    sleep: tuple[tuple[datetime, datetime], ...]
    bright: tuple[Window, ...]
    avoid: tuple[Window, ...]
    cbtmin: datetime | None
    dlmo: datetime | None
    work_low_h: float
    burden_h: float
    adapted: bool


def _owner(days, moment: datetime, back: timedelta = timedelta(0)) -> int | None:
    """Index of the day holding ``moment - back``; None before the draft, the last day after it."""
    shifted = moment - back
    if shifted < days[0].start:
        return None
    return next((day.index for day in days if shifted < day.end), days[-1].index)


def day_views(days: list[RosterDay], plan: RosterPlan, metrics: Metrics, epoch: datetime, column: int = 0
              ) -> list[RosterDayView]:
    """The plan of one worker (``column`` of ``metrics``) cut into its days."""
    sleep: dict[int | None, list] = {d.index: [] for d in days} | {None: []}
    bright: dict[int | None, list] = {d.index: [] for d in days} | {None: []}
    avoid: dict[int | None, list] = {d.index: [] for d in days} | {None: []}
    for episode in plan.sleep:   # the night before the draft (owner None) is not shown
        sleep[_owner(days, episode[0], NIGHT_BELONGS_BACK)].append(episode)
    for window in plan.bright:
        bright[_owner(days, window.start)].append(window)
    for window in plan.avoid:
        avoid[_owner(days, window.start)].append(window)

    def moment(hours: float) -> datetime | None:
        return epoch + timedelta(hours=float(hours)) if math.isfinite(hours) else None

    views = []
    for day in days:
        cbt = moment(metrics.cbtmin[column, day.index])
        views.append(RosterDayView(day, tuple(sorted(sleep[day.index])),
                                   tuple(sorted(bright[day.index], key=lambda w: w.start)),
                                   tuple(sorted(avoid[day.index], key=lambda w: w.start)), cbt,
                                   moment(metrics.dlmo[column, day.index]),
                                   float(metrics.work_low_day_h[column, day.index]),
                                   float(metrics.day_burden_h[column, day.index]),
                                   bool(metrics.adapted[column, day.index])))
    return views


def text_chart(roster: Roster, views: list[RosterDayView], *, first_hour: float = 12.0,
               cell_minutes: float = 30.0) -> list[str]:
    """One line per day from ``first_hour`` to the same hour the next day on the site's clock.

    Cells show sleep ``=``, work ``#``, bright light ``*``, dark glasses ``o`` and CBTmin ``V``
    (:data:`CHART_SYMBOLS`; a later symbol overwrites an earlier one in the same cell).
    """
    cells = int(round(24 * 60 / cell_minutes))
    step = timedelta(minutes=cell_minutes)
    symbol = dict(CHART_SYMBOLS)
    all_sleep = [s for v in views for s in v.sleep]
    all_bright = [(w.start, w.end) for v in views for w in v.bright]
    all_avoid = [(w.start, w.end) for v in views for w in v.avoid]
    work = [v.day.work for v in views if v.day.work is not None]
    marks = [v.cbtmin for v in views if v.cbtmin is not None]
    ticks = "".join("|" if (k * cell_minutes / 60.0) % 6 == 0 else " " for k in range(cells))
    hours = [f"{(first_hour + h) % 24:02.0f}" for h in range(0, 24, 6)]
    scale = "".join(h.ljust(int(6 * 60 / cell_minutes)) for h in hours)
    lines = [f"{'':10} {scale}", f"{'':10} {ticks}"]
    for view in views:
        origin = roster.at(view.day.date, first_hour)
        row = [" "] * cells
        for name, spans in (("sleep", all_sleep), ("work", work), ("bright light", all_bright),
                            ("dark glasses", all_avoid)):
            for k in range(cells):
                middle = origin + (k + 0.5) * step
                if any(s <= middle < e for s, e in spans):
                    row[k] = symbol[name]
        for mark in marks:
            k = int((mark - origin) / step)
            if 0 <= k < cells:
                row[k] = symbol["CBTmin"]
        label = f"{view.day.date.strftime('%a %d')} {view.day.label:>3}"
        lines.append(f"{label:10} {''.join(row)}")
    return lines


def chart_legend() -> str:
    return "  ".join(f"{sym} {name}" for name, sym in CHART_SYMBOLS)
