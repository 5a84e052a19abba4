"""Arithmetic on time intervals given as (start, end) pairs of aware datetimes."""

from __future__ import annotations

import bisect
from datetime import datetime
from typing import Iterable, Sequence


def free_segments(start: datetime, end: datetime,
                  taken: Iterable[tuple[datetime, datetime]]) -> list[tuple[datetime, datetime]]:
    """The parts of [start, end] outside every interval of ``taken``, in time order."""
    cuts = [(a, b) for a, b in taken if b > start and a < end]   # only those that can cut it
    if not cuts:
        return [(start, end)] if end > start else []
    segments = [(start, end)]
    for a, b in cuts:
        remaining = []
        for s, e in segments:
            if b <= s or a >= e:
                remaining.append((s, e))
                continue
            if a > s:
                remaining.append((s, a))
            if b < e:
                remaining.append((b, e))
        segments = remaining
    return sorted((s, e) for s, e in segments if e > s)


class SortedSpans:
    """Intervals (start, end) kept in order of start, which answers which of them overlap a
    given interval without looking at the others (a search asks this many thousand times)."""

    __slots__ = ("spans", "_starts", "_longest")

    def __init__(self, spans: Iterable[tuple[datetime, datetime]]):
        self.spans = sorted(spans)
        self._starts = [a for a, _ in self.spans]
        self._longest = max((b - a for a, b in self.spans), default=None)

    def overlapping(self, start: datetime, end: datetime) -> list[tuple[datetime, datetime]]:
        """The spans with a part inside (start, end), in order of start."""
        if self._longest is None:
            return []
        # a span overlapping (start, end) starts before ``end`` and no longer than the longest span before ``start``
        first = bisect.bisect_right(self._starts, start - self._longest)
        last = bisect.bisect_left(self._starts, end)
        return [(a, b) for a, b in self.spans[first:last] if b > start]


def parts_inside(spans: Sequence[tuple[datetime, datetime]], ends: Sequence[datetime], start: datetime,
                 end: datetime) -> list[tuple[datetime, datetime]]:
    """The parts of [start, end] inside ``spans`` (in time order, not overlapping; ``ends`` their ends),
    in time order; only the spans that can overlap are looked at."""
    parts = []
    for a, b in spans[bisect.bisect_right(ends, start):]:   # the first span ending after ``start`` on
        if a >= end:
            break
        lo, hi = max(a, start), min(b, end)
        if hi > lo:
            parts.append((lo, hi))
    return parts


def count_text(count: int, noun: str) -> str:
    """``count`` with its noun in singular or plural, e.g. ``"1 day"``, ``"5 days"``."""
    return f"{count} {noun}{'' if count == 1 else 's'}"
