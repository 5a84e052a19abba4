"""Parameter-set files: the published sets load, bad files give one clear line."""

import re
import shutil

import numpy as np
import pytest

from planner import InputFileError, UnknownModelError, available_models, load_model
from planner.parameters import builtin_model_paths

# DOIs of the published papers (the journals' records)
PUBLISHED_DOIS = {
    "forger1999": "10.1177/074873099129000867",   # Forger, Jewett & Kronauer 1999, J Biol Rhythms 14:533
    "jewett1999": "10.1177/074873049901400608",   # Jewett, Forger & Kronauer 1999, J Biol Rhythms 14:493
    "hannay2019": "10.1177/0748730419878298",     # Hannay, Booth & Forger 2019, J Biol Rhythms 34:658
}


def test_the_three_published_sets_load_with_their_dois():
    assert set(PUBLISHED_DOIS) <= set(available_models())
    for name, doi in PUBLISHED_DOIS.items():
        model = load_model(name)
        assert model.id == name
        assert model.file.citation.doi == doi
        assert doi in model.citation


def test_published_values_are_read_from_the_files():
    # forger1999: tau_x 24.2 h, mu 0.23, G 33.75 (science reference, section 1)
    forger = load_model("forger1999").values
    assert float(forger["tau_x"]) == 24.2 and float(forger["mu"]) == 0.23 and float(forger["G"]) == 33.75
    # jewett1999: its own Process L set alpha0 0.16, beta 0.013, p 0.6, G 19.875 (science reference)
    jewett = load_model("jewett1999").values
    assert (float(jewett["alpha0"]), float(jewett["beta"]), float(jewett["p"]), float(jewett["G"])) == (0.16, 0.013, 0.6, 19.875)
    # hannay2019: omega0 0.263524 rad/h, p 1.5, I0 9325 (science reference)
    hannay = load_model("hannay2019").values
    assert (float(hannay["omega0"]), float(hannay["p"]), float(hannay["I0"])) == (0.263524, 1.5, 9325.0)


def test_unknown_id_lists_the_valid_ones():
    with pytest.raises(UnknownModelError) as info:
        load_model("kronauer1990")
    for name in PUBLISHED_DOIS:
        assert name in str(info.value)


def _copy(tmp_path, edit):
    source = builtin_model_paths()["forger1999"].read_text()
    target = tmp_path / "mine.toml"
    target.write_text(edit(source))
    return target


@pytest.mark.parametrize("edit, field, words", [
    (lambda t: re.sub(r"^mu = .*\n", "", t, flags=re.M), "parameters.mu", "missing"),
    (lambda t: t.replace('tau_x = { value = 24.2, units = "h"', 'tau_x = { value = 24.2, units = "min"'),
     "parameters.tau_x.units", "wrong unit"),
    (lambda t: t.replace("beta = { value = 0.0075", "beta = { value = -0.01"), "parameters.beta.value", "greater than 0"),
    (lambda t: t + '\ncolour = "blue"\n', "colour", "unknown field"),
])
def test_malformed_files_name_file_field_and_line(tmp_path, edit, field, words):
    path = _copy(tmp_path, edit)
    with pytest.raises(InputFileError) as info:
        load_model(str(path))
    line = info.value.one_line()
    assert "\n" not in line
    assert str(path) in line and field in line and words in line
    assert re.search(re.escape(str(path)) + r":\d+:", line), line
    number = int(re.search(re.escape(str(path)) + r":(\d+):", line).group(1))
    text = path.read_text().splitlines()
    key = field.split(".")[1] if field.startswith("parameters.") else field
    if words != "missing":
        assert key in text[number - 1]


def test_a_user_file_with_a_measured_tau_is_used(tmp_path):
    path = _copy(tmp_path, lambda t: t.replace('id = "forger1999"', 'id = "subject-17"')
                 .replace("tau_x = { value = 24.2,", "tau_x = { value = 24.6,"))
    model = load_model(str(path))
    assert model.id == "subject-17"
    assert float(model.values["tau_x"]) == 24.6
    assert model.coefficients.omega_sq == pytest.approx((24 / (0.99669 * 24.6)) ** 2)  # Forger et al. 1999 period term


def test_per_person_values_and_their_sign_rules():
    model = load_model("forger1999").with_values(tau_x=np.array([23.9, 24.2, 24.5]))
    assert model.values["tau_x"].shape == (3,)
    with pytest.raises(InputFileError):
        load_model("forger1999").with_values(tau_x=np.array([24.0, -1.0]))
    with pytest.raises(InputFileError):
        load_model("forger1999").with_values(omega0=0.26)   # a hannay2019 parameter, not forger1999's
