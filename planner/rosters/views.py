"""A roster plan cut into days on the site's clock, and a compact text chart of it.

Shared by the command line and later calendars and reports; nothing here computes science:
every number comes from :mod:`planner.rosters.search`.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, replace
from datetime import datetime, timedelta, timezone

import numpy as np

from planner.engine.population import DUFFY2011_CITATION, LIGHT_SENSITIVITY_SD_LN, draw_population
from planner.engine.sleepiness import ShiftSleepiness
from planner.plans.cautions import SHIFT_CAUTIONS, cautions_for
from planner.plans.document import DayRow, PlanDocument, PlanEvent, Section, stable_id
from planner.rosters import sleepiness as sleepview
from planner.rosters.model import Draft, Roster, RosterDay, RosterPlan, crew_draft, roster_days
from planner.rosters.search import (
    ANCHOR_SLEEP_H,
    SHORT_NAMES,
    STRATEGY_CITATIONS,
    STRATEGY_NAMES,
    Metrics,
    RosterEvaluator,
    Settings,
    describe_settings,
    plan_for,
    reference,
)
from planner.world.light import Window
from planner.world.localtime import zone_label

#: A sleep or window belongs to the day holding its start less this (a sleep from 00:30 is the
#: night of the evening before), as in :mod:`planner.trips.views`.
NIGHT_BELONGS_BACK = timedelta(hours=6)

#: Symbols of the text chart, in the order they overwrite each other (later wins).
CHART_SYMBOLS = (("sleep", "="), ("work", "#"), ("bright light", "*"), ("dark glasses", "o"), ("CBTmin", "V"))


@dataclass(frozen=True)
class RosterDayView:
    """One day of a worker's plan with its predicted markers (UTC instants)."""

    day: RosterDay
    sleep: tuple[tuple[datetime, datetime], ...]
    bright: tuple[Window, ...]
    avoid: tuple[Window, ...]
    cbtmin: datetime | None
    dlmo: datetime | None
    work_low_h: float
    burden_h: float
    adapted: bool
    #: For each sleep: wake time minus the CBTmin nearest the sleep's middle [h] (the phase angle of
    #: sleep to the clock; about +2 to +3 h on a habitual night, negative when CBTmin falls after waking).
    sleep_phase_angle_h: tuple[float, ...] = ()


def phase_angles(sleeps, marks: list[datetime]) -> tuple[float, ...]:
    """Wake minus the CBTmin nearest each sleep's middle [h]; NaN without a CBTmin."""
    angles = []
    for bed, wake in sleeps:
        middle = bed + (wake - bed) / 2
        nearest = min(marks, key=lambda m: abs((m - middle).total_seconds()), default=None)
        angles.append((wake - nearest).total_seconds() / 3600.0 if nearest is not None else math.nan)
    return tuple(angles)


def _owner(days, moment: datetime, back: timedelta = timedelta(0)) -> int | None:
    """Index of the day holding ``moment - back``; None before the draft, the last day after it."""
    shifted = moment - back
    if shifted < days[0].start:
        return None
    return next((day.index for day in days if shifted < day.end), days[-1].index)


def day_views(days: list[RosterDay], plan: RosterPlan, metrics: Metrics, epoch: datetime, column: int = 0
              ) -> list[RosterDayView]:
    """The plan of one worker (``column`` of ``metrics``) cut into its days."""
    sleep: dict[int | None, list] = {d.index: [] for d in days} | {None: []}
    bright: dict[int | None, list] = {d.index: [] for d in days} | {None: []}
    avoid: dict[int | None, list] = {d.index: [] for d in days} | {None: []}
    for episode in plan.sleep:   # the night before the draft (owner None) is not shown
        sleep[_owner(days, episode[0], NIGHT_BELONGS_BACK)].append(episode)
    for window in plan.bright:
        bright[_owner(days, window.start)].append(window)
    for window in plan.avoid:
        avoid[_owner(days, window.start)].append(window)

    def moment(hours: float) -> datetime | None:
        return epoch + timedelta(hours=float(hours)) if math.isfinite(hours) else None

    marks = [m for m in (moment(h) for h in metrics.cbtmin[column]) if m is not None]
    views = []
    for day in days:
        cbt = moment(metrics.cbtmin[column, day.index])
        views.append(RosterDayView(day, tuple(sorted(sleep[day.index])),
                                   tuple(sorted(bright[day.index], key=lambda w: w.start)),
                                   tuple(sorted(avoid[day.index], key=lambda w: w.start)), cbt,
                                   moment(metrics.dlmo[column, day.index]),
                                   float(metrics.work_low_day_h[column, day.index]),
                                   float(metrics.day_burden_h[column, day.index]),
                                   bool(metrics.adapted[column, day.index]),
                                   phase_angles(sorted(sleep[day.index]), marks)))
    return views


def text_chart(roster: Roster, views: list[RosterDayView], *, first_hour: float = 12.0,
               cell_minutes: float = 30.0) -> list[str]:
    """One line per day from ``first_hour`` to the same hour the next day on the site's clock.

    Cells show sleep ``=``, work ``#``, bright light ``*``, dark glasses ``o`` and CBTmin ``V``
    (:data:`CHART_SYMBOLS`; a later symbol overwrites an earlier one in the same cell).
    """
    cells = int(round(24 * 60 / cell_minutes))
    step = timedelta(minutes=cell_minutes)
    symbol = dict(CHART_SYMBOLS)
    all_sleep = [s for v in views for s in v.sleep]
    all_bright = [(w.start, w.end) for v in views for w in v.bright]
    all_avoid = [(w.start, w.end) for v in views for w in v.avoid]
    work = [v.day.work for v in views if v.day.work is not None]
    marks = [v.cbtmin for v in views if v.cbtmin is not None]
    ticks = "".join("|" if (k * cell_minutes / 60.0) % 6 == 0 else " " for k in range(cells))
    hours = [f"{(first_hour + h) % 24:02.0f}" for h in range(0, 24, 6)]
    scale = "".join(h.ljust(int(6 * 60 / cell_minutes)) for h in hours)
    lines = [f"{'':10} {scale}", f"{'':10} {ticks}"]
    for view in views:
        origin = roster.at(view.day.date, first_hour)
        row = [" "] * cells
        for name, spans in (("sleep", all_sleep), ("work", work), ("bright light", all_bright),
                            ("dark glasses", all_avoid)):
            for k in range(cells):
                middle = origin + (k + 0.5) * step
                if any(s <= middle < e for s, e in spans):
                    row[k] = symbol[name]
        for mark in marks:
            k = int((mark - origin) / step)
            if 0 <= k < cells:
                row[k] = symbol["CBTmin"]
        label = f"{view.day.date.strftime('%a %d')} {view.day.label:>3}"
        lines.append(f"{label:10} {''.join(row)}")
    return lines


def chart_legend() -> str:
    return "  ".join(f"{sym} {name}" for name, sym in CHART_SYMBOLS)


# --------------------------------------------------------------------------- plan document (calendars, reports)

def _purpose(window: Window, strategy: str) -> tuple[str, str, str]:
    """(summary, action, purpose) of a light window in plain words."""
    minutes = round(window.minutes)
    if window.source == "dark glasses":
        return ("Dim light: dark glasses",
                f"Wear the dark glasses for {minutes} min from the end of the shift until you are indoors (they pass "
                f"{window.lux:.0%} of the light); take them off to drive in dim light.",
                "Morning light after a night shift falls after the body clock's minimum (CBTmin) and would move "
                "the clock earlier, undoing the shift toward daytime sleep; avoiding it keeps the clock moving later.")
    if window.source == "light box":
        return ("Bright light: light box at work",
                f"Work near the light box for {minutes} min ({window.lux:,.0f} lux at the eye), eyes open, without "
                "staring into the lamp.",
                "Bright light early in the night shift falls before the body clock's minimum (CBTmin) and moves "
                "the clock later (a phase delay), toward sleeping in the daytime.")
    if strategy == "day":
        purpose = ("Morning daylight after the night shift falls after the body clock's minimum and keeps the "
                   "clock on day time (it stays day-oriented).")
    else:
        purpose = ("Daylight soon after waking falls after the body clock's minimum and keeps it from drifting "
                   "too late (a light brake; Smith, Fogg & Eastman 2009).")
    return ("Bright light: daylight outdoors",
            f"Go outdoors in daylight for {minutes} min (about {window.lux:,.0f} lux); no sunglasses.", purpose)


def _crew_events(roster: Roster, draft, plan: RosterPlan, crew_name: str | None,
                 sleepiness_notes: dict | None = None, profiles: dict | None = None) -> list[PlanEvent]:
    days = roster_days(roster, draft)
    zone = roster.site.zone
    items = []
    notes = sleepiness_notes or {}
    profiles = profiles or {}
    for day in days:
        if day.work is not None:
            shift = day.shift
            items.append((day.work, day.date, dict(
                kind="work", summary=f"Shift {shift.code} ({shift.label})",
                action=f"Work the {shift.label} shift ({shift.kind}).",
                purpose="Your rostered shift; the light and sleep around it follow the plan."
                        + (f" {notes[day.date]}" if day.date in notes else ""),
                source=shift.label, lux=float(roster.work_lux), transmission=None,
                caution="night_shift_driving" if shift.kind == "night" else None,
                kss=profiles.get(day.date, ()))))
    for a, b in plan.sleep:
        owner = _owner(days, a, NIGHT_BELONGS_BACK)
        if owner is None:
            continue
        items.append(((a, b), days[owner].date, dict(
            kind="sleep", summary="Sleep", action="Lights out and eyes closed; keep the bedroom dark.",
            purpose=(f"Sleep at these hours is part of the plan that {STRATEGY_NAMES.get(plan.strategy, plan.strategy)}; "
                     "closed eyes also keep light out at the wrong time."),
            source="sleep", lux=0.0, transmission=None)))
    for window in plan.bright + plan.avoid:
        owner = _owner(days, window.start)
        if owner is None:
            continue
        summary, action, purpose = _purpose(window, plan.strategy)
        glasses = window.source == "dark glasses"
        items.append(((window.start, window.end), days[owner].date, dict(
            kind="light_avoidance" if glasses else "bright_light", summary=summary, action=action, purpose=purpose,
            source=window.source, lux=None if glasses else float(window.lux),
            transmission=float(window.lux) if glasses else None)))
    events = []
    ordinals: dict[tuple, int] = {}
    prefix = f"{crew_name}/" if crew_name else ""
    for (start, end), day, fields in sorted(items, key=lambda item: (item[0][0], item[2]["kind"])):
        ordinal = ordinals[(day, fields["kind"])] = ordinals.get((day, fields["kind"]), 0) + 1
        events.append(PlanEvent(start=start.astimezone(timezone.utc), end=end.astimezone(timezone.utc), zone=zone,
                                place=roster.site.name, day=day,
                                key=f"{prefix}{day.isoformat()}/{fields['kind']}/{ordinal}", **fields))
    return events


@dataclass(frozen=True)
class CrewPlan:
    """One crew's own plan: the draft as the crew works it, its plan and its days with predicted markers."""

    name: str
    draft: object
    plan: RosterPlan
    views: list[RosterDayView]
    band_from_draft: bool = False   # the crew works the draft as drawn, so the population spread is its own
    #: The crew's own sleepiness forecast on each of its shifts (average worker; None without a forecast).
    sleepiness: ShiftSleepiness | None = None
    #: 10th/50th/90th percentiles of the crew's sleepiness numbers over the simulated workers
    #: (:func:`planner.rosters.sleepiness.population_summary`); None without a population run.
    population_sleepiness: dict | None = None

    @property
    def days(self) -> list[RosterDay]:
        return [view.day for view in self.views]


def crew_plans(roster: Roster, model, result, chosen,
               sensitivity_sd_ln: float = LIGHT_SENSITIVITY_SD_LN) -> dict[str, CrewPlan]:
    """Each crew's plan of the chosen draft, simulated for the average worker (one run per crew), so that
    reports and charts show every crew its own rows; {} for a roster without crews.

    When the chosen draft was also simulated for a population (``chosen.population``), the same workers (the
    draw is reproducible from its size and seed; ``sensitivity_sd_ln`` as given to the roster search) work each
    crew's plan too, one batch per crew, for the percentiles of the crew's sleepiness.
    """
    if not roster.crews:
        return {}
    evaluator = RosterEvaluator(roster, model, ref=result.reference)
    people = _CrewPopulation(roster, model, chosen, sensitivity_sd_ln)
    crews = {}
    for crew in roster.crews:
        draft, crew_plan = crew_plan_of(roster, chosen, crew)
        aligned = crew.offset_days % len(chosen.draft.pattern) == 0
        metrics = evaluator.evaluate(draft, [crew_plan], final=True)
        days = roster_days(roster, draft)
        crews[crew.name] = CrewPlan(crew.name, draft, crew_plan, day_views(days, crew_plan, metrics, days[0].start),
                                    band_from_draft=aligned, sleepiness=metrics.sleepiness,
                                    population_sleepiness=people.sleepiness(evaluator, draft, crew_plan, days))
    return crews


class _CrewPopulation:
    """The chosen draft's simulated workers, drawn again (and entrained once) only when a crew needs them."""

    def __init__(self, roster: Roster, model, chosen, sensitivity_sd_ln: float):
        self.roster, self.model, self.chosen, self.sd_ln = roster, model, chosen, sensitivity_sd_ln
        self._people = None

    def sleepiness(self, evaluator: RosterEvaluator, draft, plan: RosterPlan, days) -> dict | None:
        summary = self.chosen.population
        if summary is None:
            return None
        if draft is self.chosen.draft and plan is self.chosen.best.plan:
            metrics = summary.metrics        # the crew works the draft as simulated for the population
        else:
            if self._people is None:
                drawn = draw_population(self.model, summary.size, summary.seed, sensitivity_sd_ln=self.sd_ln)
                self._people = (drawn, reference(self.roster, drawn.model).state)
            drawn, state = self._people
            metrics = evaluator.evaluate(draft, [plan], final=True, model=drawn.model, initial_state=state)
        return None if metrics.sleepiness is None else sleepview.population_summary(days, metrics.sleepiness)


def _carried_boxes(roster: Roster, draft: Draft, plan: RosterPlan, crew_pattern: Draft, crew_plan: RosterPlan,
                   offset_days: int) -> RosterPlan:
    """A crew's plan with the light boxes of ``plan`` (which followed the average worker's simulated clock
    on ``draft``) carried to the same night of the pattern: crew day i works draft day i + offset, so it
    gets that night's box at the same time into the shift."""
    source_days, crew_days = roster_days(roster, draft), roster_days(roster, crew_pattern)
    by_day = {}
    for window in plan.bright:
        if window.source != "light box":
            continue
        day = next((d for d in source_days if d.work is not None and d.work[0] <= window.start < d.work[1]), None)
        if day is not None:
            by_day[day.index] = (window.start - day.work[0], window.end - window.start, window.lux)
    period_days = len(draft.pattern)
    boxes = []
    for day in crew_days:
        if day.work is None:
            continue
        source = day.index + offset_days % period_days
        while source >= len(source_days):
            source -= period_days
        if source in by_day:
            into, length, lux = by_day[source]
            start = min(day.work[0] + into, day.work[1] - length)
            boxes.append(Window(start, start + length, lux, "light box"))
    others = tuple(w for w in crew_plan.bright if w.source != "light box")
    return replace(crew_plan, bright=tuple(sorted(others + tuple(boxes), key=lambda w: w.start)))


def crew_plan_of(roster: Roster, chosen, crew) -> tuple[Draft, RosterPlan]:
    """The draft as ``crew`` works it and the chosen plan rebuilt on it with the same strategy and settings;
    light boxes that tracked the average worker's simulated clock are carried to the same nights."""
    plan = chosen.best.plan
    draft = crew_draft(chosen.draft, crew)
    if draft is chosen.draft:
        return draft, plan
    values = dict(plan.settings)
    settings = Settings(**{k: v for k, v in values.items() if k in Settings.__dataclass_fields__})
    crew_plan = plan_for(roster, draft, plan.strategy, settings)
    if "box_lead_h" in values:
        crew_plan = _carried_boxes(roster, chosen.draft, plan, draft, crew_plan, crew.offset_days)
    return draft, crew_plan


def _target(plan: RosterPlan, cbtmin: datetime | None, ref) -> datetime | None:
    """Where CBTmin belongs for the main sleep nearest it (naps left out): that sleep's wake less the
    habitual wake-to-CBTmin gap, i.e. where the habitual sleep holds it."""
    main = [s for s in plan.sleep if s[1] - s[0] >= timedelta(hours=ANCHOR_SLEEP_H)]
    if cbtmin is None or not main:
        return None
    bed, wake = min(main, key=lambda s: abs((s[0] + (s[1] - s[0]) / 2 - cbtmin).total_seconds()))
    return wake - timedelta(hours=ref.wake_from_cbtmin_h)


def document_from_roster(roster: Roster, info, result, chosen, views: list[RosterDayView],
                         crews: dict[str, CrewPlan] | None = None) -> PlanDocument:
    """A roster plan as a :class:`~planner.plans.document.PlanDocument`: the chosen draft's plan for every crew.

    Parameters
    ----------
    roster : Roster
    info : RosterInfo
        The file's name and description (the plan id comes from the name).
    result : RosterResult
    chosen : DraftResult
        The draft whose plan becomes the events (the top-ranked one unless another was asked for).
    views : list of RosterDayView
        ``day_views`` of the chosen draft's plan for the average worker.
    crews : dict of str to CrewPlan, optional
        :func:`crew_plans`: each crew's own plan and days; they become the document's ``group_days``
        (one report section and chart per crew) and each crew's calendar.
    """
    plan = chosen.best.plan
    groups = {}
    for crew in roster.crews or (None,):
        # Each crew's shifts carry its own sleepiness forecast; the chosen draft's is that of a crew working
        # the draft as drawn, and a crew simulated nowhere gets none.
        days, sleepiness = chosen.days, chosen.best.metrics.sleepiness
        if crew is None:
            draft, crew_plan = chosen.draft, plan
        elif crews and crew.name in crews:
            draft, crew_plan = crews[crew.name].draft, crews[crew.name].plan
            days, sleepiness = crews[crew.name].days, crews[crew.name].sleepiness
        else:
            draft, crew_plan = crew_plan_of(roster, chosen, crew)
            if crew_plan is not plan or draft is not chosen.draft:
                sleepiness = None
        notes = sleepview.night_notes(days, sleepiness, roster.site.zone)
        profiles = {} if sleepiness is None else sleepview.shift_profiles(days, sleepiness, days[0].start)
        groups[crew.name if crew else None] = tuple(_crew_events(roster, draft, crew_plan,
                                                                 crew.name if crew else None, notes, profiles))
    events = tuple(sorted((e for group in groups.values() for e in group), key=lambda e: (e.start, e.key)))
    bands = chosen.population.cbtmin_clock_h if chosen.population is not None else None
    rows = _day_rows(roster, plan, views, result.reference, bands)
    group_days = {name: tuple(_day_rows(roster, crew.plan, crew.views, result.reference,
                                        bands if crew.band_from_draft else None))
                  for name, crew in (crews or {}).items()}
    comparison = []
    for name, outcome in list(chosen.strategies.items()) + [("none", chosen.baseline)]:
        weeks = len(chosen.days) / 7.0
        comparison.append({"strategy": STRATEGY_NAMES[name], "score h/wk": f"{outcome.score:.1f}",
                           "work in low h/wk": f"{outcome.metrics.work_low_h[0] / weeks:.1f}",
                           "biological night awake h/wk": f"{outcome.metrics.awake_in_night_h[0] / weeks:.1f}",
                           "what the search found": describe_settings(outcome.plan)})
    recommended = list(chosen.strategies).index(chosen.chosen)
    if chosen.robust is not None:
        robust = chosen.robust
        weeks = len(chosen.days) / 7.0
        comparison.append({"strategy": f"robust over {robust.people} workers: {STRATEGY_NAMES[robust.outcome.strategy]}",
                           "score h/wk": f"{robust.outcome.score:.1f}",
                           "work in low h/wk": f"{robust.outcome.metrics.work_low_h[0] / weeks:.1f}",
                           "biological night awake h/wk": f"{robust.outcome.metrics.awake_in_night_h[0] / weeks:.1f}",
                           "what the search found": (f"{describe_settings(robust.outcome.plan)}; population mean "
                                                     f"{robust.mean_score:.1f} against {robust.average_mean_score:.1f} "
                                                     "for the average worker's plan")})
        recommended = len(comparison) - 1
    ranked = Section("Drafts ranked, least disruptive first",
                     ("#", "draft", "pattern", "strategy",
                      "score h/wk" + (" (population)" if chosen.population else " (average worker)"),
                      "no plan h/wk (average worker)"),
                     tuple((str(k + 1), d.draft.name, " ".join(c or "off" for c in d.draft.pattern) +
                            f" ×{d.draft.cycles}", SHORT_NAMES[d.best_strategy], score_text(d), f"{d.baseline.score:.1f}")
                           for k, d in enumerate(result.drafts)),
                     note=("score: hours per week of work within ±3 h of CBTmin plus biological night spent awake"
                           + (", population median [10th–90th percentile]" if chosen.population else "")))
    sections = [ranked]
    crew_sleepiness = sleepview.crew_rows(crews or {}, roster.site.zone)
    if crew_sleepiness:
        sections.append(Section(f"Sleepiness by crew: {chosen.draft.name} (average worker)", sleepview.CREW_COLUMNS,
                                tuple(crew_sleepiness), note=sleepview.CREW_NOTE))
    if chosen.population is not None:
        pop = chosen.population
        sections.append(Section(
            f"Across {pop.size} simulated workers ({chosen.draft.name})", ("measure", "10th", "median", "90th"),
            tuple((label, f"{values['p10']:.1f}", f"{values['median']:.1f}", f"{values['p90']:.1f}")
                  for label, values in (("intrinsic period [h]", pop.tau_h), ("score [h/wk]", pop.score),
                                        ("work in the low [h]", pop.work_low_h),
                                        ("mean days to adapt", pop.mean_days_to_adapt))),
            note=f"intrinsic periods from Duffy et al. 2011 (24.15 ± 0.20 h), seed {pop.seed}"))
    shifts = ", ".join(f"{s.code} {s.label} {_hm_clock(s.start_h)}–{_hm_clock(s.end_h)}" for s in roster.shifts)
    summary = [("rotation", info.name)]
    if info.description:
        summary.append(("about", info.description))
    summary += [("site", f"{roster.site.name} ({roster.site.zone})"), ("shifts", shifts),
                ("draft shown", f"{chosen.draft.name}: " + " ".join(c or "off" for c in chosen.draft.pattern)
                 + f" ×{chosen.draft.cycles}"),
                ("strategy", f"{STRATEGY_NAMES[plan.strategy]}: {describe_settings(plan)}"
                             + (" (robust over a population)" if chosen.robust is not None else "")),
                ("ranking", result.reason)]
    if roster.crews:
        summary.append(("crews", ", ".join(f"{c.name} (from day {c.offset_in(chosen.draft) % len(chosen.draft.pattern) + 1} "
                                           "of the pattern)" for c in roster.crews)))
    citations = tuple(result.citations) + tuple(STRATEGY_CITATIONS[name] for name in chosen.strategies)
    if chosen.population is not None:
        citations += (DUFFY2011_CITATION,)
    return PlanDocument(
        plan_id=stable_id("roster", info.name), title=info.name, summary=tuple(summary), events=events,
        days=tuple(rows), comparison=tuple(comparison), recommended=recommended,
        cautions=tuple(cautions_for(SHIFT_CAUTIONS)), citations=citations, kind="roster",
        groups={name: group for name, group in groups.items() if name is not None},
        sections=tuple(sections), message=result.message, group_days=group_days)


def _day_rows(roster: Roster, plan: RosterPlan, views: list[RosterDayView], reference, bands) -> list[DayRow]:
    """Day rows of one worker's plan (``views``), with the population spread ``bands`` when given."""
    zone = roster.site.zone
    rows = []
    # Rows are calendar dates, as the chart draws them: a date shows the CBTmin of the night before it
    # (the previous day's "night after"), so the first date has none and one date follows the draft.
    for k in range(len(views) + 1):
        before = views[k - 1] if k else None
        cbtmin = before.cbtmin if before is not None else None
        target = _target(plan, cbtmin, reference)
        error = (cbtmin - target).total_seconds() / 3600.0 if target is not None else math.nan
        band = None
        if before is not None and bands is not None and np.all(np.isfinite(bands[before.day.index])):
            band = tuple(float(v) for v in bands[before.day.index])
        if k < len(views):
            day = views[k].day
            when, label = day.date, day.label if day.work is None else f"{day.label} ({day.shift.kind})"
        else:
            when, label = views[-1].day.date + timedelta(days=1), "after the draft"
        start = roster.at(when, 0.0).astimezone(zone)
        rows.append(DayRow(when, zone, zone_label(start), label, roster.site.name, cbtmin, target,
                           "the plan's sleep", error, band))
    return rows


def score_text(result) -> str:
    """A draft's score for tables: the population median [10th–90th percentile], else the average worker's."""
    if result.population is not None:
        s = result.population.score
        return f"{s['median']:.1f} [{s['p10']:.1f}–{s['p90']:.1f}]"
    return f"{result.best.score:.1f}"


def _hm_clock(hours: float) -> str:
    minutes = round(hours * 60) % (24 * 60)
    return f"{minutes // 60:02d}:{minutes % 60:02d}"
