"""Arithmetic on time intervals given as (start, end) pairs of aware datetimes."""

from __future__ import annotations

from datetime import datetime
from typing import Iterable


def free_segments(start: datetime, end: datetime,
                  taken: Iterable[tuple[datetime, datetime]]) -> list[tuple[datetime, datetime]]:
    """The parts of [start, end] outside every interval of ``taken``, in time order."""
    segments = [(start, end)]
    for a, b in [(a, b) for a, b in taken if b > start and a < end]:   # only those that can cut it
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
