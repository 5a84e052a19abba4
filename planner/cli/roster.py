"""``phaseplan roster``: plan and rank the drafts of a roster (through :mod:`planner.service`) and show them."""

from __future__ import annotations

import math
from datetime import datetime
from enum import Enum
from pathlib import Path
from typing import Annotated

import typer
from rich import box
from rich.console import Console
from rich.markup import escape
from rich.panel import Panel
from rich.progress import BarColumn, Progress, TextColumn, TimeElapsedColumn
from rich.table import Table

from planner import service
from planner.cli.app import app
from planner.cli.common import (
    NONE_TEXT,
    AlarmOption,
    ChartOption,
    ForceOption,
    GroupOption,
    IcsOption,
    JsonOption,
    DEFAULT_ALARM_FOR,
    AlarmKindsOption,
    NoAlarmsOption,
    PaperOption,
    alarm_kinds,
    ReportOption,
    emit_json,
    model_list,
    print_cautions,
    print_facts,
    print_written,
    stderr_console,
    with_written,
)
from planner.engine.population import DUFFY2011_TAU_MEAN_H, DUFFY2011_TAU_SD_H
from planner.plans.cautions import SHIFT_CAUTIONS, cautions_for
from planner.plans.entries import clock, lux_text
from planner.plans.files import PlanFiles, write_plan_files
from planner.plans.ics import DEFAULT_ALARM_MINUTES
from planner.rosters.export import mean_days, pattern_text, site_hm, unadapted_runs
from planner.errors import InputError
from planner.rosters import sleepiness as sleepview
from planner.rosters.model import Roster
from planner.rosters.sheet import next_monday
from planner.rosters.search import (
    ENSEMBLE_TOLERANCE_H,
    LOW_HALF_WIDTH_H,
    SHORT_NAMES,
    STRATEGY_NAMES,
    DraftResult,
    RosterEnsemble,
    describe_settings,
)
from planner.rosters.views import chart_legend, score_text, text_chart
from planner.world.light import Window
from planner.intervals import count_text


class RankBy(str, Enum):
    disruption = "disruption"
    sleepiness = "sleepiness"


class RosterStrategy(str, Enum):
    auto = "auto"
    nights = "nights"
    compromise = "compromise"
    day = "day"


def _print_roster(console: Console, planned: service.RosterOutcome) -> None:
    roster, info, model, result = planned.roster, planned.info, planned.model, planned.result
    chosen, views, ensemble = planned.chosen, planned.views, planned.ensemble
    workers, seed = planned.request.workers, planned.request.seed
    console.print(f"[bold]{escape(info.name)}[/bold]")
    if info.description:
        console.print(escape(info.description))
    shifts = ", ".join(f"{escape(s.code)} ({escape(s.label)}) {clock(s.start_h)}–{clock(s.end_h)}, {s.kind}"
                       for s in roster.shifts)
    facts = [("site", f"{escape(roster.site.name)} ({escape(str(roster.site.zone))})"),
             ("shifts", shifts),
             ("workers", f"crew of {roster.crew_size}; habitual sleep {clock(roster.site.bed_h)}–"
                         f"{clock(roster.site.wake_h)}, commute {roster.commute_minutes:g} min"),
             ("model", escape(model.id))]
    if workers:
        facts.append(("population", f"{workers} simulated workers, intrinsic period {DUFFY2011_TAU_MEAN_H} ± "
                                    f"{DUFFY2011_TAU_SD_H} h (Duffy et al. 2011), seed {seed}"))
    print_facts(console, None, facts)

    order = "least sleepy first" if result.drafts[0].rank_by == "sleepiness" else "least disruptive first"
    ranking = Table(box=box.SIMPLE_HEAD, title=f"Drafts ranked, {order}", title_justify="left",
                    caption=(f"score: hours per week of work within ±{LOW_HALF_WIDTH_H:g} h of CBTmin plus "
                             "biological night spent awake, " + ("population median [10th–90th percentile]" if workers
                                                                 else "average worker") +
                             "; no plan: the same draft without light measures, average worker; KSS≥7: hours at "
                             "work at KSS 7 or more per week and drives home at KSS 7 or more (average worker; "
                             "three-process model of alertness, a population forecast, not a fitness-for-duty "
                             "test)."), caption_justify="left")
    score_header = (escape(f"score h/wk, median [p10–p90] of {workers}") if workers else "score h/wk, average worker")
    for header in ("#", "draft", "rules", "strategy", score_header, "no plan", "worst day", "KSS≥7 h/wk",
                   "sleepy drives"):
        ranking.add_column(header, no_wrap=header not in ("draft", "worst day", score_header))
    parts = Table(box=box.SIMPLE_HEAD, title="What the scores are made of (average worker)", title_justify="left",
                  caption=("low: work in the circadian low; awake: biological night spent awake; out of phase: "
                           "sleep outside the biological night (not scored); nights adapt: mean days from the first night "
                           "of a run until CBTmin falls inside sleep; never adapted: runs of nights in which it never does."),
                  caption_justify="left")
    for header in ("draft", "low h/wk", "awake h/wk", "out of phase", "nights adapt", "never adapted"):
        parts.add_column(header, no_wrap=header != "draft")
    for k, d in enumerate(result.drafts):
        m = d.best.metrics
        weeks = len(d.days) / 7.0
        worst = int(m.worst_day[0])
        unadapted, runs = unadapted_runs(m, "night")
        adapt = mean_days(m, "night")
        rules = "ok" if d.conforms else f"[yellow]{len(d.breaches)} broken[/yellow]"
        ranking.add_row(str(k + 1), f"[bold]{escape(d.draft.name)}[/bold]", rules, SHORT_NAMES[d.best_strategy],
                        score_text(d),
                        f"{d.baseline.score:.1f}", f"{d.days[worst].date.strftime('%a %d %b')} "
                        f"{escape(d.days[worst].label)}: {m.day_burden_h[0, worst]:.0f} h", *_sleepy_cells(d))
        parts.add_row(escape(d.draft.name), f"{m.work_low_h[0] / weeks:.1f}", f"{m.awake_in_night_h[0] / weeks:.1f}",
                      f"{m.sleep_out_of_phase_h[0] / weeks:.1f}",
                      NONE_TEXT if not math.isfinite(adapt) else f"{adapt:.1f} d",
                      f"{unadapted} of {runs}" if runs else NONE_TEXT)
    console.print(ranking)
    for d in result.drafts:
        console.print(f"  [dim]{escape(d.draft.name)}: {escape(pattern_text(d.draft))} ×{d.draft.cycles}[/dim]")
    _print_breaches(console, result.drafts)
    console.print(parts)
    console.print(f"[bold]Ranking:[/bold] {escape(result.reason)}")

    strategies = Table(box=box.SIMPLE_HEAD)
    for header in ("strategy", "score", "what the search found"):
        strategies.add_column(header, no_wrap=header != "what the search found")
    for name, outcome in list(chosen.strategies.items()) + [("none", chosen.baseline)]:
        label = f"[bold]{SHORT_NAMES[name]}[/bold] ✓" if name == chosen.chosen else SHORT_NAMES[name]
        strategies.add_row(label, f"{outcome.score:.1f}", escape(describe_settings(outcome.plan)))
    console.print(Panel(strategies, title=f"Strategies for {escape(chosen.draft.name)} (score h/wk, average worker)",
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
                           "(light box or daylight), o dark glasses. CBTmin: that of the night after the day; in sleep: "
                           f"it falls inside a sleep (adapted). low: hours of the shift within ±{LOW_HALF_WIDTH_H:g} h of CBTmin."))
    for header in ("day", "shift", "sleep", "light", "CBTmin", "low"):
        table.add_column(header, no_wrap=header != "light")
    for view in views:
        day = view.day
        shift = "off" if day.work is None else f"{escape(day.label)} {site_hm(roster, day.work[0])}–{site_hm(roster, day.work[1])}"
        sleep = "\n".join(f"{site_hm(roster, a)}–{site_hm(roster, b)}" for a, b in view.sleep) or NONE_TEXT
        light = [f"* {site_hm(roster, w.start)}–{site_hm(roster, w.end)} {escape(_source(w))} {lux_text(w.lux)} lx"
                 for w in view.bright]
        light += [f"o {site_hm(roster, w.start)}–{site_hm(roster, w.end)} glasses {w.lux:.0%}" for w in view.avoid]
        cbt = NONE_TEXT if view.cbtmin is None else site_hm(roster, view.cbtmin) + (" in sleep" if view.adapted else "")
        table.add_row(day.date.strftime("%a %d %b"), shift, sleep, "\n".join(light) or NONE_TEXT, cbt,
                      f"{view.work_low_h:.1f}" if day.work is not None else NONE_TEXT)
    console.print(table)
    _print_crew_sleepiness(console, planned)

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

    print_cautions(console, cautions_for(SHIFT_CAUTIONS), planned.models_used)


def _print_breaches(console: Console, drafts: list[DraftResult]) -> None:
    """Working-time rules each draft breaks, with the days, under the ranking."""
    for d in drafts:
        if d.conforms:
            continue
        console.print(f"  [bold yellow]{escape(d.draft.name)} breaks working-time rules[/bold yellow] "
                      f"({len(d.breaches)}); ranked after every conforming draft:")
        for breach in d.breaches[:6]:
            crew = f"crew {escape(breach.crew)}: " if breach.crew else ""
            console.print(f"    {crew}{escape(breach.message)} [dim]({escape(breach.source)})[/dim]")
        if len(d.breaches) > 6:
            console.print(f"    and {len(d.breaches) - 6} more (--json lists all)")


def _print_ensemble(console: Console, roster: Roster, chosen: DraftResult, ensemble: RosterEnsemble) -> None:
    table = Table(box=box.SIMPLE_HEAD)
    for header in ("model", "score h/wk", "night runs unadapted"):
        table.add_column(header)
    for member in ensemble.members:
        unadapted, runs = unadapted_runs(member.metrics, "night")
        table.add_row(escape(member.model.id), f"{member.metrics.score[0]:.1f}",
                      f"{unadapted} of {runs}" if runs else NONE_TEXT)
    console.print(Panel(table, title=f"The plan for {escape(chosen.draft.name)} under each model (average worker)",
                        title_align="left"))
    low, high = ensemble.score_range
    if ensemble.disagree_days:
        dates = ", ".join(chosen.days[d].date.strftime("%d %b") for d in ensemble.disagree_days[:8])
        more = f" and {len(ensemble.disagree_days) - 8} more" if len(ensemble.disagree_days) > 8 else ""
        console.print(f"  [yellow]models disagree[/yellow] by more than {ENSEMBLE_TOLERANCE_H:g} h on CBTmin on "
                      f"{count_text(len(ensemble.disagree_days), 'day')}: {dates}{more}; scores {low:.1f}–{high:.1f} h/wk")
    else:
        console.print(f"  the models agree within {ENSEMBLE_TOLERANCE_H:g} h on every day's CBTmin; scores "
                      f"{low:.1f}–{high:.1f} h/wk")


def _sleepy_cells(d: DraftResult) -> tuple[str, str]:
    sleepiness = d.best.metrics.sleepiness
    if sleepiness is None:
        return NONE_TEXT, NONE_TEXT
    brief = sleepview.summary(d.days, sleepiness)
    return (f"{brief['hours_at_kss_7_or_more_per_week']:.1f}",
            f"{brief['sleepy_drives_home']} of {brief['drives_home']}")


def _print_crew_sleepiness(console: Console, planned: service.RosterOutcome) -> None:
    """One line per crew: the sleepiness forecast of its own shifts (each crew works the pattern from another day)."""
    crews = {name: crew for name, crew in planned.crews.items() if crew.sleepiness is not None}
    if not crews:
        return
    table = Table(box=box.SIMPLE_HEAD, title=f"Sleepiness by crew: {escape(planned.chosen.draft.name)} (average worker)",
                  title_justify="left", caption_justify="left", caption=escape(sleepview.CREW_NOTE))
    spread = any(crew.population_sleepiness for crew in crews.values())
    headers = list(sleepview.CREW_COLUMNS)
    if spread:
        workers = planned.request.workers
        headers += [f"KSS≥7 h/wk, {workers} workers", f"sleepy drives, {workers} workers"]
        table.caption += escape(" Across workers: median [10th–90th percentile].")
    for header in headers:
        table.add_column(header, no_wrap=header != "sleepiest shift")
    for (name, crew), row in zip(crews.items(), sleepview.crew_rows(crews, planned.roster.site.zone)):
        cells = [escape(cell) for cell in row]
        if spread:
            cells += [_percentiles(crew.population_sleepiness, key)
                      for key in ("hours_at_kss_7_or_more_per_week", "sleepy_drives_home")]
        table.add_row(*cells)
    console.print(table)


def _percentiles(population: dict | None, key: str) -> str:
    """``median [p10–p90]`` of one of a population's sleepiness numbers; — when not simulated."""
    values = (population or {}).get(key) or {}
    if any(values.get(p) is None for p in ("p10", "median", "p90")):
        return NONE_TEXT
    return escape(f"{values['median']:.1f} [{values['p10']:.1f}–{values['p90']:.1f}]")


def _source(window: Window) -> str:
    return "box" if window.source == "light box" else window.source


RosterArgument = Annotated[list[str] | None, typer.Argument(metavar="FILE...", help=(
    "Roster scenario file (.toml, kind = \"roster\"), or spreadsheets (.xlsx, .csv; each sheet a draft)."))]
TemplateOption = Annotated[Path | None, typer.Option(
    "--template", metavar="FILE.xlsx",
    help="Write an empty roster workbook to fill (settings, shift types, a grid of dates) and stop.")]
TemplateStartOption = Annotated[datetime | None, typer.Option(
    "--start", metavar="YYYY-MM-DD", formats=["%Y-%m-%d"],
    help="First date of the template's grid (default: next Monday).")]


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
        "--people", "--workers", "-w", metavar="N", min=0, max=20_000,
        help="Also simulate this many workers with intrinsic periods drawn from Duffy et al. 2011 (0: average "
             "worker only).")] = 0,
    seed: Annotated[int, typer.Option("--seed", metavar="S", min=0, help="Seed of the population draw (reproducible).")] = 0,
    model_name: Annotated[str | None, typer.Option(
        "--model", "-m", metavar="ID_OR_PATH",
        help="Model to use instead of the scenario's own (a built-in id or a model .toml file).")] = None,
    draft: Annotated[str | None, typer.Option(
        "--draft", metavar="NAME", help="Show the day-by-day plan of this draft (default: the top-ranked).")] = None,
    robust: Annotated[bool, typer.Option(
        "--robust", metavar="", help=("Score every candidate plan over a population of simulated workers (intrinsic period and "
                          "light sensitivity drawn) and recommend the least disruptive on average; the average "
                          "worker's plan is shown beside it."))] = False,
    models_list: Annotated[str | None, typer.Option(
        "--models", metavar="LIST", help=("Run the recommended plan under each of these models (comma-separated ids "
                                          "or files, e.g. forger1999,jewett1999,hannay2019) and show where they "
                                          "disagree."))] = None,
    rank_by: Annotated[RankBy, typer.Option(
        "--rank-by", case_sensitive=False,
        help=("Rank drafts by the disruption score, or by sleepiness: hours at work at KSS 7 or more per week "
              "(three-process model of alertness)."))] = RankBy.disruption,
    json_out: JsonOption = False,
    ics: IcsOption = None,
    report: ReportOption = None,
    chart: ChartOption = None,
    force: ForceOption = False,
    alarm_minutes: AlarmOption = DEFAULT_ALARM_MINUTES,
    no_alarms: NoAlarmsOption = False,
    group: GroupOption = None,
    alarm_for: AlarmKindsOption = DEFAULT_ALARM_FOR,
    paper: PaperOption = "A4",
    strict: Annotated[bool, typer.Option(
        "--strict", metavar="", help=("Refuse drafts that break the working-time rules (the file's \\[rules] table) "
                                      "instead of ranking them last."))] = False,
    template: TemplateOption = None,
    start: TemplateStartOption = None,
) -> None:
    """Plan a roster scenario or spreadsheets, or write a template (help text on the decorator)."""
    if template is not None:
        _write_template(template, start, force, json_out, path)
        return
    paths = tuple(path or ())
    request = service.RosterRequest(paths[0] if len(paths) == 1 else paths, RosterStrategy(strategy).value, workers,
                                    seed, model_name, draft, robust, model_list(models_list), group, strict=strict,
                                    rank_by=RankBy(rank_by).value)
    run_roster(request, json_out, PlanFiles(ics, report, chart, force, alarm_minutes, no_alarms, group,
                                            alarm_kinds(alarm_for), paper))


def _write_template(target: Path, start: datetime | None, force: bool, json_out: bool, paths: list[str] | None) -> None:
    """``roster --template FILE.xlsx``: write the empty workbook (never over a file without ``--force``)."""
    if paths:
        raise InputError("--template writes an empty workbook; give no roster files with it", field="--template")
    first = next_monday() if start is None else start.date()
    written = service.write_roster_template(target, first, force=force)
    if json_out:
        emit_json({"command": "roster", "template": str(written), "start": first.isoformat()})
        return
    stderr_console().print(f"wrote {escape(str(written))}: fill in the settings sheet (column B), the shift table "
                           f"and the draft sheet (one row per crew, one column per date from {first.isoformat()}), "
                           f"then run 'phaseplan roster {escape(str(written))}'")


def run_roster(request: service.RosterRequest, json_out: bool, files: PlanFiles = PlanFiles()) -> None:
    """Plan a roster file and show or write the result (shared by ``roster`` and ``demo``)."""
    prepared = service.prepare_roster(request)
    files.check()
    console = stderr_console()
    with Progress(TextColumn("{task.description}"), BarColumn(), TextColumn("{task.completed}/{task.total}"),
                  TimeElapsedColumn(), console=console, transient=True) as progress:
        task = progress.add_task("planning", total=None)

        def report(label: str, done: int, total: int) -> None:
            progress.update(task, completed=done, total=total, description=escape(label))

        outcome = service.plan_roster(request, report, prepared=prepared)
    written = write_plan_files(outcome.document(), files)
    if json_out:
        emit_json(with_written(outcome.to_json(), written))
        return
    _print_roster(console, outcome)
    print_written(console, written)
