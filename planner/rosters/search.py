"""Planning shift rosters: strategies, circadian metrics, search, populations and ranking of drafts.

Strategies (published ideas, in plain words)
--------------------------------------------
``nights``  *Full adaptation to nights*: bright light in the night shift, dark glasses on the
            way home, a fixed dark daytime sleep, and the night schedule kept on days off
            inside a run of nights, so that CBTmin moves into the daytime sleep (the aim of the
            night-work studies of Eastman and colleagues, e.g. Smith & Eastman 2008, Sleep 31:1639).
``compromise``  *Compromise phase position* (Smith, Fogg & Eastman 2009, Sleep 32:1481): bright
            light early in the night shift, dark glasses home, dark daytime sleep after nights,
            late sleep on days off between nights, and outdoor light soon after waking as a
            brake, so that DLMO settles near 03:00 where both the daytime sleep after nights
            and the late sleep on days off fall in the biological night.
``day``     *Staying day-oriented* for short runs of nights: no bright light at night, daylight
            on the way home, a 4-h anchor sleep after each night at the same clock time and a
            nap before the next (anchor sleep, Minors & Waterhouse 1981, Int J Chronobiol 7:165;
            from memory), habitual sleep on days off.
``none``    The unplanned baseline: the usual sleep after nights, no light measures.

Each strategy has a few free settings (when the light box is used within the shift and
for how long, the bedtime on free days, minutes of outdoor light); the search simulates
every combination for the average worker in one batch and keeps the one with the least
disruption.  The chosen plan is then simulated at the model's validated step, and for a
population of workers whose intrinsic periods are drawn from Duffy et al. (2011).

Metrics (per worker; defined in the README)
-------------------------------------------
- CBTmin (and DLMO by the model's rule) per day.
- Work in the circadian low: hours of shift within ±3 h of any CBTmin.
- Biological night: the window the habitual free-day sleep occupies relative to the entrained
  CBTmin, carried along with each current CBTmin.
- Biological night awake: hours of each biological night not spent asleep (work, commutes,
  sleep cut short or displaced).
- Sleep out of phase: hours of each sleep outside the biological night of the CBTmin nearest
  the sleep's middle (reported; not in the score, so that a shorter daytime sleep never
  scores better).
- A day's CBTmin (and DLMO) is that of the night after it: the first from 18:00 that day to 18:00
  the next, so a night shift's day holds the CBTmin that falls during or after that shift.  18:00 lies
  about 12 h from the habitual CBTmin and several hours past a CBTmin fully adapted to nights (early
  afternoon), so no plausible CBTmin sits on a boundary.
- Adapted day: the day's CBTmin falls inside a sleep episode; days to adapt after a switch
  of shift kind (day, evening, night, off): days from the switch to the first adapted day
  of that run, or none within the run.
- Worst day: the day with the most hours of work in the low, sleep out of phase and
  biological night awake.
- Disruption score: (work in the circadian low + biological night awake) in hours per 7 days.
"""

from __future__ import annotations

import itertools
import math
from dataclasses import dataclass, field, replace
from datetime import datetime, timedelta
from typing import Callable, Literal, Sequence

import numpy as np

from planner.engine.entrainment import entrain, place_pattern
from planner.engine.integrate import SEARCH_STEP_MINUTES, model_batch_size, simulate
from planner.engine.markers import HOURS_PER_DAY, cbtmin_times, dlmo_times
from planner.engine.parameters import ModelSpec
from planner.engine.population import (
    LIGHT_SENSITIVITY_SD_LN,
    REPORTED_PERCENTILES,
    Population,
    draw_population,
    entrain_people,
    simulate_population,
    spread,
)
from planner.engine.sleepiness import (
    ShiftSleepiness,
    acrophase_after_cbtmin,
    load_alertness_model,
    plan_sleep,
    shift_sleepiness,
    steady_s,
)
from planner.errors import ComputationError, InputError
from planner.intervals import free_segments
from planner.rosters.model import (
    Draft,
    Roster,
    RosterDay,
    RosterPlan,
    ShiftKind,
    period,
    roster_days,
    roster_schedule,
    sunlit,
)
from planner.intervals import count_text
from planner.rosters.rules import breaches_text, check_draft
from planner.world.daylight import mean_daylight_for
from planner.world.light import Window, hours_between

Strategy = Literal["nights", "compromise", "day"]
#: What drafts can be ranked by (``plan_roster(rank_by=...)``).
RANK_BY = ("disruption", "sleepiness")
STRATEGIES: tuple[Strategy, ...] = ("nights", "compromise", "day")
#: Strategy names say what the plan aims at, not what it achieves (the outcome columns say that).
STRATEGY_NAMES = {"nights": "aims at full adaptation to nights", "compromise": "aims at a compromise phase position",
                  "day": "aims to stay day-oriented (anchor sleep)", "none": "no plan"}
#: Where each strategy comes from (shown with the plan's citations).
STRATEGY_CITATIONS = {
    "nights": ("Smith MR et al. (2008). Night shift performance is improved by a compromise circadian phase "
               "position: study 3. Sleep 31(12):1639-1645. doi:10.1093/sleep/31.12.1639 (bright light early in "
               "night shifts, dark glasses on the way home and a dark daytime sleep)"),
    "compromise": ("Smith MR, Fogg LF, Eastman CI (2009). A compromise circadian phase position for permanent "
                   "night work improves mood, fatigue, and performance. Sleep 32(11):1481-1489. "
                   "doi:10.1093/sleep/32.11.1481"),
    "day": ("Minors DS, Waterhouse JM (1981). Anchor sleep as a synchronizer of rhythms on abnormal routines. "
            "Int J Chronobiol 7(3):165-188"),
}
#: Short names for tables.
SHORT_NAMES = {"nights": "nights", "compromise": "compromise", "day": "day-oriented", "none": "no plan"}

#: Half-width of the circadian low around CBTmin [h] (the issue's ±3 h; performance and alertness
#: are lowest near CBTmin, e.g. Santhi et al. 2008, J Biol Rhythms 23:341).
LOW_HALF_WIDTH_H = 3.0
#: Time to get up and ready before leaving for a shift [h] (common practice, no single source).
GET_READY_H = 1.0
#: Time from getting home to sleep [h] (common practice, no single source).
WIND_DOWN_H = 0.5
#: A day's markers are the first from this local clock hour that day to the same hour the next [h]
#: (see the module docstring for why 18:00; a design choice of this planner).
DAY_MARKER_FROM_H = 18.0
#: Length of the anchor sleep [h] (Minors & Waterhouse 1981, Int J Chronobiol 7:165: 4-h anchor sleeps).
ANCHOR_SLEEP_H = 4.0
#: Length of the nap before the first night of a run [h] (a prophylactic afternoon nap is common
#: advice before night work; common practice, no single source).
NAP_BEFORE_FIRST_NIGHT_H = 1.5
#: Shortest sleep episode kept after cutting out work and commutes [h] (a planner's choice).
MIN_SLEEP_H = 1.0
#: Bedtime on free days between nights in the compromise strategy, searched around 03:00
#: (Smith, Fogg & Eastman 2009, Sleep 32:1481: sleep 03:00-12:00 on days off; clock time from memory).
COMPROMISE_FREE_BEDTIMES_H = (2.0, 3.0, 4.0)
#: Light-box start after the shift starts [h], searched by the compromise strategy (bright light early
#: in the shift delays: it falls before CBTmin, Khalsa et al. 2003, J Physiol 549:945).
BOX_OFFSETS_H = (0.0, 1.0, 2.0, 3.0)
#: Step of the light-box start searched over the whole night shift by the full-adaptation strategy [h]
#: (a search lattice of this planner).
BOX_OFFSET_STEP_H = 1.0
#: How much later the light box moves on each further night of a run [h], searched: a clock that
#: delays moves its delaying lobe later night by night (Khalsa et al. 2003, J Physiol 549:945), so
#: the box follows it (Smith & Eastman 2008, Sleep 31:1639 moved light and sleep later across nights).
BOX_DRIFTS_H = (0.0, 1.0)
#: Ends of the light box before each night's simulated CBTmin, tried when the box tracks the clock [h]:
#: light in the hours just before CBTmin delays most (Khalsa et al. 2003, J Physiol 549:945, Fig. 2).
BOX_LEADS_H = (0.5, 1.5, 2.5, 3.5)
#: Rounds of moving the box to the CBTmin of the plan's own simulation (a design choice; two rounds
#: settle it on the demos, measured here).
BOX_TRACK_ROUNDS = 3
#: Outdoor light after waking as a brake, or on the way home for the day-oriented strategy [min], searched.
OUTDOOR_MINUTES = (0.0, 30.0, 60.0)


# --------------------------------------------------------------------------- plans

@dataclass(frozen=True)
class Settings:
    """Free settings of a strategy (the search varies them)."""

    box_offset_h: float = 0.0
    box_fraction: float = 1.0
    free_bedtime_h: float = 3.0
    outdoor_minutes: float = 0.0
    box_drift_h: float = 0.0

    def items(self, strategy: str) -> tuple[tuple[str, float], ...]:
        """The settings ``strategy`` uses, as (name, value) pairs."""
        return tuple((name, getattr(self, name)) for name in SETTINGS_USED.get(strategy, ()))


#: Which settings each strategy uses.
SETTINGS_USED = {"nights": ("box_offset_h", "box_fraction", "box_drift_h"),
                 "compromise": ("box_offset_h", "box_fraction", "free_bedtime_h", "outdoor_minutes"),
                 "day": ("outdoor_minutes",)}


def describe_settings(plan: RosterPlan) -> str:
    """A strategy's settings in plain words (what the search found)."""
    values = dict(plan.settings)
    parts = []
    boxes = [w for w in plan.bright if w.source == "light box"]
    if "box_lead_h" in values and boxes:
        parts.append(f"light box {plan.box_minutes / len(boxes):.0f} min, moved each night to end "
                     f"{values['box_lead_h']:g} h before that night's simulated CBTmin")
    elif "box_offset_h" in values and boxes:
        drift = f", {values['box_drift_h']:g} h later each further night" if values.get("box_drift_h") else ""
        parts.append(f"light box from {values['box_offset_h']:g} h into each night shift{drift}, "
                     f"{plan.box_minutes / len(boxes):.0f} min")
    if "free_bedtime_h" in values:
        hours, minutes = divmod(round(values["free_bedtime_h"] * 60), 60)
        parts.append(f"bed at {hours:02d}:{minutes:02d} on days off between nights")
    if values.get("outdoor_minutes"):
        where = "after waking from day sleep" if plan.strategy == "compromise" else "on the way home after nights"
        parts.append(f"{values['outdoor_minutes']:.0f} min of daylight {where}")
    if plan.strategy == "none":
        return "the usual sleep after nights; no light measures"
    return "; ".join(parts) or "no light box, glasses or extra daylight helped"


def _night_season(days: Sequence[RosterDay]) -> list[bool]:
    """Whether each day off lies between two runs of nights (wrapping around the pattern)."""
    kinds = [d.kind for d in days]
    size = len(kinds)
    out = []
    for i, kind in enumerate(kinds):
        if kind != "off":
            out.append(kind == "night")
            continue
        before = next((kinds[(i - k) % size] for k in range(1, size) if kinds[(i - k) % size] != "off"), "off")
        after = next((kinds[(i + k) % size] for k in range(1, size) if kinds[(i + k) % size] != "off"), "off")
        out.append(before == "night" and after == "night")
    return out


def _sleep_after_night(roster: Roster, day: RosterDay) -> tuple[datetime, datetime]:
    """The main sleep after a night shift: the shift's preferred sleep, else from getting home."""
    shift = day.shift
    if shift.sleep is not None:
        bed_h, wake_h = shift.sleep
        base = day.date + timedelta(days=1) if shift.ends_next_day or bed_h < shift.start_h else day.date
        bed = roster.at(base, bed_h)
        return bed, bed + timedelta(hours=(wake_h - bed_h) % HOURS_PER_DAY)
    bed = day.work[1] + roster.commute + timedelta(hours=WIND_DOWN_H)
    return bed, bed + timedelta(hours=roster.sleep_hours)


def _night_sleep(roster: Roster, day: RosterDay) -> tuple[datetime, datetime]:
    """The sleep beginning on the evening of a day that has no night shift."""
    shift = day.shift
    if shift is not None and shift.sleep is not None:
        bed_h, wake_h = shift.sleep
        base = day.date if bed_h >= 12.0 else day.date + timedelta(days=1)
        bed = roster.at(base, bed_h)
        return bed, bed + timedelta(hours=(wake_h - bed_h) % HOURS_PER_DAY)
    habitual = (roster.site.wake_h - roster.site.bed_h) % HOURS_PER_DAY
    if shift is not None and shift.kind == "evening":
        bed = max(day.work[1] + roster.commute + timedelta(hours=WIND_DOWN_H),
                  roster.at(day.date, roster.site.bed_h + (0 if roster.site.bed_h >= 12 else 24)))
        return bed, bed + timedelta(hours=max(roster.sleep_hours, habitual))
    bed = roster.at(day.date, roster.site.bed_h + (0 if roster.site.bed_h >= 12 else 24))
    return bed, bed + timedelta(hours=habitual)


def _blocked(roster: Roster, days: Sequence[RosterDay]) -> list[tuple[datetime, datetime]]:
    """Hours no one sleeps: getting ready, the commute there, the shift, the commute home."""
    ready = roster.commute + timedelta(hours=GET_READY_H)
    return [(d.work[0] - ready, d.work[1] + roster.commute) for d in days if d.work is not None]


def _fit(episodes, blocked) -> tuple[tuple[datetime, datetime], ...]:
    """Sleep episodes with blocked hours cut out, overlaps removed and short pieces dropped."""
    kept: list[tuple[datetime, datetime]] = []
    for bed, wake in sorted(episodes):
        if kept and bed < kept[-1][1]:
            bed = kept[-1][1]
        for a, b in free_segments(bed, wake, blocked):
            if hours_between(a, b) >= MIN_SLEEP_H:
                kept.append((a, b))
    return tuple(kept)


def _sleep_before_day_shift(roster: Roster, episode, next_day: RosterDay | None):
    """Move a night's sleep earlier so the worker is up in time for an early shift."""
    if next_day is None or next_day.work is None or next_day.kind == "night":
        return episode
    latest_wake = next_day.work[0] - roster.commute - timedelta(hours=GET_READY_H)
    bed, wake = episode
    if wake <= latest_wake:
        return episode
    length = max(hours_between(bed, wake), roster.sleep_hours)
    return latest_wake - timedelta(hours=length), latest_wake


def plan_for(roster: Roster, draft: Draft, strategy: Strategy | Literal["none"], settings: Settings = Settings()
             ) -> RosterPlan:
    """Sleep, light and avoidance windows of one worker following ``strategy`` over ``draft``."""
    days = roster_days(roster, draft)
    season = _night_season(days)
    measures = roster.measures
    episodes = []
    bright: list[Window] = []
    avoid: list[Window] = []
    outdoor = []
    habitual_first = _night_sleep(roster, replace(days[0], shift=None, work=None,
                                                  date=days[0].date - timedelta(days=1)))
    episodes.append(_sleep_before_day_shift(roster, habitual_first, days[0]))
    for i, day in enumerate(days):
        nxt = days[i + 1] if i + 1 < len(days) else None
        if day.work is not None:
            outdoor.append((day.work[0] - roster.commute, day.work[0]))
            outdoor.append((day.work[1], day.work[1] + roster.commute))
        if day.kind == "night":
            first_night = i == 0 or days[i - 1].kind != "night"
            if first_night or strategy == "day":
                nap_end = day.work[0] - roster.commute - timedelta(hours=GET_READY_H)
                if strategy == "day" and not first_night:
                    nap_h = max(roster.sleep_hours - ANCHOR_SLEEP_H, MIN_SLEEP_H)
                else:
                    nap_h = NAP_BEFORE_FIRST_NIGHT_H
                episodes.append((nap_end - timedelta(hours=nap_h), nap_end))
            bed, wake = _sleep_after_night(roster, day)
            last_of_run = nxt is None or nxt.kind != "night"
            keeps_nights = strategy in ("nights", "compromise", "none") and (nxt is not None and season[nxt.index])
            if strategy == "day" or (last_of_run and not keeps_nights and strategy != "none"):
                wake = bed + timedelta(hours=ANCHOR_SLEEP_H)
            episodes.append((bed, wake))
            home = (day.work[1], day.work[1] + roster.commute)
            if strategy in ("nights", "compromise") and measures.light_box and measures.box_max_minutes > 0:
                cap_h = min(measures.box_max_minutes / 60.0, day.shift.hours) * settings.box_fraction
                nights_before = next((k for k in range(i + 1) if i - k - 1 < 0 or days[i - k - 1].kind != "night"), 0)
                offset = settings.box_offset_h + settings.box_drift_h * nights_before
                start = day.work[0] + timedelta(hours=min(offset, max(day.shift.hours - cap_h, 0.0)))
                end = min(start + timedelta(hours=cap_h), day.work[1])
                if end > start:
                    bright.append(Window(start, end, measures.box_lux, "light box"))
            if strategy in ("nights", "compromise") and measures.dark_glasses:
                # Only while the sun is up: dark glasses after dark are a driving hazard.
                for a, b in sunlit(roster, draft, home[0], min(bed, home[1] + timedelta(hours=WIND_DOWN_H))):
                    avoid.append(Window(a, b, measures.glasses_transmission, "dark glasses"))
            if strategy == "compromise" and measures.daylight and settings.outdoor_minutes > 0:
                brake = min(settings.outdoor_minutes, measures.daylight_max_minutes)
                _add_daylight(roster, draft, bright, wake + timedelta(hours=WIND_DOWN_H), brake, days)
            if strategy == "day" and measures.daylight and settings.outdoor_minutes > 0:
                minutes = min(settings.outdoor_minutes, measures.daylight_max_minutes)
                _add_daylight(roster, draft, bright, home[1], minutes, days)
            continue
        if day.kind == "off" and season[i] and strategy in ("nights", "compromise"):
            if strategy == "nights":
                night_days = [d for d in days if d.kind == "night"]
                template = _sleep_after_night(roster, night_days[0])
                bed_clock = hours_between(roster.at(night_days[0].date, 0.0), template[0])
                bed = roster.at(day.date, bed_clock)
                length = hours_between(*template)
            else:
                bed = roster.at(day.date + timedelta(days=1), settings.free_bedtime_h)
                length = (roster.site.wake_h - roster.site.bed_h) % HOURS_PER_DAY
            episodes.append((bed, bed + timedelta(hours=length)))
            if strategy == "compromise" and measures.daylight and settings.outdoor_minutes > 0:
                _add_daylight(roster, draft, bright, bed + timedelta(hours=length + WIND_DOWN_H),
                              min(settings.outdoor_minutes, measures.daylight_max_minutes), days)
            continue
        if nxt is not None and nxt.kind == "night" and day.kind == "off" and season[i]:
            continue
        episodes.append(_sleep_before_day_shift(roster, _night_sleep(roster, day), nxt))
    sleep = _fit(episodes, _blocked(roster, days))
    bright = [w for w in bright if not any(_overlaps((w.start, w.end), s) for s in sleep)]
    return RosterPlan(sleep, tuple(bright), tuple(avoid), tuple(outdoor), strategy, settings.items(strategy))


def _overlaps(a, b) -> bool:
    return a[0] < b[1] and b[0] < a[1]


def _add_daylight(roster: Roster, draft: Draft, windows: list, start: datetime, minutes: float, days) -> None:
    """Outdoor daylight from ``start`` for ``minutes``, where the sun is up and no shift is on."""
    end = start + timedelta(minutes=minutes)
    for a, b in sunlit(roster, draft, start, end):
        if any(_overlaps((a, b), d.work) for d in days if d.work is not None):
            continue
        if hours_between(a, b) * 60.0 >= 10.0:
            windows.append(Window(a, b, mean_daylight_for(roster.light, roster.site, a, b), "daylight"))


def candidate_settings(roster: Roster, strategy: Strategy) -> list[Settings]:
    """Every combination of a strategy's free settings the search tries."""
    measures = roster.measures
    box = measures.light_box and measures.box_max_minutes > 0
    offsets = BOX_OFFSETS_H if box else (0.0,)
    fractions = (1.0, 0.5) if box else (1.0,)
    outdoor = OUTDOOR_MINUTES if measures.daylight else (0.0,)
    if strategy == "nights":
        if box:   # the whole night shift, on a lattice
            longest = max((s.hours for s in roster.shifts if s.kind == "night"), default=0.0)
            shortest_box = min(measures.box_max_minutes / 60.0, longest) * min(fractions)
            offsets = tuple(np.arange(0.0, max(longest - shortest_box, 0.0) + 1e-9, BOX_OFFSET_STEP_H))
        drifts = BOX_DRIFTS_H if box else (0.0,)
        return [Settings(float(o), f, box_drift_h=d) for o, f, d in itertools.product(offsets, fractions, drifts)]
    if strategy == "compromise":
        return [Settings(o, f, bedtime, m) for o, f, bedtime, m in
                itertools.product(offsets[:3], fractions, COMPROMISE_FREE_BEDTIMES_H, outdoor)]
    return [Settings(outdoor_minutes=m) for m in outdoor]


# --------------------------------------------------------------------------- metrics

@dataclass(frozen=True)
class Run:
    """A stretch of days of one kind (day, evening, night or off), starting with a switch."""

    kind: ShiftKind | Literal["off"]
    start: int
    length: int


def runs_of(days: Sequence[RosterDay]) -> list[Run]:
    """The draft's runs of days of the same kind."""
    runs: list[Run] = []
    for day in days:
        if runs and runs[-1].kind == day.kind:
            runs[-1] = replace(runs[-1], length=runs[-1].length + 1)
        else:
            runs.append(Run(day.kind, day.index, 1))
    return runs


@dataclass(frozen=True)
class Metrics:
    """Circadian metrics of N workers (or N plans) over one draft; arrays have N rows.

    Attributes
    ----------
    score : ndarray, shape (N,)
        Disruption score [h per 7 days] (module docstring).
    work_low_h, sleep_out_of_phase_h, awake_in_night_h : ndarray, shape (N,)
        Totals over the draft [h]: work within ±3 h of CBTmin, sleep outside the biological
        night, and biological night spent awake.
    cbtmin, dlmo : ndarray, shape (N, D)
        Each day's CBTmin and DLMO [h since the simulation epoch]: those of the night after the day,
        the first from 18:00 that day to 18:00 the next; NaN when there is none.
    work_low_day_h : ndarray, shape (N, D)
        Work within ±3 h of CBTmin on each day's shift [h].
    day_burden_h : ndarray, shape (N, D)
        Each day's work in the low, sleep out of phase (sleeps count for the evening they begin on)
        and biological night awake (nights count for the day of their CBTmin) [h].
    adapted : ndarray of bool, shape (N, D)
        The day's CBTmin lies inside a sleep episode.
    days_to_adapt : ndarray, shape (N, R)
        Per run (see ``runs``): days from the switch to the first adapted day; NaN if none.
    runs : list of Run
    min_amplitude_ratio : ndarray, shape (N,)
        Lowest oscillator amplitude over the draft relative to the entrained amplitude.
    sleepiness : ShiftSleepiness, optional
        The three-process model's sleepiness on each shift and drive home (:mod:`planner.engine.sleepiness`);
        its columns are the work days in order.
    """

    score: np.ndarray
    work_low_h: np.ndarray
    sleep_out_of_phase_h: np.ndarray
    awake_in_night_h: np.ndarray
    cbtmin: np.ndarray
    dlmo: np.ndarray
    work_low_day_h: np.ndarray
    day_burden_h: np.ndarray
    adapted: np.ndarray
    days_to_adapt: np.ndarray
    runs: list
    min_amplitude_ratio: np.ndarray
    sleepiness: ShiftSleepiness | None = None

    @property
    def worst_day(self) -> np.ndarray:
        """Index of each worker's worst day, shape (N,)."""
        return np.argmax(self.day_burden_h, axis=1)

    def column(self, j: int) -> "Metrics":
        """The metrics of worker (or plan) ``j`` alone."""
        pick = slice(j, j + 1)
        return Metrics(self.score[pick], self.work_low_h[pick], self.sleep_out_of_phase_h[pick],
                       self.awake_in_night_h[pick], self.cbtmin[pick],
                       self.dlmo[pick], self.work_low_day_h[pick], self.day_burden_h[pick], self.adapted[pick], self.days_to_adapt[pick],
                       self.runs, self.min_amplitude_ratio[pick],
                       None if self.sleepiness is None else self.sleepiness.column(j))


def _padded(times: list[np.ndarray]) -> np.ndarray:
    width = max([t.size for t in times] + [1])
    out = np.full((len(times), width), np.nan)
    for j, t in enumerate(times):
        out[j, :t.size] = t
    return out


def _first_in_windows(marks: np.ndarray, starts: np.ndarray, ends: np.ndarray) -> np.ndarray:
    """First mark inside each window, shape (N, D); marks (N, M) padded with NaN."""
    inside = (marks[:, None, :] >= starts[None, :, None]) & (marks[:, None, :] < ends[None, :, None])
    first = np.where(inside, marks[:, None, :], np.inf).min(axis=2)
    return np.where(np.isfinite(first), first, np.nan)


def _overlap_h(a0, a1, b0, b1):
    return np.clip(np.minimum(a1, b1) - np.maximum(a0, b0), 0.0, None)


@dataclass(frozen=True)
class Reference:
    """The worker's entrained state on the habitual free day and where sleep sits relative to CBTmin."""

    state: np.ndarray           # (3,) or (3, N) at local midnight of the roster's first day
    cbtmin_clock_h: float       # entrained CBTmin [h of the local day] (average worker)
    bed_from_cbtmin_h: float    # habitual bedtime minus CBTmin [h], negative
    wake_from_cbtmin_h: float   # habitual wake minus CBTmin [h]
    amplitude: float
    alertness_lag_h: float = math.nan   # alertness peak after CBTmin [h] (planner.engine.sleepiness)


def reference(roster: Roster, model: ModelSpec) -> Reference:
    """Entrain to the habitual free day at the site.

    The average worker must entrain (:func:`planner.engine.entrainment.entrain`); a population lives the free
    day from the average worker's state for a bounded time (:func:`planner.trips.evidence.entrain_people`),
    so that a few drawn workers at the edge of the range of entrainment (long period, low light
    sensitivity) keep the state that gives them instead of failing the run.
    """
    pattern = place_pattern(roster.site, roster.light)
    if model_batch_size(model) > 1:
        steady = entrain_people(model, pattern)
    else:
        steady = entrain(model, pattern)
        if not steady.success:
            raise ComputationError(f"cannot entrain the workers to their free day at {roster.site.name}: "
                                   f"{steady.message}")
    cbt = float(np.nanmedian(steady.cbtmin_clock_h))
    bed = (roster.site.bed_h - cbt + HOURS_PER_DAY / 2) % HOURS_PER_DAY - HOURS_PER_DAY / 2
    wake = bed + (roster.site.wake_h - roster.site.bed_h) % HOURS_PER_DAY
    amplitude = float(np.nanmedian(model.family.amplitude(steady.state[:2])))
    lag = acrophase_after_cbtmin(model) if model_batch_size(model) == 1 else math.nan
    return Reference(steady.state, cbt, bed, wake, amplitude, lag)


def measure(roster: Roster, draft: Draft, plans: Sequence[RosterPlan], result, ref: Reference,
            with_sleepiness: bool = True) -> Metrics:
    """Metrics of a simulated batch: column j followed ``plans[j]`` (or ``plans[0]`` for all).

    ``with_sleepiness`` False leaves out the sleepiness forecast (``Metrics.sleepiness`` None): the
    searches rank candidates by their score alone, and the forecast is reported for final plans.
    """
    days = roster_days(roster, draft)
    epoch = result.epoch
    size = result.size
    cbt_list = cbtmin_times(result)
    cbt = _padded(cbt_list)
    dlmo = _padded(dlmo_times(result, cbt_list))
    starts = np.array([hours_between(epoch, d.start) for d in days])
    # A day's markers are those of the night after it: the first from 18:00 that day to 18:00 the next.
    bounds = np.array([hours_between(epoch, roster.at(d.date, DAY_MARKER_FROM_H)) for d in days]
                      + [hours_between(epoch, roster.at(days[-1].date, HOURS_PER_DAY + DAY_MARKER_FROM_H))])
    daily_cbt = _first_in_windows(cbt, bounds[:-1], bounds[1:])
    daily_dlmo = _first_in_windows(dlmo, bounds[:-1], bounds[1:])
    work_days = [d for d in days if d.work is not None]
    w0 = np.array([hours_between(epoch, d.work[0]) for d in work_days])
    w1 = np.array([hours_between(epoch, d.work[1]) for d in work_days])
    # Work within ±3 h of any CBTmin: (N, shifts).
    low = np.nansum(_overlap_h(w0[None, :, None], w1[None, :, None], cbt[:, None, :] - LOW_HALF_WIDTH_H,
                               cbt[:, None, :] + LOW_HALF_WIDTH_H), axis=2)
    work_low_day = np.zeros((size, len(days)))
    work_low_day[:, [d.index for d in work_days]] = low
    burden = work_low_day.copy()
    out_of_phase = np.zeros(size)
    awake_in_night = np.zeros(size)
    adapted = np.zeros((size, len(days)), dtype=bool)
    # Each CBTmin inside the draft opens a biological night [c + bed offset, c + wake offset].
    in_draft = (cbt >= bounds[0]) & (cbt < bounds[-1])
    night0, night1 = cbt + ref.bed_from_cbtmin_h, cbt + ref.wake_from_cbtmin_h
    cbt_day = np.clip(np.searchsorted(bounds, np.where(in_draft, cbt, bounds[0]), side="right") - 1, 0,
                      len(days) - 1)
    for plan, rows in _same_plan_runs(plans, size):
        s0 = np.array([hours_between(epoch, a) for a, _ in plan.sleep])
        s1 = np.array([hours_between(epoch, b) for _, b in plan.sleep])
        asleep = np.zeros(cbt[rows].shape)
        if s0.size:
            # Sleep out of phase: the part of each sleep outside the biological night of the CBTmin
            # nearest its middle.
            marks = cbt[rows]
            middle = 0.5 * (s0 + s1)
            distance = np.where(np.isfinite(marks[:, None, :]), np.abs(marks[:, None, :] - middle[None, :, None]), np.inf)
            nearest = np.take_along_axis(marks, np.argmin(distance, axis=2), axis=1)          # (n, S)
            outside = (s1 - s0)[None, :] - _overlap_h(s0[None, :], s1[None, :], nearest + ref.bed_from_cbtmin_h,
                                                      nearest + ref.wake_from_cbtmin_h)
            outside = np.where(np.isfinite(outside), outside, (s1 - s0)[None, :])
            out_of_phase[rows] += outside.sum(axis=1)
            # A sleep counts for the day it starts on, less 6 h: a sleep from 00:30 belongs to the evening before.
            owner = np.clip(np.searchsorted(starts, s0 - 6.0, side="right") - 1, 0, len(days) - 1)
            np.add.at(burden, (rows, owner), outside)
            asleep = np.nansum(_overlap_h(night0[rows][:, :, None], night1[rows][:, :, None],
                                          s0[None, None, :], s1[None, None, :]), axis=2)
            inside = ((daily_cbt[rows][:, :, None] >= s0[None, None, :]) &
                      (daily_cbt[rows][:, :, None] <= s1[None, None, :])).any(axis=2)
            adapted[rows] = inside
        # Biological night spent awake (working, commuting, or a sleep cut short or displaced).
        awake = np.where(in_draft[rows], (night1 - night0)[rows] - asleep, 0.0)
        awake = np.where(np.isfinite(awake), awake, 0.0)
        awake_in_night[rows] += awake.sum(axis=1)
        np.add.at(burden, (np.arange(size)[rows][:, None], cbt_day[rows]), awake)
    runs = runs_of(days)
    to_adapt = np.full((size, len(runs)), np.nan)
    for r, run in enumerate(runs):
        window = adapted[:, run.start:run.start + run.length]
        hit = window.any(axis=1)
        to_adapt[hit, r] = np.argmax(window[hit], axis=1)
    work_low = low.sum(axis=1)
    score = (work_low + awake_in_night) * 7.0 / len(days)
    amplitude = model_amplitude_ratio(result, ref)
    sleepiness = _sleepiness(roster, plans, size, epoch, cbt, w0, w1, bounds[-1], ref) if with_sleepiness else None
    return Metrics(score, work_low, out_of_phase, awake_in_night, daily_cbt, daily_dlmo, work_low_day, burden, adapted,
                   to_adapt, runs, amplitude, sleepiness)


def _same_plan_runs(plans: Sequence[RosterPlan], size: int) -> list[tuple[RosterPlan, slice]]:
    """Each plan with the batch columns following it: runs of consecutive columns with the same plan object
    (one plan for the whole batch, or C candidates × N people), which ``measure`` handles together."""
    if len(plans) == 1:
        return [(plans[0], slice(None))]
    runs, first = [], 0
    for j in range(1, size + 1):
        if j == size or plans[j] is not plans[first]:
            runs.append((plans[first], slice(first, j)))
            first = j
    return runs


def _sleepiness(roster: Roster, plans: Sequence[RosterPlan], size: int, epoch: datetime, cbt: np.ndarray,
                w0: np.ndarray, w1: np.ndarray, span_h: float, ref: Reference) -> ShiftSleepiness | None:
    """The three-process model on every shift; Process S is computed once per distinct plan."""
    if not math.isfinite(ref.alertness_lag_h):
        return None
    model = load_alertness_model()
    distinct: dict[int, int] = {}
    unique: list[RosterPlan] = []
    for plan in plans:
        if id(plan) not in distinct:
            distinct[id(plan)] = len(unique)
            unique.append(plan)
    sleeps = [(np.array([hours_between(epoch, a) for a, _ in plan.sleep]),
               np.array([hours_between(epoch, b) for _, b in plan.sleep])) for plan in unique]
    # The epoch is local midnight of the first day: S starts at the habitual day's value there.
    s0 = steady_s(roster.site.bed_h, roster.site.wake_h, 0.0, model)
    plan_s = plan_sleep(sleeps, span_h, s0, model)
    column_plan = np.array([distinct[id(plans[j if len(plans) > 1 else 0])] for j in range(size)])
    return shift_sleepiness(plan_s, column_plan, cbt, ref.alertness_lag_h, w0, w1, roster.commute_minutes / 60.0,
                            model)


def model_amplitude_ratio(result, ref: Reference) -> np.ndarray:
    amplitude = result.model.family.amplitude(np.moveaxis(result.states[:, :2, :], 1, 0))
    return np.nanmin(amplitude, axis=0) / ref.amplitude


# --------------------------------------------------------------------------- evaluation and search

@dataclass
class RosterEvaluator:
    """Simulates batches of plans for one roster and model (the average worker)."""

    roster: Roster
    model: ModelSpec
    ref: Reference | None = None   # the entrained free day; computed when not given
    simulated: int = 0

    def __post_init__(self):
        if self.ref is None:
            self.ref = reference(self.roster, self.model)

    def evaluate(self, draft: Draft, plans: Sequence[RosterPlan], *, final: bool = False,
                 model: ModelSpec | None = None, initial_state: np.ndarray | None = None) -> Metrics:
        """Simulate plans (one column each) or one plan for a population ``model``; metrics per column
        (with ``final``, at the validated step and with the sleepiness forecast)."""
        schedules = [roster_schedule(self.roster, draft, plan) for plan in plans]
        start, end = period(self.roster, draft)
        step = None if final else SEARCH_STEP_MINUTES
        state = self.ref.state if initial_state is None else initial_state
        result = simulate(model or self.model, schedules, state, start=start, end=end, step_minutes=step)
        if not result.success:
            raise ComputationError(result.message)
        self.simulated += result.size
        return measure(self.roster, draft, plans, result, self.ref, with_sleepiness=final)


@dataclass(frozen=True)
class StrategyOutcome:
    """The best plan of one strategy for one draft (average worker), with its metrics."""

    strategy: Strategy | Literal["none"]
    plan: RosterPlan
    metrics: Metrics
    candidates: int

    @property
    def score(self) -> float:
        return float(self.metrics.score[0])


@dataclass(frozen=True)
class PopulationSummary:
    """A chosen plan simulated for N workers with intrinsic periods from Duffy et al. (2011).

    Spreads are dicts with ``p10``, ``median`` and ``p90``.
    """

    size: int
    seed: int
    tau_h: dict
    score: dict
    work_low_h: dict
    sleep_out_of_phase_h: dict
    mean_days_to_adapt: dict
    night_runs_unadapted: float      # fraction of (worker, night run) pairs never adapted
    cbtmin_clock_h: np.ndarray       # (D, 3): p10, median, p90 of each day's CBTmin on the local clock [h]
    metrics: Metrics = field(repr=False)
    sleepy_hours_per_week: dict | None = None   # hours at work at KSS >= 7 per 7 days (planner.engine.sleepiness)


@dataclass(frozen=True)
class RobustChoice:
    """The plan that is least disruptive over a search population, beside the average worker's plan.

    Attributes
    ----------
    outcome : StrategyOutcome
        The robust plan, with the average worker's metrics at the validated step.
    people : int
        Size of the search population (intrinsic period and light sensitivity drawn).
    mean_score, p90_score : float
        The robust plan's disruption score over the search population: mean and 90th percentile [h/wk].
    average_mean_score, average_p90_score : float
        The same for the average worker's plan (the plan chosen without ``robust``) [h/wk].
    candidates : int
        Plans scored over the population.
    """

    outcome: StrategyOutcome
    people: int
    mean_score: float
    p90_score: float
    average_mean_score: float
    average_p90_score: float
    candidates: int

    @property
    def changed(self) -> bool:
        """Whether the robust plan differs from the average worker's plan."""
        return self.mean_score < self.average_mean_score - 1e-9


@dataclass(frozen=True)
class DraftResult:
    """One draft: every strategy's best plan, the chosen one, the baseline and the population.

    With a robust search, ``robust`` holds the plan least disruptive over a population; it is then
    the plan this draft recommends (``best``), with the average worker's plan beside it.
    """

    draft: Draft
    days: list
    baseline: StrategyOutcome
    strategies: dict
    chosen: str
    population: PopulationSummary | None
    robust: RobustChoice | None = None
    #: Working-time rules the draft breaks (:mod:`planner.rosters.rules`); empty when it conforms.
    breaches: tuple = ()
    #: What the drafts are ranked by: "disruption" or "sleepiness".
    rank_by: str = "disruption"

    @property
    def conforms(self) -> bool:
        return not self.breaches

    @property
    def best(self) -> StrategyOutcome:
        return self.robust.outcome if self.robust is not None else self.strategies[self.chosen]

    @property
    def best_strategy(self) -> str:
        return self.best.strategy

    @property
    def rank_score(self) -> float:
        """What drafts are ranked by: the population's median, else the average worker's, of the disruption
        score or (``rank_by == "sleepiness"``) of the hours at work at KSS >= 7 per week."""
        if self.rank_by == "sleepiness":
            if self.population is not None and self.population.sleepy_hours_per_week is not None:
                return float(self.population.sleepy_hours_per_week["median"])
            sleepiness = self.best.metrics.sleepiness
            return math.nan if sleepiness is None else float(sleepiness.sleepy_hours_per_week(len(self.days))[0])
        if self.population is not None:
            return float(self.population.score["median"])
        return self.best.score

    @property
    def tie_break(self) -> float:
        """Second ranking key under ``rank_by == "sleepiness"``: the mean of each shift's highest KSS."""
        sleepiness = self.best.metrics.sleepiness
        if self.rank_by != "sleepiness" or sleepiness is None or not np.isfinite(sleepiness.peak_kss).any():
            return 0.0
        return float(np.nanmean(sleepiness.peak_kss[0]))


@dataclass(frozen=True)
class RosterResult:
    """Outcome of :func:`plan_roster`: drafts ranked from least to most disruptive.

    Attributes
    ----------
    success : bool
    status : int
        0 ok; 1 no strategy gave a finite score for some draft.
    message : str
    drafts : list of DraftResult
        Ranked, least disruptive first.
    reason : str
        Why the first draft ranks first.
    simulated : int
        Schedules simulated (search, final and population runs).
    citations : list of str
    reference : Reference
    """

    success: bool
    status: int
    message: str
    roster: Roster
    drafts: list
    reason: str
    simulated: int
    citations: list
    reference: Reference


def _summarise_population(roster: Roster, draft: Draft, metrics: Metrics, population: Population,
                          ref_epoch: datetime) -> PopulationSummary:
    days = roster_days(roster, draft)
    clock = np.full(metrics.cbtmin.shape, np.nan)
    for d, day in enumerate(days):
        column = metrics.cbtmin[:, d]
        finite = np.isfinite(column)
        # Hours since the day's local midnight, wrapped: the clock time on the site's clock.
        clock[finite, d] = np.mod(column[finite] - hours_between(ref_epoch, day.start), HOURS_PER_DAY)
    # Percentiles of clock times around the median's side of midnight: unwrap relative to the day's median.
    centre = np.nanmedian(clock, axis=0)
    unwrapped = centre[None, :] + ((clock - centre[None, :] + 12.0) % 24.0 - 12.0)
    bands = np.stack([np.nanpercentile(unwrapped, q, axis=0) for q in (10, 50, 90)], axis=1) % HOURS_PER_DAY \
        if np.any(np.isfinite(unwrapped)) else np.full((len(days), 3), np.nan)
    night_runs = [r for r, run in enumerate(metrics.runs) if run.kind == "night"]
    unadapted = float(np.mean(np.isnan(metrics.days_to_adapt[:, night_runs]))) if night_runs else 0.0
    adapted = np.isfinite(metrics.days_to_adapt)
    counts = adapted.sum(axis=1)
    mean_days = np.where(counts > 0, np.where(adapted, metrics.days_to_adapt, 0.0).sum(axis=1) / np.maximum(counts, 1),
                         np.nan)
    sleepy = None if metrics.sleepiness is None else \
        _floats(spread(metrics.sleepiness.sleepy_hours_per_week(len(days))))
    return PopulationSummary(population.size, int(population.seed or 0), _floats(spread(population.tau_h)),
                             _floats(spread(metrics.score)), _floats(spread(metrics.work_low_h)),
                             _floats(spread(metrics.sleep_out_of_phase_h)), _floats(spread(mean_days)),
                             unadapted, bands, metrics, sleepy)


def _floats(values: dict) -> dict:
    return {key: float(value) for key, value in values.items()}


def _boxes_before(roster: Roster, draft: Draft, plan: RosterPlan, cbtmin_h: np.ndarray, lead_h: float) -> RosterPlan:
    """``plan`` with each night shift's light box moved to end ``lead_h`` before that night's CBTmin
    (``cbtmin_h``: the day's CBTmin [h since the draft's epoch], NaN keeps the box where it is), within the shift."""
    days = roster_days(roster, draft)
    epoch = period(roster, draft)[0]
    moved = []
    for window in plan.bright:
        day = next((d for d in days if d.kind == "night" and d.work[0] <= window.start < d.work[1]), None)
        if window.source != "light box" or day is None or not math.isfinite(cbtmin_h[day.index]):
            moved.append(window)
            continue
        length = window.end - window.start
        end = epoch + timedelta(hours=float(cbtmin_h[day.index]) - lead_h)
        end = min(max(end, day.work[0] + length), day.work[1])
        moved.append(Window(end - length, end, window.lux, window.source))
    settings = tuple((k, v) for k, v in plan.settings if k not in ("box_offset_h", "box_drift_h"))
    return replace(plan, bright=tuple(moved), settings=settings + (("box_lead_h", lead_h),))


def _boxes_end_by_cbtmin(roster: Roster, draft: Draft, plan: RosterPlan, cbtmin_h: np.ndarray, epoch: datetime) -> bool:
    """Whether every night's light box ends by that night's simulated CBTmin (unknown CBTmin: allowed)."""
    days = roster_days(roster, draft)
    for window in plan.bright:
        day = next((d for d in days if d.kind == "night" and d.work[0] <= window.start < d.work[1]), None)
        if window.source != "light box" or day is None or not math.isfinite(cbtmin_h[day.index]):
            continue
        if window.end > epoch + timedelta(hours=float(cbtmin_h[day.index])):
            return False
    return True


def track_box(evaluator: RosterEvaluator, draft: Draft, plan: RosterPlan, score: float) -> tuple[RosterPlan, int]:
    """Let the light box of a full-adaptation plan follow the clock: each night's box ends a searched
    lead before that night's simulated CBTmin, and the plan is simulated again with the boxes moved,
    ``BOX_TRACK_ROUNDS`` times; the plan with the lowest score is kept (``plan`` itself if none beats it).
    Returns the plan and the number of plans tried."""
    roster = evaluator.roster
    if not any(w.source == "light box" for w in plan.bright):
        return plan, 0
    best_plan, best_score, tried = plan, score, 0
    cbtmin = evaluator.evaluate(draft, [plan]).cbtmin[0]
    for _ in range(BOX_TRACK_ROUNDS):
        variants = [_boxes_before(roster, draft, best_plan, cbtmin, lead) for lead in BOX_LEADS_H]
        metrics = evaluator.evaluate(draft, variants)
        tried += len(variants)
        pick = int(np.argmin(metrics.score))
        if metrics.score[pick] >= best_score - 1e-9:
            break
        best_plan, best_score, cbtmin = variants[pick], float(metrics.score[pick]), metrics.cbtmin[pick]
    return best_plan, tried


def plan_draft(evaluator: RosterEvaluator, draft: Draft, strategies: Sequence[Strategy]) -> tuple[StrategyOutcome, dict]:
    """Search each strategy's settings in one batch (the full-adaptation box then tracks the clock,
    :func:`track_box`); final plans at the validated step."""
    roster = evaluator.roster
    candidates = [(name, settings, plan_for(roster, draft, name, settings))
                  for name in strategies for settings in candidate_settings(roster, name)]
    baseline_plan = plan_for(roster, draft, "none")
    searched = evaluator.evaluate(draft, [baseline_plan] + [c[2] for c in candidates])
    scores = searched.score[1:]
    tried = {name: [k for k, c in enumerate(candidates) if c[0] == name] for name in strategies}
    # The first of equal scores wins (candidate order), as the search has always kept it.
    if "nights" in tried:
        # full adaptation delays the clock: keep to boxes in the delaying lobe, ending by each night's
        # simulated CBTmin (Khalsa et al. 2003, J Physiol 549:945), when any candidate does
        epoch = period(roster, draft)[0]
        delaying = [k for k in tried["nights"]
                    if _boxes_end_by_cbtmin(roster, draft, candidates[k][2], searched.cbtmin[1 + k], epoch)]
        tried["nights"] = delaying or tried["nights"]
    picked = {name: min(ks, key=lambda k: (scores[k], k)) for name, ks in tried.items()}
    best = {name: candidates[k][2] for name, k in picked.items()}
    counts = {name: sum(c[0] == name for c in candidates) for name in strategies}
    if "nights" in best:
        best["nights"], extra = track_box(evaluator, draft, best["nights"], float(scores[picked["nights"]]))
        counts["nights"] += extra
    metrics = evaluator.evaluate(draft, [baseline_plan] + [best[name] for name in strategies], final=True)
    baseline = StrategyOutcome("none", baseline_plan, metrics.column(0), 1)
    outcomes = {name: StrategyOutcome(name, best[name], metrics.column(k + 1), counts[name])
                for k, name in enumerate(strategies)}
    return baseline, outcomes


#: People in the robust search population (a design choice of this planner: enough to rank plans by
#: their mean score, about 1/sqrt(32) of the spread, at a cost of seconds per draft).
ROBUST_SEARCH_WORKERS = 32


#: The robust search scores every candidate over its population, so it tries the full-adaptation box
#: on a coarser lattice [h] and without a nightly drift (the average worker's tracked plan is among its
#: candidates; a cost limit of this planner).
ROBUST_BOX_LATTICE_H = 2.0


def _coarse(strategy: str, settings: Settings) -> bool:
    if strategy != "nights":
        return True
    return settings.box_drift_h == 0.0 and settings.box_offset_h % ROBUST_BOX_LATTICE_H == 0.0


def robust_draft(evaluator: RosterEvaluator, draft: Draft, strategies: Sequence[Strategy], average: StrategyOutcome,
                 population: Population, states: np.ndarray) -> RobustChoice:
    """Score every candidate plan over ``population`` in one batch; keep the lowest mean score.

    The average worker's plan ``average`` is scored alongside, so the two can be shown side by side.
    Column j of the batch is candidate j // N, person j % N (:func:`planner.engine.population.simulate_population`).
    """
    roster = evaluator.roster
    candidates = [average.plan] + [plan_for(roster, draft, name, settings)
                                   for name in strategies for settings in candidate_settings(roster, name)
                                   if _coarse(name, settings)]
    start, end = period(roster, draft)
    schedules = [roster_schedule(roster, draft, plan) for plan in candidates]
    result = simulate_population(population, schedules, states, start, end, step_minutes=SEARCH_STEP_MINUTES)
    if not result.success:
        raise ComputationError(result.message)
    evaluator.simulated += result.size
    people = population.size
    columns = [plan for plan in candidates for _ in range(people)]
    scores = measure(roster, draft, columns, result, evaluator.ref, with_sleepiness=False).score.reshape(
        len(candidates), people)
    mean = scores.mean(axis=1)
    best = int(np.argmin(mean))
    plan = candidates[best]
    outcome = StrategyOutcome(plan.strategy, plan, evaluator.evaluate(draft, [plan], final=True), len(candidates))
    p90 = np.percentile(scores, REPORTED_PERCENTILES[-1], axis=1)
    return RobustChoice(outcome, people, float(mean[best]), float(p90[best]), float(mean[0]), float(p90[0]),
                        len(candidates))


def plan_roster(roster: Roster, model: ModelSpec, strategy: Literal["auto"] | Strategy = "auto", *,
                workers: int = 0, seed: int = 0, robust: bool = False, strict: bool = False,
                sensitivity_sd_ln: float = LIGHT_SENSITIVITY_SD_LN, rank_by: str = "disruption",
                progress: Callable[[int, int, str], None] | None = None) -> RosterResult:
    """Plan every draft of a roster and rank the drafts.

    Parameters
    ----------
    roster : Roster
    model : ModelSpec
    strategy : {"auto", "nights", "compromise", "day"}
        ``auto`` searches all three and keeps the least disruptive per draft.
    workers : int
        Population size for the spread across workers (0: the average worker only).
    seed : int
        Seed of the population draws (reproducible).
    sensitivity_sd_ln : float
        SD of the log light-sensitivity factor on α0 of the drawn workers (0: intrinsic period only;
        default :data:`planner.engine.population.LIGHT_SENSITIVITY_SD_LN`, this planner's assumption).
    robust : bool
        Also score every candidate over :data:`ROBUST_SEARCH_WORKERS` drawn workers (intrinsic period
        and light sensitivity) and recommend the plan with the lowest mean score (:func:`robust_draft`).
    strict : bool
        Refuse (InputError) a roster with any draft breaking the working-time rules
        (:mod:`planner.rosters.rules`); without it such drafts are planned and ranked last.
    rank_by : {"disruption", "sleepiness"}
        What drafts are ranked by: the disruption score, or the hours at work at KSS >= 7 per week
        (ties broken by the mean of each shift's highest KSS; :mod:`planner.engine.sleepiness`).
    progress : callable(done, total, label), optional
        Called after each step of work (the CLI draws a progress bar with it).
    """
    if rank_by not in RANK_BY:
        raise InputError(f"unknown ranking {rank_by!r}; allowed: {', '.join(RANK_BY)}", field="rank_by")
    if strategy != "auto" and strategy not in STRATEGIES:
        raise InputError(f"unknown strategy {strategy!r}; allowed: auto, {', '.join(STRATEGIES)}", field="strategy")
    if not isinstance(workers, (int, np.integer)) or workers < 0:
        raise InputError(f"workers must be a whole number >= 0, got {workers!r}", field="workers")
    wanted = STRATEGIES if strategy == "auto" else (strategy,)
    steps = len(roster.drafts) * (1 + bool(workers) + bool(robust)) + 1
    done = 0

    def tick(label: str) -> None:
        nonlocal done
        done += 1
        if progress is not None:
            progress(done, steps, label)

    # the working-time rules come before any circadian score
    breaches = {draft.name: check_draft(roster, draft) for draft in roster.drafts}
    if strict and any(breaches.values()):
        broken = [name for name, found in breaches.items() if found]
        first = breaches[broken[0]]
        raise InputError(f"{len(broken)} draft(s) break the working-time rules and --strict refuses them: "
                         f'"{broken[0]}": {breaches_text(first, 1)}', field="drafts")
    evaluator = RosterEvaluator(roster, model)
    population = people_state = None
    if workers:
        population = draw_population(model, int(workers), seed, sensitivity_sd_ln=sensitivity_sd_ln)
        people_state = reference(roster, population.model).state
    search = search_state = None
    if robust:
        search = draw_population(model, ROBUST_SEARCH_WORKERS, seed + 1, sensitivity_sd_ln=sensitivity_sd_ln)
        search_state = reference(roster, search.model).state
    tick("entrained to the free day")
    results = []
    for draft in roster.drafts:
        baseline, outcomes = plan_draft(evaluator, draft, wanted)
        chosen = min(outcomes, key=lambda name: (outcomes[name].score, wanted.index(name)))
        tick(f"planned {draft.name}")
        robust_choice = None
        if search is not None:
            robust_choice = robust_draft(evaluator, draft, wanted, outcomes[chosen], search, search_state)
            tick(f"robust search over {search.size} workers on {draft.name}")
        recommended = robust_choice.outcome.plan if robust_choice is not None else outcomes[chosen].plan
        summary = None
        if population is not None:
            metrics = evaluator.evaluate(draft, [recommended], final=True, model=population.model,
                                         initial_state=people_state)
            summary = _summarise_population(roster, draft, metrics, population, period(roster, draft)[0])
            tick(f"simulated {population.size} workers on {draft.name}")
        results.append(DraftResult(draft, roster_days(roster, draft), baseline, outcomes, chosen, summary,
                                   robust_choice, tuple(breaches[draft.name]), rank_by))
    finite = all(math.isfinite(r.rank_score) for r in results)
    # every draft that keeps the working-time rules ranks before every draft that breaks them
    ranked = sorted(results, key=lambda r: (not r.conforms, r.rank_score if math.isfinite(r.rank_score) else math.inf,
                                            r.tie_break, roster.drafts.index(r.draft)))
    reason = ranking_reason(ranked)
    message = (f"{count_text(len(ranked), 'draft')} planned; least disruptive: {ranked[0].draft.name}" if finite else
               "some drafts have no finite disruption score (no CBTmin predicted on some days)")
    return RosterResult(finite, 0 if finite else 1, message, roster, ranked, reason, evaluator.simulated,
                        [model.citation], evaluator.ref)


def ranking_reason(ranked: Sequence[DraftResult]) -> str:
    """Plain words for why the first draft ranks first (and which drafts break working-time rules)."""
    breaking = [r for r in ranked if not r.conforms]
    if breaking and len(breaking) == len(ranked):
        prefix = "every draft breaks working-time rules (see each draft); among them "
    elif breaking:
        prefix = (f"{', '.join(r.draft.name for r in breaking)} break{'s' if len(breaking) == 1 else ''} "
                  "working-time rules and rank last whatever their scores; among the drafts keeping them, ")
    else:
        prefix = ""
    return prefix + _score_reason(ranked)


def whose_score(result: DraftResult) -> str:
    """Whose score a draft is ranked by, e.g. "the average worker" or "the median of 40 workers"."""
    if result.population is not None:
        return f"the median of {result.population.size} workers"
    return "the average worker"


def within_spread(a: DraftResult, b: DraftResult) -> bool | None:
    """Whether two drafts' population scores overlap (each median inside the other's 10th–90th
    percentile range); None without populations."""
    if a.population is None or b.population is None:
        return None
    sa, sb = a.population.score, b.population.score
    return sa["p10"] <= sb["median"] <= sa["p90"] or sb["p10"] <= sa["median"] <= sb["p90"]


def _score_reason(ranked: Sequence[DraftResult]) -> str:
    first = ranked[0]
    if first.rank_by == "sleepiness":
        what = "median worker" if first.population is not None else "average worker"
        text = (f"{first.draft.name} with {STRATEGY_NAMES[first.best_strategy]} leaves the fewest hours at work at "
                f"KSS 7 or more: {first.rank_score:.1f} h per week for the {what} (mean highest KSS per shift "
                f"{first.tie_break:.1f})")
        if len(ranked) > 1:
            text += ", against " + "; ".join(f"{r.draft.name} {r.rank_score:.1f} h (KSS {r.tie_break:.1f})"
                                             for r in ranked[1:])
        return text
    text = (f"{first.draft.name} with the plan that {STRATEGY_NAMES[first.best_strategy]} disrupts least: "
            f"{first.rank_score:.1f} h per week of work in the circadian low or biological night spent awake for "
            f"{whose_score(first)}")
    if first.population is not None:
        s = first.population.score
        text += f" (10th–90th percentile {s['p10']:.1f}–{s['p90']:.1f} h)"
    if len(ranked) > 1:
        others = "; ".join(f"{r.draft.name} {r.rank_score:.1f} h ({STRATEGY_NAMES[r.best_strategy]})"
                           for r in ranked[1:])
        text += f", against {others}"
        second = ranked[1]
        close = within_spread(first, second)
        gap = abs(second.rank_score - first.rank_score)
        if close is None:
            text += (f". The {gap:.1f} h/wk between the first two is for the average worker only; plan with "
                     "--people to see whether it exceeds the spread between workers")
        elif close:
            text += (f". {first.draft.name} and {second.draft.name} are within the population spread of each other "
                     f"(each median inside the other's 10th–90th percentiles): the {gap:.1f} h/wk between them is "
                     "smaller than the differences between workers")
        else:
            text += (f". The {gap:.1f} h/wk between {first.draft.name} and {second.draft.name} is larger than the "
                     "spread between workers")
    return text


# --------------------------------------------------------------------------- model ensemble

#: Two models disagree on a day when their CBTmin differ by more than this [h] (the re-entrainment
#: tolerance of the trip planner; a design threshold of this planner).
ENSEMBLE_TOLERANCE_H = 1.0


@dataclass(frozen=True)
class EnsembleMember:
    """One model's prediction for a plan (the average worker)."""

    model: ModelSpec
    metrics: Metrics


@dataclass(frozen=True)
class RosterEnsemble:
    """A draft's recommended plan run under several models.

    Attributes
    ----------
    members : list of EnsembleMember
    disagree_days : list of int
        Day indices whose CBTmin differ between some two models by more than
        :data:`ENSEMBLE_TOLERANCE_H` (or where one model has none).
    spread_h : ndarray, shape (D,)
        Largest difference between the models' CBTmin on each day [h].
    """

    members: list
    disagree_days: list
    spread_h: np.ndarray

    @property
    def score_range(self) -> tuple[float, float]:
        scores = [float(m.metrics.score[0]) for m in self.members]
        return min(scores), max(scores)


def roster_ensemble(roster: Roster, draft_result: DraftResult, models: Sequence[ModelSpec]) -> RosterEnsemble:
    """Run ``draft_result``'s recommended plan under each model (each entrained to the free day itself)."""
    if not models:
        raise InputError("name at least one model for the ensemble", field="--models")
    plan = draft_result.best.plan
    members = [EnsembleMember(m, RosterEvaluator(roster, m).evaluate(draft_result.draft, [plan], final=True))
               for m in models]
    marks = np.stack([m.metrics.cbtmin[0] for m in members])          # (models, D) [h since the epoch]
    with np.errstate(invalid="ignore"):
        spread_h = np.nanmax(marks, axis=0) - np.nanmin(marks, axis=0) if len(members) > 1 \
            else np.zeros(marks.shape[1])
    missing = np.isnan(marks).any(axis=0) & ~np.isnan(marks).all(axis=0)
    disagree = [int(d) for d in np.nonzero((spread_h > ENSEMBLE_TOLERANCE_H) | missing)[0]]
    return RosterEnsemble(members, disagree, spread_h)
