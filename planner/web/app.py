"""The planning desk's routes: server-rendered pages, downloads and the JSON API.

Pages (every form carries a CSRF token, :mod:`planner.web.security`):

- ``/`` the saved plans; ``/trip`` the trip form; ``/roster`` the roster upload;
- ``/jobs/{id}`` a plan being made (progress; it forwards to the plan when done);
- ``/plans/{id}`` a saved plan: recommendation, chart, day agenda, comparison, cautions, downloads
  (``calendar.ics``, ``report.html``, ``scenario.toml``, ``plan.json``), CalDAV publish, edit and re-plan,
  duplicate, delete.

API: ``POST /api/plan`` with a trip or roster scenario (``Content-Type: application/toml``) answers with the
JSON document of ``phaseplan trip|roster --json`` (200), or 422 with ``problems``, the lines of
``phaseplan check``; ``GET /healthz`` answers 200. Everything is planned through :mod:`planner.service`.
"""

from __future__ import annotations

import asyncio
import json
from dataclasses import dataclass
from pathlib import Path
from typing import Any

import jinja2
from starlette.applications import Starlette
from starlette.concurrency import run_in_threadpool
from starlette.datastructures import UploadFile
from starlette.exceptions import HTTPException
from starlette.requests import Request
from starlette.responses import HTMLResponse, JSONResponse, PlainTextResponse, RedirectResponse, Response
from starlette.routing import Mount, Route
from starlette.staticfiles import StaticFiles

from planner import service
from planner._version import __version__
from planner.errors import InputError
from planner.web import forms
from planner.web.jobs import Checked, JobRunner, Submission, check_scenario, option_problems
from planner.web.security import DEFAULT_UPLOAD_LIMIT, SESSION_COOKIE, FormTokens, Guard
from planner.web.store import PlanStore

HERE = Path(__file__).resolve().parent
#: Scenario files the roster page accepts: a roster file, or a spreadsheet (README "Roster spreadsheets").
ROSTER_SUFFIXES = (".toml", ".xlsx", ".csv")
#: Places offered while typing a place's name.
PLACE_SUGGESTIONS = 8
#: Parts of a multipart form accepted (files and fields).
MAX_FORM_PARTS = 200


@dataclass(frozen=True)
class Settings:
    """How one server runs.

    Attributes
    ----------
    data : Path
        Folder of the saved plans (``plans.sqlite3``).
    token : str or None
        Access token every request must carry (required off loopback).
    upload_limit : int
        Largest request body [bytes].
    workers : int
        Planning threads.
    """

    data: Path
    token: str | None = None
    upload_limit: int = DEFAULT_UPLOAD_LIMIT
    workers: int = 2


def _templates() -> jinja2.Environment:
    environment = jinja2.Environment(loader=jinja2.FileSystemLoader(HERE / "templates"), autoescape=True,
                                     undefined=jinja2.StrictUndefined, trim_blocks=True, lstrip_blocks=True)
    environment.filters["hm"] = lambda iso: "" if not iso else str(iso)[11:16]
    environment.filters["day"] = lambda iso: "" if not iso else str(iso)[:10]
    environment.filters["hours"] = lambda value: "—" if value is None else f"{value:+.1f} h"
    environment.filters["num"] = lambda value, digits=1: "—" if value is None else f"{value:.{digits}f}"
    environment.filters["pretty"] = lambda value: json.dumps(value, indent=2, ensure_ascii=False)
    return environment


class Desk:
    """The state of one server: saved plans, the planning pool, form tokens, templates."""

    def __init__(self, settings: Settings):
        self.settings = settings
        self.store = PlanStore(settings.data)
        self.jobs = JobRunner(self.store, settings.workers)
        self.tokens = FormTokens()
        self.templates = _templates()
        self.models = tuple(model.id for model in service.list_models())
        self.demo_rosters = [d for d in service.demos() if d.kind == "roster"]

    # ------------------------------------------------------------------ rendering helpers

    def page(self, request: Request, template: str, status: int = 200, **context: Any) -> HTMLResponse:
        session = request.cookies.get(SESSION_COOKIE) or FormTokens.new_session()
        html = self.templates.get_template(template).render(
            csrf=self.tokens.token(session), version=__version__, models=self.models, gazetteer=True,
            roster_accept=",".join(ROSTER_SUFFIXES),
            roster_formats='A roster scenario file (.toml, kind = "roster") or a roster spreadsheet (.xlsx, or .csv '
                           'as UTF-8; see the README on roster spreadsheets)',
            upload_limit_text=f"{self.settings.upload_limit / 1024 / 1024:g} MB", **context)
        response = HTMLResponse(html, status_code=status)
        if request.cookies.get(SESSION_COOKIE) != session:
            response.set_cookie(SESSION_COOKIE, session, httponly=True, samesite="strict")
        return response

    def refused(self, request: Request, status: int, title: str, lines: list[str]) -> HTMLResponse:
        return self.page(request, "message.html", status, title=title, lines=lines)

    async def form(self, request: Request):
        """The submitted form, or None after answering 403 when its CSRF token is missing or wrong."""
        try:
            data = await request.form(max_files=4, max_fields=MAX_FORM_PARTS,
                                      max_part_size=self.settings.upload_limit)
        except HTTPException as exc:
            raise _Refused(400, "The form could not be read", [f"form: {exc.detail}"]) from None
        if not self.tokens.valid(request.cookies.get(SESSION_COOKIE), data.get("csrf")):
            raise _Refused(403, "The form's security token is missing or out of date",
                           ["form: csrf: missing or invalid form token; nothing was saved. Reload the page and "
                            "submit the form again."])
        return data

    def saved(self, plan_id: str):
        plan = self.store.get(plan_id)
        if plan is None:
            raise _Refused(404, "No such plan", [f"plan {plan_id}: not found (deleted, or never saved here)"])
        return plan


class _Refused(Exception):
    def __init__(self, status: int, title: str, lines: list[str]):
        self.status, self.title, self.lines = status, title, lines


# ---------------------------------------------------------------------- pages

async def index(request: Request):
    desk: Desk = request.app.state.desk
    plans = await run_in_threadpool(desk.store.list)
    return desk.page(request, "index.html", plans=plans)


async def trip_form(request: Request):
    desk: Desk = request.app.state.desk
    return desk.page(request, "trip.html", values=dict(forms.TRIP_DEFAULTS), problems=[], plan_id=None,
                     busy_rows=range(1, forms.BUSY_ROWS + 1))


async def trip_submit(request: Request):
    desk: Desk = request.app.state.desk
    data = await desk.form(request)
    values = forms.form_values(data)
    plan_id = data.get("plan_id") or None
    if plan_id is not None:
        desk.saved(plan_id)
    text, problems = forms.trip_toml(values)
    options = forms.planning_options(values, problems)
    problems += option_problems("trip", options)
    if not problems:
        checked = await run_in_threadpool(check_scenario, text, "trip.toml")
        problems = checked if isinstance(checked, list) else []
    if problems:
        return desk.page(request, "trip.html", 422, values=values, problems=problems, plan_id=plan_id,
                         busy_rows=range(1, forms.BUSY_ROWS + 1))
    job = desk.jobs.submit(Submission("trip", values["label"] or "untitled trip", text, "trip.toml", options,
                                      plan_id, values))
    return RedirectResponse(f"/jobs/{job.id}", status_code=303)


async def roster_form(request: Request):
    desk: Desk = request.app.state.desk
    return desk.page(request, "roster.html", problems=[], demos=desk.demo_rosters, plan_id=None, text="", uploaded=None,
                     options={"strategy": "auto", "people": 0, "seed": 0, "robust": False})


async def _upload_text(upload: UploadFile) -> tuple[str, str | bytes]:
    """(file name, TOML text or spreadsheet bytes) of an uploaded roster; InputError when it cannot be read."""
    name = Path(upload.filename or "upload.toml").name
    suffix = Path(name).suffix.lower()
    if suffix not in ROSTER_SUFFIXES:
        raise InputError(f"unsupported file type {suffix or '(none)'}; allowed: {', '.join(ROSTER_SUFFIXES)}",
                         source=name)
    data = await upload.read()
    if not data:
        raise InputError("unreadable upload: the file is empty", source=name)
    if suffix != ".toml":
        return name, data   # the spreadsheet reader reports what it cannot read, cell by cell
    try:
        return name, data.decode("utf-8")
    except UnicodeDecodeError:
        raise InputError("unreadable upload: not UTF-8 text (a roster scenario is a TOML text file)",
                         source=name) from None


async def roster_submit(request: Request):
    desk: Desk = request.app.state.desk
    data = await desk.form(request)
    plan_id = data.get("plan_id") or None
    if plan_id is not None:
        desk.saved(plan_id)
    problems: list[str] = []
    options = forms.planning_options(data, problems)
    options_problems = option_problems("roster", options)
    upload, demo_name, text, name = data.get("file"), data.get("demo") or "", data.get("text") or "", "roster.toml"
    try:
        if isinstance(upload, UploadFile) and upload.filename:
            name, text = await _upload_text(upload)
        elif demo_name:
            chosen = {d.name: d for d in desk.demo_rosters}.get(demo_name)
            if chosen is None:
                raise InputError(f"no demo roster {demo_name!r}", field="demo")
            name, text = chosen.path.name, chosen.path.read_text(encoding="utf-8")
    except InputError as exc:
        problems.append(exc.one_line())
    if isinstance(text, str) and not text.strip() and not problems:
        problems.append("form: give a roster scenario: upload a file, pick a demo roster or paste its TOML")
    problems += options_problems
    checked = None
    if not problems:
        checked = await run_in_threadpool(check_scenario, text, name)
        problems = checked if isinstance(checked, list) else []
    if not problems and isinstance(checked, Checked) and checked.kind != "roster":
        problems = [f"{name}: kind: this is a {checked.kind} scenario; plan it on the trip page or with POST /api/plan"]
    if problems:
        return desk.page(request, "roster.html", 422, problems=problems, demos=desk.demo_rosters, plan_id=plan_id,
                         text=text if isinstance(text, str) else "", uploaded=None, options=options)
    label = (forms.scenario_label(text) if isinstance(text, str) else "") or name
    job = desk.jobs.submit(Submission("roster", label, text, name, options, plan_id))
    return RedirectResponse(f"/jobs/{job.id}", status_code=303)


async def job_page(request: Request):
    desk: Desk = request.app.state.desk
    job = desk.jobs.get(request.path_params["job_id"])
    if job is None:
        raise _Refused(404, "No such planning job", ["job: not found (the server was restarted, or it is old); "
                                                     "saved plans are listed on the start page"])
    if job.state == "done":
        return RedirectResponse(f"/plans/{job.plan_id}", status_code=303)
    return desk.page(request, "job.html", 422 if job.state == "failed" else 200, job=job)


async def job_json(request: Request):
    job = request.app.state.desk.jobs.get(request.path_params["job_id"])
    if job is None:
        return JSONResponse({"error": "no such job"}, status_code=404)
    return JSONResponse(job.to_json())


async def plan_page(request: Request):
    desk: Desk = request.app.state.desk
    plan = desk.saved(request.path_params["plan_id"])
    if plan.document is None:
        raise _Refused(404, "Not planned yet", [f"plan {plan.id}: has no result; edit and plan it again"])
    crews = sorted(key for key in (plan.calendars or {}) if key)
    template = "trip_plan.html" if plan.kind == "trip" else "roster_plan.html"
    return desk.page(request, template, plan=plan, doc=plan.document, crews=crews,
                     published=request.query_params.get("published"))


async def plan_edit(request: Request):
    desk: Desk = request.app.state.desk
    plan = desk.saved(request.path_params["plan_id"])
    if plan.kind == "trip" and plan.form is not None:
        values = {**forms.TRIP_DEFAULTS, **plan.form}
        return desk.page(request, "trip.html", values=values, problems=[], plan_id=plan.id,
                         busy_rows=range(1, forms.BUSY_ROWS + 1))
    return desk.page(request, "roster.html" if plan.kind == "roster" else "scenario.html", problems=[],
                     demos=desk.demo_rosters, plan_id=plan.id, text=plan.scenario_toml,
                     uploaded=plan.scenario_name if plan.scenario_file is not None else None,
                     options={"strategy": "auto", "people": 0, "seed": 0, "robust": False, **plan.options})


async def scenario_submit(request: Request):
    """A trip scenario edited as TOML (plans made through the API or from an uploaded file)."""
    desk: Desk = request.app.state.desk
    data = await desk.form(request)
    plan = desk.saved(data.get("plan_id") or "")
    problems: list[str] = []
    options = forms.planning_options(data, problems)
    text = data.get("text") or ""
    problems += option_problems(plan.kind, options)
    if not problems:
        checked = await run_in_threadpool(check_scenario, text, "scenario.toml")
        problems = checked if isinstance(checked, list) else []
        if not problems and checked.kind != plan.kind:
            problems = [f"scenario.toml: kind: this plan is a {plan.kind}; a {checked.kind} scenario is a new plan"]
    if problems:
        return desk.page(request, "scenario.html", 422, problems=problems, plan_id=plan.id, text=text, options=options)
    job = desk.jobs.submit(Submission(plan.kind, forms.scenario_label(text) or plan.label, text, "scenario.toml",
                                      options, plan.id))
    return RedirectResponse(f"/jobs/{job.id}", status_code=303)


async def plan_duplicate(request: Request):
    desk: Desk = request.app.state.desk
    await desk.form(request)
    plan = desk.saved(request.path_params["plan_id"])
    copy = await run_in_threadpool(desk.store.duplicate, plan.id, f"{plan.label} (copy)")
    return RedirectResponse(f"/plans/{copy}", status_code=303)


async def plan_delete(request: Request):
    desk: Desk = request.app.state.desk
    await desk.form(request)
    plan = desk.saved(request.path_params["plan_id"])
    await run_in_threadpool(desk.store.delete, plan.id)
    return RedirectResponse("/", status_code=303)


async def plan_publish(request: Request):
    desk: Desk = request.app.state.desk
    data = await desk.form(request)
    plan = desk.saved(request.path_params["plan_id"])
    url, user, password = (data.get(k) or "" for k in ("url", "user", "password"))
    crew = data.get("crew") or ""
    calendar = (plan.calendars or {}).get(crew)
    if calendar is None:
        raise _Refused(422, "Nothing to publish", [f"crew: {crew!r} has no calendar in this plan"])
    try:
        result = await run_in_threadpool(service.publish_calendar, calendar.encode(), url, user=user or None,
                                         password=password or None, source=f"{plan.label}.ics")
    except InputError as exc:
        raise _Refused(422, "Not published", [exc.one_line()]) from None
    except Exception as exc:   # unreachable server, server error: one line, nothing changed here
        raise _Refused(502, "Not published", [f"publish: {exc}"]) from None
    summary = (f"{len(result.created)} created, {len(result.updated)} updated, {len(result.unchanged)} unchanged, "
               f"{len(result.deleted)} deleted")
    return desk.page(request, "message.html", title="Published", lines=[f"{result.url}: {summary}; {result.others} other events left alone"],
                     back=f"/plans/{plan.id}")


# ---------------------------------------------------------------------- downloads

def _download(content: bytes | str, media_type: str, filename: str | None) -> Response:
    headers = {"Content-Disposition": f'attachment; filename="{filename}"'} if filename else {}
    return Response(content, media_type=media_type, headers=headers)


async def plan_file(request: Request):
    desk: Desk = request.app.state.desk
    plan = desk.saved(request.path_params["plan_id"])
    what = request.path_params["what"]
    stem = f"phaseplan-{plan.id}"
    if what == "calendar.ics":
        crew = request.query_params.get("crew", "")
        calendar = (plan.calendars or {}).get(crew)
        if calendar is None:
            raise _Refused(404, "No such calendar", [f"crew: {crew!r} has no calendar in this plan"])
        return _download(calendar, "text/calendar; charset=utf-8", f"{stem}{'-' + crew if crew else ''}.ics")
    if what == "scenario.toml":
        if plan.scenario_file is not None:   # a roster spreadsheet, as uploaded
            return _download(plan.scenario_file, "application/octet-stream", f"{stem}-{plan.scenario_name}")
        return _download(plan.scenario_toml, "application/toml; charset=utf-8", f"{stem}.toml")
    if what == "plan.json":
        return _download(json.dumps(plan.document, indent=2, ensure_ascii=False), "application/json", f"{stem}.json")
    if what == "report.html":
        return HTMLResponse(await run_in_threadpool(desk.store.file, plan.id, "report_html"))
    if what == "chart.svg":
        return Response(await run_in_threadpool(desk.store.file, plan.id, "chart_svg"), media_type="image/svg+xml")
    raise _Refused(404, "No such file", [f"{what}: not a file of a plan"])


# ---------------------------------------------------------------------- API

async def api_plan(request: Request):
    """``POST /api/plan``: a scenario as TOML in, the ``--json`` document out (422 with the check's lines)."""
    desk: Desk = request.app.state.desk
    media = request.headers.get("content-type", "").split(";")[0].strip().lower()
    if media != "application/toml":
        return JSONResponse({"problems": [f"Content-Type: {media or '(none)'}; send the scenario as "
                                          "application/toml"]}, status_code=415)
    try:
        text = (await request.body()).decode("utf-8")
    except UnicodeDecodeError:
        return JSONResponse({"problems": ["scenario.toml: unreadable: not UTF-8 text"]}, status_code=422)
    query = request.query_params
    problems: list[str] = []
    options = forms.planning_options({"strategy": query.get("strategy"), "people": query.get("people"),
                                      "seed": query.get("seed"), "robust": query.get("robust")}, problems)
    checked = None
    if not problems:
        checked = await run_in_threadpool(check_scenario, text, "scenario.toml")
        problems = checked if isinstance(checked, list) else option_problems(checked.kind, options)
    if problems:
        return JSONResponse({"problems": problems}, status_code=422)
    job = desk.jobs.submit(Submission(checked.kind, forms.scenario_label(text) or checked.kind, text, "scenario.toml",
                                      options))
    await asyncio.wrap_future(desk.jobs.future(job.id))
    if job.state != "done":
        return JSONResponse({"problems": job.problems}, status_code=422 if job.step.startswith("the scenario") else 500)
    return JSONResponse(job.document, headers={"Location": f"/plans/{job.plan_id}"})


async def places(request: Request):
    """``GET /places?q=NAME``: places of the offline gazetteer whose names match, for the form's suggestions."""
    query = request.query_params.get("q", "").strip()
    if len(query) < 2:
        return JSONResponse({"query": query, "matches": []})
    try:
        found = await run_in_threadpool(service.find_places, query, PLACE_SUGGESTIONS)
    except InputError as exc:
        return JSONResponse({"query": query, "matches": [], "problem": exc.one_line()})
    document = found.to_json()
    return JSONResponse({"query": query, "matches": [
        {"write": m["write"], "describe": f"{m['name']}, {m['country']} ({m['time_zone']})"}
        for m in document["matches"]]})


async def healthz(request: Request):
    return PlainTextResponse("ok")


# ---------------------------------------------------------------------- the application

async def _refused(request: Request, exc: _Refused):
    return request.app.state.desk.refused(request, exc.status, exc.title, exc.lines)


async def _not_found(request: Request, exc: HTTPException):
    if exc.status_code == 404:
        return request.app.state.desk.refused(request, 404, "Not found", [f"{request.url.path}: no such page"])
    return PlainTextResponse(str(exc.detail), status_code=exc.status_code)


def create_app(settings: Settings) -> Guard:
    """The web application (an ASGI app) for ``settings``: Starlette routes behind :class:`Guard`."""
    routes = [
        Route("/", index),
        Route("/healthz", healthz),
        Route("/places", places),
        Route("/trip", trip_form, methods=["GET"]),
        Route("/trip", trip_submit, methods=["POST"]),
        Route("/roster", roster_form, methods=["GET"]),
        Route("/roster", roster_submit, methods=["POST"]),
        Route("/scenario", scenario_submit, methods=["POST"]),
        Route("/jobs/{job_id}.json", job_json),
        Route("/jobs/{job_id}", job_page),
        Route("/plans/{plan_id}", plan_page),
        Route("/plans/{plan_id}/edit", plan_edit),
        Route("/plans/{plan_id}/duplicate", plan_duplicate, methods=["POST"]),
        Route("/plans/{plan_id}/delete", plan_delete, methods=["POST"]),
        Route("/plans/{plan_id}/publish", plan_publish, methods=["POST"]),
        Route("/plans/{plan_id}/{what}", plan_file),
        Route("/api/plan", api_plan, methods=["POST"]),
        Mount("/static", StaticFiles(directory=HERE / "static"), name="static"),
    ]
    app = Starlette(routes=routes, exception_handlers={_Refused: _refused, HTTPException: _not_found})
    app.state.desk = Desk(settings)
    guarded = Guard(app, settings.token, settings.upload_limit)
    guarded.state = app.state   # tests and the server reach the desk through the guarded app
    return guarded


def serve(settings: Settings, host: str, port: int) -> None:
    """Run the server until interrupted (uvicorn)."""
    import uvicorn

    app = create_app(settings)
    try:
        uvicorn.run(app, host=host, port=port, log_level="warning", server_header=False)
    finally:
        app.state.desk.jobs.shutdown()
