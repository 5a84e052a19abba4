"""The ``phaseplan roster`` command and roster checks: parse, call :mod:`planner.rosterplan`, format.

Registered on the main app by :mod:`planner.cli` (imported at its end).  Same house rules:
``--json`` writes one document to stdout; tables, the progress bar and notes go to stderr;
text from files passes through :func:`rich.markup.escape`; no science here.
"""

from __future__ import annotations

import math
from datetime import datetime
from enum import Enum
from typing import Annotated, Any

import numpy as np
import typer
from rich import box
from rich.console import Console
from rich.markup import escape
from rich.panel import Panel
from rich.progress import BarColumn, Progress, TextColumn, TimeElapsedColumn
from rich.table import Table

from planner.cautions import SHIFT_CAUTIONS, cautions_for
from planner.cli import (DEFAULT_ALARM_MINUTES, NONE_TEXT, AlarmOption, ChartOption, ForceOption, GroupOption,
                         IcsOption, JsonOption, NoAlarmsOption, PlanFiles, ReportOption, _citation_entry, _emit_json,
                         _clock, _lux, _model_entry, _number, _print_citations, _print_facts, _print_written, _stderr,
                         _model_list, _window_entry, app, write_plan_files)
from planner.errors import InputError
from planner.parameters import ModelSpec, load_model
from planner.population import DUFFY2011_TAU_MEAN_H, DUFFY2011_TAU_SD_H
from planner.roster import Roster
from planner.rosterfile import OFF, RosterInfo, load_roster
from planner.rosterplan import (ENSEMBLE_TOLERANCE_H, LOW_HALF_WIDTH_H, SHORT_NAMES, STRATEGY_NAMES, DraftResult,
                                Metrics, RosterEnsemble, RosterResult, StrategyOutcome, describe_settings, plan_roster,
                                roster_ensemble)
from planner.rosterview import (RosterDayView, chart_legend, day_views, document_from_roster, score_text,
                                text_chart)
from planner.trip import Window
from planner.cli_rostersheet import (TemplateOption, TemplateStartOption, load_any_roster, roster_paths,
                                     write_template)



class RosterStrategy(str, Enum):
    auto = "auto"
    nights = "nights"
    compromise = "compromise"
    day = "day"


def _local(roster: Roster, moment: datetime) -> datetime:
    return moment.astimezone(roster.site.zone)


def _iso(roster: Roster, moment: datetime | None) -> str | None:
    return None if moment is None else _local(roster, moment).isoformat(timespec="minutes")


def _hm(roster: Roster, moment: datetime) -> str:
    return _local(roster, moment).strftime("%H:%M")


def _pattern_text(draft) -> str:
    return " ".join(code if code is not None else OFF for code in draft.pattern)


def _mean_days(metrics: Metrics, kind: str | None = None) -> float:
    picks = [r for r, run in enumerate(metrics.runs) if kind is None or run.kind == kind]
    values = metrics.days_to_adapt[0, picks] if picks else np.array([])
    values = values[np.isfinite(values)]
    return float(values.mean()) if values.size else math.nan


def _unadapted_runs(metrics: Metrics, kind: str) -> tuple[int, int]:
    picks = [r for r, run in enumerate(metrics.runs) if run.kind == kind]
    return int(np.isnan(metrics.days_to_adapt[0, picks]).sum()), len(picks)


def _metrics_entry(roster: Roster, result: DraftResult, outcome: StrategyOutcome) -> dict[str, Any]:
    m = outcome.metrics
    days = result.days
    weeks = len(days) / 7.0
    worst = int(m.worst_day[0])
    unadapted, night_runs = _unadapted_runs(m, "night")
    return {
        "strategy": outcome.strategy,
        "strategy_name": STRATEGY_NAMES[outcome.strategy],
        "disruption_score_h_per_week": _number(m.score[0]),
        "work_in_circadian_low_h_per_week": _number(m.work_low_h[0] / weeks),
        "sleep_out_of_phase_h_per_week": _number(m.sleep_out_of_phase_h[0] / weeks),
        "biological_night_awake_h_per_week": _number(m.awake_in_night_h[0] / weeks),
        "mean_days_to_adapt": _number(_mean_days(m)),
        "mean_days_to_adapt_to_nights": _number(_mean_days(m, "night")),
        "night_runs_not_adapted": unadapted,
        "night_runs": night_runs,
        "worst_day": {"date": days[worst].date.isoformat(), "shift": days[worst].label,
                      "burden_h": _number(m.day_burden_h[0, worst])},
        "min_amplitude_ratio": _number(m.min_amplitude_ratio[0]),
        "light_box_minutes": _number(outcome.plan.box_minutes),
        "candidates_searched": outcome.candidates,
        "settings": {name: value for name, value in outcome.plan.settings},
        "settings_text": describe_settings(outcome.plan),
    }


def _population_entry(result: DraftResult, roster: Roster) -> dict[str, Any] | None:
    pop = result.population
    if pop is None:
        return None
    return {
        "workers": pop.size,
        "seed": pop.seed,
        "intrinsic_period": {"distribution": "normal", "mean_h": DUFFY2011_TAU_MEAN_H, "sd_h": DUFFY2011_TAU_SD_H,
                             "source": "Duffy et al. 2011, PNAS 108:15602", "drawn_h": pop.tau_h},
        "disruption_score_h_per_week": pop.score,
        "work_in_circadian_low_h": pop.work_low_h,
        "sleep_out_of_phase_h": pop.sleep_out_of_phase_h,
        "mean_days_to_adapt": pop.mean_days_to_adapt,
        "night_runs_not_adapted_fraction": _number(pop.night_runs_unadapted),
        "daily_cbtmin_clock_h": [{"date": day.date.isoformat(), "p10": _number(row[0]), "median": _number(row[1]),
                                  "p90": _number(row[2])} for day, row in zip(result.days, pop.cbtmin_clock_h)],
    }


def _robust_entry(chosen: DraftResult) -> dict[str, Any] | None:
    robust = chosen.robust
    if robust is None:
        return None
    return {"draft": chosen.draft.name, "workers": robust.people, "candidates": robust.candidates,
            "changed": robust.changed, "strategy": robust.outcome.strategy,
            "settings_text": describe_settings(robust.outcome.plan),
            "population_mean_score_h_per_week": _number(robust.mean_score),
            "population_p90_score_h_per_week": _number(robust.p90_score),
            "average_worker_plan": {"strategy": chosen.chosen,
                                    "settings_text": describe_settings(chosen.strategies[chosen.chosen].plan),
                                    "population_mean_score_h_per_week": _number(robust.average_mean_score),
                                    "population_p90_score_h_per_week": _number(robust.average_p90_score)},
            "average_worker_score_h_per_week": _number(robust.outcome.score)}


def _ensemble_entry(roster: Roster, ensemble: RosterEnsemble | None) -> dict[str, Any] | None:
    if ensemble is None:
        return None
    days = ensemble.members[0].metrics.cbtmin.shape[1]
    return {"tolerance_h": ENSEMBLE_TOLERANCE_H,
            "members": [{"model": m.model.id, "disruption_score_h_per_week": _number(m.metrics.score[0]),
                         "night_runs_not_adapted": _unadapted_runs(m.metrics, "night")[0]}
                        for m in ensemble.members],
            "disagree_days": ensemble.disagree_days,
            "cbtmin_spread_h": [_number(ensemble.spread_h[d]) for d in range(days)]}


def _day_entry(roster: Roster, view: RosterDayView) -> dict[str, Any]:
    day = view.day
    return {
        "index": day.index,
        "date": day.date.isoformat(),
        "shift": day.label,
        "kind": day.kind,
        "work": None if day.work is None else {"start": _iso(roster, day.work[0]), "end": _iso(roster, day.work[1])},
        "sleep": [{"start": _iso(roster, a), "end": _iso(roster, b), "phase_angle_h": _number(angle)}
                  for (a, b), angle in zip(view.sleep, view.sleep_phase_angle_h)],
        "bright_light": [_window_entry(w, lambda m: _iso(roster, m)) for w in view.bright],
        "light_avoidance": [_window_entry(w, lambda m: _iso(roster, m)) for w in view.avoid],
        "cbtmin": _iso(roster, view.cbtmin),
        "dlmo": _iso(roster, view.dlmo),
        "work_in_circadian_low_h": _number(view.work_low_h),
        "burden_h": _number(view.burden_h),
        "adapted": view.adapted,
    }


def _views(draft: DraftResult) -> list[RosterDayView]:
    epoch = draft.days[0].start
    return day_views(draft.days, draft.best.plan, draft.best.metrics, epoch)


def _pick(result: RosterResult, name: str | None) -> DraftResult:
    """The draft to show: the top-ranked, or the one named (checked against the file before planning)."""
    return result.drafts[0] if name is None else next(d for d in result.drafts if d.draft.name == name)


def _document(roster: Roster, info: RosterInfo, model: ModelSpec, result: RosterResult, chosen: DraftResult,
              views: list[RosterDayView], strategy: str, workers: int, seed: int) -> dict[str, Any]:
    return {
        "command": "roster",
        "scenario": {"name": info.name, "description": info.description, "path": info.path,
                     "site": roster.site.name, "time_zone": str(roster.site.zone), "crew_size": roster.crew_size},
        "model": {**_model_entry(model), "citation": model.citation},
        "citations": [_citation_entry(model)],
        "strategy": strategy,
        "workers": workers,
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
            "rank_score_h_per_week": _number(d.rank_score),
            "plan": _metrics_entry(roster, d, d.best),
            "strategies": {name: _metrics_entry(roster, d, outcome) for name, outcome in d.strategies.items()},
            "no_plan": _metrics_entry(roster, d, d.baseline),
            "population": _population_entry(d, roster),
        } for k, d in enumerate(result.drafts)],
        "plan": {"draft": chosen.draft.name, "strategy": chosen.best_strategy,
                 "days": [_day_entry(roster, view) for view in views]},
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
            "rank_score_h_per_week": "population median score when workers > 0, else the average worker's",
        },
    }


def _print_roster(console: Console, roster: Roster, info: RosterInfo, model: ModelSpec, result: RosterResult,
                  chosen: DraftResult, views: list[RosterDayView], workers: int, seed: int,
                  ensemble: RosterEnsemble | None = None) -> None:
    console.print(f"[bold]{escape(info.name)}[/bold]")
    if info.description:
        console.print(escape(info.description))
    shifts = ", ".join(f"{escape(s.code)} ({escape(s.label)}) {_clock(s.start_h)}–{_clock(s.end_h)}, {s.kind}"
                       for s in roster.shifts)
    facts = [("site", f"{escape(roster.site.name)} ({escape(str(roster.site.zone))})"),
             ("shifts", shifts),
             ("workers", f"crew of {roster.crew_size}; habitual sleep {_clock(roster.site.bed_h)}–"
                         f"{_clock(roster.site.wake_h)}, commute {roster.commute_minutes:g} min"),
             ("model", escape(model.id))]
    if workers:
        facts.append(("population", f"{workers} simulated workers, intrinsic period {DUFFY2011_TAU_MEAN_H} ± "
                                    f"{DUFFY2011_TAU_SD_H} h (Duffy et al. 2011), seed {seed}"))
    _print_facts(console, None, facts)

    ranking = Table(box=box.SIMPLE_HEAD, title="Drafts ranked, least disruptive first", title_justify="left",
                    caption=(f"score: hours per week of work within ±{LOW_HALF_WIDTH_H:g} h of CBTmin plus "
                             "biological night spent awake, " + ("population median [10th–90th percentile]" if workers
                                                                 else "average worker") +
                             "; no plan: the same draft without light measures."), caption_justify="left")
    for header in ("#", "draft", "strategy", "score h/wk", "no plan", "worst day"):
        ranking.add_column(header, no_wrap=header not in ("draft", "worst day"))
    parts = Table(box=box.SIMPLE_HEAD, title="What the scores are made of (average worker)", title_justify="left",
                  caption=("low: work in the circadian low; awake: biological night spent awake; out of phase: "
                           "sleep outside the biological night (not scored); nights adapt: mean days from the first night "
                           "of a run until CBTmin falls inside sleep; unadapted: runs of nights in which it never does."),
                  caption_justify="left")
    for header in ("draft", "low h/wk", "awake h/wk", "out of phase", "nights adapt", "unadapted"):
        parts.add_column(header, no_wrap=header != "draft")
    for k, d in enumerate(result.drafts):
        m = d.best.metrics
        weeks = len(d.days) / 7.0
        worst = int(m.worst_day[0])
        unadapted, runs = _unadapted_runs(m, "night")
        adapt = _mean_days(m, "night")
        ranking.add_row(str(k + 1), f"[bold]{escape(d.draft.name)}[/bold]", SHORT_NAMES[d.best_strategy], score_text(d),
                        f"{d.baseline.score:.1f}", f"{d.days[worst].date.strftime('%a %d %b')} "
                        f"{escape(d.days[worst].label)}: {m.day_burden_h[0, worst]:.0f} h")
        parts.add_row(escape(d.draft.name), f"{m.work_low_h[0] / weeks:.1f}", f"{m.awake_in_night_h[0] / weeks:.1f}",
                      f"{m.sleep_out_of_phase_h[0] / weeks:.1f}",
                      NONE_TEXT if not math.isfinite(adapt) else f"{adapt:.1f} d",
                      f"{unadapted} of {runs}" if runs else NONE_TEXT)
    console.print(ranking)
    for d in result.drafts:
        console.print(f"  [dim]{escape(d.draft.name)}: {escape(_pattern_text(d.draft))} ×{d.draft.cycles}[/dim]")
    console.print(parts)
    console.print(f"[bold]Ranking:[/bold] {escape(result.reason)}")

    strategies = Table(box=box.SIMPLE_HEAD)
    for header in ("strategy", "score", "what the search found"):
        strategies.add_column(header, no_wrap=header != "what the search found")
    for name, outcome in list(chosen.strategies.items()) + [("none", chosen.baseline)]:
        label = f"[bold]{SHORT_NAMES[name]}[/bold] ✓" if name == chosen.chosen else SHORT_NAMES[name]
        strategies.add_row(label, f"{outcome.score:.1f}", escape(describe_settings(outcome.plan)))
    console.print(Panel(strategies, title=f"Strategies for {escape(chosen.draft.name)} (score h/wk)",
                        title_align="left"))

    if chosen.robust is not None:
        robust = chosen.robust
        side = Table(box=box.SIMPLE_HEAD)
        for header in ("plan", "strategy", f"mean over {robust.people} workers", "90th percentile"):
            side.add_column(header, no_wrap=True)
        average = chosen.strategies[chosen.chosen]
        side.add_row("[bold]robust[/bold] ✓", SHORT_NAMES[robust.outcome.strategy], f"{robust.mean_score:.1f}",
                     f"{robust.p90_score:.1f}")
        side.add_row("average worker", SHORT_NAMES[average.strategy], f"{robust.average_mean_score:.1f}",
                     f"{robust.average_p90_score:.1f}")
        console.print(Panel(side, title="Robust plan beside the average worker's (score h/wk)", title_align="left"))
        console.print(f"  robust: {escape(describe_settings(robust.outcome.plan))}")
        console.print(f"  average worker: {escape(describe_settings(average.plan))}")
        console.print("  " + ("the robust plan is less disruptive on average across workers" if robust.changed else
                              "no candidate beats the average worker's plan across workers; it is kept"))

    table = Table(title=f"Day-by-day plan: {escape(chosen.draft.name)}, {escape(STRATEGY_NAMES[chosen.best_strategy])}"
                        + (" (robust)" if chosen.robust is not None else ""),
                  box=box.SIMPLE_HEAD, title_justify="left", caption_justify="left",
                  caption=(f"Times on the site's clock ({escape(str(roster.site.zone))}). light: * bright light "
                           "(light box or daylight), o dark glasses. CBTmin: that of the night after the day; ✓ "
                           f"inside sleep (adapted). low: hours of the shift within ±{LOW_HALF_WIDTH_H:g} h of CBTmin."))
    for header in ("day", "shift", "sleep", "light", "CBTmin", "low"):
        table.add_column(header, no_wrap=header != "light")
    for view in views:
        day = view.day
        shift = "off" if day.work is None else f"{escape(day.label)} {_hm(roster, day.work[0])}–{_hm(roster, day.work[1])}"
        sleep = "\n".join(f"{_hm(roster, a)}–{_hm(roster, b)}" for a, b in view.sleep) or NONE_TEXT
        light = [f"* {_hm(roster, w.start)}–{_hm(roster, w.end)} {escape(_source(w))} {_lux(w.lux)} lx"
                 for w in view.bright]
        light += [f"o {_hm(roster, w.start)}–{_hm(roster, w.end)} glasses {w.lux:.0%}" for w in view.avoid]
        cbt = NONE_TEXT if view.cbtmin is None else _hm(roster, view.cbtmin) + (" ✓" if view.adapted else "")
        table.add_row(day.date.strftime("%a %d %b"), shift, sleep, "\n".join(light) or NONE_TEXT, cbt,
                      f"{view.work_low_h:.1f}" if day.work is not None else NONE_TEXT)
    console.print(table)

    console.print(f"[bold]CBTmin against shifts and sleep[/bold] (noon to noon, 30-min cells; {chart_legend()})")
    for line in text_chart(roster, views):
        console.print(escape(line), highlight=False, soft_wrap=True)

    if chosen.population is not None:
        pop = chosen.population
        console.print(f"\n[bold]Across {pop.size} workers[/bold] (median [10th–90th percentile]): score "
                      f"{pop.score['median']:.1f} [{pop.score['p10']:.1f}–{pop.score['p90']:.1f}] h/wk; "
                      f"work in the low {pop.work_low_h['median']:.1f} h over the draft; "
                      f"night runs never adapted {pop.night_runs_unadapted:.0%}")
    if ensemble is not None:
        _print_ensemble(console, roster, chosen, ensemble)
    console.print(f"  {result.simulated:,} light schedules simulated")

    console.print("\n[bold]Cautions[/bold]")
    for caution in cautions_for(SHIFT_CAUTIONS):
        console.print(f"  • [bold]{escape(caution.title)}.[/bold] {escape(caution.text)} "
                      f"[dim]({escape('; '.join(caution.sources))})[/dim]")
    _print_citations(console, [model] + ([m.model for m in ensemble.members if m.model.id != model.id]
                                         if ensemble is not None else []))


def _print_ensemble(console: Console, roster: Roster, chosen: DraftResult, ensemble: RosterEnsemble) -> None:
    table = Table(box=box.SIMPLE_HEAD)
    for header in ("model", "score h/wk", "night runs unadapted"):
        table.add_column(header)
    for member in ensemble.members:
        unadapted, runs = _unadapted_runs(member.metrics, "night")
        table.add_row(escape(member.model.id), f"{member.metrics.score[0]:.1f}",
                      f"{unadapted} of {runs}" if runs else NONE_TEXT)
    console.print(Panel(table, title=f"The plan for {escape(chosen.draft.name)} under each model", title_align="left"))
    low, high = ensemble.score_range
    if ensemble.disagree_days:
        dates = ", ".join(chosen.days[d].date.strftime("%d %b") for d in ensemble.disagree_days[:8])
        more = f" and {len(ensemble.disagree_days) - 8} more" if len(ensemble.disagree_days) > 8 else ""
        console.print(f"  [yellow]models disagree[/yellow] by more than {ENSEMBLE_TOLERANCE_H:g} h on CBTmin on "
                      f"{len(ensemble.disagree_days)} day(s): {dates}{more}; scores {low:.1f}–{high:.1f} h/wk")
    else:
        console.print(f"  the models agree within {ENSEMBLE_TOLERANCE_H:g} h on every day's CBTmin; scores "
                      f"{low:.1f}–{high:.1f} h/wk")


def _source(window: Window) -> str:
    return "box" if window.source == "light box" else window.source


RosterArgument = Annotated[list[str] | None, typer.Argument(metavar="FILE...", help=(
    "Roster scenario file (.toml, kind = \"roster\"), or spreadsheets (.xlsx, .csv; each sheet a draft)."))]


@app.command("roster", help=(
    "Evaluate shift-roster drafts: how each displaces the workers' body clocks, the least disruptive light/dark "
    "and sleep plan per draft, the drafts ranked side by side, a day-by-day plan and a text chart."))
def roster_command(
    path: RosterArgument = None,
    strategy: Annotated[RosterStrategy, typer.Option(
        "--strategy", "-s", case_sensitive=False,
        help=("auto: search full adaptation to nights, the compromise phase position and staying day-oriented, "
              "keep the least disruptive per draft; or one of them."))] = RosterStrategy.auto,
    workers: Annotated[int, typer.Option(
        "--workers", "-w", min=0, max=20_000,
        help="Also simulate this many workers with intrinsic periods drawn from Duffy et al. 2011 (0: average "
             "worker only).")] = 0,
    seed: Annotated[int, typer.Option("--seed", min=0, help="Seed of the population draw (reproducible).")] = 0,
    model_name: Annotated[str | None, typer.Option(
        "--model", "-m", metavar="ID_OR_PATH",
        help="Model to use instead of the scenario's own (a built-in id or a model .toml file).")] = None,
    draft: Annotated[str | None, typer.Option(
        "--draft", metavar="NAME", help="Show the day-by-day plan of this draft (default: the top-ranked).")] = None,
    robust: Annotated[bool, typer.Option(
        "--robust", help=("Score every candidate plan over a population of simulated workers (intrinsic period and "
                          "light sensitivity drawn) and recommend the least disruptive on average; the average "
                          "worker's plan is shown beside it."))] = False,
    models_list: Annotated[str | None, typer.Option(
        "--models", metavar="LIST", help=("Run the recommended plan under each of these models (comma-separated ids "
                                          "or files, e.g. forger1999,jewett1999,hannay2019) and show where they "
                                          "disagree."))] = None,
    json_out: JsonOption = False,
    ics: IcsOption = None,
    report: ReportOption = None,
    chart: ChartOption = None,
    force: ForceOption = False,
    alarm_minutes: AlarmOption = DEFAULT_ALARM_MINUTES,
    no_alarms: NoAlarmsOption = False,
    group: GroupOption = None,
    template: TemplateOption = None,
    template_start: TemplateStartOption = None,
) -> None:
    """Plan a roster scenario (help text on the decorator)."""
    if template is not None:
        write_template(template, template_start, force, json_out, path)
        return
    run_roster(roster_paths(path), RosterStrategy(strategy).value, workers, seed, model_name, draft, json_out,
               PlanFiles(ics, report, chart, force, alarm_minutes, no_alarms, group), robust, models_list)


def run_roster(path: str | list[str], strategy: str, workers: int, seed: int, model_name: str | None,
               draft: str | None, json_out: bool, files: PlanFiles = PlanFiles(), robust: bool = False,
               models_list: str | None = None) -> None:
    """Plan a roster file (or spreadsheets) and print the result (shared by ``roster`` and ``demo``)."""
    roster, info = load_any_roster(path)
    model = load_model(model_name or info.model)
    if draft is not None and draft not in {d.name for d in roster.drafts}:
        allowed = ", ".join(f'"{d.name}"' for d in roster.drafts)
        raise InputError(f'no draft named "{draft}"; allowed: {allowed}', field="--draft")
    if files.group is not None and files.group not in {c.name for c in roster.crews}:
        allowed = ", ".join(f'"{c.name}"' for c in roster.crews) or "none (the file has no [[crews]])"
        raise InputError(f'no crew named "{files.group}"; allowed: {allowed}', field="--group")
    ensemble_ids = _model_list(models_list)
    files.check()
    console = _stderr()
    with Progress(TextColumn("{task.description}"), BarColumn(), TextColumn("{task.completed}/{task.total}"),
                  TimeElapsedColumn(), console=console, transient=True) as progress:
        task = progress.add_task("planning", total=None)

        def report(done: int, total: int, label: str) -> None:
            progress.update(task, completed=done, total=total, description=escape(label))

        result = plan_roster(roster, model, strategy, workers=workers, seed=seed, robust=robust, progress=report)
        chosen = _pick(result, draft)
        ensemble = roster_ensemble(roster, chosen, [load_model(name) for name in ensemble_ids]) if ensemble_ids else None
    views = _views(chosen)
    written = write_plan_files(document_from_roster(roster, info, result, chosen, views), files)
    if json_out:
        document = _document(roster, info, model, result, chosen, views, strategy, workers, seed)
        document["robust"] = _robust_entry(chosen)
        document["ensemble"] = _ensemble_entry(roster, ensemble)
        if ensemble is not None:
            document["citations"] += [_citation_entry(m.model) for m in ensemble.members if m.model.id != model.id]
        if written["ics"] or written["report"] or written["chart"]:
            document["written"] = written
        _emit_json(document)
        return
    _print_roster(console, roster, info, model, result, chosen, views, workers, seed, ensemble)
    _print_written(console, written)


def check_roster(path: str, json_out: bool) -> None:
    """``phaseplan check`` for a roster file or spreadsheet: raises the file's problems, else prints a summary."""
    roster, info = load_any_roster(path)
    model = load_model(info.model)
    summary = {"kind": "roster", "name": info.name, "model": model.id, "site": roster.site.name,
               "time_zone": str(roster.site.zone), "start_date": roster.start.isoformat(),
               "shifts": [{"code": s.code, "label": s.label, "start": _clock(s.start_h), "end": _clock(s.end_h),
                           "kind": s.kind, "hours": s.hours} for s in roster.shifts],
               "drafts": [{"name": d.name, "pattern": [c if c is not None else OFF for c in d.pattern],
                           "cycles": d.cycles, "days": d.days} for d in roster.drafts]}
    if json_out:
        _emit_json({"command": "check", "valid": True, "problems": [], "summary": summary})
        return
    console = _stderr()
    console.print(f"[green]ok[/green] {escape(path)}: [bold]{escape(info.name)}[/bold]")
    rows = [("site", f"{escape(roster.site.name)} ({escape(str(roster.site.zone))}), from "
                     f"{roster.start.isoformat()}")]
    rows += [("shift", f"{escape(s.code)} ({escape(s.label)}) {_clock(s.start_h)}–{_clock(s.end_h)}, "
                       f"{s.hours:g} h, {s.kind}") for s in roster.shifts]
    rows += [("draft", f"{escape(d.name)}: {escape(_pattern_text(d))} ×{d.cycles} ({d.days} days)")
             for d in roster.drafts]
    rows.append(("model", escape(info.model)))
    _print_facts(console, None, rows)
