"""Parameter-set files: the built-in sets, their citations, and one clear line per bad file."""

from __future__ import annotations

import re

import numpy as np
import pytest
from conftest import MODELS

from planner.engine.oscillators import FAMILIES
from planner.engine.parameters import available_models, builtin_model_paths, load_model, read_model_file
from planner.errors import InputError, UnknownModelError
from planner.tomlfile import InputFileError

# DOIs as registered for the three papers (the journal's records)
PUBLISHED_DOIS = {
    "forger1999": "10.1177/074873099129000867",  # Forger, Jewett & Kronauer 1999, J Biol Rhythms 14(6):533
    "jewett1999": "10.1177/074873049901400608",  # Jewett, Forger & Kronauer 1999, J Biol Rhythms 14(6):493
    "hannay2019": "10.1177/0748730419878298",    # Hannay, Booth & Forger 2019, J Biol Rhythms 34(6):658
}


def test_the_built_in_ids_are_the_three_published_sets():
    # the project ships exactly these three parameter sets (models/*.toml)
    assert sorted(available_models()) == sorted(MODELS)


@pytest.mark.parametrize("name", MODELS)
def test_every_built_in_model_loads_with_its_equations_and_all_parameters(name):
    model = load_model(name)
    assert model.id == name
    assert model.file.equations == name                      # each set uses its own paper's equations
    assert set(model.values) == set(FAMILIES[name].parameter_rules)
    assert all(np.isfinite(v) for v in model.values.values())
    assert model.step_minutes > 0


@pytest.mark.parametrize("name", MODELS)
def test_citation_carries_the_published_doi(name):
    model = load_model(name)
    assert model.file.citation.doi == PUBLISHED_DOIS[name]
    assert f"doi:{PUBLISHED_DOIS[name]}" in model.citation


def test_published_parameter_values_reach_the_spec():
    # science reference section 1: forger1999 tau_x 24.2 h, mu 0.23, k 0.55, beta 0.0075 /min, I0 9500 lux
    forger = load_model("forger1999").values
    assert [float(forger[k]) for k in ("tau_x", "mu", "k", "beta", "I0")] == [24.2, 0.23, 0.55, 0.0075, 9500.0]
    # jewett1999: mu 0.13, q = 1/3, its own Process L alpha0 0.16, beta 0.013, p 0.6, G 19.875
    jewett = load_model("jewett1999").values
    assert float(jewett["mu"]) == 0.13 and float(jewett["q"]) == pytest.approx(1 / 3, abs=1e-15)
    assert [float(jewett[k]) for k in ("alpha0", "beta", "p", "G")] == [0.16, 0.013, 0.6, 19.875]
    # hannay2019: omega0 0.263524 rad/h, K 0.06358, gamma 0.024, p 1.5, I0 9325
    hannay = load_model("hannay2019").values
    assert [float(hannay[k]) for k in ("omega0", "K", "gamma", "p", "I0")] == [0.263524, 0.06358, 0.024, 1.5, 9325.0]


def test_unknown_id_raises_and_lists_the_valid_ids():
    with pytest.raises(UnknownModelError) as info:
        load_model("kronauer1990")
    message = info.value.one_line()
    assert "kronauer1990" in message
    for name in MODELS:
        assert name in message
    assert isinstance(info.value, InputError)                  # the CLI maps InputError to exit status 2


def test_a_missing_model_file_path_raises_unknown_model(tmp_path):
    with pytest.raises(UnknownModelError) as info:
        load_model(str(tmp_path / "nobody.toml"))
    assert "forger1999" in info.value.one_line()


def _line_of(text: str, number: int) -> str:
    return text.splitlines()[number - 1]


# Each edit breaks one documented rule of a model file; (field named in the error, text found on
# the reported line).  The rules are the schema's own (planner/parameters.py).
MALFORMED = {
    "missing parameter": (lambda t: re.sub(r"^mu = .*\n", "", t, flags=re.M),
                          "parameters.mu", "[parameters]"),
    "wrong unit": (lambda t: t.replace('tau_x = { value = 24.2, units = "h"', 'tau_x = { value = 24.2, units = "min"'),
                   "parameters.tau_x.units", "tau_x ="),
    "negative value": (lambda t: t.replace("beta = { value = 0.0075", "beta = { value = -0.01"),
                       "parameters.beta.value", "beta ="),
    "unknown top-level field": (lambda t: t.replace('name = "Forger', 'colour = "blue"\nname = "Forger'),
                                "colour", "colour ="),
    "unknown key in a parameter": (lambda t: t.replace('mu = { value = 0.23, units = "1",',
                                                       'mu = { value = 0.23, units = "1", note = "x",'),
                                   "parameters.mu.note", "mu ="),
    "parameter the equations do not use": (lambda t: t.replace("[markers]", 'zeta = { value = 1.0, units = "1", '
                                                               'source = "x" }\n\n[markers]'),
                                           "parameters.zeta", "zeta ="),
}


@pytest.mark.parametrize("case", list(MALFORMED))
def test_a_malformed_file_gives_one_line_with_file_field_and_line(case, model_copy):
    edit, field, on_line = MALFORMED[case]
    path = model_copy(edit)
    with pytest.raises(InputFileError) as info:
        load_model(str(path))
    line = info.value.one_line()
    assert "\n" not in line
    match = re.match(re.escape(str(path)) + r":(\d+): (\S+): ", line)
    assert match, line
    assert match.group(2) == field
    assert on_line in _line_of(path.read_text(encoding="utf-8"), int(match.group(1))), line
    # the same error from read_model_file directly, and it is an InputError for the CLI
    with pytest.raises(InputFileError):
        read_model_file(path)
    assert isinstance(info.value, InputError)


def test_every_problem_of_a_file_is_listed(model_copy):
    path = model_copy(lambda t: t.replace("beta = { value = 0.0075", "beta = { value = -0.01")
                      .replace('tau_x = { value = 24.2, units = "h"', 'tau_x = { value = 24.2, units = "min"'))
    with pytest.raises(InputFileError) as info:
        load_model(str(path))
    fields = {problem.field for problem in info.value.problems}
    assert fields == {"parameters.beta.value", "parameters.tau_x.units"}
    assert "(and 1 more problem)" in info.value.one_line()


def test_unit_aliases_are_accepted(model_copy):
    # "hour" and "lx" are spellings of h and lux (planner/parameters.py alias table)
    path = model_copy(lambda t: t.replace('tau_x = { value = 24.2, units = "h"', 'tau_x = { value = 24.2, units = "hour"')
                      .replace('units = "lux"', 'units = "lx"'))
    assert float(read_model_file(path).values["tau_x"]) == 24.2


def test_a_user_file_with_a_measured_tau_is_loaded_by_path_and_used(model_copy):
    path = model_copy(lambda t: t.replace('id = "forger1999"', 'id = "subject-07"')
                      .replace("tau_x = { value = 24.2,", "tau_x = { value = 24.6,"), name="subject-07.toml")
    model = load_model(str(path))
    assert model.id == "subject-07"
    assert model.path == str(path)
    assert float(model.values["tau_x"]) == 24.6
    # the period term of the xc equation, (24/(0.99669·τx))², uses it: Forger et al. 1999, J Biol Rhythms 14:533
    assert float(model.coefficients.omega_sq) == pytest.approx((24.0 / (0.99669 * 24.6)) ** 2, rel=1e-15)
    # everything else is the published set
    base = load_model("forger1999").values
    assert all(float(model.values[k]) == float(base[k]) for k in base if k != "tau_x")


def test_a_built_in_file_renamed_away_from_its_id_is_refused(tmp_path, monkeypatch):
    # a built-in set is addressed by its file stem, which must equal its id (DEVELOPERS.md rule)
    folder = tmp_path / "models"
    folder.mkdir()
    (folder / "other.toml").write_text(builtin_model_paths()["forger1999"].read_text(encoding="utf-8"),
                                       encoding="utf-8")
    monkeypatch.setattr("planner.engine.parameters.builtin_model_paths",
                        lambda: {path.stem: path for path in folder.glob("*.toml")})
    with pytest.raises(InputFileError) as info:
        load_model("other")
    assert "id" in info.value.one_line() and "other" in info.value.one_line()


def test_with_values_sets_per_person_arrays():
    taus = np.array([23.9, 24.2, 24.6])
    model = load_model("jewett1999").with_values(tau_x=taus)
    assert np.array_equal(model.values["tau_x"], taus)
    # per-person period terms (24/(0.99729·τx))²: Jewett et al. 1999, J Biol Rhythms 14:493
    assert np.allclose(model.coefficients.omega_sq, (24.0 / (0.99729 * taus)) ** 2, rtol=1e-15, atol=0)
    # the original spec is untouched (frozen value object)
    assert float(load_model("jewett1999").values["tau_x"]) == 24.2


@pytest.mark.parametrize("bad", [np.array([24.0, -1.0]), np.array([24.0, 0.0]), np.array([24.0, np.nan])])
def test_with_values_rejects_values_outside_the_sign_rule(bad):
    # tau_x is a period: it must be a finite number greater than 0 (family rule)
    with pytest.raises(InputFileError) as info:
        load_model("forger1999").with_values(tau_x=bad)
    assert "parameters.tau_x.value" in info.value.one_line()


def test_with_values_rejects_a_parameter_of_another_family():
    with pytest.raises(InputFileError) as info:
        load_model("forger1999").with_values(omega0=0.26)    # a hannay2019 parameter
    assert "parameters.omega0" in info.value.one_line()
