"""Working-time rules: a draft is checked against them before any circadian score.

Each draft (and each crew's rotation of it) is laid out day by day and checked for

- ``overlap``: a shift that starts before the previous one has ended and the worker got home and
  back (the commute each way counts); such a draft cannot be worked at all;
- ``daily_rest``: less than ``daily_rest_h`` between the end of one shift and the start of the next
  (Directive 2003/88/EC, Art. 3: 11 consecutive hours per 24-hour period);
- ``weekly_rest``: a period of ``weekly_rest_days`` days holding no uninterrupted rest of
  ``weekly_rest_h`` plus the daily rest (Art. 5: 24 h plus the 11 h of Art. 3 in each seven-day
  period); the periods start at every local midnight of the draft, a rest counts for every period it
  reaches into (the Directive leaves its place within the period free), and the time before the
  first and after the last shift counts as rest;
- ``consecutive_nights`` and ``consecutive_work_days``: runs longer than the limits
  (HSE 2006, HSG256 "Managing shift work", appendix 1; from memory).

Rest is the time between shifts (commutes are not working time under Art. 2 of the Directive).
The result is a list of :class:`Breach`, each naming the rule, its source and the days.
"""

from __future__ import annotations

from dataclasses import dataclass
from datetime import date
from typing import Literal, Sequence

from planner.rosters.model import Draft, Roster, RosterDay, crew_draft, roster_days
from planner.world.light import hours_between

Rule = Literal["overlap", "daily_rest", "weekly_rest", "consecutive_nights", "consecutive_work_days"]

#: Where each rule comes from (shown beside every breach).
RULE_SOURCES: dict[str, str] = {
    "overlap": "a shift cannot start before the previous one ends and the worker is home and back",
    "daily_rest": "Directive 2003/88/EC, Art. 3 (daily rest)",
    "weekly_rest": "Directive 2003/88/EC, Art. 5 (weekly rest)",
    "consecutive_nights": "HSE 2006, HSG256 Managing shift work, appendix 1 (consecutive nights)",
    "consecutive_work_days": "HSE 2006, HSG256 Managing shift work, appendix 1 (consecutive working days)",
}
#: Rules whose breach makes a draft impossible to work (the others make it unlawful or unwise).
IMPOSSIBLE: frozenset[str] = frozenset({"overlap"})


@dataclass(frozen=True)
class Breach:
    """One broken working-time rule.

    Attributes
    ----------
    rule : str
        One of :data:`Rule`.
    crew : str or None
        The crew whose rotation breaks it (None: the draft as written).
    first_day, last_day : date
        Local dates of the days involved (the two shifts, the run, or the seven-day period).
    message : str
        The breach in plain words, with the days and the limit.
    source : str
        Where the rule comes from.
    """

    rule: str
    crew: str | None
    first_day: date
    last_day: date
    message: str
    source: str

    @property
    def impossible(self) -> bool:
        return self.rule in IMPOSSIBLE

    def as_dict(self) -> dict:
        return {"rule": self.rule, "crew": self.crew, "first_day": self.first_day.isoformat(),
                "last_day": self.last_day.isoformat(), "message": self.message, "source": self.source}


def _day(d: date) -> str:
    return d.strftime("%a %d %b")


def _hours(value: float) -> str:
    """Hours to a tenth, without a trailing ".0" (9.5, 11)."""
    return f"{value:.1f}".removesuffix(".0")


def _runs(days: Sequence[RosterDay], member) -> list[tuple[int, int]]:
    """(first index, last index) of each run of consecutive days for which ``member(day)`` holds."""
    runs, start = [], None
    for day in days:
        if member(day):
            start = day.index if start is None else start
        elif start is not None:
            runs.append((start, day.index - 1))
            start = None
    if start is not None:
        runs.append((start, days[-1].index))
    return runs


def check_days(roster: Roster, days: Sequence[RosterDay], crew: str | None = None) -> list[Breach]:
    """Every working-time rule of ``roster.rules`` checked on a laid-out draft."""
    rules = roster.rules
    commute = roster.commute
    breaches: list[Breach] = []
    worked = [d for d in days if d.work is not None]

    def add(rule: str, first: date, last: date, message: str) -> None:
        breaches.append(Breach(rule, crew, first, last, message, RULE_SOURCES[rule]))

    for before, after in zip(worked[:-1], worked[1:]):
        rest_h = hours_between(before.work[1], after.work[0])
        if before.work[1] + commute > after.work[0] - commute:
            add("overlap", before.date, after.date,
                f"the {before.label} shift of {_day(before.date)} ends "
                f"{before.work[1].astimezone(roster.site.zone):%H:%M} and the {after.label} shift of "
                f"{_day(after.date)} starts {after.work[0].astimezone(roster.site.zone):%H:%M}: they overlap "
                f"once the {roster.commute_minutes:g}-min commute each way is counted")
        elif rest_h < rules.daily_rest_h:
            add("daily_rest", before.date, after.date,
                f"{_hours(rest_h)} h between the {before.label} shift of {_day(before.date)} and the {after.label} "
                f"shift of {_day(after.date)}, under the {rules.daily_rest_h:g} h daily rest")
    for first, last in _runs(days, lambda d: d.kind == "night"):
        if last - first + 1 > rules.max_consecutive_nights:
            add("consecutive_nights", days[first].date, days[last].date,
                f"{last - first + 1} nights in a row from {_day(days[first].date)} to {_day(days[last].date)}, "
                f"more than {rules.max_consecutive_nights}")
    for first, last in _runs(days, lambda d: d.work is not None):
        if last - first + 1 > rules.max_consecutive_work_days:
            add("consecutive_work_days", days[first].date, days[last].date,
                f"{last - first + 1} working days in a row from {_day(days[first].date)} to "
                f"{_day(days[last].date)}, more than {rules.max_consecutive_work_days}")
    breaches += _weekly_rest(roster, days, crew)
    return breaches


def _weekly_rest(roster: Roster, days: Sequence[RosterDay], crew: str | None) -> list[Breach]:
    rules = roster.rules
    period = rules.weekly_rest_days
    if len(days) < period:
        return []
    needed_h = rules.weekly_rest_h + rules.daily_rest_h
    # rests between shifts, with the time before the first and after the last shift to the draft's edges
    edges = [days[0].start] + [x for d in days if d.work is not None for x in d.work] + [days[-1].end]
    rests = [(a, b) for a, b in zip(edges[0::2], edges[1::2]) if b > a]
    breaches = []
    k = 0
    while k + period <= len(days):
        window_start, window_end = days[k].start, days[k + period - 1].end
        longest = max((hours_between(a, b) for a, b in rests if a < window_end and b > window_start), default=0.0)
        if longest < needed_h - 1e-9:
            first, last = days[k].date, days[k + period - 1].date
            breaches.append(Breach("weekly_rest", crew, first, last,
                                   f"no rest of {needed_h:g} h ({rules.weekly_rest_h:g} h weekly plus the "
                                   f"{rules.daily_rest_h:g} h daily rest) reaches into the {period} days "
                                   f"{_day(first)} to {_day(last)}; the longest is {_hours(longest)} h",
                                   RULE_SOURCES["weekly_rest"]))
            k += period   # one breach per stretch, not one for every overlapping period
        else:
            k += 1
    return breaches


def check_draft(roster: Roster, draft: Draft) -> list[Breach]:
    """The working-time rules checked on a draft as written and on each crew's rotation of it."""
    breaches = check_days(roster, roster_days(roster, draft))
    seen = {(b.rule, b.message) for b in breaches}
    for crew in roster.crews:
        for breach in check_days(roster, roster_days(roster, crew_draft(draft, crew)), crew.name):
            if crew.offset_days % len(draft.pattern) and (breach.rule, breach.message) not in seen:
                breaches.append(breach)
    return breaches


def breaches_text(breaches: Sequence[Breach], limit: int = 3) -> str:
    """The first few breaches in words, e.g. for a ranking or an error line."""
    parts = [(f"crew {b.crew}: " if b.crew else "") + f"{b.message} ({b.source})" for b in breaches[:limit]]
    if len(breaches) > limit:
        parts.append(f"and {len(breaches) - limit} more")
    return "; ".join(parts)

