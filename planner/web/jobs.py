"""Planning in worker threads, so pages stay responsive and two users planning at once both get answers.

A submitted scenario is checked first, in the request (:func:`check_scenario`: the problems of
``phaseplan check``, one line each, nothing stored). A valid one becomes a :class:`Job` run by a small
thread pool (:class:`JobRunner`): it plans through :mod:`planner.service`, renders the calendar(s), the
printable report and the chart, and stores scenario and result together (:mod:`planner.web.store`).
The job's progress (step, done of total) is what the waiting page shows.

The numerical work holds the interpreter lock part of the time only (numpy releases it in its loops), so
two plans run side by side share the cores; more workers than cores would only make each plan slower.
"""

from __future__ import annotations

import logging
import tempfile
import threading
from collections.abc import Iterator
from concurrent.futures import Future, ThreadPoolExecutor
from contextlib import contextmanager
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any

from planner import service
from planner.errors import InputError, PhaseplanError
from planner.plans.entries import SCHEMA_VERSION
from planner.web.forms import server_file_problems
from planner.web.store import PlanResult, PlanStore, new_id

LOGGER = logging.getLogger("planner.web")

#: Strategies each kind of plan accepts (as ``phaseplan trip|roster --strategy``).
STRATEGIES = {"trip": ("auto", "advance", "delay"), "roster": ("auto", "nights", "compromise", "day")}

#: Finished jobs kept in memory for their waiting pages (oldest dropped first).
KEPT_JOBS = 200


@contextmanager
def scenario_file(text: str | bytes, name: str) -> Iterator[Path]:
    """The scenario written to a private temporary folder as ``name``, removed afterwards."""
    with tempfile.TemporaryDirectory(prefix="phaseplan-web-") as folder:
        path = Path(folder) / Path(name).name
        if isinstance(text, bytes):
            path.write_bytes(text)
        else:
            path.write_text(text, encoding="utf-8")
        yield path


def _shown(line: str, path: Path, name: str) -> str:
    """A problem line naming the uploaded file as the user knows it, not its temporary copy."""
    return line.replace(str(path), name)


@dataclass(frozen=True)
class Checked:
    """A scenario that passed the check: its kind and a short summary."""

    kind: str
    summary: dict[str, Any]


def check_scenario(text: str | bytes, name: str) -> Checked | list[str]:
    """Check a scenario (TOML text, or a roster spreadsheet's bytes) as ``phaseplan check`` does; the problem
    lines, or what it is."""
    if isinstance(text, str):
        problems = server_file_problems(text, name, tuple(m.id for m in service.list_models()))
        if problems:
            return problems
    with scenario_file(text, name) as path:
        try:
            report = service.check_file(path)
        except InputError as exc:   # a file that cannot be read at all (``phaseplan check``: one error line)
            return [_shown(exc.one_line(), path, name)]
        lines = [_shown(problem.one_line(), path, name) for problem in report.problems]
    if lines:
        return lines
    if report.kind not in STRATEGIES:
        return [f"{name}: kind: a {report.kind} file cannot be planned; give a trip or roster scenario"]
    return Checked(report.kind, report.summary or {})


def option_problems(kind: str, options: dict[str, Any]) -> list[str]:
    allowed = STRATEGIES[kind]
    if options.get("strategy", "auto") not in allowed:
        return [f"form: strategy: {options.get('strategy')!r} is not a {kind} strategy; allowed: {', '.join(allowed)}"]
    return []


def plan_document(kind: str, text: str | bytes, name: str, options: dict[str, Any], progress=None) -> tuple[dict, Any]:
    """Plan a checked scenario through the service: (the JSON document of ``--json``, the outcome)."""
    with scenario_file(text, name) as path:
        try:
            if kind == "trip":
                request = service.TripRequest(str(path), options.get("strategy", "auto"), None,
                                              options.get("people", 0), options.get("seed", 0),
                                              options.get("robust", False), processes=0)   # a server: keep workers
                outcome = service.plan_trip(request, progress)
            else:
                request = service.RosterRequest(str(path), options.get("strategy", "auto"), options.get("people", 0),
                                                options.get("seed", 0), None, None, options.get("robust", False))
                outcome = service.plan_roster(request, progress)
        except InputError as exc:
            raise InputError(_shown(exc.one_line(), path, name)) from None
        document = {"schema_version": SCHEMA_VERSION, **outcome.to_json()}
    if isinstance(document.get("scenario"), dict) and "path" in document["scenario"]:
        document["scenario"]["path"] = name   # the temporary copy is gone; name the file as the user knows it
    return document, outcome


def render_result(document: dict, outcome, previous: dict[str, str] | None) -> PlanResult:
    """Calendars (SEQUENCE carried on from ``previous``), report and chart of a planned outcome."""
    plan = outcome.document()
    earlier = {(key or None): text.encode() for key, text in (previous or {}).items()}
    calendars = service.plan_calendars(plan, previous=earlier)
    return PlanResult(document, {(key or ""): data.decode() for key, data in calendars.items()},
                      service.plan_report(plan), service.plan_chart(plan, "svg"))


@dataclass
class Job:
    """One plan being made; its fields are what the waiting page shows."""

    id: str
    kind: str
    label: str
    state: str = "queued"            # queued, running, done, failed
    step: str = "waiting for a free worker"
    done: int = 0
    total: int = 0
    plan_id: str | None = None
    problems: list[str] = field(default_factory=list)
    document: dict | None = None

    def progress(self, label: str, done: int, total: int) -> None:
        self.step, self.done, self.total = label, done, total

    @property
    def finished(self) -> bool:
        return self.state in ("done", "failed")

    def to_json(self) -> dict[str, Any]:
        return {"id": self.id, "kind": self.kind, "state": self.state, "step": self.step, "done": self.done,
                "total": self.total, "plan_id": self.plan_id, "problems": self.problems}


@dataclass(frozen=True)
class Submission:
    """A checked scenario to plan and store."""

    kind: str
    label: str
    text: str | bytes                # a scenario's TOML, or a roster spreadsheet as uploaded
    name: str
    options: dict[str, Any]
    plan_id: str | None = None       # re-plan this saved plan (its result is replaced)
    form: dict[str, str] | None = None


class JobRunner:
    """A bounded pool of planning threads and the jobs it has run."""

    def __init__(self, store: PlanStore, workers: int = 2):
        self.store = store
        self._pool = ThreadPoolExecutor(max_workers=workers, thread_name_prefix="phaseplan-plan")
        self._jobs: dict[str, Job] = {}
        self._futures: dict[str, Future] = {}
        self._lock = threading.Lock()

    def submit(self, submission: Submission) -> Job:
        job = Job(new_id(), submission.kind, submission.label)
        with self._lock:
            self._jobs[job.id] = job
            for old in list(self._jobs)[:-KEPT_JOBS]:
                if self._jobs[old].finished:
                    del self._jobs[old]
                    self._futures.pop(old, None)
            self._futures[job.id] = self._pool.submit(self._run, job, submission)
        return job

    def get(self, job_id: str) -> Job | None:
        return self._jobs.get(job_id)

    def future(self, job_id: str) -> Future:
        return self._futures[job_id]

    def _run(self, job: Job, submission: Submission) -> Job:
        job.state, job.step = "running", "planning"
        try:
            document, outcome = plan_document(submission.kind, submission.text, submission.name, submission.options,
                                              job.progress)
            job.step = "drawing the chart and writing the calendar"
            previous = None
            if submission.plan_id is not None:
                saved = self.store.get(submission.plan_id)
                previous = saved.calendars if saved is not None else None
            result = render_result(document, outcome, previous)
            job.plan_id = self.store.save(submission.plan_id, submission.kind, submission.label, submission.text,
                                          result, name=submission.name, form=submission.form,
                                          options=submission.options)
            job.document = document
            job.state, job.step = "done", "done"
        except InputError as exc:
            job.problems = [exc.one_line()]
            job.state, job.step = "failed", "the scenario could not be planned"
        except PhaseplanError as exc:
            job.problems = [f"computation failed: {exc}"]
            job.state, job.step = "failed", "the computation failed"
        except Exception:   # a bug: logged with its traceback, the user sees one line
            LOGGER.exception("planning job %s failed", job.id)
            job.problems = ["internal error while planning; the server log has the details"]
            job.state, job.step = "failed", "internal error"
        return job

    def shutdown(self) -> None:
        self._pool.shutdown(wait=False, cancel_futures=True)
