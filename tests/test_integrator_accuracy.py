"""Batch integrator against scipy's DOP853 (rtol 1e-10) at each model's default step."""

from datetime import datetime, timedelta, timezone

import numpy as np
import pytest
from hypothesis import HealthCheck, example, given, settings
from hypothesis import strategies as st

from planner import LightSchedule, ambient, cbtmin_times, light_box, load_model, simulate, sleep
from planner.engine.entrainment import entrain
from planner.engine.reference import reference_solution

T0 = datetime(2027, 1, 4, tzinfo=timezone.utc)
MODELS = ["forger1999", "jewett1999", "hannay2019"]


def demanding_schedule(lux, days=6, drift_h=0.37):
    """Edges off the step grid, a bright box moving across the day, a short (<step) pulse."""
    layers = []
    for d in range(-1, days + 1):
        base = T0 + timedelta(days=d)
        layers.append(ambient(base + timedelta(hours=12.13), base + timedelta(hours=13.77), 3000, "daylight"))
        box = base + timedelta(hours=7.05 + drift_h * d)
        layers.append(light_box(box, box + timedelta(hours=2.25), lux))
        flash = base + timedelta(hours=19.4)
        layers.append(light_box(flash, flash + timedelta(minutes=12), lux))
        layers.append(sleep(base + timedelta(hours=-1 - 0.5 * drift_h * d), base + timedelta(hours=7.02 - 0.5 * drift_h * d)))
    return LightSchedule.from_layers(T0, T0 + timedelta(days=days), 150, layers)


def max_cbtmin_error_min(model, schedule, state):
    ours = cbtmin_times(simulate(model, schedule, state))[0]
    reference = reference_solution(model, schedule, state).cbtmin_h
    # The reference reads the raw minimum of x, which can dip twice within minutes where a light edge meets the
    # trough (found by hypothesis: a pulse ending 2 min before sleep); our marker removes the light drive and
    # finds one minimum there. So each reference minimum must lie within an hour of one of ours (none missed,
    # none extra), and the error is taken between nearest pairs.
    assert ours.size and all(np.min(np.abs(ours - r)) < 1.0 for r in reference)
    assert ours.size <= reference.size
    nearest = np.array([reference[np.argmin(np.abs(reference - t))] for t in ours])
    return float(np.max(np.abs(ours - nearest)) * 60.0)


@pytest.fixture(scope="module")
def entrained_states():
    return {name: entrain(load_model(name)).state[:, 0] for name in MODELS}


@pytest.mark.parametrize("name", MODELS)
@pytest.mark.parametrize("lux", [10_000, 50_000, 100_000])
def test_cbtmin_within_a_minute_of_dop853(name, lux, entrained_states):
    model = load_model(name)
    # the project's accuracy requirement: CBTmin within 1 min of a DOP853 (rtol 1e-10) reference
    assert max_cbtmin_error_min(model, demanding_schedule(lux), entrained_states[name]) < 1.0


@settings(max_examples=8, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(st.sampled_from(MODELS), st.floats(0.0, 24.0), st.floats(0.1, 3.0), st.floats(100.0, 100_000.0),
       st.floats(0.0, 24.0))
@example("jewett1999", 4.44, 0.235, 6077.0, 5.0)   # a pulse ending 2 min before sleep, at the trough
def test_random_pulses_stay_within_a_minute(name, pulse_h, hours, lux, bed_h):
    """Light at any hour, also in the biological night while CBTmin passes."""
    model = load_model(name)
    layers = []
    for d in range(-1, 5):
        base = T0 + timedelta(days=d)
        start = base + timedelta(hours=pulse_h)
        layers.append(light_box(start, start + timedelta(hours=hours), lux))
        layers.append(sleep(base + timedelta(hours=bed_h), base + timedelta(hours=bed_h + 8)))
    schedule = LightSchedule.from_layers(T0, T0 + timedelta(days=4), 150, layers)
    state = entrain(model).state[:, 0]
    assert max_cbtmin_error_min(model, schedule, state) < 1.0   # same requirement as above


def test_a_batch_column_equals_a_single_run():
    model = load_model("jewett1999")
    schedules = [demanding_schedule(10_000, days=3), demanding_schedule(50_000, days=3)]
    state = entrain(model).state[:, 0]
    batch = simulate(model, schedules, state)
    single = simulate(model, schedules[1], state)
    # identical arithmetic per column (analytic identity of a vectorised scheme)
    assert np.allclose(batch.states[:, :, 1], single.states[:, :, 0], rtol=0, atol=1e-12)


def test_failure_is_reported_not_a_silent_nan():
    # a step of 12 h on a stiff 7th-order oscillator with a 1,000-fold stiffer damping blows up
    model = load_model("jewett1999").with_values(mu=130.0)
    schedule = LightSchedule.constant(T0, T0 + timedelta(days=10), 100_000)
    result = simulate(model, schedule, np.array([1.0, 0.0, 0.0]), step_minutes=720)
    assert not result.success
    assert result.status == 1
    assert "non-finite" in result.message
    finite_rows = np.isfinite(result.states).all(axis=(1, 2))
    assert finite_rows[0] and not finite_rows[-1]
