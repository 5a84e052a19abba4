"""The trip form's fields and the scenario TOML they make.

The form asks what a trip file holds (README "Trip scenario files") in plain fields: a label instead of a
name, the two places, the outbound flight and an optional flight home, the habitual sleep, the stay, the
equipment and up to :data:`BUSY_ROWS` busy periods. :func:`trip_toml` writes them as a trip scenario; the
scenario loader then checks every value, so a wrong field is reported exactly as ``phaseplan check`` reports
it. Fields that could not become a number are reported here, one line each, before any file is written.

Scenarios planned in the browser may not point at files on the server: a ``model`` must be a built-in id and
a ``[person]`` table may not name a ``light_log`` (:func:`server_file_problems`).
"""

from __future__ import annotations

import tomllib
from collections.abc import Mapping
from typing import Any

import tomli_w

from planner.scenariofile import DEFAULT_MODEL

#: Busy periods the form offers.
BUSY_ROWS = 2

#: The form's fields and their defaults (an invented trip a few hours east, to show the format).
TRIP_DEFAULTS: dict[str, str] = {
    "label": "",
    "home_name": "", "home_place": "", "home_time_zone": "", "home_latitude": "", "home_longitude": "",
    "destination_name": "", "destination_place": "", "destination_time_zone": "", "destination_latitude": "",
    "destination_longitude": "",
    "bed": "23:00", "wake": "07:00", "preparation_days": "2", "max_shift": "1.0",
    "destination_bed": "", "destination_wake": "",
    "depart": "", "arrive": "", "return_depart": "", "return_arrive": "",
    "stay_days": "5", "days_after_return": "2",
    "light_box": "on", "box_lux": "10000", "box_max_minutes": "60", "glasses_transmission": "0.1",
    "daylight": "on", "daylight_max_minutes": "120",
    "model": DEFAULT_MODEL, "strategy": "auto", "people": "0", "seed": "0", "robust": "",
    **{f"busy{k}_{part}": ("destination" if part == "place" else "") for k in range(1, BUSY_ROWS + 1)
       for part in ("place", "start", "end", "label")},
}

#: Check boxes: absent from a submitted form when unticked.
CHECKBOXES = ("light_box", "daylight", "robust")

#: Human names of the fields, for messages.
FIELD_LABELS = {"preparation_days": "preparation days", "max_shift": "largest bedtime move per day",
                "stay_days": "stay (days)", "days_after_return": "days after return", "box_lux": "light box lux",
                "box_max_minutes": "light box minutes per day", "glasses_transmission": "dark glasses transmission",
                "daylight_max_minutes": "daylight minutes per day", "people": "simulated people", "seed": "seed",
                "home_latitude": "home latitude", "home_longitude": "home longitude",
                "destination_latitude": "destination latitude", "destination_longitude": "destination longitude"}

#: Largest population the form accepts (longer runs belong on the command line).
MAX_PEOPLE = 2000


def form_values(submitted: Mapping[str, Any]) -> dict[str, str]:
    """The trip form's fields from a submitted form: every known field, stripped; unticked boxes empty."""
    values = {}
    for name, default in TRIP_DEFAULTS.items():
        value = submitted.get(name)
        if name in CHECKBOXES:
            values[name] = "on" if value else ""
        else:
            values[name] = default if value is None else str(value).strip()
    return values


def _number(values: dict[str, str], name: str, problems: list[str], kind: type = float) -> float | int | None:
    text = values[name]
    if text == "":
        return None
    try:
        return kind(text)
    except ValueError:
        what = "a whole number" if kind is int else "a number"
        problems.append(f"form: {FIELD_LABELS.get(name, name)}: {text!r} is not {what}")
        return None


def _place(values: dict[str, str], prefix: str, problems: list[str]) -> dict[str, Any]:
    """A [home] or [destination] table: by place name (the gazetteer) when given, else by zone and coordinates."""
    table: dict[str, Any] = {}
    if values[f"{prefix}_name"]:
        table["name"] = values[f"{prefix}_name"]
    if values[f"{prefix}_place"]:
        table["place"] = values[f"{prefix}_place"]
        return table
    table.setdefault("name", prefix)
    table["time_zone"] = values[f"{prefix}_time_zone"]
    for axis in ("latitude", "longitude"):
        key = f"{prefix}_{axis}"
        if values[key] == "":
            problems.append(f"form: {prefix} {axis}: give the place's name, or its {axis} in degrees")
        number = _number(values, key, problems)
        table[axis] = 0.0 if number is None else number
    return table


def trip_scenario(values: dict[str, str]) -> tuple[dict[str, Any], list[str]]:
    """The trip scenario (as a dict) of the form's fields, and the fields that are not numbers."""
    problems: list[str] = []
    home = _place(values, "home", problems)
    destination = _place(values, "destination", problems)
    if values["destination_bed"] and values["destination_wake"]:
        destination["sleep"] = {"bed": values["destination_bed"], "wake": values["destination_wake"]}
    flights = [{"from": "home", "to": "destination", "depart": values["depart"], "arrive": values["arrive"]}]
    if values["return_depart"] or values["return_arrive"]:
        flights.append({"from": "destination", "to": "home", "depart": values["return_depart"],
                        "arrive": values["return_arrive"]})
        after = _number(values, "days_after_return", problems, int)
        if after is not None:
            home["days_after_return"] = after
    else:
        stay = _number(values, "stay_days", problems, int)
        destination["stay_days"] = stay if stay is not None else 0
    traveller: dict[str, Any] = {"sleep": {"bed": values["bed"], "wake": values["wake"]}}
    for field, name, kind in (("preparation_days", "preparation_days", int),
                              ("max_sleep_shift_h_per_day", "max_shift", float)):
        number = _number(values, name, problems, kind)
        if number is not None:
            traveller[field] = number
    light: dict[str, Any] = {"daylight": bool(values["daylight"])}
    for field in ("box_lux", "box_max_minutes", "glasses_transmission", "daylight_max_minutes"):
        number = _number(values, field, problems)
        if number is not None:
            light[field] = number
    if not values["light_box"]:
        light["box_max_minutes"] = 0.0
    busy = []
    for k in range(1, BUSY_ROWS + 1):
        start, end = values[f"busy{k}_start"], values[f"busy{k}_end"]
        if start or end:
            busy.append({"place": values[f"busy{k}_place"] or "destination", "start": start, "end": end,
                         "label": values[f"busy{k}_label"] or "busy"})
    scenario: dict[str, Any] = {
        "kind": "trip", "name": values["label"] or "untitled trip",
        "description": "Planned in the phaseplan web app.", "model": values["model"] or DEFAULT_MODEL,
        "traveller": traveller, "home": home, "destination": destination, "flights": flights, "light": light,
    }
    if busy:
        scenario["busy"] = busy
    return scenario, problems


def trip_toml(values: dict[str, str]) -> tuple[str, list[str]]:
    """The trip scenario file of the form's fields (TOML), and the fields that are not numbers."""
    scenario, problems = trip_scenario(values)
    return tomli_w.dumps(scenario), problems


def planning_options(values: Mapping[str, str], problems: list[str]) -> dict[str, Any]:
    """Strategy, population size, seed and robust search from a form (trip or roster)."""
    robust = str(values.get("robust") or "").strip().lower()
    options: dict[str, Any] = {"strategy": values.get("strategy") or "auto",
                               "robust": robust not in ("", "0", "false", "no", "off")}
    for name in ("people", "seed"):
        text = str(values.get(name) or "0").strip()
        try:
            options[name] = int(text)
        except ValueError:
            problems.append(f"form: {FIELD_LABELS[name]}: {text!r} is not a whole number")
            options[name] = 0
            continue
        if not 0 <= options[name] <= (MAX_PEOPLE if name == "people" else 2**31):
            problems.append(f"form: {FIELD_LABELS[name]}: {options[name]} is out of range (0..{MAX_PEOPLE} people "
                            "in the browser; use the command line for larger populations)")
    return options


def scenario_label(toml_text: str) -> str:
    """The ``name`` of a scenario text (for a plan's label), or "" when it has none or is no TOML."""
    try:
        name = tomllib.loads(toml_text).get("name", "")
    except tomllib.TOMLDecodeError:
        return ""
    return name if isinstance(name, str) else ""


def server_file_problems(toml_text: str, source: str, builtin_models: tuple[str, ...]) -> list[str]:
    """Fields that would make the server read its own files: a model file path, a light log."""
    try:
        data = tomllib.loads(toml_text)
    except tomllib.TOMLDecodeError:
        return []   # the scenario check reports it with its line
    problems = []
    model = data.get("model")
    if isinstance(model, str) and model not in builtin_models:
        problems.append(f"{source}: model: {model!r} is not a built-in model; the web app plans with "
                        f"{', '.join(builtin_models)} only (model files: use the command line)")
    person = data.get("person")
    if isinstance(person, dict) and "light_log" in person:
        problems.append(f"{source}: person.light_log: light logs are read by the command line only "
                        "(phaseplan trip FILE), not uploaded to the web app")
    return problems
