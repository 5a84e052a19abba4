"""Places on Earth: a named place with its time zone, coordinates and the sleep wanted there.

Both planners use it: a trip's home, stops and destination, and a roster's site.
"""

from __future__ import annotations

from dataclasses import dataclass
from datetime import date, datetime, time, timedelta, timezone, tzinfo
from functools import lru_cache

from planner.hashing import hash_once
from planner.world.sun import daylight_intervals

UTC = timezone.utc


@hash_once
@dataclass(frozen=True)
class Place:
    """A place the traveller stays at, with the sleep wanted there.

    Attributes
    ----------
    name : str
    zone : tzinfo
    latitude, longitude : float  [deg]
    bed_h, wake_h : float
        Wanted sleep in local clock hours [h of the day].
    """

    name: str
    zone: tzinfo
    latitude: float
    longitude: float
    bed_h: float = 23.0
    wake_h: float = 7.0

    def midnight_after(self, moment: datetime) -> datetime:
        """The first local midnight strictly after ``moment``, in UTC."""
        local = moment.astimezone(self.zone)
        nxt = datetime.combine(local.date() + timedelta(days=1), time(0), self.zone)
        return nxt.astimezone(UTC)

    def midnight_of(self, moment: datetime) -> datetime:
        """The local midnight starting the day of ``moment``, in UTC."""
        local = moment.astimezone(self.zone)
        return datetime.combine(local.date(), time(0), self.zone).astimezone(UTC)

    def at(self, day: date, clock_h: float) -> datetime:
        """UTC instant of local clock time ``clock_h`` on ``day``; wall-clock, gap-safe via UTC offset of noon."""
        noon = datetime.combine(day, time(12), self.zone)
        offset = noon.utcoffset()
        naive = datetime.combine(day, time(0)) + timedelta(hours=clock_h)
        return (naive - offset).replace(tzinfo=UTC)

    def utc_offset_h(self, moment: datetime) -> float:
        return moment.astimezone(self.zone).utcoffset().total_seconds() / 3600.0


@lru_cache(maxsize=256)
def sun_up(place: Place, start: datetime, end: datetime) -> tuple[tuple[datetime, datetime], ...]:
    """Sun-up intervals at ``place`` between two instants (NOAA algorithm), cached per trip span."""
    return tuple(daylight_intervals(start, end, place.latitude, place.longitude, place.zone))


def zone_name(place: Place) -> str:
    """IANA name of a place's zone."""
    return str(getattr(place.zone, "key", None) or place.zone)
