"""What trip and roster scenario files share: strict TOML entries for places and sleep windows,
the model reference, and the collector of problems found after the schema check.

Each problem carries its file, field and line (:class:`planner.tomlfile.Problem`), so a file with
several mistakes is reported in one pass, one line per problem.
"""

from __future__ import annotations

import os
from pathlib import Path

from pydantic import BaseModel, ConfigDict, Field, field_validator, model_validator

from planner import tomlfile
from planner.engine.parameters import available_models
from planner.errors import InputError
from planner.tomlfile import InputFileError, Problem
from planner.world.gazetteer import resolve_place
from planner.world.localtime import parse_clock, zone
from planner.world.places import Place

#: Longest sleep window accepted [h] (a longer "sleep" is almost surely a typing error).
MAX_SLEEP_H = 16.0


#: Model used wherever none is named (scenario files, quick trips, the web form, ``phaseplan prc``): the one
#: agreeing with most published checks of ``phaseplan models validate`` (:mod:`planner.engine.validation`);
#: tests/test_validation.py fails when the table ranks another model first.
DEFAULT_MODEL = "jewett1999"


def checked(check, value: str) -> str:
    """``value`` if ``check(value)`` accepts it; its InputError becomes the ValueError pydantic reports."""
    try:
        check(value)
    except InputError as exc:
        raise ValueError(exc.message) from None
    return value


class StrictEntry(BaseModel):
    model_config = ConfigDict(extra="forbid", frozen=True, populate_by_name=True)


class SleepEntry(StrictEntry):
    """A sleep window on the local clock, e.g. ``{ bed = "23:00", wake = "07:00" }``."""

    bed: str
    wake: str

    @field_validator("bed", "wake")
    @classmethod
    def _clock(cls, value: str) -> str:
        return checked(parse_clock, value)

    @model_validator(mode="after")
    def _length(self) -> "SleepEntry":
        hours = self.hours
        if hours == 0:
            raise ValueError(f"bed and wake are both {self.bed}: the sleep window is empty")
        if hours > MAX_SLEEP_H:
            raise ValueError(f"a sleep window from {self.bed} to {self.wake} lasts {hours:g} h; "
                             f"allowed are windows longer than 0 h and at most {MAX_SLEEP_H:g} h")
        return self

    @property
    def bed_h(self) -> float:
        return parse_clock(self.bed)

    @property
    def wake_h(self) -> float:
        return parse_clock(self.wake)

    @property
    def hours(self) -> float:
        return round((self.wake_h - self.bed_h) % 24.0, 6)


#: The fields a place table needs when it gives no ``place`` name to look up.
PLACE_FIELDS = ("time_zone", "latitude", "longitude")


class PlaceEntry(StrictEntry):
    """A place: ``place = "Tokyo"`` (looked up in :mod:`planner.world.gazetteer`), or ``name``, ``time_zone``,
    ``latitude`` and ``longitude``.  With ``place``, ``name`` is optional (default: the place's own name)."""

    name: str | None = Field(None, min_length=1, max_length=80)
    place: str | None = Field(None, min_length=1, max_length=120)
    time_zone: str | None = None
    latitude: float | None = Field(None, ge=-90.0, le=90.0, allow_inf_nan=False)
    longitude: float | None = Field(None, ge=-180.0, le=180.0, allow_inf_nan=False)
    sleep: SleepEntry | None = None

    @field_validator("time_zone")
    @classmethod
    def _zone(cls, value: str | None) -> str | None:
        return None if value is None else checked(zone, value).strip()

    @field_validator("place")
    @classmethod
    def _known_place(cls, value: str | None) -> str | None:
        return None if value is None else checked(resolve_place, value)

    @model_validator(mode="after")
    def _located(self) -> "PlaceEntry":
        given = [name for name in PLACE_FIELDS if getattr(self, name) is not None]
        if self.place is not None:
            if given:
                raise ValueError(f'place = "{self.place}" and {", ".join(given)} both say where this is; give either '
                                 "place or name, time_zone, latitude and longitude")
            found = resolve_place(self.place)
            return self.model_copy(update={"name": self.name or found.name, "time_zone": found.time_zone,
                                           "latitude": found.latitude, "longitude": found.longitude})
        missing = [name for name in ("name",) + PLACE_FIELDS if getattr(self, name) is None]
        if missing:
            raise ValueError(f"required field{'s are' if len(missing) > 1 else ' is'} missing: {', '.join(missing)} "
                             '(or give place = "City" to look the place up by name)')
        return self


class Problems:
    """Collects semantic problems with their lines."""

    def __init__(self, source: str, text: str):
        self.source, self.text = source, text
        self.items: list[Problem] = []

    def add(self, field: tuple[str | int, ...], message: str) -> None:
        self.items.append(Problem(self.source, ".".join(str(p) for p in field), message,
                                  tomlfile.locate_line(self.text, field)))

    def raise_if_any(self) -> None:
        if self.items:
            raise InputFileError(self.items)


def model_reference(model: str, path: Path, problems: Problems) -> str:
    if model in available_models():
        return model
    candidate = Path(model)
    if not candidate.is_absolute():
        candidate = path.parent / candidate
    if os.path.isfile(candidate):
        return str(candidate)
    problems.add(("model",), f'"{model}" is neither a built-in model ({", ".join(available_models())}) '
                             "nor an existing model file (a relative path is read from the scenario's folder)")
    return model


def build_place(entry: PlaceEntry, default_sleep: SleepEntry) -> Place:
    sleep = entry.sleep or default_sleep
    return Place(entry.name, zone(entry.time_zone), float(entry.latitude), float(entry.longitude),
                 sleep.bed_h, sleep.wake_h)
