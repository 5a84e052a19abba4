"""Reading the local wall-clock times people type, without silent guesses.

Users give times as they read them off a clock in some place ("2026-10-25
02:30 in Europe/Berlin").  Two kinds of such times are traps:

* *nonexistent* times inside a spring-forward gap (02:30 on the day Berlin
  jumps from 02:00 to 03:00), which :mod:`zoneinfo` builds silently, and
* *repeated* times inside a fall-back overlap (02:30 on the day Berlin goes
  back from 03:00 to 02:00), which :mod:`zoneinfo` silently resolves to the
  first occurrence.

:func:`resolve_local` detects both by round-tripping the wall time through
UTC and refuses them with an :class:`~planner.errors.InputError` that says
what the clocks do on that day; a repeated time is accepted once the caller
says which occurrence is meant (``fold``, as in PEP 495).

Do time arithmetic in UTC (:func:`to_utc`) and convert to local time only for
display: adding a ``timedelta`` to an aware local datetime is wall-clock
arithmetic and changes real durations across a clock change.
"""

from __future__ import annotations

import re
from datetime import date, datetime, time, timedelta, timezone, tzinfo
from functools import lru_cache
from zoneinfo import ZoneInfo, ZoneInfoNotFoundError, available_timezones

from planner.errors import InputError

UTC = timezone.utc
SECONDS_PER_HOUR = 3600.0
#: How to write a time-zone name, shown in error messages.
ZONE_HINT = 'write an IANA time-zone name such as "Europe/Berlin", "America/New_York" or "UTC"'
#: How to write a local date and time, shown in error messages.
LOCAL_TIME_HINT = 'write it as an ISO 8601 local date and time such as "2026-03-29 07:30"'
#: How to write a clock time, shown in error messages.
CLOCK_HINT = 'write it as HH:MM on the 24-hour clock, e.g. "07:30" or "23:15"'

_CLOCK_RE = re.compile(r"([0-9]{1,2}):([0-9]{2})(?::([0-9]{2}))?")


@lru_cache(maxsize=1)
def _zone_names_by_lower() -> dict[str, str]:
    return {name.lower(): name for name in available_timezones()}


def zone(tz_name: str | tzinfo, *, field: str | None = "tz", source: str | None = None) -> tzinfo:
    """The time zone called ``tz_name`` (an IANA name read with :mod:`zoneinfo`).

    Parameters
    ----------
    tz_name : str or tzinfo
        IANA time-zone name such as ``"Europe/Berlin"``; a ``tzinfo`` object is
        returned unchanged.
    field, source : str, optional
        Where the name came from, for the error message.

    Returns
    -------
    tzinfo

    Raises
    ------
    InputError
        If the name is not a known IANA time zone.
    """
    if isinstance(tz_name, tzinfo):
        return tz_name
    if not isinstance(tz_name, str):
        raise InputError(f"a time zone must be given by name, got {type(tz_name).__name__}; {ZONE_HINT}",
                         field=field, source=source)
    name = tz_name.strip()
    if not name:
        raise InputError(f"empty time-zone name; {ZONE_HINT}", field=field, source=source)
    try:
        return ZoneInfo(name)
    except (ZoneInfoNotFoundError, ValueError, OSError):
        pass
    message = f'unknown time zone "{name}"; {ZONE_HINT}'
    suggestion = _zone_names_by_lower().get(name.lower())
    if suggestion is not None:
        message += f' (did you mean "{suggestion}"?)'
    raise InputError(message, field=field, source=source)


def _zone_label(tz: tzinfo) -> str:
    return str(getattr(tz, "key", None) or tz)


def to_utc(aware: datetime, *, field: str | None = "time", source: str | None = None) -> datetime:
    """The same instant in UTC.

    Raises
    ------
    InputError
        If ``aware`` is not a datetime carrying a time zone.
    """
    if not isinstance(aware, datetime):
        raise InputError(f"expected a datetime, got {type(aware).__name__}", field=field, source=source)
    if aware.tzinfo is None or aware.utcoffset() is None:
        raise InputError("the time carries no time zone (a floating local time is ambiguous); "
                         "attach one with resolve_local()", field=field, source=source)
    return aware.astimezone(UTC)


def _format_offset(offset: timedelta) -> str:
    total = int(offset.total_seconds())
    sign = "+" if total >= 0 else "-"
    hours, rest = divmod(abs(total), 3600)
    minutes, seconds = divmod(rest, 60)
    text = f"{sign}{hours:02d}:{minutes:02d}"
    return text + (f":{seconds:02d}" if seconds else "")


def _wall_text(wall: datetime) -> str:
    text = wall.strftime("%Y-%m-%d %H:%M")
    return text + (wall.strftime(":%S") if wall.second or wall.microsecond else "")


def _clock_text(wall: datetime) -> str:
    return wall.strftime("%H:%M:%S") if wall.second else wall.strftime("%H:%M")


def _transition_between(tz: tzinfo, lo: datetime, hi: datetime) -> datetime | None:
    """First UTC instant in (lo, hi] whose offset equals the offset at ``hi``.

    ``lo`` and ``hi`` are UTC instants with different offsets in ``tz`` and one
    transition between them; found by bisection to the second.
    """
    offset_hi = hi.astimezone(tz).utcoffset()
    if lo.astimezone(tz).utcoffset() == offset_hi:
        return None
    lo_s, hi_s = 0, int((hi - lo).total_seconds())
    while hi_s - lo_s > 1:
        mid = (lo_s + hi_s) // 2
        if (lo + timedelta(seconds=mid)).astimezone(tz).utcoffset() == offset_hi:
            hi_s = mid
        else:
            lo_s = mid
    return lo + timedelta(seconds=hi_s)


def _classify(wall: datetime, tz: tzinfo):
    """Round-trip ``wall`` (naive) through UTC for both folds.

    Returns ``(kind, candidates)`` with kind in {"unique", "gap", "repeated"}
    and the two aware candidates (fold 0, fold 1).
    """
    candidates = tuple(wall.replace(tzinfo=tz, fold=f) for f in (0, 1))
    utc = tuple(c.astimezone(UTC) for c in candidates)
    back = tuple(u.astimezone(tz).replace(tzinfo=None, fold=0) for u in utc)
    exists = tuple(b == wall.replace(fold=0) for b in back)
    if not any(exists):
        return "gap", candidates
    if all(exists) and utc[0] != utc[1]:
        return "repeated", candidates
    return "unique", candidates


def classify_wall_time(wall: datetime, tz: tzinfo) -> tuple[str, tuple[datetime, datetime]]:
    """Whether a naive local wall time is ``"unique"``, in a spring-forward ``"gap"`` or
    ``"repeated"`` (fall back) in ``tz``, with its two aware readings (fold 0, fold 1).

    For readers of machine logs, which must decide row by row instead of refusing the file.
    """
    return _classify(wall.replace(tzinfo=None, fold=0), tz)


def _gap_message(wall: datetime, tz: tzinfo, candidates) -> str:
    utc = sorted(c.astimezone(UTC) for c in candidates)
    label = _zone_label(tz)
    moment = _transition_between(tz, utc[0], utc[1])
    text = f"{_wall_text(wall)} does not exist in {label}"
    if moment is None:
        return text + ": the clocks skip over it"
    before = (moment - timedelta(seconds=1)).astimezone(tz).utcoffset()
    after = moment.astimezone(tz).utcoffset()
    jump_from = (moment + before).replace(tzinfo=None)
    jump_to = (moment + after).replace(tzinfo=None)
    return (f"{text}: clocks jump from {_clock_text(jump_from)} to {_clock_text(jump_to)} on "
            f"{jump_from.date().isoformat()}")


def _repeated_message(wall: datetime, tz: tzinfo, candidates) -> str:
    first, second = candidates
    label = _zone_label(tz)
    utc_first, utc_second = first.astimezone(UTC), second.astimezone(UTC)
    moment = _transition_between(tz, min(utc_first, utc_second), max(utc_first, utc_second))
    text = f"{_wall_text(wall)} occurs twice in {label}"
    if moment is not None:
        before = (moment - timedelta(seconds=1)).astimezone(tz).utcoffset()
        after = moment.astimezone(tz).utcoffset()
        back_from = (moment + before).replace(tzinfo=None)
        back_to = (moment + after).replace(tzinfo=None)
        text += (f" (clocks go back from {_clock_text(back_from)} to {_clock_text(back_to)} on "
                 f"{back_from.date().isoformat()})")

    def describe(c: datetime) -> str:
        name = c.tzname()
        return _format_offset(c.utcoffset()) + (f" {name}" if name and name[0] not in "+-" else "")

    return (f"{text}: say which one, fold=0 for the first ({describe(first)}) "
            f"or fold=1 for the second ({describe(second)})")


#: Years the planner accepts in any date it reads: those for which the NOAA sun algorithm it uses
#: for sunrise and sunset is stated to be valid (NOAA Global Monitoring Laboratory, solar calculation
#: details; from memory). Also keeps every date far from the ends of Python's calendar, where date
#: arithmetic overflows.
FIRST_YEAR, LAST_YEAR = 1901, 2099


def check_date_range(day: date, *, field: str | None = "date", source: str | None = None) -> date:
    """``day`` (a date or datetime) when its year lies in [FIRST_YEAR, LAST_YEAR]; else InputError."""
    if not FIRST_YEAR <= day.year <= LAST_YEAR:
        raise InputError(f"{day.isoformat()} is outside the dates phaseplan can plan; allowed are dates from "
                         f"{FIRST_YEAR}-01-01 to {LAST_YEAR}-12-31", field=field, source=source)
    return day


def _parse_local(value: str | datetime, field: str | None, source: str | None) -> datetime:
    if isinstance(value, datetime):
        return check_date_range(value, field=field, source=source)
    if isinstance(value, date):
        raise InputError(f"{value.isoformat()} is a date without a time of day; {LOCAL_TIME_HINT}",
                         field=field, source=source)
    if not isinstance(value, str):
        raise InputError(f"expected a local date and time, got {type(value).__name__}; {LOCAL_TIME_HINT}",
                         field=field, source=source)
    text = value.strip()
    if not text:
        raise InputError(f"empty date and time; {LOCAL_TIME_HINT}", field=field, source=source)
    try:
        date.fromisoformat(text)
    except ValueError:
        pass
    else:
        raise InputError(f'"{text}" is a date without a time of day; {LOCAL_TIME_HINT}',
                         field=field, source=source)
    try:
        moment = datetime.fromisoformat(text)
    except ValueError:
        raise InputError(f'cannot read "{text}" as a local date and time; {LOCAL_TIME_HINT}',
                         field=field, source=source) from None
    return check_date_range(moment, field=field, source=source)


def resolve_local(naive_or_str: str | datetime, tz_name: str | tzinfo, *, fold: int | None = None,
                  field: str | None = "time", source: str | None = None) -> datetime:
    """Attach a time zone to a local wall time, refusing gaps and unresolved repeats.

    Parameters
    ----------
    naive_or_str : datetime or str
        Local wall time as a naive datetime or an ISO 8601 string
        (``"2026-03-29 07:30"``).  A time that already carries a UTC offset
        (``"2026-10-25T02:30+01:00"``) is accepted when that offset is in use
        in the zone at that wall time; the offset then also picks the
        occurrence of a repeated time.
    tz_name : str or tzinfo
        IANA time-zone name of the place whose clocks the time was read from.
    fold : {None, 0, 1}, optional
        Which occurrence of a repeated (fall-back) wall time is meant: 0 the
        first (before the clocks go back, usually summer time), 1 the second.
        Required for repeated times, ignored for all others.
    field, source : str, optional
        Where the value came from, for error messages.

    Returns
    -------
    datetime
        Aware datetime in the zone (with ``fold`` set for repeated times).
        Convert it with :func:`to_utc` before doing arithmetic.

    Raises
    ------
    InputError
        Unknown zone, unreadable time, a time that does not exist in the zone
        (spring-forward gap), a repeated time without ``fold``, or an offset
        not in use in the zone at that time.
    """
    if fold not in (None, 0, 1):
        raise InputError(f"fold must be 0 (first occurrence) or 1 (second occurrence), got {fold!r}",
                         field="fold", source=source)
    tz = zone(tz_name, field=field, source=source)
    moment = _parse_local(naive_or_str, field, source)
    if moment.tzinfo is not None and moment.utcoffset() is not None:
        local = moment.astimezone(tz)
        if local.replace(tzinfo=None, fold=0) != moment.replace(tzinfo=None, fold=0):
            raise InputError(f"{moment.isoformat()} has offset {_format_offset(moment.utcoffset())}, which "
                             f"{_zone_label(tz)} does not use at that time (the same instant reads "
                             f"{local.isoformat()} there)", field=field, source=source)
        return local
    wall = moment.replace(tzinfo=None, fold=0)
    kind, candidates = _classify(wall, tz)
    if kind == "gap":
        raise InputError(_gap_message(wall, tz, candidates), field=field, source=source)
    if kind == "repeated":
        if fold is None:
            raise InputError(_repeated_message(wall, tz, candidates), field=field, source=source)
        return candidates[fold]
    return candidates[0]


def _start_of_local_day(day: date, tz: tzinfo) -> datetime:
    """UTC instant at which the local date ``day`` begins in ``tz``.

    Normally local midnight; where the clocks jump over midnight the day begins
    at the end of the gap, and where midnight repeats, at its first occurrence.
    """
    wall = datetime.combine(day, time(0))
    kind, candidates = _classify(wall, tz)
    if kind != "gap":
        return candidates[0].astimezone(UTC)
    utc = sorted(c.astimezone(UTC) for c in candidates)
    moment = _transition_between(tz, utc[0], utc[1])
    return moment if moment is not None else utc[1]


def local_day_bounds(day: date, tz: str | tzinfo, *, field: str | None = "date",
                     source: str | None = None) -> tuple[datetime, datetime]:
    """The UTC instants at which a local calendar day begins and ends.

    Parameters
    ----------
    day : date
        Local calendar date.
    tz : str or tzinfo
        IANA time-zone name (or zone) of the place.

    Returns
    -------
    (start_utc, end_utc) : tuple of datetime
        Aware UTC datetimes; ``end_utc - start_utc`` is the real length of the
        day, 23 h or 25 h on days the clocks change in most zones [h].
    """
    if isinstance(day, datetime) or not isinstance(day, date):
        raise InputError(f"expected a calendar date, got {type(day).__name__}", field=field, source=source)
    check_date_range(day, field=field, source=source)
    zone_info = zone(tz, source=source)
    return _start_of_local_day(day, zone_info), _start_of_local_day(day + timedelta(days=1), zone_info)


def parse_clock(text: str, *, field: str | None = "time", source: str | None = None) -> float:
    """Read a 24-hour clock time ``"HH:MM"`` (or ``"HH:MM:SS"``) as hours after midnight.

    Parameters
    ----------
    text : str
        Clock time such as ``"07:30"``; hours 00-23, minutes and seconds 00-59.

    Returns
    -------
    float
        Hours after midnight [h], in [0, 24); ``"07:30"`` gives 7.5.

    Raises
    ------
    InputError
        If the text is empty, not of that form, or out of range.
    """
    if not isinstance(text, str):
        raise InputError(f"expected a clock time as text, got {type(text).__name__}; {CLOCK_HINT}",
                         field=field, source=source)
    stripped = text.strip()
    if not stripped:
        raise InputError(f"empty clock time; {CLOCK_HINT}", field=field, source=source)
    match = _CLOCK_RE.fullmatch(stripped)
    if match is None:
        raise InputError(f'"{stripped}" is not a clock time; {CLOCK_HINT}', field=field, source=source)
    hours, minutes = int(match.group(1)), int(match.group(2))
    seconds = int(match.group(3) or 0)
    if hours > 23:
        raise InputError(f'"{stripped}" is not a clock time: hours run from 00 to 23 (midnight is "00:00")',
                         field=field, source=source)
    if minutes > 59 or seconds > 59:
        raise InputError(f'"{stripped}" is not a clock time: minutes and seconds run from 00 to 59',
                         field=field, source=source)
    return hours + minutes / 60.0 + seconds / SECONDS_PER_HOUR


def clock_hours(moment: datetime) -> float:
    """The wall-clock time of ``moment`` in its own zone as hours of the day, to the whole second [h]."""
    return moment.hour + moment.minute / 60 + moment.second / 3600


def zone_label(moment: datetime) -> str:
    """Abbreviation and UTC offset of an aware local time, e.g. ``"JST +09:00"``."""
    offset = moment.utcoffset()
    total = int(offset.total_seconds()) // 60 if offset is not None else 0
    sign = "+" if total >= 0 else "-"
    hours, minutes = divmod(abs(total), 60)
    text = f"{sign}{hours:02d}:{minutes:02d}"
    name = moment.tzname() or ""
    return text if not name or name[0] in "+-" else f"{name} {text}"
