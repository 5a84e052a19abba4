"""Shift rosters: shift types, drafts, the worker's days, and a plan as light at the eye.

A :class:`Roster` is a work site (time zone, coordinates), named shift types on the
local clock, the workers' habits and countermeasures, and one or more
:class:`Draft` rotations (a repeating pattern of shift codes and days off).
:func:`roster_days` lays a draft out as local calendar days with each shift as UTC
instants; :func:`roster_schedule` turns a :class:`RosterPlan` (sleep episodes,
bright-light windows, light-avoidance windows, prescribed outdoor light) into the
light at the eye, layered as: indoor light at home, ordinary midday daylight on free
days, commutes (daylight while the sun is up, street lighting otherwise), light at
work, the plan's bright light, the plan's dark glasses, then sleep (eyes shut wins;
without a blackout bedroom daytime sleep sees a little light through the eyelids).

Everything is computed in UTC; local clock times are for input and display.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from datetime import date, datetime, time, timedelta, timezone
from functools import cached_property, lru_cache
from typing import Literal

from planner.engine.entrainment import BASELINE_OUTDOOR_H
from planner.engine.markers import HOURS_PER_DAY
from planner.intervals import free_segments, parts_inside
from planner.world.daylight import daylight_for
from planner.world.light import (
    DEFAULT_EXPOSURE,
    DEFAULT_SKY,
    LightLayer,
    LightOptions,
    LightSchedule,
    Window,
    ambient,
    dark_glasses,
    light_box,
    sleep,
)
from planner.world.places import Place, sun_up

UTC = timezone.utc

#: Night time as the EU working-time rules count it includes 00:00-05:00; a shift with at least
#: 3 h inside it is a night shift (Directive 2003/88/EC, art. 2(3)-(4): night time includes midnight
#: to 05:00; a night worker works at least 3 h of the daily working time in it).
NIGHT_PERIOD_H = (0.0, 5.0)
NIGHT_SHIFT_MIN_HOURS = 3.0
#: Street-lit outdoor illuminance on a commute after dark [lux] (road lighting is typically
#: a few to some tens of lux; common practice, no single source; a stated default).
DEFAULT_NIGHT_OUTDOOR_LUX = 10.0
#: Light through closed eyelids in a curtained but not blacked-out bedroom while the sun is up
#: [lux] (eyelids pass roughly 1-10 % of visible light, Ando & Kripke 1996, Biol Psychiatry 39:22,
#: from memory; with some 100-300 lux of daylight in a curtained room; a stated default).
DEFAULT_UNBLOCKED_BEDROOM_LUX = 5.0

#: Hours simulated past the last day's midnight: the last day's markers are counted to 18:00 the next
#: day, and the CBTmin search needs a step or two beyond (a design margin).
MARKER_MARGIN_H = 20.0

ShiftKind = Literal["day", "evening", "night"]


@dataclass(frozen=True)
class ShiftType:
    """A named shift on the local clock.

    Attributes
    ----------
    code : str
        The code the patterns use (``"D"``, ``"N"`` ...).
    start_h, end_h : float
        Start and end [h of the local day]; ``end_h <= start_h`` means it ends the next day.
    label : str
    sleep : tuple of (bed_h, wake_h) or None
        The workers' preferred main sleep around this shift [h of the local day], if given.
    """

    code: str
    start_h: float
    end_h: float
    label: str = ""
    sleep: tuple[float, float] | None = None

    @property
    def hours(self) -> float:
        """Length [h]."""
        return (self.end_h - self.start_h) % HOURS_PER_DAY or HOURS_PER_DAY

    @property
    def ends_next_day(self) -> bool:
        return self.end_h <= self.start_h

    @property
    def night_hours(self) -> float:
        """Hours inside the night period 00:00-05:00 (:data:`NIGHT_PERIOD_H`) [h]."""
        total = 0.0
        for offset in (0.0, HOURS_PER_DAY):   # the night after the start day, or of the start day itself
            a, b = NIGHT_PERIOD_H[0] + offset, NIGHT_PERIOD_H[1] + offset
            total += max(0.0, min(self.start_h + self.hours, b) - max(self.start_h, a))
        return total

    @cached_property
    def kind(self) -> ShiftKind:
        """``night`` with at least 3 h in 00:00-05:00; else ``evening`` if it starts after noon, else ``day``."""
        if self.night_hours >= NIGHT_SHIFT_MIN_HOURS:
            return "night"
        return "evening" if self.start_h >= 12.0 else "day"


@dataclass(frozen=True)
class Draft:
    """One rotation to compare: a repeating pattern of shift codes (None = a day off)."""

    name: str
    pattern: tuple[str | None, ...]
    cycles: int
    description: str = ""

    @property
    def days(self) -> int:
        return len(self.pattern) * self.cycles

    def codes(self) -> list[str | None]:
        return list(self.pattern) * self.cycles


@dataclass(frozen=True)
class Crew:
    """A group of workers on the same draft, starting ``offset_days`` into its pattern.

    Staggered crews (A starts the pattern on day 0, B on day 2, ...) cover a site around the clock;
    each crew gets its own calendar.  ``draft_offsets`` gives another offset on named drafts (a slower
    rotation is usually staggered further apart).
    """

    name: str
    offset_days: int = 0
    draft_offsets: tuple[tuple[str, int], ...] = ()

    def offset_in(self, draft: Draft) -> int:
        """Days into ``draft``'s pattern this crew starts."""
        return dict(self.draft_offsets).get(draft.name, self.offset_days)


def crew_draft(draft: Draft, crew: Crew) -> Draft:
    """The draft as ``crew`` works it: its pattern rotated to start :meth:`Crew.offset_in` days in."""
    shift = crew.offset_in(draft) % len(draft.pattern)
    if shift == 0:
        return draft
    return Draft(f"{draft.name} ({crew.name})", draft.pattern[shift:] + draft.pattern[:shift], draft.cycles,
                 draft.description)


@dataclass(frozen=True)
class Countermeasures:
    """What the workers have to steer their light.

    Attributes
    ----------
    light_box : bool
        A light box (or bright task lighting) at work.
    box_lux : float  [lux] at the eye
    box_max_minutes : float  [min] per shift
    dark_glasses : bool
        Dark glasses for the commute home after night shifts.
    glasses_transmission : float  [0..1]
    blackout_bedroom : bool
        A bedroom dark in daytime; without it daytime sleep sees ``unblocked_bedroom_lux``.
    unblocked_bedroom_lux : float  [lux] at the closed eye
    daylight : bool
        Whether time outdoors may be prescribed.
    daylight_max_minutes : float  [min] per day
    """

    light_box: bool = True
    box_lux: float = 10_000.0
    box_max_minutes: float = 120.0
    dark_glasses: bool = True
    glasses_transmission: float = 0.1
    blackout_bedroom: bool = True
    unblocked_bedroom_lux: float = DEFAULT_UNBLOCKED_BEDROOM_LUX
    daylight: bool = True
    daylight_max_minutes: float = 60.0


@dataclass(frozen=True)
class WorkingTimeRules:
    """Working-time limits every draft is checked against (the roster file's ``[rules]``).

    Attributes
    ----------
    daily_rest_h : float  [h]
        Least rest between the end of one shift and the start of the next: 11 consecutive hours
        per 24-hour period (Directive 2003/88/EC, Art. 3).
    weekly_rest_h : float  [h]
        Least uninterrupted rest per period of ``weekly_rest_days``, on top of the daily rest:
        24 h plus the 11 h of Art. 3 (Directive 2003/88/EC, Art. 5).
    weekly_rest_days : int  [days]
        The period the weekly rest is counted over (Art. 5: seven days).
    max_consecutive_nights : int
        Longest run of night shifts: no more than 4 in a row for 12-h shifts (HSE 2006, HSG256
        "Managing shift work", appendix 1; from memory).
    max_consecutive_work_days : int
        Longest run of working days: 5 to 7 at most (HSE 2006, HSG256, appendix 1; from memory).
    """

    daily_rest_h: float = 11.0
    weekly_rest_h: float = 24.0
    weekly_rest_days: int = 7
    max_consecutive_nights: int = 4
    max_consecutive_work_days: int = 7


@dataclass(frozen=True)
class Roster:
    """A site, its shifts, the workers' habits and the drafts to compare.

    Attributes
    ----------
    name : str
    site : Place
        Where the work is; its ``bed_h``/``wake_h`` are the workers' habitual sleep on free days.
    start : date
        First day of every draft (local date at the site).
    shifts : tuple of ShiftType
    drafts : tuple of Draft
    commute_minutes : float  [min] each way
    sleep_hours : float  [h] main sleep the workers aim for on work days
    work_lux, indoor_lux, night_outdoor_lux : float  [lux]
    daylight_lux : float or None  [lux] cap on daylight at the eye (None: as the sky gives it)
    sky, daylight_exposure : str
        Sky type and exposure of the daylight model (:mod:`planner.world.daylight`).
    measures : Countermeasures
    crew_size : int
        Workers the roster is for (informative; population runs draw their own number).
    crews : tuple of Crew
        Staggered groups of workers (each its own calendar); empty for one group starting on day 0.
    rules : WorkingTimeRules
        The working-time limits the drafts are checked against.
    """

    name: str
    site: Place
    start: date
    shifts: tuple[ShiftType, ...]
    drafts: tuple[Draft, ...]
    commute_minutes: float = 30.0
    sleep_hours: float = 7.5
    work_lux: float = 300.0
    indoor_lux: float = 150.0
    daylight_lux: float | None = None
    night_outdoor_lux: float = DEFAULT_NIGHT_OUTDOOR_LUX
    measures: Countermeasures = field(default_factory=Countermeasures)
    crew_size: int = 1
    crews: tuple[Crew, ...] = ()
    rules: WorkingTimeRules = field(default_factory=WorkingTimeRules)
    sky: str = DEFAULT_SKY
    daylight_exposure: str = DEFAULT_EXPOSURE

    @property
    def light(self) -> LightOptions:
        """The daylight settings as the trip planner's light options (indoor, daylight model)."""
        return LightOptions(indoor_lux=self.indoor_lux, daylight_lux=self.daylight_lux, sky=self.sky,
                            daylight_exposure=self.daylight_exposure)

    def shift(self, code: str) -> ShiftType:
        return next(s for s in self.shifts if s.code == code)

    @property
    def commute(self) -> timedelta:
        return timedelta(minutes=self.commute_minutes)

    def at(self, day: date, clock_h: float) -> datetime:
        """UTC instant of a local clock time at the site (hours may exceed 24 for the next day)."""
        extra, clock = divmod(clock_h, HOURS_PER_DAY)
        return self.site.at(day + timedelta(days=int(extra)), clock)


@dataclass(frozen=True)
class RosterDay:
    """One local calendar day of a draft.

    ``shift`` is None on a day off; ``work`` the shift's UTC interval (it may end the next day).
    """

    index: int
    date: date
    shift: ShiftType | None
    start: datetime
    end: datetime
    work: tuple[datetime, datetime] | None

    @property
    def kind(self) -> ShiftKind | Literal["off"]:
        return self.shift.kind if self.shift is not None else "off"

    @property
    def label(self) -> str:
        return self.shift.code if self.shift is not None else "off"


def roster_days(roster: Roster, draft: Draft) -> list[RosterDay]:
    """The draft laid out day by day from ``roster.start``."""
    return list(_roster_days(roster, draft))


@lru_cache(maxsize=64)
def _roster_days(roster: Roster, draft: Draft) -> tuple[RosterDay, ...]:
    days = []
    for index, code in enumerate(draft.codes()):
        day = roster.start + timedelta(days=index)
        start = datetime.combine(day, time(0), roster.site.zone).astimezone(UTC)
        end = datetime.combine(day + timedelta(days=1), time(0), roster.site.zone).astimezone(UTC)
        shift = roster.shift(code) if code is not None else None
        work = None
        if shift is not None:
            # Both ends on the wall clock, so a shift across a clock change keeps its local hours.
            finish = day + timedelta(days=1) if shift.ends_next_day else day
            work = (roster.at(day, shift.start_h), roster.at(finish, shift.end_h))
        days.append(RosterDay(index, day, shift, start, end, work))
    return tuple(days)


def period(roster: Roster, draft: Draft) -> tuple[datetime, datetime]:
    """Simulated span: local midnight of the first day to 20:00 the day after the last (UTC).

    The extra 20 h let the last day's markers, counted up to 18:00 the next day
    (:data:`planner.rosters.search.DAY_MARKER_FROM_H`), be located.
    """
    days = roster_days(roster, draft)
    return days[0].start, days[-1].end + timedelta(hours=MARKER_MARGIN_H)


@dataclass(frozen=True)
class RosterPlan:
    """Sleep and light of one worker over a whole draft (UTC).

    Attributes
    ----------
    sleep : tuple of (start, end)
        Sleep episodes (eyes shut).
    bright : tuple of Window
        Bright light at work (light box) or prescribed outdoor daylight.
    avoid : tuple of Window
        Dark glasses (``lux`` holds the transmission).
    outdoor : tuple of (start, end)
        Commutes (outdoors: daylight while the sun is up, street lighting otherwise).
    strategy : str
        Which strategy made it (``"none"`` for the unplanned baseline).
    settings : dict
        The strategy's search parameters that produced it.
    """

    sleep: tuple[tuple[datetime, datetime], ...]
    bright: tuple[Window, ...] = ()
    avoid: tuple[Window, ...] = ()
    outdoor: tuple[tuple[datetime, datetime], ...] = ()
    strategy: str = "none"
    settings: tuple[tuple[str, float], ...] = ()

    @property
    def box_minutes(self) -> float:
        return sum(w.minutes for w in self.bright if w.source == "light box")


@lru_cache(maxsize=32)
def site_sun_up(roster: Roster, draft: Draft) -> tuple[tuple[datetime, datetime], ...]:
    """Sun-up intervals at the site over the draft (NOAA algorithm, :mod:`planner.world.sun`)."""
    start, end = period(roster, draft)
    return sun_up(roster.site, start - timedelta(days=1), end + timedelta(days=1))


def sunlit(roster: Roster, draft: Draft, start: datetime, end: datetime) -> list[tuple[datetime, datetime]]:
    """Parts of [start, end] with the sun up at the site."""
    return parts_inside(*_site_sun_spans(roster, draft), start, end)


@lru_cache(maxsize=32)
def _site_sun_spans(roster: Roster, draft: Draft) -> tuple[tuple, list]:
    """The sun-up spans of :func:`site_sun_up` in time order, and their ends."""
    ups = tuple(sorted(site_sun_up(roster, draft)))
    return ups, [b for _, b in ups]


def _busy(days, plan: RosterPlan) -> list[tuple[datetime, datetime]]:
    spans = [d.work for d in days if d.work is not None]
    spans += list(plan.sleep)
    return spans


def roster_schedule(roster: Roster, draft: Draft, plan: RosterPlan) -> LightSchedule:
    """The light at the eye for one worker following ``plan`` (layer order in the module docstring)."""
    days = roster_days(roster, draft)
    start, end = period(roster, draft)
    layers: list[LightLayer] = []
    busy = _busy(days, plan)
    for day in days + [None]:
        # Ordinary outdoor time on a free stretch around local noon (as the trip planner's baseline).
        when = day.date if day is not None else days[-1].date + timedelta(days=1)
        noon = roster.at(when, 12.0)
        half = timedelta(hours=BASELINE_OUTDOOR_H / 2)
        for a, b in free_segments(noon - half, noon + half, busy + list(plan.outdoor)):
            for s, e in sunlit(roster, draft, a, b):
                layers.extend(daylight_for(roster.light, roster.site, s, e))
    for a, b in (span for span in plan.outdoor if span[1] > span[0]):   # a zero-minute commute is no outing
        layers.append(ambient(a, b, roster.night_outdoor_lux, "street light"))
        for s, e in sunlit(roster, draft, a, b):
            layers.extend(daylight_for(roster.light, roster.site, s, e))
    for day in days:
        if day.work is not None:
            layers.append(ambient(*day.work, roster.work_lux, "work"))
    for window in plan.bright:
        if window.source == "light box":
            layers.append(light_box(window.start, window.end, window.lux))
        elif window.source == "daylight":
            layers.extend(daylight_for(roster.light, roster.site, window.start, window.end))
        else:
            layers.append(ambient(window.start, window.end, window.lux, window.source))
    for window in plan.avoid:
        layers.append(dark_glasses(window.start, window.end, window.lux))
    for a, b in plan.sleep:
        layers.append(sleep(a, b))
        if not roster.measures.blackout_bedroom and roster.measures.unblocked_bedroom_lux > 0:
            for s, e in sunlit(roster, draft, a, b):
                layers.append(ambient(s, e, roster.measures.unblocked_bedroom_lux, "bedroom daylight"))
    return LightSchedule.from_layers(start, end, roster.indoor_lux, layers)
