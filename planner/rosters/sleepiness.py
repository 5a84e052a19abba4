"""Sleepiness forecasts of roster plans as plain data (JSON, tables, calendars); formatting only.

The numbers come from :mod:`planner.engine.sleepiness` through :class:`planner.rosters.search.Metrics`;
this module turns them into per-shift rows, per-draft summaries and population percentiles.
"""

from __future__ import annotations

import math
from datetime import datetime, timedelta
from typing import Any, Sequence

import numpy as np

from planner.engine.population import spread
from planner.engine.sleepiness import SLEEPY_KSS, ShiftSleepiness

#: Plain-words description shown beside every sleepiness figure.
SLEEPINESS_NOTE = (f"KSS: Karolinska Sleepiness Scale 1-9 (Åkerstedt & Gillberg 1990) from the three-process model "
                   f"of alertness (Åkerstedt & Folkard 1997) driven by the simulated clock and the planned sleeps; "
                   f"KSS {SLEEPY_KSS:g} = sleepy, but no effort to stay awake (counted when the forecast reads "
                   f"{SLEEPY_KSS:.1f} at one decimal). A population forecast, not a "
                   f"fitness-for-duty test.")


def _num(value) -> float | None:
    value = float(value)
    return round(value, 2) if math.isfinite(value) else None


def work_days(days: Sequence) -> list:
    """The days with a shift, in the order of the sleepiness columns."""
    return [d for d in days if d.work is not None]


def shift_rows(days: Sequence, sleepiness: ShiftSleepiness, epoch: datetime, zone, row: int = 0) -> list[dict]:
    """One dict per shift for worker (or plan) ``row``: lowest alertness and when, KSS, drive home."""
    rows = []
    for w, day in enumerate(work_days(days)):
        when = sleepiness.lowest_at_h[row, w]
        rows.append({
            "date": day.date.isoformat(),
            "shift": day.label,
            "kind": day.kind,
            "lowest_alertness": _num(sleepiness.lowest_alertness[row, w]),
            "lowest_at": None if not math.isfinite(when) else
            (epoch + timedelta(hours=float(when))).astimezone(zone).isoformat(timespec="minutes"),
            "peak_kss": _num(sleepiness.peak_kss[row, w]),
            "hours_at_kss_7_or_more": _num(sleepiness.sleepy_hours[row, w]),
            "drive_home_kss": _num(sleepiness.drive_kss[row, w]),
            "drive_home_sleepy": bool(sleepiness.drive_flag[row, w]),
        })
    return rows


def summary(days: Sequence, sleepiness: ShiftSleepiness, row: int = 0) -> dict[str, Any]:
    """A draft's sleepiness in a few numbers for one worker (or plan)."""
    kinds = [d.kind for d in work_days(days)]
    nights = [w for w, kind in enumerate(kinds) if kind == "night"]
    peak = sleepiness.peak_kss[row]
    return {
        "hours_at_kss_7_or_more_per_week": _num(sleepiness.sleepy_hours_per_week(len(days))[row]),
        "highest_kss": _num(np.nanmax(peak)) if peak.size and np.isfinite(peak).any() else None,
        "mean_peak_kss": _num(np.nanmean(peak)) if peak.size and np.isfinite(peak).any() else None,
        "highest_kss_on_nights": _num(np.nanmax(peak[nights])) if nights and np.isfinite(peak[nights]).any() else None,
        "sleepy_drives_home": int(sleepiness.drive_flag[row].sum()),
        "drives_home": int(sleepiness.drive_flag.shape[1]),
    }


def population_summary(days: Sequence, sleepiness: ShiftSleepiness) -> dict[str, dict]:
    """Percentiles (10th, median, 90th) over workers of the per-worker sleepiness numbers."""
    with np.errstate(all="ignore"):
        highest = np.nanmax(np.where(np.isfinite(sleepiness.peak_kss), sleepiness.peak_kss, -np.inf), axis=1)
    highest = np.where(np.isfinite(highest), highest, np.nan)
    return {
        "hours_at_kss_7_or_more_per_week": {k: _num(v) for k, v in
                                            spread(sleepiness.sleepy_hours_per_week(len(days))).items()},
        "highest_kss": {k: _num(v) for k, v in spread(highest).items()},
        "sleepy_drives_home": {k: _num(v) for k, v in spread(sleepiness.drive_flag.sum(axis=1).astype(float)).items()},
    }


def shift_profiles(days: Sequence, sleepiness: ShiftSleepiness, epoch: datetime, row: int = 0) -> dict:
    """KSS along each shift for worker ``row``, by the shift's local date: ((UTC instant, KSS), ...)."""
    if not sleepiness.profiles:
        return {}
    return {day.date: tuple((epoch + timedelta(hours=float(t)), float(k)) for t, k in zip(times, kss[row]))
            for day, (times, kss) in zip(work_days(days), sleepiness.profiles)}


def sleepiest_shift(rows: Sequence[dict]) -> dict | None:
    """The shift with the highest KSS among :func:`shift_rows` (its date, shift, when and how sleepy); None
    without a finite KSS."""
    rated = [r for r in rows if r["peak_kss"] is not None]
    if not rated:
        return None
    row = max(rated, key=lambda r: r["peak_kss"])
    return {key: row[key] for key in ("date", "shift", "kind", "lowest_alertness", "lowest_at", "peak_kss",
                                      "drive_home_kss", "drive_home_sleepy")}


#: Columns of :func:`crew_rows` (the command's table and the report's section).
CREW_COLUMNS = ("crew", "KSS≥7 h/wk", "sleepiest shift", "sleepy drives home")
#: What the columns of :func:`crew_rows` mean.
CREW_NOTE = ("KSS: Karolinska Sleepiness Scale 1-9, three-process model of alertness; KSS≥7: hours at work at KSS 7 "
             "or more per week; sleepiest shift: its highest KSS and the time of its lowest alertness. A population "
             "forecast, not a fitness-for-duty test.")


def crew_rows(crews: dict, zone) -> list[tuple[str, str, str, str]]:
    """One row of :data:`CREW_COLUMNS` per crew with a forecast (``crews``: name -> an object with ``days`` and
    ``sleepiness``, e.g. :class:`planner.rosters.views.CrewPlan`)."""
    rows = []
    for name, crew in crews.items():
        if crew.sleepiness is None:
            continue
        brief = summary(crew.days, crew.sleepiness)
        worst = sleepiest_shift(shift_rows(crew.days, crew.sleepiness, crew.days[0].start, zone))
        where = "—" if worst is None else (
            f"{datetime.fromisoformat(worst['date']):%a %d %b} {worst['shift']}: KSS {worst['peak_kss']:.1f}"
            + (f" around {worst['lowest_at'][11:16]}" if worst["lowest_at"] else ""))
        hours = brief["hours_at_kss_7_or_more_per_week"]
        rows.append((name, "—" if hours is None else f"{hours:.1f}", where,
                     f"{brief['sleepy_drives_home']} of {brief['drives_home']}"))
    return rows


def night_notes(days: Sequence, sleepiness: ShiftSleepiness | None, zone) -> dict:
    """Each night shift's :func:`night_description`, by local date ({} without a forecast): a crew's calendar
    describes that crew's own nights."""
    if sleepiness is None:
        return {}
    rows = shift_rows(days, sleepiness, days[0].start, zone)
    return {day.date: night_description(row) for day, row in zip(work_days(days), rows) if row["kind"] == "night"}


def night_description(row: dict) -> str:
    """One line for a night shift's calendar event: the sleepiest time and the drive home."""
    text = (f"Forecast sleepiness (KSS 1-9): highest {row['peak_kss']:.1f} around "
            f"{row['lowest_at'][11:16] if row['lowest_at'] else '?'}; "
            f"{row['hours_at_kss_7_or_more']:.1f} h at KSS 7 or more.")
    if row["drive_home_sleepy"]:
        text += (f" Drive home: KSS {row['drive_home_kss']:.1f} — sleepy; consider a nap, public transport or a "
                 "lift, and follow your employer's fatigue rules.")
    return text + " Population model, not a fitness-for-duty test."

