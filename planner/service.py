"""The use cases of phaseplan, as plain functions every front end calls.

The command line (:mod:`planner.cli`) and the web app parse their input into a request, call one
of these functions and render what comes back; none of them knows a file format beyond paths, and
none holds science. Each use case takes a validated request and returns a result object:

- :func:`check_file` — every problem of a trip, roster or model file, or a summary of it
  (:class:`CheckReport`);
- :func:`plan_trip` — a trip planned from its scenario file (:class:`TripOutcome`);
- :func:`plan_roster` — the drafts of a roster planned and ranked (:class:`RosterOutcome`);
- :func:`prc` — a phase response curve (:class:`PrcOutcome`);
- :func:`describe_model` — a parameter set with its computed properties (:class:`ModelDescription`);
- :func:`plan_calendars`, :func:`plan_report`, :func:`plan_chart`, :func:`publish_calendar` — a planned
  outcome's document as calendar files, printable report and chart, and its calendar sent to CalDAV;
- :func:`find_places` — places by name from the offline gazetteer (:class:`PlacesOutcome`).

A trip may come from a file or from a few facts (:func:`planner.trips.quick.quick_trip_scenario`, given as
``TripRequest.quick``); a roster from a TOML file or from spreadsheets (``RosterRequest.path`` a tuple of
``.xlsx``/``.csv`` files).

Long work reports progress through an optional callback ``progress(label, done, total)``.
Bad input raises :class:`planner.errors.InputError` (front ends: exit 2, HTTP 422), a computation
that cannot give a trustworthy result :class:`planner.errors.ComputationError`.
"""

from __future__ import annotations

import threading
from collections.abc import Callable, Mapping, Sequence
from dataclasses import dataclass, field
from datetime import date, timezone
from pathlib import Path
from typing import Any, Literal

from planner.engine.entrainment import (
    DEFAULT_DAY,
    REFERENCE_MIDNIGHT,
    EntrainmentResult,
    FreeRunResult,
    entrain,
    free_running_period,
    guess_state,
)
from planner.engine.integrate import model_batch_size, simulate
from planner.engine.parameters import ModelSpec, available_models, load_model
from planner.engine.prc import DEFAULT_MEASURE_AFTER_DAYS, PRCSummary, PulseResponse, phase_response_curve, summarise
from planner.engine.validation import (
    ENGINE_CHECKS,
    optimistic_preparation,
    preparation_note,
    recommended_default,
    validate,
)
from planner.errors import InputError
from planner.outputs import write_atomic
from planner.plans.caldav import PublishResult
from planner.plans.caldav import publish as caldav_publish
from planner.plans.document import PlanDocument
from planner.scenariofile import DEFAULT_MODEL
from planner.plans.entries import citation_entry, clock, model_entry, number, pattern_entry, problem_entry
from planner.plans.ics import DEFAULT_ALARM_MINUTES, calendar_bytes, calendars_by_group
from planner.rosters import export as roster_export
from planner.rosters.model import Roster
from planner.rosters.scenario import RosterInfo, builtin_roster_paths, load_roster
from planner.rosters.sheet import is_sheet_path, load_roster_sheets, template_workbook
from planner.rosters.search import DraftResult, RosterEnsemble, RosterResult, roster_ensemble
from planner.rosters.search import plan_roster as search_roster
from planner.rosters.validation import ROSTER_CHECKS
from planner.rosters.views import CrewPlan, RosterDayView, crew_plans, document_from_roster
from planner.tomlfile import InputFileError, Problem, read_toml
from planner.trips import export as trip_export
from planner.trips.document import document_from_trip
from planner.trips.evidence import StartingPhase, person_model, starting_phase
from planner.trips.model import Trip
from planner.trips.quick import QuickTrip, load_quick_trip
from planner.trips.robust import EnsembleResult, PlanStats, RobustResult, model_ensemble, population_report, robust_plan
from planner.trips.scenario import DEFAULT_DEMO, ScenarioInfo, builtin_scenario_paths, demo_path, load_trip
from planner.trips.search import TripPlanResult
from planner.trips.sleepiness import trip_sleepiest
from planner.trips.search import plan_trip as search_trip
from planner.trips.views import DayView, day_views, shorter_way
from planner.world.daylight import SKIES, DayProfile, day_profile, load_daylight_model
from planner.world.light import DEFAULT_EXPOSURE
from planner.world.gazetteer import NamedPlace, PlaceMatch, gazetteer_source, picking_queries, resolve_place, search_places
from planner.world.lightlog import read_light_log
from planner.world.localtime import zone

#: ``progress(label, done, total)``: called as long work goes on.
ProgressCallback = Callable[[str, int, int], None]

#: Constant light levels at which :func:`describe_model` reports the free-running period [lux].
FREE_RUN_LEVELS_LUX = (0.0, 10.0)


def load_checked_model(name: str) -> ModelSpec:
    """A built-in model, or a model file whose values keep the oscillator finite through a week of ordinary days.

    A user's parameter file can pass every unit and sign rule and still make the oscillator blow up; that is
    bad input, reported against the file (exit 2), not a failed computation found minutes into a plan.
    """
    model = load_model(name)
    if name in available_models():
        return model
    midnight = REFERENCE_MIDNIGHT.replace(tzinfo=timezone.utc)
    week = simulate(model, DEFAULT_DAY.schedule(midnight, 7), guess_state(model, 4.0, model_batch_size(model)))
    if not week.success:
        raise InputError("with these parameter values the oscillator's state becomes non-finite within a week of "
                         "ordinary days; check the values against the published set", source=model.path,
                         field="parameters")
    return model


def _report(progress: ProgressCallback | None, label: str, done: int, total: int) -> None:
    if progress is not None:
        progress(label, done, total)


def model_names(names: Sequence[str]) -> tuple[str, ...]:
    """Model ids or files for an ensemble, each checked (InputError naming the valid ids), duplicates dropped."""
    cleaned = [name.strip() for name in names if name.strip()]
    if not cleaned:
        raise InputError("give one or more model ids separated by commas, e.g. forger1999,jewett1999,hannay2019",
                         field="--models")
    for name in cleaned:
        load_checked_model(name)
    return tuple(dict.fromkeys(cleaned))


# --------------------------------------------------------------------------- check

FileKind = Literal["trip", "roster", "model"]


@dataclass(frozen=True)
class CheckReport:
    """What :func:`check_file` found.

    Attributes
    ----------
    path : str
    kind : {"trip", "roster", "model"} or None
        None when the file could not be read as TOML at all.
    problems : tuple of Problem
        Every problem, each with file, field and line; empty when the file is valid.
    summary : dict or None
        A short description of a valid file (see :mod:`planner.trips.export`, :mod:`planner.rosters.export`).
    """

    path: str
    kind: FileKind | None
    problems: tuple[Problem, ...] = ()
    summary: dict[str, Any] | None = None

    @property
    def valid(self) -> bool:
        return not self.problems

    def to_json(self) -> dict[str, Any]:
        return {"command": "check", "kind": self.kind, "valid": self.valid,
                "problems": [problem_entry(p) for p in self.problems], "summary": self.summary}


def file_kind(path: str | Path) -> FileKind:
    """The kind of an input file: a model file names its ``equations``, a scenario its ``kind`` (default trip).

    Raises
    ------
    InputFileError
        When the file cannot be read or is not TOML.
    """
    if is_sheet_path(path):
        return "roster"
    data, _ = read_toml(path)
    if isinstance(data, dict) and "kind" not in data and "equations" in data:
        return "model"
    return "roster" if isinstance(data, dict) and data.get("kind") == "roster" else "trip"


def _scenario_model(name: str, source: str, field: str = "model") -> tuple[ModelSpec | None, list[Problem]]:
    """The model a scenario names, loaded and checked once, or the problems that stop it (model None)."""
    try:
        return load_checked_model(name), []
    except InputFileError as exc:
        return None, list(exc.problems)
    except InputError as exc:
        return None, [Problem(exc.source or source, exc.field or field, exc.message)]


def _check_trip(path: str) -> CheckReport:
    try:
        trip, info = load_trip(path)
    except InputFileError as exc:
        return CheckReport(path, "trip", tuple(exc.problems))
    _, problems = _scenario_model(info.model, path)
    person = info.person
    if not problems and person.light_log is not None:
        try:
            read_light_log(person.light_log, person.light_log_time_zone or trip.home.zone)
        except InputError as exc:
            problems = [Problem(exc.source or path, exc.field or "person.light_log", exc.message)]
    if problems:
        return CheckReport(path, "trip", tuple(problems))
    return CheckReport(path, "trip", (), trip_export.check_summary(trip, info))


def load_any_roster(path: str | Sequence[str]) -> tuple[Roster, RosterInfo]:
    """A roster from a TOML file, or from one or more spreadsheets (``.xlsx``, ``.csv``; each sheet a draft).

    Raises
    ------
    InputError
        Several files that are not all spreadsheets (a TOML roster holds its drafts itself).
    InputFileError
        Every problem of the file(s).
    """
    paths = [path] if isinstance(path, (str, Path)) else list(path)
    if not paths:
        raise InputError("give a roster file (.toml) or spreadsheets (.xlsx, .csv)", field="roster")
    if all(is_sheet_path(p) for p in paths):
        return load_roster_sheets(paths)
    if len(paths) > 1:
        raise InputError("several files are compared only as spreadsheets (.xlsx, .csv), each sheet a draft; "
                         "a roster .toml file holds its drafts itself", field="roster")
    return load_roster(paths[0])


def _check_roster(path: str) -> CheckReport:
    try:
        roster, info = load_any_roster(path)
    except InputFileError as exc:
        return CheckReport(path, "roster", tuple(exc.problems))
    model, problems = _scenario_model(info.model, path)
    if problems:
        return CheckReport(path, "roster", tuple(problems))
    return CheckReport(path, "roster", (), roster_export.check_summary(roster, info, model))


def _check_model(path: str) -> CheckReport:
    try:
        model = load_checked_model(path)
    except InputFileError as exc:
        return CheckReport(path, "model", tuple(exc.problems))
    except InputError as exc:
        return CheckReport(path, "model", (Problem(exc.source or path, exc.field or "", exc.message),))
    steady = entrain(model, DEFAULT_DAY)
    summary = {"kind": "model", **model_entry(model), "citation": model.citation,
               "doi": model.file.citation.doi or None, "parameters": len(model.file.parameters),
               "step_minutes": model.file.numerics.step_minutes, "entrains": bool(steady.success),
               "entrainment_message": steady.message,
               "entrained_cbtmin_clock": clock(steady.cbtmin_clock_h[0]),
               "entrained_dlmo_clock": clock(steady.dlmo_clock_h[0])}
    return CheckReport(path, "model", (), summary)


def check_file(path: str | Path) -> CheckReport:
    """Check a trip scenario, roster scenario or model parameter file.

    Every problem is collected with its file, field and line; a valid file gets a summary. A model
    file is also entrained to the default day, so values that make the oscillator misbehave are
    reported as a problem of the file rather than failing a later run.
    """
    path = str(path)
    try:
        kind = file_kind(path)
    except InputFileError as exc:
        return CheckReport(path, None, tuple(exc.problems))
    return {"trip": _check_trip, "roster": _check_roster, "model": _check_model}[kind](path)


# --------------------------------------------------------------------------- trips

@dataclass(frozen=True)
class TripRequest:
    """What to plan for a trip scenario file.

    Attributes
    ----------
    path : str
        The trip scenario file.
    strategy : {"auto", "advance", "delay"}
    model : str or None
        A built-in model id or a model file instead of the scenario's own.
    people : int
        Population size for the probability that the plan works (0: off).
    seed : int
        Seed of the population draw.
    robust : bool
        Also search a plan robust to who the traveller is.
    models : tuple of str
        Models to run the recommended plan under (empty: no ensemble).
    by_day : int or None
        Day after arrival by which re-entrainment counts as success.
    command : str
        Name of the front-end command, recorded in the JSON document.
    quick : QuickTrip or None
        A trip given by its facts instead of a file (:func:`planner.trips.quick.quick_trip_scenario`);
        ``path`` is then ignored.
    processes : int
        Processes for the advance and delay searches (:mod:`planner.engine.workers`): 1 = this
        process, 0 = one per core.  Same plans either way; worth it in a long-running program.
    """

    path: str
    strategy: Literal["auto", "advance", "delay"] = "auto"
    model: str | None = None
    people: int = 0
    seed: int = 0
    robust: bool = False
    models: tuple[str, ...] = ()
    by_day: int | None = None
    command: str = "trip"
    quick: QuickTrip | None = None
    processes: int = 1


@dataclass(frozen=True)
class TripOutcome:
    """A planned trip with everything its renderings need."""

    request: TripRequest
    trip: Trip
    info: ScenarioInfo
    model: ModelSpec
    start: StartingPhase
    plan: TripPlanResult
    views: list[DayView]
    robust: RobustResult | None = None
    population: tuple[dict[str, PlanStats], Any] | None = None
    ensemble: EnsembleResult | None = None
    #: The model over-predicts the gradual pre-flight advance: preparation days are optimistic
    #: (:func:`planner.engine.validation.preparation_note`); None otherwise.
    preparation_note: dict | None = None
    #: The sleepiest awake hour of each travel and arrival day (:mod:`planner.trips.sleepiness`).
    sleepiest_hours: tuple = ()

    @property
    def models_used(self) -> list[ModelSpec]:
        members = self.ensemble.members if self.ensemble else []
        return [self.model] + [m.model for m in members if m.model.id != self.model.id]

    def document(self) -> PlanDocument:
        """The plan as a planner-neutral document (calendars, report, chart)."""
        return document_from_trip(self.trip, self.info, self.plan, self.views, population=self.population)

    def to_json(self) -> dict[str, Any]:
        """The JSON document of ``phaseplan trip --json`` (without ``schema_version``)."""
        trip, request = self.trip, self.request
        document = trip_export.trip_document(request.command, trip, self.info, self.model, self.plan, self.views)
        document["citations"] = [citation_entry(m) for m in self.models_used]
        document["starting_phase"] = trip_export.starting_entry(self.start)
        document["population"] = trip_export.population_entry(trip, request.people, request.seed, self.info.person,
                                                               self.population)
        document["robust"] = trip_export.robust_entry(trip, self.robust, self.plan)
        document["ensemble"] = trip_export.ensemble_entry(trip, self.ensemble)
        document["preparation_days_note"] = self.preparation_note
        document["sleepiest_hours"] = list(self.sleepiest_hours)
        document["cautions"] = document.pop("cautions")
        return document


def _population_plans(plan: TripPlanResult, robust_result: RobustResult | None) -> dict:
    """The plans a population run reports: the recommendation, the robust plan, no plan."""
    chosen = plan.recommended.outcome
    intended = plan.strategy if plan.strategy in ("advance", "delay") else "none"
    named = {"recommended": (chosen.plan, intended, chosen.aim)}
    if robust_result is not None:
        named["robust"] = (robust_result.plan, robust_result.strategy, "route")
    shorter = shorter_way(plan.alternatives)
    named["no_plan"] = (plan.baseline.plan, shorter[0] if shorter else intended, "route")
    return named


def prepare_trip(request: TripRequest) -> tuple[Trip, ScenarioInfo, ModelSpec, StartingPhase]:
    """Load and check everything a trip plan needs before any search: the file, the model(s), the start."""
    trip, info = load_quick_trip(request.quick) if request.quick is not None else load_trip(request.path)
    base_model = load_checked_model(request.model or info.model)
    if request.models:
        model_names(request.models)
    try:
        start = starting_phase(trip, base_model, info.person)
    except InputError as exc:   # the scenario's [person] table: name the file
        if exc.source is None:
            raise InputError(exc.message, source=info.path, field=exc.field) from None
        raise
    return trip, info, base_model, start


def save_trip_scenario(quick: QuickTrip, path: str | Path, *, force: bool = False) -> Path:
    """Write a quick trip as a trip scenario file (atomically; an existing file only with ``force``)."""
    return write_atomic(path, quick.text(), force=force)


def plan_trip(request: TripRequest, progress: ProgressCallback | None = None, *,
              prepared: tuple[Trip, ScenarioInfo, ModelSpec, StartingPhase] | None = None) -> TripOutcome:
    """Plan a trip scenario: the recommended plan, and the population, robust and ensemble runs asked for.

    ``prepared`` is what :func:`prepare_trip` returned, for a front end that checks the input first.
    """
    trip, info, base_model, start = prepared or prepare_trip(request)
    evidence = info.person
    model = person_model(base_model, evidence)
    _report(progress, "planning", 0, 1)
    plan = search_trip(trip, model, request.strategy, initial_state=start.state, processes=request.processes)
    _report(progress, "planning", 1, 1)
    views = day_views(trip, plan.recommended.outcome)
    robust_result = population = ensemble = None
    if request.robust:
        robust_result = robust_plan(trip, base_model, plan, evidence=evidence, seed=request.seed,
                                    by_day=request.by_day, progress=progress)
    if request.people:
        stats, starting, _ = population_report(trip, base_model, _population_plans(plan, robust_result),
                                               size=request.people, seed=request.seed, evidence=evidence,
                                               by_day=request.by_day, progress=progress)
        population = (stats, starting)
    if request.models:
        _report(progress, "model ensemble", 0, 1)
        ensemble = model_ensemble(trip, plan.recommended.outcome.plan, model_names(request.models),
                                  aim=plan.recommended.outcome.aim, evidence=evidence)
        _report(progress, "model ensemble", 1, 1)
    return TripOutcome(request, trip, info, model, start, plan, views, robust_result, population, ensemble,
                       preparation_note(trip.preparation_days, model),
                       tuple(trip_sleepiest(trip, plan.recommended.outcome, model)))


# --------------------------------------------------------------------------- rosters

@dataclass(frozen=True)
class RosterRequest:
    """What to plan for a roster scenario file.

    Attributes
    ----------
    path : str or tuple of str
        A roster scenario file, or spreadsheets (see :func:`load_any_roster`).
    strategy : {"auto", "nights", "compromise", "day"}
    workers : int
        Simulated workers for the population spread (0: the average worker only).
    seed : int
    model : str or None
    draft : str or None
        The draft whose day-by-day plan is shown (default: the top-ranked).
    robust : bool
    models : tuple of str
    group : str or None
        A crew whose calendar alone is wanted (checked against the file).
    command : str
    rank_by : {"disruption", "sleepiness"}
        What drafts are ranked by.
    """

    path: str | tuple[str, ...]
    strategy: Literal["auto", "nights", "compromise", "day"] = "auto"
    workers: int = 0
    seed: int = 0
    model: str | None = None
    draft: str | None = None
    robust: bool = False
    models: tuple[str, ...] = ()
    group: str | None = None
    command: str = "roster"
    #: Refuse drafts that break the working-time rules instead of ranking them last.
    strict: bool = False
    rank_by: Literal["disruption", "sleepiness"] = "disruption"


@dataclass(frozen=True)
class RosterOutcome:
    """A planned roster with everything its renderings need."""

    request: RosterRequest
    roster: Roster
    info: RosterInfo
    model: ModelSpec
    result: RosterResult
    chosen: DraftResult
    views: list[RosterDayView]
    ensemble: RosterEnsemble | None = None
    crews: dict[str, CrewPlan] = field(default_factory=dict)

    @property
    def models_used(self) -> list[ModelSpec]:
        members = self.ensemble.members if self.ensemble else []
        return [self.model] + [m.model for m in members if m.model.id != self.model.id]

    def document(self) -> PlanDocument:
        return document_from_roster(self.roster, self.info, self.result, self.chosen, self.views, self.crews)

    def to_json(self) -> dict[str, Any]:
        """The JSON document of ``phaseplan roster --json`` (without ``schema_version``)."""
        request = self.request
        document = roster_export.roster_document(self.roster, self.info, self.model, self.result, self.chosen,
                                                 self.views, request.strategy, request.workers, request.seed)
        document["command"] = request.command
        document["robust"] = roster_export.robust_entry(self.chosen)
        document["ensemble"] = roster_export.ensemble_entry(self.roster, self.ensemble)
        document["crews"] = roster_export.crews_entry(self.roster, self.crews)
        document["citations"] = [citation_entry(m) for m in self.models_used]
        return document


def prepare_roster(request: RosterRequest) -> tuple[Roster, RosterInfo, ModelSpec]:
    """Load and check everything a roster plan needs before any search."""
    roster, info = load_any_roster(request.path)
    model = load_checked_model(request.model or info.model)
    if request.draft is not None and request.draft not in {d.name for d in roster.drafts}:
        allowed = ", ".join(f'"{d.name}"' for d in roster.drafts)
        raise InputError(f'no draft named "{request.draft}"; allowed: {allowed}', field="--draft")
    if request.group is not None and request.group not in {c.name for c in roster.crews}:
        allowed = ", ".join(f'"{c.name}"' for c in roster.crews) or "none (the file has no [[crews]])"
        raise InputError(f'no crew named "{request.group}"; allowed: {allowed}', field="--group")
    if request.models:
        model_names(request.models)
    return roster, info, model


def write_roster_template(path: str | Path, start: date | None = None, *, force: bool = False) -> Path:
    """An empty roster workbook to fill (:func:`planner.rosters.sheet.template_workbook`), written atomically."""
    if Path(path).suffix.lower() != ".xlsx":
        raise InputError("the template is a workbook; give a file name ending in .xlsx", field="--template")
    return write_atomic(path, template_workbook(start), force=force)


def plan_roster(request: RosterRequest, progress: ProgressCallback | None = None, *,
                prepared: tuple[Roster, RosterInfo, ModelSpec] | None = None) -> RosterOutcome:
    """Plan and rank every draft of a roster scenario; the chosen draft's day-by-day plan."""
    roster, info, model = prepared or prepare_roster(request)

    def searched(done: int, total: int, label: str) -> None:
        _report(progress, label, done, total)

    result = search_roster(roster, model, request.strategy, workers=request.workers, seed=request.seed,
                           robust=request.robust, strict=request.strict, progress=searched, rank_by=request.rank_by)
    chosen = roster_export.pick_draft(result, request.draft)
    ensemble = None
    if request.models:
        ensemble = roster_ensemble(roster, chosen, [load_checked_model(name) for name in model_names(request.models)])
    crews = crew_plans(roster, model, result, chosen)
    return RosterOutcome(request, roster, info, model, result, chosen, roster_export.draft_views(chosen), ensemble,
                         crews)


# --------------------------------------------------------------------------- places

@dataclass(frozen=True)
class PlacesOutcome:
    """Places matching a name, and the one a scenario's ``place =`` (or ``--from``) would use.

    Attributes
    ----------
    query : str
    matches : tuple of PlaceMatch
        Exact names, then alternate names, then names the query begins; each group largest first.
    chosen : NamedPlace or None
        What :func:`planner.world.gazetteer.resolve_place` gives; None when the name is ambiguous or unknown.
    reason : str or None
        Why nothing was chosen.
    """

    query: str
    matches: tuple[PlaceMatch, ...]
    chosen: NamedPlace | None
    reason: str | None

    def write(self) -> dict[int, str]:
        """Per place (by ``geonameid``) the query that picks it among the matches."""
        return picking_queries([m.place for m in self.matches])

    def to_json(self) -> dict[str, Any]:
        write = self.write()
        return {"command": "places", "query": self.query, "source": gazetteer_source(),
                "resolves_to": None if self.chosen is None else place_entry(self.chosen),
                "unresolved_reason": self.reason,
                "matches": [{**place_entry(m.place), "write": write[m.place.geonameid], "matched": m.matched}
                            for m in self.matches]}


def place_entry(place: NamedPlace) -> dict[str, Any]:
    """A gazetteer place as JSON."""
    return {"name": place.name, "country_code": place.country_code, "country": place.country,
            "admin1": place.admin1, "qualified": place.qualified, "latitude": place.latitude,
            "longitude": place.longitude, "time_zone": place.time_zone, "population": place.population,
            "geonameid": place.geonameid}


def find_places(query: str, limit: int = 10) -> PlacesOutcome:
    """Places by name (see :mod:`planner.world.gazetteer`).

    Raises
    ------
    UnknownPlaceError
        When no place has the name or a name beginning so.
    InputError
        For an empty query or a qualifier that is no country or state.
    """
    from planner.world.gazetteer import MIN_POPULATION, UnknownPlaceError

    matches = tuple(search_places(query, limit))
    if not matches:
        raise UnknownPlaceError(f'no place called "{query.strip()}" and none whose name begins so, in the '
                                f"gazetteer (towns of {MIN_POPULATION:,} people or more); check the spelling or "
                                "the country, or give latitude, longitude and time_zone instead")
    try:
        return PlacesOutcome(query, matches, resolve_place(query), None)
    except InputError as exc:
        if type(exc) is InputError:   # a bad qualifier: the query itself is wrong
            raise
        return PlacesOutcome(query, matches, None, exc.message)


# --------------------------------------------------------------------------- demos

@dataclass(frozen=True)
class Demo:
    name: str
    kind: Literal["trip", "roster"]
    path: Path


def demos() -> list[Demo]:
    """The built-in demo trips and rosters (invented travellers and crews), by name."""
    found = [Demo(key, "trip", p) for key, p in builtin_scenario_paths().items()]
    found += [Demo(key, "roster", p) for key, p in builtin_roster_paths().items()]
    return sorted(found, key=lambda d: d.name)


def demo(name: str | None = None) -> Demo:
    """A demo by name (default: the built-in demo trip); InputError listing the names when unknown."""
    rosters = builtin_roster_paths()
    if name in rosters:
        return Demo(name, "roster", rosters[name])
    return Demo(name or DEFAULT_DEMO, "trip", demo_path(name))


# --------------------------------------------------------------------------- plan files

#: pyplot keeps global state: charts and reports are drawn one at a time when front ends plan in threads.
_DRAWING = threading.Lock()


def plan_calendars(document: PlanDocument, *, alarm_minutes: float | None = DEFAULT_ALARM_MINUTES,
                   previous: Mapping[str | None, bytes] | None = None) -> dict[str | None, bytes]:
    """The plan's iCalendar files, one per worker group (key None: the whole plan, for a plan without groups).

    ``previous`` maps a group to its earlier export, whose SEQUENCE numbers are carried on (an event whose
    content changed gets SEQUENCE + 1), as ``--ics FILE --force`` does over an existing file.
    """
    found = {}
    groups = calendars_by_group(document)
    for group, events in groups.items():
        name = document.title if group is None else f"{document.title} — {group}"
        found[group] = calendar_bytes(document, events, name=name, alarm_minutes=alarm_minutes,
                                      previous=(previous or {}).get(group))
    return found


def plan_report(document: PlanDocument) -> str:
    """The printable, self-contained HTML report of a plan (as ``--report``)."""
    from planner.plans.report import report_html  # matplotlib only when asked for

    with _DRAWING:
        return report_html(document)


def plan_chart(document: PlanDocument, fmt: Literal["svg", "png"] = "svg") -> bytes:
    """The phase chart of a plan (as ``--chart``)."""
    from planner.plans.report import chart_bytes  # matplotlib only when asked for

    with _DRAWING:
        return chart_bytes(document, fmt)


def publish_calendar(data: bytes, url: str, *, user: str | None = None, password: str | None = None,
                     source: str = "calendar") -> PublishResult:
    """Publish a calendar written by :func:`plan_calendars` to a CalDAV collection (as ``phaseplan publish``)."""
    return caldav_publish(data, url, user=user, password=password, source=source)


# --------------------------------------------------------------------------- models and the PRC

@dataclass(frozen=True)
class ModelDescription:
    """A parameter set with its computed properties: free-running periods and entrainment to the default day."""

    model: ModelSpec
    free_runs: tuple[FreeRunResult, ...]
    steady: EntrainmentResult

    def to_json(self) -> dict[str, Any]:
        model, steady = self.model, self.steady
        rules = model.family.parameter_rules
        return {
            "command": "models show",
            "model": model_entry(model),
            "citation": {**model.file.citation.model_dump(), "text": model.citation},
            "parameters": {name: {**p.model_dump(), "meaning": rules[name].meaning if name in rules else None}
                           for name, p in model.file.parameters.items()},
            "markers": model.file.markers.model_dump(),
            "numerics": model.file.numerics.model_dump(),
            "validity": list(model.file.validity),
            "properties": {
                "free_running": [{"lux": run.lux, "period_h": number(run.period_h[0]), "cycles": run.cycles}
                                 for run in self.free_runs],
                "entrainment": {
                    "day": pattern_entry(DEFAULT_DAY),
                    "success": steady.success,
                    "message": steady.message,
                    "days_simulated": steady.days_simulated,
                    "cbtmin_clock_h": number(steady.cbtmin_clock_h[0]),
                    "cbtmin_clock": clock(steady.cbtmin_clock_h[0]),
                    "dlmo_clock_h": number(steady.dlmo_clock_h[0]),
                    "dlmo_clock": clock(steady.dlmo_clock_h[0]),
                },
            },
            "citations": [citation_entry(model)],
        }


def list_models() -> list[ModelSpec]:
    """The built-in parameter sets."""
    return [load_model(name) for name in available_models()]


def models_json(specs: Sequence[ModelSpec]) -> dict[str, Any]:
    return {"command": "models",
            "models": [{**model_entry(spec), "citation": {**spec.file.citation.model_dump(), "text": spec.citation}}
                       for spec in specs],
            "citations": [citation_entry(spec) for spec in specs]}


def describe_model(name: str) -> ModelDescription:
    """A built-in model id or model file, with its free-running periods and entrained phase on the default day."""
    model = load_checked_model(name)
    free_runs = tuple(free_running_period(model, lux) for lux in FREE_RUN_LEVELS_LUX)
    return ModelDescription(model, free_runs, entrain(model, DEFAULT_DAY))


@dataclass(frozen=True)
class PrcOutcome:
    """A phase response curve with its protocol and summary."""

    model: ModelSpec
    hours: float
    lux: float
    background: float
    step: float
    response: PulseResponse
    summary: PRCSummary

    @property
    def reference_clock_h(self) -> float:
        """Clock hour of the unpulsed control's CBTmin on the protocol day [h]."""
        return self.response.reference_cbtmin_h % 24.0

    def points(self) -> list[dict[str, Any]]:
        half, reference = self.hours / 2.0, self.reference_clock_h
        return [{"phase_h": float(phase), "shift_h": number(shift),
                 "pulse_start_clock": clock(reference + phase - half),
                 "pulse_end_clock": clock(reference + phase + half)}
                for phase, shift in zip(self.response.phases_h, self.response.shifts_h)]

    def to_json(self) -> dict[str, Any]:
        return {
            "command": "prc",
            "model": model_entry(self.model),
            "protocol": {
                "pulse_hours": self.hours, "pulse_lux": self.lux, "background_lux": self.background,
                "phase_step_h": self.step, "entrained_to": pattern_entry(DEFAULT_DAY),
                "measure_after_days": DEFAULT_MEASURE_AFTER_DAYS,
                "reference_cbtmin_clock_h": number(self.reference_clock_h),
                "reference_cbtmin_clock": clock(self.reference_clock_h),
            },
            "conventions": {
                "phase_h": "pulse centre in hours from the control's CBTmin; negative = before CBTmin",
                "shift_h": "phase shift of CBTmin in hours; positive = advance, negative = delay",
                "clock": "local clock on the protocol day, HH:MM",
            },
            "points": self.points(),
            "summary": {key: (number(value) if isinstance(value, float) else value)
                        for key, value in vars(self.summary).items()},
            "citations": [citation_entry(self.model)],
        }


def prc(model: str = DEFAULT_MODEL, *, hours: float = 6.7, lux: float = 10_000.0, background: float = 10.0,
        step: float = 1.0) -> PrcOutcome:
    """The single-pulse phase response curve of a model (protocol in :mod:`planner.engine.prc`)."""
    spec = load_checked_model(model)
    response = phase_response_curve(spec, duration_h=hours, lux=lux, background_lux=background, step_h=step)
    return PrcOutcome(spec, hours, lux, background, step, response, summarise(response))


__all__ = [
    "CheckReport", "Demo", "ModelDescription", "PrcOutcome", "ProgressCallback", "RosterOutcome", "RosterRequest",
    "TripOutcome", "TripRequest", "check_file", "demo", "demos", "describe_model", "file_kind", "list_models",
    "load_checked_model", "model_names", "models_json", "plan_calendars", "plan_chart", "plan_report",
    "plan_roster", "plan_trip", "prc", "prepare_roster", "prepare_trip", "publish_calendar",
]


# --------------------------------------------------------------------------- daylight and validation

def daylight_site(place: str | None, latitude: float | None, longitude: float | None,
                  time_zone: str | None) -> tuple[float, float, str, str | None]:
    """(latitude, longitude, time zone, place name) of ``phaseplan daylight``: a place by name, or all three facts.

    Raises
    ------
    InputError
        Neither or both given, or the name unknown or ambiguous (the candidates are listed).
    """
    facts = (latitude, longitude, time_zone)
    if place is not None:
        if any(f is not None for f in facts):
            raise InputError("give --place or --latitude, --longitude and --time-zone, not both", field="--place")
        found = resolve_place(place)
        return found.latitude, found.longitude, found.time_zone, found.name
    if any(f is None for f in facts):
        raise InputError("give --place NAME, or all of --latitude, --longitude and --time-zone", field="--place")
    return float(latitude), float(longitude), str(time_zone), None


def daylight_day(latitude: float, longitude: float, time_zone: str, day: str, *, skies: Sequence[str] = SKIES,
                 exposure: str = DEFAULT_EXPOSURE, step_minutes: float = 30.0) -> DayProfile:
    """Solar elevation and daylight at the eye through a local day (:func:`planner.world.daylight.day_profile`)."""
    try:
        when = date.fromisoformat(day)
    except ValueError:
        raise InputError(f"date {day!r} is not a date; give YYYY-MM-DD", field="--date") from None
    return day_profile(when, latitude, longitude, zone(time_zone), step_minutes=step_minutes, skies=skies,
                       exposure=exposure)


def daylight_json(profile: DayProfile, time_zone: str, name: str | None = None) -> dict[str, Any]:
    """The JSON document of ``phaseplan daylight --json`` (without ``schema_version``)."""
    model = load_daylight_model()
    return {
        "command": "daylight",
        "place": {"name": name, "latitude": profile.latitude, "longitude": profile.longitude, "time_zone": time_zone},
        "date": profile.day.isoformat(),
        "exposure": profile.exposure,
        "model": {"id": model.id, "citation": model.citation, "doi": model.doi},
        "rows": [{"time": t.isoformat(timespec="minutes"), "solar_elevation_deg": round(float(e), 2),
                  "lux": {s: round(float(values[k]), 1) for s, values in profile.lux.items()}}
                 for k, (t, e) in enumerate(zip(profile.times, profile.elevation_deg))],
        "conventions": {"lux": "illuminance at the eye (vertical plane, averaged over the directions faced) "
                               "[lux]; the sun's elevation is geometric, without refraction [deg]"},
    }


#: Every published check of the validation table, by key (engine protocols, then the night-work ones).
VALIDATION_CHECKS = {**ENGINE_CHECKS, **ROSTER_CHECKS}


@dataclass(frozen=True)
class ValidationOutcome:
    """The validation table: every model's checks and the model it recommends as the default."""

    validations: list
    recommended: str
    reason: str

    def to_json(self) -> dict[str, Any]:
        def entry(c) -> dict[str, Any]:
            return {"key": c.key, "quantity": c.quantity, "published": number(c.published),
                    "model": number(c.model), "band": [number(c.low), number(c.high)], "agrees": c.agrees,
                    "source": c.source, "note": c.note}

        return {"command": "models validate",
                "models": [{"model": v.model_id, "agreeing": v.agreeing, "checks_run": len(v.checks),
                            "success": v.success, "optimistic_preparation_days": optimistic_preparation(v),
                            "checks": [entry(c) for c in v.checks]} for v in self.validations],
                "recommended_default": {"model": self.recommended, "reason": self.reason},
                "current_default": DEFAULT_MODEL}


def validate_models(names: Sequence[str] = (), checks: Sequence[str] | None = None) -> ValidationOutcome:
    """Run the published checks (all, or those named) for the models named (default: every built-in one)."""
    names = list(names) or list(available_models())
    validations = [validate(load_checked_model(name), checks, VALIDATION_CHECKS) for name in names]
    recommended, reason = recommended_default(validations)
    return ValidationOutcome(validations, recommended, reason)
