"""A simulated trip plan cut into days, with every time on the local clock of where the traveller is.

Shared by the command line and, later, calendar files and reports: it decides which day
each sleep episode and light window belongs to (see :func:`day_views`) and which
clock shows a time (the place the traveller is at then; while flying, the clock of the
airport the flight left, so the clock changes at landing).
"""

from __future__ import annotations

from dataclasses import dataclass
from datetime import datetime, timedelta
from typing import Sequence

from planner.engine.markers import HOURS_PER_DAY
from planner.trips.model import Trip, TripDay, where_at
from planner.trips.search import Outcome
from planner.world.light import Window
from planner.world.places import Place

#: A sleep starting up to this long after midnight is shown on the day before (see :func:`day_views`).
NIGHT_BELONGS_BACK = timedelta(hours=6)


def place_at(trip: Trip, moment: datetime) -> Place:
    """The place whose clock shows ``moment``: where the traveller is, or the origin while flying."""
    place = where_at(trip, moment)
    if place is not None:
        return place
    flight = next(f for f in trip.flights if f.depart <= moment < f.arrive)
    return flight.origin


def local(trip: Trip, moment: datetime) -> datetime:
    """``moment`` on the local clock of :func:`place_at` (an aware datetime with its UTC offset)."""
    return moment.astimezone(place_at(trip, moment).zone)


def clock_change_h(trip: Trip) -> float:
    """Clock difference destination − home at the first arrival [h]; + east, − west.

    Taken modulo 24 h into [−12, 12] (exactly ±12 keeps its sign): crossing the date line without a real
    time shift (Honolulu UTC−10 to Kiritimati UTC+14) is no shift at all, not 24 h east.
    """
    first = trip.flights[0]
    raw = first.destination.utc_offset_h(first.arrive) - trip.home.utc_offset_h(first.depart)
    return raw - HOURS_PER_DAY * round(raw / HOURS_PER_DAY)


@dataclass(frozen=True)
class DayView:
    """One day of a plan: its sleep, light windows and predicted CBTmin (all UTC)."""

    day: TripDay
    target_place: Place
    sleep: tuple[tuple[datetime, datetime], ...]
    bright: tuple[Window, ...]
    avoid: tuple[Window, ...]
    cbtmin: datetime | None
    error_h: float


def _day_of(days: Sequence[TripDay], moment: datetime) -> int:
    for day in days:
        if day.start <= moment < day.end:
            return day.index
    return 0 if moment < days[0].start else days[-1].index


def day_views(trip: Trip, outcome: Outcome) -> list[DayView]:
    """The plan of ``outcome`` cut into its days: a light window belongs to the day holding its start,
    a sleep episode to the day holding its start less six hours (the evening it begins on)."""
    days = [o.day for o in outcome.days]
    sleep: dict[int, list] = {d.index: [] for d in days}
    bright: dict[int, list] = {d.index: [] for d in days}
    avoid: dict[int, list] = {d.index: [] for d in days}
    for episode in outcome.plan.sleep:
        # a night belongs to the evening it starts on: a bedtime after midnight (up to 06:00) counts for
        # the day before, as one says "Sunday night" of a sleep from 00:30 on Monday
        sleep[_day_of(days, episode[0] - NIGHT_BELONGS_BACK)].append(episode)
    for window in outcome.plan.bright:
        bright[_day_of(days, window.start)].append(window)
    for window in outcome.plan.avoid:
        avoid[_day_of(days, window.start)].append(window)
    return [DayView(o.day, o.target_place, tuple(sorted(sleep[o.day.index])),
                    tuple(sorted(bright[o.day.index], key=lambda w: w.start)),
                    tuple(sorted(avoid[o.day.index], key=lambda w: w.start)), o.cbtmin, o.error_h)
            for o in outcome.days]


#: A required move within this of 12 h is "half way round" [h]: neither direction is the long way
#: round (the required moves come from simulated entrained phases, so an exact 12-h clock change
#: needs 12 h give or take a few minutes of light differences; a design tolerance).
HALF_WAY_TOLERANCE_H = 0.25


def shorter_way(alternatives: dict) -> tuple[str, float] | None:
    """The direction needing the smaller clock move, and that move [h], from the planned strategies'
    required shifts (an advance of x h is a delay of 24 − x h); None without advance/delay plans, or
    when both ways are (within ``HALF_WAY_TOLERANCE_H``) 12 h, so neither is shorter."""
    for name in ("advance", "delay"):
        result = alternatives.get(name)
        if result is None:
            continue
        advance = result.required_shift_h if name == "advance" else 24.0 - result.required_shift_h
        if abs(advance - HOURS_PER_DAY / 2) <= HALF_WAY_TOLERANCE_H:
            return None
        return ("advance", advance) if advance <= 12.0 else ("delay", 24.0 - advance)
    return None


def movement(outcome: Outcome, alternatives: dict, intended: str | None = None) -> str:
    """How the body clock moved over the time away, in words, e.g. ``"delayed 12.8 h, the long way
    round (advancing 9.0 h is the shorter way)"``; with ``intended`` ("advance" or "delay") a plan
    that moved the clock the other way says so."""
    net = abs(outcome.net_shift_h)
    if outcome.direction == "none":
        # the documents' sign (+ advance), as net_phase_shift_h; net_shift_h is + later
        text = f"stayed within 1 h of where it started (net {-outcome.net_shift_h:+.1f} h)"
    else:
        text = f"{'advanced' if outcome.direction == 'advance' else 'delayed'} {net:.1f} h"
    if intended in ("advance", "delay") and outcome.direction != intended:
        text += f" — not the {intended} this plan aims for"
    if outcome.direction == "none":
        return text
    shorter = shorter_way(alternatives)
    if outcome.aim == "route" and shorter is not None and shorter[0] != outcome.direction and shorter[1] >= 1.0:
        verb = "advancing" if shorter[0] == "advance" else "delaying"
        text += f", the long way round ({verb} {shorter[1]:.1f} h is the shorter way)"
    return text


def strategy_name(strategy: str) -> str:
    """A strategy in words: "advance", "delay", "stay on home time"."""
    return {"home": "stay on home time", "advance": "advance", "delay": "delay"}.get(strategy, strategy)


def days_text(days: int | None) -> str:
    """Days to re-entrain in words, e.g. "3 days after arrival"."""
    if days is None:
        return "not within the trip"
    return "on the arrival day" if days == 0 else f"{days} day{'s' if days != 1 else ''} after arrival"


def settling(outcome: Outcome) -> str:
    """When the plan settles the body clock, in words (for "home" plans: how close to home time it stays)."""
    if outcome.aim == "home":
        return f"held within {outcome.max_away_error_h:.1f} h of home time"
    return days_text(outcome.reentrainment_days)
