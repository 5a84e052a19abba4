"""Batch integrator: CBTmin against scipy's DOP853 at each model's default step, batches, failures.

The reference is :func:`planner.engine.reference.reference_solution` (``solve_ivp`` DOP853, rtol 1e-10,
integrated piece by piece of constant light, CBTmin by event detection).  Every schedule below
puts its light edges off the step grid, and the checks assert that precondition.
"""

from __future__ import annotations

import re
import warnings
from datetime import datetime
from zoneinfo import ZoneInfo

import numpy as np
import pytest
from conftest import MODELS, T0, at

from planner.engine.integrate import STATUS_NONFINITE, STATUS_SUCCESS, default_step_h, simulate
from planner.engine.markers import cbtmin_times
from planner.engine.parameters import load_model
from planner.engine.reference import reference_solution
from planner.world.light import LightSchedule, ambient, light_box, sample_on_grid, sleep

DAYS = 4

#: The accuracy the model files claim for their default step ([numerics] source): CBTmin within
#: 1 min of a DOP853 reference (rtol 1e-10).  A project requirement, not a published figure.
LIMIT_MIN = 1.0


def daily(layers_of_day, background=150.0, days=DAYS) -> LightSchedule:
    """A schedule repeating ``layers_of_day`` [(kind, start h, end h, lux)] every 24 h."""
    make = {"sleep": lambda a, b, v: sleep(a, b), "box": light_box,
            "daylight": lambda a, b, v: ambient(a, b, v, "daylight")}
    layers = [make[kind](at(24 * d + a), at(24 * d + b), v)
              for d in range(-1, days + 1) for kind, a, b, v in layers_of_day]
    return LightSchedule.from_layers(T0, at(24 * days), background, layers)


# Invented test schedules (no single source): clock times chosen off every grid in use, lux
# levels from a 10,000-lux light box up to 100,000-lux midsummer sun (common practice, no single source).
SLEEP = ("sleep", -0.87, 7.08, 0.0)
DAYTIME = {
    "habitual day, 10,000-lux box": [("daylight", 12.13, 13.02, 3000.0), ("box", 7.22, 7.71, 10_000.0), SLEEP],
    "morning 50,000 lux": [("box", 7.22, 9.41, 50_000.0), SLEEP],
    "evening 100,000 lux": [("box", 19.37, 21.53, 100_000.0), SLEEP],
    "short pulses, 7 and 12 min": [("box", 7.37, 7.37 + 7 / 60, 100_000.0), ("box", 20.11, 20.31, 50_000.0), SLEEP],
    "night shift, light 23-03, 10,000 lux": [("box", -0.93, 3.12, 10_000.0), ("sleep", 8.21, 16.21, 0.0)],
    "night shift, light 03-07, 10,000 lux": [("box", 3.12, 7.12, 10_000.0), ("sleep", 14.21, 22.21, 0.0)],
}
# Bright light in the biological night, lit while CBTmin passes.
NIGHT_BRIGHT = {
    "night, 100,000 lux 03-05": [("box", 3.12, 5.12, 100_000.0), ("sleep", 8.21, 16.21, 0.0)],
    "night, 100,000 lux for 12 min": [("box", 4.68, 4.88, 100_000.0), ("sleep", 8.21, 16.21, 0.0)],
}


def cbtmin_errors_min(name: str, layers, state) -> np.ndarray:
    model = load_model(name)
    schedule = daily(layers)
    step_h = default_step_h(model)
    grid = sample_on_grid([schedule], schedule.start, schedule.end, step_h)
    assert grid.split_step.size > 0                       # precondition: light edges fall inside steps
    result = simulate(model, schedule, state)
    assert result.success, result.message
    assert result.step_h == pytest.approx(step_h)          # simulate used the file's step
    ours = cbtmin_times(result)[0]
    reference = reference_solution(model, schedule, state)
    assert reference.success, reference.message
    assert ours.size == reference.cbtmin_h.size >= DAYS - 1, (ours, reference.cbtmin_h)
    return np.abs(ours - reference.cbtmin_h) * 60.0


@pytest.mark.parametrize("scenario", list(DAYTIME))
@pytest.mark.parametrize("name", MODELS)
def test_cbtmin_within_a_minute_of_dop853_at_the_default_step(name, scenario, entrained_states):
    errors = cbtmin_errors_min(name, DAYTIME[scenario], entrained_states[name])
    assert errors.max() < LIMIT_MIN, f"{name}, {scenario}: {errors.round(2)} min"


def test_the_schedules_include_pulses_shorter_than_a_step():
    shortest = min(b - a for layers in (*DAYTIME.values(), *NIGHT_BRIGHT.values()) for kind, a, b, _ in layers
                   if kind == "box")
    assert shortest * 60 < min(load_model(name).step_minutes for name in MODELS)


# Measured here (regression snapshot) at the 30-min default step: forger1999 3.1 and 1.1 min,
# jewett1999 2.2 and 0.9 min; 0.8 min or less at 10-min steps.  The cause is step-size error under
# 100,000 lux in the night plus the cubic location of CBTmin across a light edge next to it.
KNOWN_GAP: set = set()   # closed by 15-min default steps and fine re-integration of the CBTmin step


@pytest.mark.parametrize("scenario", list(NIGHT_BRIGHT))
@pytest.mark.parametrize("name", MODELS)
def test_cbtmin_within_a_minute_under_bright_light_at_night(name, scenario, entrained_states, request):
    if (name, scenario) in KNOWN_GAP:
        request.applymarker(pytest.mark.xfail(strict=True, reason=(
            "the model file's claim (1 min up to 100,000 lux at 30-min steps) does not hold for bright "
            "light while CBTmin passes; see the comment above KNOWN_GAP")))
    errors = cbtmin_errors_min(name, NIGHT_BRIGHT[scenario], entrained_states[name])
    assert errors.max() < LIMIT_MIN, f"{name}, {scenario}: {errors.round(2)} min"


@pytest.mark.parametrize("name", MODELS)
def test_a_batch_of_identical_schedules_gives_identical_columns(name, entrained_states):
    schedule = daily(DAYTIME["short pulses, 7 and 12 min"], days=2)
    model, state = load_model(name), entrained_states[name]
    single = simulate(model, schedule, state)
    batch = simulate(model, [schedule] * 7, state)
    assert single.success and batch.success
    assert batch.states.shape == single.states.shape[:2] + (7,)
    # the same arithmetic on every column (analytic identity of a vectorised scheme); 1e-12 leaves
    # room for numpy's SIMD and scalar loops rounding the last bit differently
    for column in range(7):
        np.testing.assert_allclose(batch.states[:, :, column], single.states[:, :, 0], rtol=0, atol=1e-12)
    single_cbt, batch_cbt = cbtmin_times(single)[0], cbtmin_times(batch)
    assert all(np.allclose(times, single_cbt, rtol=0, atol=1e-9) for times in batch_cbt)


def test_a_batch_of_different_schedules_matches_each_schedule_alone(entrained_states):
    model, state = load_model("jewett1999"), entrained_states["jewett1999"]
    schedules = [daily(DAYTIME[key], days=2) for key in DAYTIME]
    batch = simulate(model, schedules, state)
    for column, schedule in enumerate(schedules):
        alone = simulate(model, schedule, state)
        # per-column independence (analytic: the columns do not interact)
        np.testing.assert_allclose(batch.states[:, :, column], alone.states[:, :, 0], rtol=0, atol=1e-12)


def test_per_person_parameters_match_separate_runs(entrained_states):
    taus = np.array([23.9, 24.2, 24.6])
    schedule = daily(DAYTIME["habitual day, 10,000-lux box"], days=2)
    base, state = load_model("forger1999"), entrained_states["forger1999"]
    batch = simulate(base.with_values(tau_x=taus), schedule, state)
    assert batch.size == 3
    for column, tau in enumerate(taus):
        alone = simulate(base.with_values(tau_x=tau), schedule, state)
        np.testing.assert_allclose(batch.states[:, :, column], alone.states[:, :, 0], rtol=0, atol=1e-12)


def test_the_same_instants_in_another_time_zone_give_the_same_run(entrained_states):
    # aware datetimes name instants; the zone they are written in cannot matter (analytic)
    berlin = ZoneInfo("Europe/Berlin")
    layers_of_day = DAYTIME["habitual day, 10,000-lux box"]
    utc = daily(layers_of_day, days=2)
    local_layers = []
    for d in range(-1, 3):
        for kind, a, b, v in layers_of_day:
            start, end = at(24 * d + a).astimezone(berlin), at(24 * d + b).astimezone(berlin)
            local_layers.append(sleep(start, end) if kind == "sleep" else
                                light_box(start, end, v) if kind == "box" else ambient(start, end, v, "daylight"))
    local = LightSchedule.from_layers(T0.astimezone(berlin), at(48).astimezone(berlin), 150.0, local_layers)
    model, state = load_model("hannay2019"), entrained_states["hannay2019"]
    np.testing.assert_allclose(simulate(model, local, state).states, simulate(model, utc, state).states,
                               rtol=0, atol=1e-12)


def test_a_successful_result_reports_success():
    model = load_model("forger1999")
    result = simulate(model, LightSchedule.constant(T0, at(24), 150.0), np.array([-1.0, 0.0, 0.0]))
    assert (result.success, result.status) == (True, STATUS_SUCCESS)
    steps = round(24 * 60 / model.step_minutes)            # 24 h of the file's steps
    assert f"{steps} steps" in result.message
    assert np.isfinite(result.states).all() and np.isfinite(result.drive).all()
    assert result.states.shape == (steps + 1, 3, 1) and result.times[-1] == pytest.approx(24.0)


def _blown_up(model, step_minutes=None, days=4):
    schedule = LightSchedule.constant(T0, at(24 * days), 150.0)
    with warnings.catch_warnings():
        warnings.simplefilter("error")                     # overflow must be reported, not warned about
        return simulate(model, schedule, np.array([1.0, 0.0, 0.0]), step_minutes=step_minutes)


def test_an_absurd_step_is_reported_as_a_failure_not_a_silent_nan():
    # jewett1999's 7th-order damping term makes explicit RK4 unstable at a 10-h step
    result = _blown_up(load_model("jewett1999"), step_minutes=600)
    assert result.success is False
    assert result.status == STATUS_NONFINITE
    assert "non-finite" in result.message and "schedule 0" in result.message
    rows = np.isfinite(result.states).all(axis=(1, 2))
    first_bad = int(np.argmin(rows))
    assert rows[:first_bad].all() and not rows[first_bad:].any()   # documented: NaN from the failing step on
    assert first_bad > 0


def test_the_failing_person_of_a_batch_is_named():
    # one person with a damping 100 times the published mu = 0.13 (Jewett et al. 1999) is stiff
    # beyond the default step; the others are not
    model = load_model("jewett1999").with_values(mu=np.array([0.13, 1.3, 13.0]))
    result = _blown_up(model)
    assert not result.success and result.status == STATUS_NONFINITE
    assert "schedule 2" in result.message
    # the message's time is the start of the last finite step, in the result's own frame
    when = datetime.fromisoformat(re.search(r"step starting (\S+);", result.message).group(1))
    first_bad = int(np.argmin(np.isfinite(result.states).all(axis=(1, 2))))
    assert (when - result.epoch).total_seconds() / 3600.0 == pytest.approx(result.times[first_bad - 1])
    # and the stable people alone succeed (so it is the parameter, not the step, for them)
    assert _blown_up(load_model("jewett1999").with_values(mu=np.array([0.13, 1.3]))).success


def test_a_non_finite_start_state_is_refused():
    from planner.errors import InputError
    with pytest.raises(InputError):
        simulate(load_model("forger1999"), LightSchedule.constant(T0, at(24), 150.0), np.array([np.nan, 0.0, 0.0]))
