"""Reading a wearable light meter's log (CSV) into light at the eye.

The file
--------
A CSV file with a header row.  Columns are found by header name, case-insensitive:

- time stamp: ``timestamp``, ``time``, ``datetime``, ``date_time`` (required).  ISO 8601 with a
  UTC offset (``2027-03-01T07:30:00+00:00``, ``...Z``) or local wall times without one, read on
  the clock of ``time_zone``.  Local times inside a spring-forward gap are reported and skipped;
  a repeated fall-back hour is resolved by row order (the first pass before the second) and
  reported.
- illuminance: ``lux``, ``illuminance``, ``light_lux`` (required) [lux].
- sleep/wake (optional): ``sleep`` or ``asleep`` (1/true/yes/sleep = asleep, 0/false/no/wake =
  awake), or ``wake``, ``state``, ``sleep_wake`` with words (``sleep``/``s``/``asleep`` vs
  ``wake``/``w``/``awake``; a number in a ``wake`` column is 1 = awake).  While asleep the eyes
  are shut: the light at the eye is 0 lux, whatever the meter read.

What is reported, never silently dropped (:attr:`LightLog.findings`)
---------------------------------------------------------------------
Gaps longer than the gap threshold, duplicate time stamps (the first row is kept), rows out of
time order (the log is sorted), negative lux (read as 0 lux), rows whose lux or time cannot be
read (skipped), clock changes in the local times, and local times that fall into a
spring-forward gap.

Light between samples
---------------------
Each sample's lux holds until the next sample (sample and hold), up to the gap threshold:
``max(GAP_FACTOR × the median sampling interval, MIN_GAP_MINUTES)``.  A longer interval is a
gap: :func:`log_schedule` fills it with the person's habitual day (habitual sleep in darkness,
indoor light, an hour of midday daylight: :func:`planner.trips.model.place_pattern`), an assumption
this planner states with every gap it reports.  A wrist-worn meter may read differently from
the light at the eye; no correction is applied.
"""

from __future__ import annotations

import csv
import math
from dataclasses import dataclass
from datetime import datetime, timedelta, timezone, tzinfo
from pathlib import Path

import numpy as np

from planner.errors import InputError
from planner.world.light import LightSchedule, hours_between
from planner.world.localtime import FIRST_YEAR, LAST_YEAR, classify_wall_time, zone

UTC = timezone.utc

#: Header names accepted for each column (lower case).
TIME_COLUMNS = ("timestamp", "time", "datetime", "date_time")
LUX_COLUMNS = ("lux", "illuminance", "light_lux")
SLEEP_COLUMNS = ("sleep", "asleep")
STATE_COLUMNS = ("wake", "state", "sleep_wake")
#: An interval longer than this many median sampling intervals is a gap (design choice of this planner).
GAP_FACTOR = 5.0
#: ... and never shorter than this [min] (design choice: a 1-min logger missing a quarter hour is a gap).
MIN_GAP_MINUTES = 15.0

_ASLEEP = {"1", "true", "yes", "y", "sleep", "s", "asleep"}
_AWAKE = {"0", "false", "no", "n", "wake", "w", "awake"}


@dataclass(frozen=True)
class Finding:
    """One thing about the file the user should know.

    Attributes
    ----------
    kind : str
        ``gap``, ``duplicate``, ``out_of_order``, ``negative_lux``, ``unreadable``,
        ``clock_change``, ``nonexistent_time``, ``time_zone``, ``outside_period``.
    message : str
        Plain statement with the rows or times concerned.
    rows : tuple of int
        File line numbers concerned (1 = header), at most a few.
    hours : float
        Length of a gap [h] (NaN for other kinds).
    """

    kind: str
    message: str
    rows: tuple[int, ...] = ()
    hours: float = math.nan

    def as_dict(self) -> dict:
        return {"kind": self.kind, "message": self.message, "rows": list(self.rows),
                "hours": None if math.isnan(self.hours) else self.hours}


@dataclass(frozen=True)
class LightLog:
    """A light log read from a file.

    Attributes
    ----------
    source : str
    times : tuple of datetime
        Sample instants, UTC, strictly increasing.
    lux : ndarray, shape (M,)
        Illuminance read by the meter [lux], negatives set to 0.
    asleep : ndarray of bool, shape (M,), or None
        Sleep state per sample when the file has a sleep/wake column.
    interval_h : float
        Median sampling interval [h].
    gap_h : float
        Intervals longer than this are gaps [h].
    findings : tuple of Finding
    """

    source: str
    times: tuple[datetime, ...]
    lux: np.ndarray
    asleep: np.ndarray | None
    interval_h: float
    gap_h: float
    findings: tuple[Finding, ...]

    @property
    def start(self) -> datetime:
        return self.times[0]

    @property
    def end(self) -> datetime:
        """End of the last sample's interval (one sampling interval after it)."""
        return self.times[-1] + timedelta(hours=self.interval_h)

    def gaps(self) -> list[tuple[datetime, datetime]]:
        """The gaps (UTC), from the end of the sample before to the next sample."""
        hold = timedelta(hours=self.interval_h)
        return [(a + hold, b) for a, b in zip(self.times[:-1], self.times[1:]) if hours_between(a, b) > self.gap_h]

    def eye_lux(self) -> np.ndarray:
        """Light at the eye per sample [lux]: 0 while asleep (eyes shut), else the meter's reading."""
        return self.lux if self.asleep is None else np.where(self.asleep, 0.0, self.lux)


def _column(header: list[str], names: tuple[str, ...]) -> int | None:
    lowered = [h.strip().lower() for h in header]
    for name in names:
        if name in lowered:
            return lowered.index(name)
    return None


def _rows_text(rows: list[int], limit: int = 5) -> str:
    shown = ", ".join(str(r) for r in rows[:limit])
    return shown + (f" and {len(rows) - limit} more" if len(rows) > limit else "")


def _parse_time(text: str, local_zone: tzinfo, previous: datetime | None):
    """(UTC instant, kind) with kind in {"aware", "local", "repeated", "gap"}; raises ValueError if unreadable."""
    value = datetime.fromisoformat(text.strip().replace("Z", "+00:00"))
    if value.tzinfo is not None and value.utcoffset() is not None:
        return value.astimezone(UTC), "aware"
    kind, candidates = classify_wall_time(value, local_zone)
    if kind == "gap":
        return None, "gap"
    if kind == "repeated":
        first, second = (c.astimezone(UTC) for c in candidates)
        # The first pass of a repeated hour comes before the second: take the first unless the
        # previous row already lies at or past it.
        return (second if previous is not None and previous >= first else first), "repeated"
    return candidates[0].astimezone(UTC), "local"


def _sleep_value(text: str, numeric_means_awake: bool) -> bool | None:
    word = text.strip().lower()
    if word in ("0", "1") and numeric_means_awake:
        return word == "0"
    if word in _ASLEEP:
        return True
    if word in _AWAKE:
        return False
    return None


def read_light_log(path: str | Path, time_zone: str | tzinfo | None = None) -> LightLog:
    """Read a light log (see the module docstring).

    Parameters
    ----------
    path : str or Path
        The CSV file.
    time_zone : str or tzinfo, optional
        IANA zone of time stamps written without a UTC offset; without it such time stamps
        are an error.

    Raises
    ------
    InputError
        A file that cannot be read, has no time or lux column (the message lists the allowed
        names), or has fewer than two readable rows.
    """
    source = str(path)
    try:
        with open(path, newline="", encoding="utf-8-sig") as handle:
            rows = list(csv.reader(handle))
    except FileNotFoundError:
        raise InputError("no such light-log file", source=source, field="light_log") from None
    except (OSError, UnicodeDecodeError, csv.Error) as exc:
        raise InputError(f"cannot read the light log: {exc}", source=source, field="light_log") from None
    if not rows:
        raise InputError("the light log is empty; it needs a header row and samples", source=source)
    header = rows[0]
    time_col = _column(header, TIME_COLUMNS)
    lux_col = _column(header, LUX_COLUMNS)
    if lux_col is None:
        raise InputError(f"no lux column (columns found: {', '.join(h.strip() for h in header) or 'none'}); "
                         f"name it one of {', '.join(LUX_COLUMNS)}", source=source, field="lux")
    if time_col is None:
        raise InputError(f"no time-stamp column (columns found: {', '.join(h.strip() for h in header)}); "
                         f"name it one of {', '.join(TIME_COLUMNS)}", source=source, field="timestamp")
    sleep_col = _column(header, SLEEP_COLUMNS)
    state_col = _column(header, STATE_COLUMNS) if sleep_col is None else None
    local_zone = zone(time_zone, field="light_log_time_zone", source=source) if time_zone is not None else None

    findings: list[Finding] = []
    unreadable: list[int] = []
    out_of_range: list[int] = []
    negative: list[int] = []
    nonexistent: list[int] = []
    repeated: list[int] = []
    kinds: set[str] = set()
    samples: list[tuple[datetime, float, bool | None, int]] = []
    previous: datetime | None = None
    for line, row in enumerate(rows[1:], start=2):
        if not row or all(not cell.strip() for cell in row):
            continue
        try:
            stamp = row[time_col]
            lux = float(row[lux_col])
            if not math.isfinite(lux):
                raise ValueError("lux is not finite")
            value = datetime.fromisoformat(stamp.strip().replace("Z", "+00:00"))
        except (ValueError, IndexError):
            unreadable.append(line)
            continue
        if not FIRST_YEAR <= value.year <= LAST_YEAR:
            out_of_range.append(line)
            continue
        if value.tzinfo is None and local_zone is None:
            raise InputError(f"line {line}: time stamp {stamp.strip()!r} has no UTC offset; give the offset "
                             "(e.g. 2027-03-01T07:30+01:00) or the log's time zone (light_log_time_zone)",
                             source=source, field="timestamp")
        moment, kind = _parse_time(stamp, local_zone, previous) if value.tzinfo is None else (
            value.astimezone(UTC), "aware")
        if kind == "gap":
            nonexistent.append(line)
            continue
        kinds.add(kind)
        if kind == "repeated":
            repeated.append(line)
        if lux < 0:
            negative.append(line)
            lux = 0.0
        state = None
        if sleep_col is not None and sleep_col < len(row):
            state = _sleep_value(row[sleep_col], numeric_means_awake=False)
        elif state_col is not None and state_col < len(row):
            numeric = header[state_col].strip().lower() == "wake"
            state = _sleep_value(row[state_col], numeric_means_awake=numeric)
        samples.append((moment, lux, state, line))
        previous = moment

    if unreadable:
        findings.append(Finding("unreadable", f"{len(unreadable)} row(s) with a time or lux that cannot be read "
                                              f"were skipped (lines {_rows_text(unreadable)})", tuple(unreadable[:5])))
    if out_of_range:
        findings.append(Finding("out_of_range", f"{len(out_of_range)} row(s) dated outside {FIRST_YEAR}-"
                                                f"{LAST_YEAR}, the years phaseplan can plan, were skipped (lines "
                                                f"{_rows_text(out_of_range)})", tuple(out_of_range[:5])))
    if nonexistent:
        findings.append(Finding("nonexistent_time", f"{len(nonexistent)} row(s) with a local time that does not "
                                                    "exist (clocks jumped forward) were skipped (lines "
                                                    f"{_rows_text(nonexistent)})", tuple(nonexistent[:5])))
    if repeated:
        findings.append(Finding("clock_change", f"{len(repeated)} row(s) fall in an hour the clocks repeat "
                                                "(fall back); read in row order, the first pass before the "
                                                f"second (lines {_rows_text(repeated)})", tuple(repeated[:5])))
    if negative:
        findings.append(Finding("negative_lux", f"{len(negative)} row(s) with negative lux were read as 0 lux "
                                                f"(lines {_rows_text(negative)})", tuple(negative[:5])))
    if "local" in kinds or "repeated" in kinds:
        label = str(getattr(local_zone, "key", local_zone))
        findings.append(Finding("time_zone", f"time stamps without a UTC offset were read on the {label} clock"))
    if len(samples) < 2:
        raise InputError(f"the light log has {len(samples)} readable sample(s); at least two are needed",
                         source=source, field="lux")

    order = sorted(range(len(samples)), key=lambda k: (samples[k][0], k))
    out_of_order = [samples[k][3] for i, k in enumerate(order) if k != i]
    if out_of_order:
        findings.append(Finding("out_of_order", f"{len(out_of_order)} row(s) were not in time order and were sorted "
                                                f"(lines {_rows_text(sorted(out_of_order))})",
                                tuple(sorted(out_of_order)[:5])))
    ordered = [samples[k] for k in order]
    kept, duplicates = [ordered[0]], []
    for sample in ordered[1:]:
        if sample[0] == kept[-1][0]:
            duplicates.append(sample[3])
        else:
            kept.append(sample)
    if duplicates:
        findings.append(Finding("duplicate", f"{len(duplicates)} row(s) repeat an earlier time stamp; the first "
                                             f"row of each was kept (lines {_rows_text(duplicates)})",
                                tuple(duplicates[:5])))
    if len(kept) < 2:
        raise InputError(f"the light log has fewer than two distinct samples ({len(kept)} time stamp(s) after "
                         "dropping repeats); at least two are needed", source=source, field="timestamp")
    times = tuple(s[0] for s in kept)
    steps_h = np.array([hours_between(a, b) for a, b in zip(times[:-1], times[1:])])
    interval_h = float(np.median(steps_h))
    gap_h = max(GAP_FACTOR * interval_h, MIN_GAP_MINUTES / 60.0)
    for k in np.nonzero(steps_h > gap_h)[0]:
        a, b = times[k], times[k + 1]
        findings.append(Finding("gap", f"no samples for {steps_h[k]:.1f} h from {a.isoformat()} to {b.isoformat()} "
                                       "(UTC); filled with the habitual day (habitual sleep in darkness, indoor "
                                       "light, an hour of midday daylight)", (kept[k][3], kept[k + 1][3]),
                                float(steps_h[k])))
    states = [s[2] for s in kept]
    asleep = None
    if sleep_col is not None or state_col is not None:
        unknown = [s[3] for s in kept if s[2] is None]
        if unknown:
            findings.append(Finding("unreadable", f"{len(unknown)} row(s) with an unreadable sleep/wake value were "
                                                  f"taken as awake (lines {_rows_text(unknown)})", tuple(unknown[:5])))
        asleep = np.array([bool(s) for s in states])
    return LightLog(source, times, np.array([s[1] for s in kept]), asleep, interval_h, gap_h, tuple(findings))


def log_schedule(log: LightLog, habitual: LightSchedule) -> LightSchedule:
    """The light at the eye over ``habitual``'s span: the log where it has samples, ``habitual`` elsewhere.

    Each sample's lux (0 while asleep) holds for one sampling interval, or until the next sample
    when that comes sooner; gaps and the times before and after the log take the habitual light.
    """
    start, end = habitual.start, habitual.end
    times_h = np.array([hours_between(start, t) for t in log.times])
    holds = np.minimum(np.append(np.diff(times_h), log.interval_h), log.interval_h)
    holds = np.where(holds > log.gap_h, log.interval_h, holds)
    span = hours_between(start, end)
    lo, hi = np.clip(times_h, 0.0, span), np.clip(times_h + holds, 0.0, span)
    keep = hi > lo
    lo, hi, lux = lo[keep], hi[keep], log.eye_lux()[keep]
    base_edges = habitual.relative_to(start)
    edges = np.unique(np.concatenate([base_edges, lo, hi, [0.0, span]]))
    edges = edges[(edges >= 0.0) & (edges <= span)]
    mids = 0.5 * (edges[:-1] + edges[1:])
    values = habitual.lux_at(mids + hours_between(habitual.epoch, start))
    index = np.searchsorted(lo, mids, side="right") - 1
    inside = (index >= 0) & (mids < hi[np.clip(index, 0, None)]) if lo.size else np.zeros(mids.shape, bool)
    values = np.where(inside, lux[np.clip(index, 0, None)] if lo.size else 0.0, values)
    widths = np.diff(edges)
    keep_edge = widths > 1e-9
    edges = np.append(edges[:-1][keep_edge], span)
    values = values[keep_edge]
    same = np.concatenate(([False], values[1:] == values[:-1]))
    return LightSchedule(start, np.append(edges[:-1][~same], span), values[~same])
