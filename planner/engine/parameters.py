"""Parameter sets (the model *data*): one TOML file per published set.

The built-in sets are shipped in the package's ``models/`` folder; a user may
pass the path of a file of their own (e.g. with an individually measured τ).
A file names its equation family (:mod:`planner.engine.oscillators`), its citation
with DOI, every parameter with value, units and source, the phase-marker
definitions and the integration step validated for it.
"""

from __future__ import annotations

import math
import os
import re
from dataclasses import dataclass, field
from functools import cached_property
from pathlib import Path
from typing import Literal, Mapping

import numpy as np
from pydantic import BaseModel, ConfigDict, Field, field_validator, model_validator

from planner import tomlfile
from planner.engine.oscillators import FAMILIES, EquationFamily
from planner.errors import UnknownModelError
from planner.shipped import shipped_toml_files
from planner.tomlfile import InputFileError, Problem

_UNIT_ALIASES = {
    "h": {"h", "hour", "hours", "hr"},
    "1/min": {"1/min", "/min", "min^-1", "per minute"},
    "1/h": {"1/h", "/h", "h^-1", "per hour"},
    "rad/h": {"rad/h", "radian/h", "rad h^-1"},
    "rad": {"rad", "radian", "radians"},
    "lux": {"lux", "lx"},
    "lux^p": {"lux^p", "lx^p"},
    "1": {"1", "", "dimensionless", "-"},
}


class _Strict(BaseModel):
    model_config = ConfigDict(extra="forbid", frozen=True)


class Parameter(_Strict):
    """One parameter: its value, units and where it comes from."""

    value: float = Field(allow_inf_nan=False)
    units: str
    source: str = Field(min_length=1)


class Citation(_Strict):
    """The publication a parameter set comes from."""

    authors: list[str] = Field(min_length=1)
    year: int = Field(ge=1900, le=2100)
    title: str = Field(min_length=1)
    journal: str = Field(min_length=1)
    volume: str = ""
    issue: str = ""
    pages: str = ""
    doi: str = ""

    @field_validator("doi")
    @classmethod
    def _doi_shape(cls, value: str) -> str:
        if value and not re.fullmatch(r"10\.\d{4,9}/\S+", value):
            raise ValueError("a DOI looks like 10.NNNN/suffix")
        return value

    def text(self) -> str:
        """The citation in one line: authors (year). title. journal vol(issue):pages. doi."""
        where = self.journal
        if self.volume:
            where += f" {self.volume}"
            if self.issue:
                where += f"({self.issue})"
        if self.pages:
            where += f":{self.pages}"
        doi = f" doi:{self.doi}" if self.doi else ""
        return f"{', '.join(self.authors)} ({self.year}). {self.title}. {where}.{doi}"


class MarkerRule(_Strict):
    """How a phase marker is read from the model's state.

    ``x_minimum``: time of the minimum of x plus ``offset_h``;
    ``phase_angle``: time at which the phase angle crosses ``angle_rad`` (mod 2π);
    ``cbtmin_offset``: CBTmin plus ``offset_h`` (DLMO only).
    """

    rule: Literal["x_minimum", "phase_angle", "cbtmin_offset"]
    offset_h: float = Field(0.0, allow_inf_nan=False, ge=-24.0, le=24.0)
    angle_rad: float | None = Field(None, allow_inf_nan=False)
    source: str = Field(min_length=1)

    @model_validator(mode="after")
    def _angle_needed(self) -> "MarkerRule":
        if self.rule == "phase_angle" and self.angle_rad is None:
            raise ValueError("rule 'phase_angle' needs angle_rad")
        if self.rule != "phase_angle" and self.angle_rad is not None:
            raise ValueError(f"angle_rad is only used with rule 'phase_angle', not '{self.rule}'")
        return self


class Markers(_Strict):
    cbtmin: MarkerRule
    dlmo: MarkerRule


class Numerics(_Strict):
    """Integration step validated for this parameter set."""

    step_minutes: float = Field(ge=1.0, le=60.0, allow_inf_nan=False)
    source: str = Field(min_length=1)


class ModelFile(_Strict):
    """Schema of a parameter-set file."""

    id: str = Field(pattern=r"^[A-Za-z0-9][A-Za-z0-9_.-]*$")
    name: str = Field(min_length=1)
    equations: Literal["forger1999", "jewett1999", "hannay2019"]
    based_on: str = ""
    citation: Citation
    parameters: dict[str, Parameter]
    markers: Markers
    numerics: Numerics
    validity: list[str] = Field(default_factory=list)


@dataclass(frozen=True)
class ModelSpec:
    """A validated parameter set ready for simulation.

    Attributes
    ----------
    file : ModelFile
        The file's content.
    path : str
        Where it was read from.
    values : dict
        Parameter values; arrays broadcastable to ``(N,)`` once overridden
        per person with :meth:`with_values`.
    """

    file: ModelFile
    path: str
    values: Mapping[str, np.ndarray] = field(repr=False)

    @property
    def id(self) -> str:
        return self.file.id

    @property
    def family(self) -> EquationFamily:
        return FAMILIES[self.file.equations]

    @property
    def citation(self) -> str:
        return self.file.citation.text()

    @property
    def step_minutes(self) -> float:
        return self.file.numerics.step_minutes

    @cached_property
    def coefficients(self):
        return self.family.coefficients(self.values)

    @cached_property
    def process_l(self):
        return self.family.process_l(self.values)

    def with_values(self, **overrides: float | np.ndarray) -> "ModelSpec":
        """A copy with some parameters replaced, e.g. ``tau_x=np.array([24.0, 24.4])``.

        Raises
        ------
        ModelFileError
            For a parameter the equations do not use or a value outside its sign rule.
        """
        unknown = sorted(set(overrides) - set(self.values))
        if unknown:
            raise _problem(self.path, f"parameters.{unknown[0]}", "not a parameter of "
                           f"{self.file.equations}; allowed: {', '.join(sorted(self.values))}")
        values = dict(self.values)
        for name, value in overrides.items():
            array = np.asarray(value, dtype=float)
            _check_sign(self.path, name, array, self.family.parameter_rules[name].sign)
            values[name] = array
        return ModelSpec(self.file, self.path, values)


def _problem(source: str, field_name: str, message: str, text: str | None = None) -> InputFileError:
    line = tomlfile.locate_line(text, tuple(field_name.split("."))) if text else None
    return InputFileError([Problem(source, field_name, message, line)])


def _check_sign(source: str, name: str, value: np.ndarray, sign: str, text: str | None = None) -> None:
    if not np.all(np.isfinite(value)):
        raise _problem(source, f"parameters.{name}.value", "must be a finite number", text)
    if sign == "positive" and np.any(value <= 0):
        raise _problem(source, f"parameters.{name}.value", "must be greater than 0", text)
    if sign == "nonnegative" and np.any(value < 0):
        raise _problem(source, f"parameters.{name}.value", "must be 0 or greater", text)


def _canonical_units(units: str) -> str | None:
    cleaned = units.strip().lower()
    for canonical, aliases in _UNIT_ALIASES.items():
        if cleaned in aliases:
            return canonical
    return None


def _check_family(model: ModelFile, source: str, text: str) -> dict[str, np.ndarray]:
    family = FAMILIES[model.equations]
    problems: list[Problem] = []
    rules = family.parameter_rules
    for name in rules:
        if name not in model.parameters:
            problems.append(Problem(source, f"parameters.{name}",
                                    f"required by equations '{model.equations}' but missing "
                                    f"({rules[name].meaning}, units {rules[name].units!r})",
                                    tomlfile.locate_line(text, ("parameters",))))
    for name, parameter in model.parameters.items():
        if name not in rules:
            problems.append(Problem(source, f"parameters.{name}",
                                    f"not used by equations '{model.equations}'; allowed: "
                                    f"{', '.join(rules)}", tomlfile.locate_line(text, ("parameters", name))))
            continue
        rule = rules[name]
        if _canonical_units(parameter.units) != rule.units:
            problems.append(Problem(source, f"parameters.{name}.units",
                                    f"wrong unit {parameter.units!r}; this parameter is in {rule.units!r}",
                                    tomlfile.locate_line(text, ("parameters", name))))
        try:
            _check_sign(source, name, np.asarray(parameter.value), rule.sign, text)
        except InputFileError as exc:
            problems.extend(exc.problems)
    if problems:
        raise InputFileError(problems)
    return {name: np.asarray(model.parameters[name].value, dtype=float) for name in rules}


def _check_markers(model: ModelFile, source: str, text: str) -> None:
    family = FAMILIES[model.equations]
    allowed = {"x_minimum": ("x_minimum",), "phase_angle": ("phase_angle",)}[family.marker_kind]
    if model.markers.cbtmin.rule not in allowed:
        raise _problem(source, "markers.cbtmin.rule",
                       f"equations '{model.equations}' read CBTmin by rule {allowed[0]!r}", text)
    dlmo_allowed = ("cbtmin_offset", "phase_angle") if family.marker_kind == "phase_angle" else ("cbtmin_offset",)
    if model.markers.dlmo.rule not in dlmo_allowed:
        raise _problem(source, "markers.dlmo.rule",
                       f"allowed for equations '{model.equations}': {', '.join(dlmo_allowed)}", text)
    for name in ("cbtmin", "dlmo"):
        angle = getattr(model.markers, name).angle_rad
        if angle is not None and not 0.0 <= angle < 2.0 * math.pi:
            raise _problem(source, f"markers.{name}.angle_rad", "must lie in [0, 2π)", text)


def read_model_file(path: str | Path) -> ModelSpec:
    """Read and validate one parameter-set file.

    Raises
    ------
    InputFileError
        Listing every problem (file, field, line, what is allowed).
    """
    model, text = tomlfile.load(ModelFile, path)
    values = _check_family(model, str(path), text)
    _check_markers(model, str(path), text)
    return ModelSpec(model, str(path), values)


def builtin_model_paths() -> dict[str, Path]:
    """Built-in parameter-set files, keyed by file stem (the model id)."""
    return shipped_toml_files("models")


def available_models() -> list[str]:
    """Ids of the built-in parameter sets."""
    return list(builtin_model_paths())


def load_model(name: str | Path) -> ModelSpec:
    """A parameter set by built-in id (``"forger1999"``) or by the path of a TOML file.

    Raises
    ------
    UnknownModelError
        When ``name`` is neither a built-in id nor an existing file; the
        message lists the valid ids.
    InputFileError
        When the file is malformed.
    """
    builtin = builtin_model_paths()
    key = str(name)
    if key in builtin:
        spec = read_model_file(builtin[key])
        if spec.id != key:
            raise _problem(str(builtin[key]), "id", f"is {spec.id!r} but the file is named {key!r}")
        return spec
    path = Path(key)
    if path.suffix == ".toml" or os.path.exists(path):
        if not os.path.isfile(path):
            raise UnknownModelError(f"no such model file; built-in models: {', '.join(builtin)}",
                                    source=key, field="model")
        return read_model_file(path)
    raise UnknownModelError(f"unknown model id {key!r}; valid ids: {', '.join(builtin)} "
                            "(or the path of a model .toml file)", field="model")
