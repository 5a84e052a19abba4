"""A planned roster as the JSON document of ``phaseplan roster --json`` and of the web API.

Times are ISO 8601 on the site's local clock with its UTC offset.
"""

from __future__ import annotations

import math
from datetime import datetime
from typing import Any

import numpy as np

from planner.engine.parameters import ModelSpec
from planner.engine.population import DUFFY2011_TAU_MEAN_H, DUFFY2011_TAU_SD_H
from planner.plans.cautions import SHIFT_CAUTIONS, cautions_for
from planner.plans.entries import citation_entry, clock, hours, model_entry, number, whole_minutes, window_entry
from planner.rosters import sleepiness as sleepview
from planner.rosters.model import Roster
from planner.rosters.rules import RULE_SOURCES
from planner.rosters.scenario import OFF, RosterInfo
from planner.rosters.search import (
    ENSEMBLE_TOLERANCE_H,
    STRATEGY_NAMES,
    DraftResult,
    Metrics,
    RosterEnsemble,
    RosterResult,
    StrategyOutcome,
    describe_settings,
    whose_score,
)
from planner.rosters.views import RosterDayView, chart_legend, day_views, text_chart


def site_local(roster: Roster, moment: datetime) -> datetime:
    return moment.astimezone(roster.site.zone)


def site_iso(roster: Roster, moment: datetime | None) -> str | None:
    return None if moment is None else site_local(roster, moment).isoformat(timespec="minutes")


def site_hm(roster: Roster, moment: datetime) -> str:
    return site_local(roster, moment).strftime("%H:%M")


def pattern_text(draft) -> str:
    return " ".join(code if code is not None else OFF for code in draft.pattern)


def mean_days(metrics: Metrics, kind: str | None = None) -> float:
    picks = [r for r, run in enumerate(metrics.runs) if kind is None or run.kind == kind]
    values = metrics.days_to_adapt[0, picks] if picks else np.array([])
    values = values[np.isfinite(values)]
    return float(values.mean()) if values.size else math.nan


def unadapted_runs(metrics: Metrics, kind: str) -> tuple[int, int]:
    picks = [r for r, run in enumerate(metrics.runs) if run.kind == kind]
    return int(np.isnan(metrics.days_to_adapt[0, picks]).sum()), len(picks)


def metrics_entry(roster: Roster, result: DraftResult, outcome: StrategyOutcome) -> dict[str, Any]:
    m = outcome.metrics
    days = result.days
    weeks = len(days) / 7.0
    worst = int(m.worst_day[0])
    unadapted, night_runs = unadapted_runs(m, "night")
    return {
        "strategy": outcome.strategy,
        "strategy_name": STRATEGY_NAMES[outcome.strategy],
        "disruption_score_h_per_week": number(m.score[0]),
        "work_in_circadian_low_h_per_week": number(m.work_low_h[0] / weeks),
        "sleep_out_of_phase_h_per_week": number(m.sleep_out_of_phase_h[0] / weeks),
        "biological_night_awake_h_per_week": number(m.awake_in_night_h[0] / weeks),
        "mean_days_to_adapt": number(mean_days(m)),
        "mean_days_to_adapt_to_nights": number(mean_days(m, "night")),
        "night_runs_not_adapted": unadapted,
        "night_runs": night_runs,
        "worst_day": {"date": days[worst].date.isoformat(), "shift": days[worst].label,
                      "burden_h": number(m.day_burden_h[0, worst])},
        "min_amplitude_ratio": number(m.min_amplitude_ratio[0]),
        "light_box_minutes": whole_minutes(outcome.plan.box_minutes),
        "candidates_searched": outcome.candidates,
        "settings": {name: value for name, value in outcome.plan.settings},
        "settings_text": describe_settings(outcome.plan),
        "sleepiness": sleepiness_entry(days, m.sleepiness, roster.site.zone),
    }


def sleepiness_entry(days, sleepiness, zone) -> dict[str, Any] | None:
    """A plan's sleepiness forecast: a summary and one row per shift (:mod:`planner.rosters.sleepiness`)."""
    if sleepiness is None:
        return None
    shifts = sleepview.shift_rows(days, sleepiness, days[0].start, zone)
    return {"summary": {**sleepview.summary(days, sleepiness), "sleepiest_shift": sleepview.sleepiest_shift(shifts)},
            "shifts": shifts}


def population_entry(result: DraftResult, roster: Roster) -> dict[str, Any] | None:
    pop = result.population
    if pop is None:
        return None
    return {
        "people": pop.size,
        "seed": pop.seed,
        "intrinsic_period": {"distribution": "normal", "mean_h": DUFFY2011_TAU_MEAN_H, "sd_h": DUFFY2011_TAU_SD_H,
                             "source": "Duffy et al. 2011, PNAS 108:15602", "drawn_h": pop.tau_h},
        "disruption_score_h_per_week": pop.score,
        "work_in_circadian_low_h": pop.work_low_h,
        "sleep_out_of_phase_h": pop.sleep_out_of_phase_h,
        "mean_days_to_adapt": pop.mean_days_to_adapt,
        "night_runs_not_adapted_fraction": number(pop.night_runs_unadapted),
        "daily_cbtmin_clock_h": [{"date": day.date.isoformat(), "p10": number(row[0]), "median": number(row[1]),
                                  "p90": number(row[2])} for day, row in zip(result.days, pop.cbtmin_clock_h)],
        "sleepiness": None if pop.metrics.sleepiness is None else
        sleepview.population_summary(result.days, pop.metrics.sleepiness),
    }


def robust_entry(chosen: DraftResult) -> dict[str, Any] | None:
    robust = chosen.robust
    if robust is None:
        return None
    return {"draft": chosen.draft.name, "people": robust.people, "candidates": robust.candidates,
            "changed": robust.changed, "strategy": robust.outcome.strategy,
            "settings_text": describe_settings(robust.outcome.plan),
            "population_mean_score_h_per_week": number(robust.mean_score),
            "population_p90_score_h_per_week": number(robust.p90_score),
            "average_worker_plan": {"strategy": chosen.chosen,
                                    "settings_text": describe_settings(chosen.strategies[chosen.chosen].plan),
                                    "population_mean_score_h_per_week": number(robust.average_mean_score),
                                    "population_p90_score_h_per_week": number(robust.average_p90_score)},
            "average_worker_score_h_per_week": number(robust.outcome.score)}


def ensemble_entry(roster: Roster, ensemble: RosterEnsemble | None) -> dict[str, Any] | None:
    if ensemble is None:
        return None
    days = ensemble.members[0].metrics.cbtmin.shape[1]
    return {"tolerance_h": ENSEMBLE_TOLERANCE_H,
            "members": [{"model": m.model.id, "disruption_score_h_per_week": number(m.metrics.score[0]),
                         "night_runs_not_adapted": unadapted_runs(m.metrics, "night")[0]}
                        for m in ensemble.members],
            "disagree_days": ensemble.disagree_days,
            "cbtmin_spread_h": [number(ensemble.spread_h[d]) for d in range(days)]}


def day_entry(roster: Roster, view: RosterDayView) -> dict[str, Any]:
    day = view.day
    return {
        "index": day.index,
        "date": day.date.isoformat(),
        "shift": day.label,
        "kind": day.kind,
        "work": None if day.work is None else {"start": site_iso(roster, day.work[0]), "end": site_iso(roster, day.work[1])},
        "sleep": [{"start": site_iso(roster, a), "end": site_iso(roster, b), "phase_angle_h": hours(angle)}
                  for (a, b), angle in zip(view.sleep, view.sleep_phase_angle_h)],
        "bright_light": [window_entry(w, lambda m: site_iso(roster, m)) for w in view.bright],
        "light_avoidance": [window_entry(w, lambda m: site_iso(roster, m)) for w in view.avoid],
        "cbtmin": site_iso(roster, view.cbtmin),
        "dlmo": site_iso(roster, view.dlmo),
        "work_in_circadian_low_h": hours(view.work_low_h),
        "burden_h": hours(view.burden_h),
        "adapted": view.adapted,
    }


def crews_entry(roster: Roster, crews: dict) -> dict[str, Any] | None:
    """Each crew's own days (its shifts, sleeps, light and predicted markers) and the sleepiness forecast of its
    own shifts, by crew name; None without crews."""
    if not crews:
        return None
    return {name: {"draft": crew.draft.name, "days": [day_entry(roster, view) for view in crew.views],
                   "sleepiness": sleepiness_entry(crew.days, crew.sleepiness, roster.site.zone),
                   "population_sleepiness": crew.population_sleepiness}
            for name, crew in crews.items()}


def draft_views(draft: DraftResult) -> list[RosterDayView]:
    epoch = draft.days[0].start
    return day_views(draft.days, draft.best.plan, draft.best.metrics, epoch)


def pick_draft(result: RosterResult, name: str | None) -> DraftResult:
    """The draft to show: the top-ranked, or the one named (checked against the file before planning)."""
    return result.drafts[0] if name is None else next(d for d in result.drafts if d.draft.name == name)


def roster_document(roster: Roster, info: RosterInfo, model: ModelSpec, result: RosterResult, chosen: DraftResult,
              views: list[RosterDayView], strategy: str, workers: int, seed: int) -> dict[str, Any]:
    return {
        "command": "roster",
        "scenario": {"name": info.name, "description": info.description, "path": info.path,
                     "site": roster.site.name, "time_zone": str(roster.site.zone), "crew_size": roster.crew_size},
        "model": {**model_entry(model), "citation": model.citation},
        "citations": [citation_entry(model)],
        "strategy": strategy,
        "people": workers,
        "seed": seed,
        "success": bool(result.success),
        "status": result.status,
        "message": result.message,
        "reason": result.reason,
        "ranking": [{
            "rank": k + 1,
            "draft": d.draft.name,
            "description": d.draft.description,
            "pattern": [code if code is not None else OFF for code in d.draft.pattern],
            "cycles": d.draft.cycles,
            "days": len(d.days),
            "chosen_strategy": d.best_strategy,
            "rank_score_h_per_week": number(d.rank_score),
            "rank_score_of": whose_score(d),
            "plan": metrics_entry(roster, d, d.best),
            "strategies": {name: metrics_entry(roster, d, outcome) for name, outcome in d.strategies.items()},
            "no_plan": metrics_entry(roster, d, d.baseline),
            "population": population_entry(d, roster),
            "working_time": {"conforms": d.conforms, "breaches": [b.as_dict() for b in d.breaches]},
        } for k, d in enumerate(result.drafts)],
        "working_time_rules": {"daily_rest_h": roster.rules.daily_rest_h, "weekly_rest_h": roster.rules.weekly_rest_h,
                               "weekly_rest_days": roster.rules.weekly_rest_days,
                               "max_consecutive_nights": roster.rules.max_consecutive_nights,
                               "max_consecutive_work_days": roster.rules.max_consecutive_work_days,
                               "sources": dict(RULE_SOURCES)},
        "plan": {"draft": chosen.draft.name, "strategy": chosen.best_strategy},
        "days": [day_entry(roster, view) for view in views],
        "chart": {"legend": chart_legend(), "lines": text_chart(roster, views)},
        "simulated": result.simulated,
        "cautions": [c.as_dict() for c in cautions_for(SHIFT_CAUTIONS)],
        "conventions": {
            "times": "ISO 8601 on the site's local clock with its UTC offset",
            "disruption_score_h_per_week": "(hours of work within ±3 h of CBTmin + hours of biological night "
                                           "spent awake) per 7 days, for the average worker (see README)",
            "biological_night": "the window the habitual free-day sleep occupies relative to the entrained CBTmin, "
                                "carried along with the current CBTmin",
            "adapted": "the day's CBTmin falls inside a sleep episode",
            "rank_score_h_per_week": "population median score when people > 0, else the average worker's; "
                                     "drafts breaking working-time rules rank after every conforming draft; with --rank-by "
                                     "sleepiness: hours at work at KSS >= 7 per week instead",
            "status": "0 when every draft has a finite score, 1 when some draft has no CBTmin on some days",
            "burden_h": "the day's share of the disruption score: hours of work within ±3 h of CBTmin plus hours "
                        "of biological night spent awake on that day, for the average worker",
            "people": "size of the simulated population (0: the average worker only)",
            "days": "the chosen draft's days for the average worker of a crew starting the pattern on its first day",
            "sleepiness": sleepview.SLEEPINESS_NOTE,
        },
        "rank_by": result.drafts[0].rank_by,
    }


def check_summary(roster: Roster, info: RosterInfo, model: ModelSpec) -> dict[str, Any]:
    """What ``phaseplan check`` reports of a valid roster file."""
    return {"kind": "roster", "name": info.name, "model": model.id, "site": roster.site.name,
            "time_zone": str(roster.site.zone), "start_date": roster.start.isoformat(),
            "shifts": [{"code": s.code, "label": s.label, "start": clock(s.start_h), "end": clock(s.end_h),
                        "kind": s.kind, "hours": s.hours} for s in roster.shifts],
            "drafts": [{"name": d.name, "pattern": [c if c is not None else OFF for c in d.pattern],
                        "cycles": d.cycles, "days": d.days} for d in roster.drafts]}
