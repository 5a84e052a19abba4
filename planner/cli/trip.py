"""``phaseplan trip`` and ``phaseplan demo``: plan a trip (or a demo trip or roster) and show it."""

from __future__ import annotations

import contextlib
import math
from datetime import datetime, timedelta
from enum import Enum
from pathlib import Path
from typing import Annotated

import typer
from rich import box
from rich.console import Console
from rich.markup import escape
from rich.panel import Panel
from rich.table import Table

from planner import service
from planner.cli.agenda import AGENDA_BELOW_COLUMNS, print_agenda, print_comparison_lines
from planner.cli.app import app
from planner.cli.quicktrip import (ArriveOption, DepartOption, FromOption, PrepareOption, SaveOption, SleepOption,
                                   StayOption, ToOption, quick_trip)
from planner.cli.common import (
    NONE_TEXT,
    AlarmOption,
    ChartOption,
    ForceOption,
    IcsOption,
    JsonOption,
    ModelsOption,
    DEFAULT_ALARM_FOR,
    AlarmKindsOption,
    NoAlarmsOption,
    PaperOption,
    alarm_kinds,
    PeopleOption,
    ReportOption,
    RobustOption,
    SeedOption,
    emit_json,
    model_list,
    print_cautions,
    print_facts,
    print_written,
    progress_bar,
    stderr_console,
    with_written,
)
from planner.cli.roster import run_roster
from planner.engine.parameters import ModelSpec
from planner.errors import InputError
from planner.plans.cautions import cautions_for
from planner.plans.entries import clock, lux_text
from planner.plans.files import PlanFiles, write_plan_files
from planner.plans.ics import DEFAULT_ALARM_MINUTES
from planner.trips.evidence import StartingPhase
from planner.trips.model import EYE_MASK, Trip, sleep_setting
from planner.trips.robust import EnsembleResult, PlanStats, RobustResult
from planner.trips.scenario import DEFAULT_DEMO, ScenarioInfo
from planner.trips.search import REENTRAINMENT_TOLERANCE_H, TripPlanResult
from planner.trips.views import DayView, clock_change_h, day_views, days_text, local, movement, settling, strategy_name
from planner.world.light import Window
from planner.world.localtime import zone_label
from planner.world.places import Place


class StrategyChoice(str, Enum):
    """Values of --strategy."""

    auto = "auto"
    advance = "advance"
    delay = "delay"


StrategyOption = Annotated[StrategyChoice, typer.Option(
    "--strategy", "-s", case_sensitive=False,
    help=("auto plans both directions and recommends one (and, for a short trip back home, compares staying "
          "on home time); advance or delay plans only that direction."))]


TripModelOption = Annotated[str | None, typer.Option(
    "--model", "-m", metavar="ID_OR_PATH",
    help="Model to use instead of the scenario's own (a built-in id or the path of a model .toml file).")]


ByDayOption = Annotated[int | None, typer.Option(
    "--by-day", metavar="K", min=0, max=60,
    help="Day after arrival by which re-entrainment counts as success (default: the end of the stay).")]


def _hhmm(moment: datetime) -> str:
    return moment.strftime("%H:%M")


def _wall(trip: Trip, moment: datetime) -> str:
    """A moment as local date, time and zone where the traveller is, e.g. "2027-03-10 11:00 WET"."""
    at = local(trip, moment)
    return f"{at.strftime('%Y-%m-%d %H:%M')} {zone_label(at).split()[0]}"


def _clock_cell(trip: Trip, moment: datetime, row_zone: str) -> str:
    at = local(trip, moment)
    label = zone_label(at)
    return _hhmm(at) if label == row_zone else f"{_hhmm(at)} {label.split()[0]}"


def _span_cell(trip: Trip, a: datetime, b: datetime, row_zone: str) -> str:
    start, end = local(trip, a), local(trip, b)
    if zone_label(start) == zone_label(end) != row_zone:   # both on another clock: name it once
        return f"{_hhmm(start)}–{_hhmm(end)} {zone_label(end).split()[0]}"
    return f"{_clock_cell(trip, a, row_zone)}–{_clock_cell(trip, b, row_zone)}"


def _sleep_cell(trip: Trip, a: datetime, b: datetime, row_zone: str) -> str:
    setting = sleep_setting(trip, a, b)
    return _span_cell(trip, a, b, row_zone) + ("" if setting == "bed" else f"\n{setting}")


def _window_cell(trip: Trip, window: Window, row_zone: str) -> str:
    text = f"{_span_cell(trip, window.start, window.end, row_zone)} {window.minutes:.0f} min"
    if window.source == "dark glasses":
        return text + f"\ndark glasses {window.lux:.0%}"
    if window.source == EYE_MASK:
        return text + "\neye mask, seated"
    return text + f"\n{window.source} {lux_text(window.lux)} lx"


def _error_cell(error: float, target: Place, named: bool) -> str:
    if not math.isfinite(error):
        return NONE_TEXT
    where = f" {escape(target.name)}" if named else ""
    if abs(error) <= REENTRAINMENT_TOLERANCE_H:
        return f"[green]on target ({abs(error):.1f} h {'late' if error > 0 else 'early'})[/green]{where}"
    return f"{abs(error):.1f} h {'late' if error > 0 else 'early'}{where}"


def _day_table(trip: Trip, views: list[DayView], title: str) -> Table:
    """The day-by-day table of a plan (markup in ``title`` already escaped)."""
    targets = list(dict.fromkeys(view.target_place.name for view in views))
    named = len(targets) > 1
    aim = "the target" if named else escape(targets[0])
    table = Table(title=title, box=box.SIMPLE_HEAD,
                  title_justify="left", caption_justify="left",
                  caption=("Times on the local clock of where the traveller is (in flight: the departure "
                           "airport's); a zone name marks a time on another clock than the row's. CBTmin — : "
                           "the minimum moved past midnight that day. vs target: CBTmin against the entrained "
                           f"CBTmin {'of the place the day aims at' if named else 'at ' + aim}; on target: within "
                           f"{REENTRAINMENT_TOLERANCE_H:g} h; ✓ marks only the recommended plan."))
    for header in ("day", "clock", "sleep", "bright light", "light-avoidance", "CBTmin", f"vs {aim}"):
        table.add_column(header, no_wrap=header in ("day", "clock", "CBTmin"), overflow="fold")
    for view in views:
        day = view.day
        start = local(trip, day.start)
        row_zone = zone_label(start)
        clock = row_zone
        date_text = start.strftime("%a %d %b")
        if day.end_place != day.place:
            end = day.end.astimezone(day.end_place.zone)
            if zone_label(end) != row_zone:
                clock = f"{row_zone}\n→ {zone_label(end)}"
            last = (day.end - timedelta(minutes=1)).astimezone(day.end_place.zone).strftime("%a %d %b")
            date_text += f"\n→ {last}" if last != date_text else ""
        sleep = "\n".join(_sleep_cell(trip, a, b, row_zone) for a, b in view.sleep) or NONE_TEXT
        bright = "\n".join(_window_cell(trip, w, row_zone) for w in view.bright) or NONE_TEXT
        avoid = "\n".join(_window_cell(trip, w, row_zone) for w in view.avoid) or NONE_TEXT
        cbtmin = _clock_cell(trip, view.cbtmin, row_zone) if view.cbtmin is not None else NONE_TEXT
        table.add_row(f"{date_text}\n[dim]{day.kind}[/dim]", escape(clock), sleep, bright, avoid, cbtmin,
                      _error_cell(view.error_h, view.target_place, named))
    return table


def _print_plan(console: Console, trip: Trip, info: ScenarioInfo, model: ModelSpec, plan: TripPlanResult,
                views: list[DayView]) -> None:
    change = clock_change_h(trip)
    way = "east" if change > 0 else "west"
    narrow = console.width < AGENDA_BELOW_COLUMNS
    console.print(f"[bold]{escape(info.name)}[/bold]")
    if narrow:   # the recommendation and its reason first; the agenda follows
        _print_recommendation(console, plan)
    if info.description:
        console.print(escape(info.description))
    route = " → ".join([escape(trip.home.name)] + [escape(f.destination.name) for f in trip.flights])
    facts = [("route", route),
             ("clock change", f"{abs(change):g} h {way} at the first arrival" if change else "none"),
             ("planned", f"{_wall(trip, trip.start)} to {_wall(trip, trip.end)} ({len(views)} days)"),
             ("model", escape(model.id))]
    print_facts(console, None, facts)

    if narrow:
        print_agenda(console, trip, views, f"Day-by-day plan: {escape(strategy_name(plan.strategy))}")
        print_comparison_lines(console, plan)
        console.print(f"  {plan.simulated:,} light schedules simulated")
        return
    console.print(_day_table(trip, views, f"Day-by-day plan: {escape(strategy_name(plan.strategy))}"))

    comparison = Table(box=box.SIMPLE_HEAD)

    for header in ("plan", "re-entrains", "light box", "near low amplitude", "body clock"):
        comparison.add_column(header, no_wrap=header != "body clock")
    rows = [(name, result.outcome) for name, result in plan.alternatives.items()] + [("no plan", plan.baseline)]
    for name, outcome in rows:
        label = f"[bold]{strategy_name(name)}[/bold] ✓" if name == plan.strategy else strategy_name(name)
        comparison.add_row(label, settling(outcome), f"{outcome.box_minutes:.0f} min",
                           "yes" if outcome.near_low_amplitude else "no", escape(movement(outcome, plan.alternatives, name)))
    console.print(Panel(comparison, title="Advance, delay or no plan", title_align="left"))
    _print_recommendation(console, plan)
    console.print(f"  {plan.simulated:,} light schedules simulated")


def _print_recommendation(console: Console, plan: TripPlanResult) -> None:
    console.print(f"[bold]Recommended:[/bold] {escape(strategy_name(plan.strategy))} — {escape(plan.reason)}")
    if plan.success:
        console.print(f"[bold]Result:[/bold] {escape(plan.message)}")
    else:
        console.print(f"[bold yellow]Not reached:[/bold yellow] {escape(plan.message)}. This is the best plan "
                      "found; consider more preparation days, more light, or a longer stay.")


def run_trip(request: service.TripRequest, json_out: bool, files: PlanFiles = PlanFiles(),
             save: tuple[Path, bool] | None = None) -> None:
    """Plan a trip file and show or write the result (shared by ``trip`` and ``demo``); ``save`` = (file, force)
    writes a quick trip's scenario once it is valid."""
    prepared = service.prepare_trip(request)
    files.check()
    saved = None if save is None else str(service.save_trip_scenario(request.quick, save[0], force=save[1]))
    console = stderr_console()
    bar, update = progress_bar(console)
    long_work = request.robust or request.people or request.models
    if json_out or long_work:
        with (bar if long_work else contextlib.nullcontext()):
            outcome = service.plan_trip(request, update if long_work else None, prepared=prepared)
    else:
        with console.status(f"planning {escape(prepared[1].name)} with {escape(prepared[2].id)} …"):
            outcome = service.plan_trip(request, prepared=prepared)
    written = write_plan_files(outcome.document(), files)
    if json_out:
        emit_json(with_written(outcome.to_json(), written) | ({"saved_scenario": saved} if saved else {}))
        return
    if saved:
        console.print(f"scenario saved to {escape(saved)} (phaseplan check and trip accept it)")
    _print_trip(console, outcome)
    print_written(console, written)


def _print_trip(console: Console, outcome: service.TripOutcome) -> None:
    trip, plan = outcome.trip, outcome.plan
    _print_plan(console, trip, outcome.info, outcome.model, plan, outcome.views)
    _print_starting(console, outcome.start)
    if outcome.robust is not None:
        _print_robust(console, trip, outcome.robust, plan)
    elif outcome.request.robust:
        console.print("\n[bold]Robust plan:[/bold] none searched — the recommendation keeps home time, "
                      "with no light plan to make robust")
    if outcome.population is not None:
        _print_population(console, outcome.request.people, outcome.request.seed, outcome.population)
    if outcome.ensemble is not None:
        _print_ensemble(console, trip, outcome.ensemble)
    _print_sleepiness(console, outcome)
    print_cautions(console, cautions_for(), outcome.models_used)


def _print_sleepiness(console: Console, outcome: service.TripOutcome) -> None:
    if outcome.preparation_note is not None:
        console.print(f"[bold]Preparation days:[/bold] {escape(outcome.preparation_note['text'])}")
    sleepiest = [row for row in outcome.sleepiest_hours if row["start"]]
    if sleepiest:
        console.print("[bold]Sleepiest hours[/bold] (KSS 1-9, three-process model; a population forecast): " +
                      "; ".join(f"{row['date']} {row['kind']} {row['start'][11:16]}–{row['end'][11:16]} "
                                f"KSS {row['mean_kss']:.1f}" for row in sleepiest))


def _percent(value: float) -> str:
    return f"{100 * value:.0f} %"


def _days_range(stats: PlanStats) -> str:
    text = [("—" if not math.isfinite(v) else f"{v:.0f}") for v in (stats.days_p10, stats.days_median, stats.days_p90)]
    return " / ".join(text)


def _print_starting(console: Console, start: StartingPhase) -> None:
    rows = [("evidence", escape(start.description)),
            ("DLMO", f"[bold]{clock(start.dlmo_clock_h[0])}[/bold] home clock on the first planned day "
                     "(habits kept)")]
    rows += [("light log", escape(f.message)) for f in start.findings]
    print_facts(console, "Starting phase", rows)


def _population_table(rows: list[tuple[str, PlanStats]], caption: str) -> Table:
    table = Table(box=box.SIMPLE_HEAD, caption=caption, caption_justify="left")
    for header in ("plan", "re-entrained by stay end", "by day k", "days p10 / median / p90", "wrong way"):
        table.add_column(header, no_wrap=True)
    for name, stats in rows:
        table.add_row(escape(name), _percent(stats.probability_by_stay_end),
                      f"{_percent(stats.probability)} (k = {stats.by_day})", _days_range(stats),
                      _percent(stats.wrong_direction))
    return table


def _print_population(console: Console, people: int, seed: int, population) -> None:
    stats, starting = population
    labels = {"recommended": "recommended (average person)", "robust": "robust", "no_plan": "no plan"}
    caption = (f"{people:,} simulated people (seed {seed}): intrinsic period and light sensitivity drawn per "
               f"person, starting phase from the evidence (extra SD {starting.phase_sd_h:g} h). Days after the "
               "arrival day until CBTmin stays within 1 h of the person's own target; — : that share does not "
               "re-entrain within the stay. wrong way: the clock moved the other way than intended.")
    table = _population_table([(labels.get(k, k), v) for k, v in stats.items()], caption)
    console.print(Panel(table, title="How likely the plan works", title_align="left"))


def _print_robust(console: Console, trip: Trip, result: RobustResult, plan: TripPlanResult) -> None:
    views = day_views(trip, result.outcome)
    console.print(_day_table(trip, views, f"Robust plan: {escape(strategy_name(result.strategy))}"))
    caption = (f"Scored over the search population of {result.people} simulated people; the robust plan "
               "maximises the share re-entrained by day k and penalises a clock moving the wrong way.")
    table = _population_table([("average-person plan", result.seed_search), ("robust plan", result.search)], caption)
    console.print(Panel(table, title="Robust plan beside the average-person plan", title_align="left"))
    if not result.improved:
        console.print("  the search found no plan that does better over the population than the average-person "
                      "plan: it is kept as the robust plan")
    console.print(f"  robust plan for the average person: {days_text(result.outcome.reentrainment_days)}, "
                  f"{result.outcome.box_minutes:.0f} min of light box; {result.simulated:,} person-schedules "
                  "simulated")


def _print_ensemble(console: Console, trip: Trip, ensemble: EnsembleResult) -> None:
    table = Table(box=box.SIMPLE_HEAD)
    for header in ("model", "starting DLMO", "re-entrains", "body clock"):
        table.add_column(header, no_wrap=header != "body clock")
    for member in ensemble.members:
        outcome = member.outcome
        settles = (f"held within {outcome.max_away_error_h:.1f} h of home time" if outcome.aim == "home"
                   else days_text(outcome.reentrainment_days))
        table.add_row(escape(member.model.id), clock(member.starting.dlmo_clock_h[0]), settles,
                      escape(movement(outcome, {})))
    console.print(Panel(table, title="The recommended plan under each model", title_align="left"))
    if ensemble.disagreements:
        for note in ensemble.disagreements:
            console.print(f"  [yellow]models disagree:[/yellow] {escape(note)}")
    else:
        console.print("  the models agree within 1 h on every day's CBTmin and on the days to re-entrain")


ScenarioArgument = Annotated[str | None, typer.Argument(metavar="[FILE]", help=(
    "Trip scenario file (.toml, kind = \"trip\"); or leave it out and give --from, --to, --depart, --arrive."))]


@app.command("trip", help=(
    "Plan light and sleep for a trip across time zones: a day-by-day table on the local clock, the advance, "
    "delay and no-plan comparison, the recommendation and the cautions."))
def trip_command(path: ScenarioArgument = None, strategy: StrategyOption = StrategyChoice.auto,
                 model_name: TripModelOption = None,
                 people: PeopleOption = 0, seed: SeedOption = 0, robust: RobustOption = False,
                 models_list: ModelsOption = None, by_day: ByDayOption = None, json_out: JsonOption = False,
                 ics: IcsOption = None, report: ReportOption = None, chart: ChartOption = None,
                 force: ForceOption = False, alarm_minutes: AlarmOption = DEFAULT_ALARM_MINUTES,
                 no_alarms: NoAlarmsOption = False, alarm_for: AlarmKindsOption = DEFAULT_ALARM_FOR,
                 paper: PaperOption = "A4", origin: FromOption = None, destination: ToOption = None,
                 depart: DepartOption = None, arrive: ArriveOption = None, stay: StayOption = None,
                 sleep: SleepOption = None, prepare: PrepareOption = None, save: SaveOption = None) -> None:
    """Plan a trip scenario or a quick trip (help text on the decorator)."""
    quick = quick_trip(path, origin, destination, depart, arrive, stay, sleep, prepare, model_name, save, force)
    request = service.TripRequest(path or "", StrategyChoice(strategy).value, model_name, people, seed, robust,
                                  model_list(models_list), by_day, quick=quick)
    run_trip(request, json_out, PlanFiles(ics, report, chart, force, alarm_minutes, no_alarms,
                                          alarm_kinds=alarm_kinds(alarm_for), paper=paper),
             save=None if save is None else (save, force))


@app.command("demo", help=(
    "Plan a built-in demo trip (invented traveller) exactly as 'trip' does, or a demo roster (invented crew) "
    f"as 'roster' does; without NAME the {DEFAULT_DEMO} trip. --list names the demos."))
def demo(
    name: Annotated[str | None, typer.Argument(metavar="[NAME]", help="Demo trip or roster name (see --list).")] = None,
    strategy: StrategyOption = StrategyChoice.auto,
    model_name: TripModelOption = None,
    people: PeopleOption = 0,
    seed: SeedOption = 0,
    robust: RobustOption = False,
    models_list: ModelsOption = None,
    by_day: ByDayOption = None,
    list_demos: Annotated[bool, typer.Option("--list", metavar="", help="List the demo trips and exit.")] = False,
    json_out: JsonOption = False,
    ics: IcsOption = None,
    report: ReportOption = None,
    chart: ChartOption = None,
    force: ForceOption = False,
    alarm_minutes: AlarmOption = DEFAULT_ALARM_MINUTES,
    no_alarms: NoAlarmsOption = False,
    alarm_for: AlarmKindsOption = DEFAULT_ALARM_FOR,
    paper: PaperOption = "A4",
) -> None:
    """Run a demo trip or roster (help text on the decorator)."""
    if list_demos:
        _list_demos(json_out)
        return
    chosen = service.demo(name)
    files = PlanFiles(ics, report, chart, force, alarm_minutes, no_alarms, alarm_kinds=alarm_kinds(alarm_for),
                      paper=paper)
    if chosen.kind == "roster":
        if StrategyChoice(strategy) != StrategyChoice.auto:
            raise InputError(f"--strategy {StrategyChoice(strategy).value} is for trips; plan a roster with "
                             f"'phaseplan roster {chosen.path} --strategy nights|compromise|day'", field="--strategy")
        if by_day is not None:
            raise InputError("--by-day is for trips (days after arrival); a roster has no arrival", field="--by-day")
        # --people draws that many workers, as 'roster --workers' does; --robust and --models work alike.
        run_roster(service.RosterRequest(str(chosen.path), "auto", people, seed, model_name, None, robust,
                                         model_list(models_list), command="demo"), json_out, files)
        return
    run_trip(service.TripRequest(str(chosen.path), StrategyChoice(strategy).value, model_name, people, seed, robust,
                                 model_list(models_list), by_day, command="demo"), json_out, files)


def _list_demos(json_out: bool) -> None:
    found = service.demos()
    if json_out:
        emit_json({"command": "demo", "demos": [{"name": d.name, "kind": d.kind, "path": str(d.path)} for d in found]})
        return
    console = stderr_console()
    for d in found:
        console.print(f"  [bold]{escape(d.name)}[/bold]  {d.kind}  {escape(str(d.path))}")
