"""The three-process model of alertness (planner.engine.sleepiness): published equations and facts of shift work.

References
----------
* Åkerstedt T, Folkard S (1997), Chronobiol Int 14:115 — Process S (La 2.4, Ha 14.3, rates 0.0353/h awake
  and 0.381/h asleep) and Process C (amplitude 2.5, acrophase 16.8 h); from memory.
* Åkerstedt T, Folkard S, Portin C (2004), Aviat Space Environ Med 75:A75 — sleep inertia −5.72 e^(−1.51 t)
  and KSS = 10.6 − 0.6 · alertness; from memory.
"""

from __future__ import annotations

import math
from datetime import datetime, timedelta, timezone

import numpy as np
import pytest

from planner.engine.entrainment import DailyPattern, entrain
from planner.engine.integrate import simulate
from planner.world.light import LightSchedule, ambient, sleep
from planner.engine.markers import cbtmin_times
from planner.engine.parameters import load_model
from planner.engine.sleepiness import (GRID_STEP_H, SLEEPY_KSS, acrophase_after_cbtmin, alertness, circadian_hours,
                                load_alertness_model, plan_sleep, process_c, process_s, shift_sleepiness,
                                sleep_inertia, steady_s)

UTC = timezone.utc
TPM = load_alertness_model()


def test_published_constants():
    # Åkerstedt & Folkard 1997 and Åkerstedt et al. 2004 (from memory).
    assert (TPM.lower_asymptote, TPM.upper_asymptote) == (2.4, 14.3)
    assert (TPM.wake_rate_per_h, TPM.sleep_rate_per_h) == (0.0353, 0.381)
    assert (TPM.amplitude, TPM.acrophase_h) == (2.5, 16.8)
    assert (TPM.inertia_amplitude, TPM.inertia_rate_per_h) == (-5.72, 1.51)


def test_process_s_reproduces_the_exponentials():
    # Awake: S − La shrinks by e every 1/0.0353 = 28.3 h; asleep: Ha − S shrinks by e every 1/0.381 = 2.6 h.
    hours = 1 / TPM.wake_rate_per_h
    steps = int(round(hours / GRID_STEP_H))
    awake = process_s(np.zeros((steps, 1), bool), hours / steps, 14.3, TPM)
    assert awake[-1, 0] - 2.4 == pytest.approx((14.3 - 2.4) / math.e, rel=1e-9)
    asleep = process_s(np.ones((steps, 1), bool), hours / steps, 2.4, TPM)
    assert 14.3 - asleep[-1, 0] == pytest.approx((14.3 - 2.4) * math.exp(-0.381 * hours), rel=1e-9)
    # The asymptotes: long waking tends to La, long sleep to Ha.
    long_wake = process_s(np.zeros((6000, 1), bool), 0.1, 14.3, TPM)[-1, 0]
    long_sleep = process_s(np.ones((600, 1), bool), 0.1, 2.4, TPM)[-1, 0]
    assert long_wake == pytest.approx(2.4, abs=1e-6) and long_sleep == pytest.approx(14.3, abs=1e-6)


def test_process_c_inertia_and_kss():
    # C peaks at the acrophase with amplitude M and is lowest 12 h away (Åkerstedt & Folkard 1997).
    lag = 12.5
    assert float(process_c(lag, TPM, lag)) == pytest.approx(2.5)
    assert float(process_c(lag + 12, TPM, lag)) == pytest.approx(-2.5)
    # Sleep inertia −5.72 at waking, halving every ln 2 / 1.51 = 0.46 h (Åkerstedt et al. 2004).
    assert float(sleep_inertia(0.0, TPM)) == pytest.approx(-5.72)
    assert float(sleep_inertia(math.log(2) / 1.51, TPM)) == pytest.approx(-2.86)
    # KSS translation (Åkerstedt et al. 2004): the model's risk level, alertness 7, is KSS 6.4; KSS 7 is
    # alertness 6; the scale is 1-9 (Åkerstedt & Gillberg 1990).
    assert float(TPM.kss(7.0)) == pytest.approx(6.4)
    assert TPM.alertness_at_kss(7.0) == pytest.approx(6.0)
    assert float(TPM.kss(-10.0)) == 9.0 and float(TPM.kss(20.0)) == 1.0


def test_circadian_hours_follow_the_simulated_cbtmin():
    marks = np.array([[4.0, 28.0, 54.0, np.nan]])            # a clock delaying by 2 h on the second day
    hours = circadian_hours(np.array([4.0, 16.0, 41.0, 54.0, 66.0, 0.0]), marks)[:, 0]
    assert hours == pytest.approx([0.0, 12.0, 12.0, 0.0, 12.0, 20.0])


def test_acrophase_lag_puts_the_peak_near_the_published_clock_hour():
    # With the oscillator entrained to 23:00-07:00 sleep, the peak falls at 16.8 h on the clock by
    # construction; the lag after CBTmin is about 12-13 h (CBTmin about 04:00-05:00 for that sleep,
    # common practice: CBTmin about 2-3 h before habitual wake).
    for name in ("forger1999", "jewett1999", "hannay2019"):
        assert 11.5 < acrophase_after_cbtmin(load_model(name)) < 13.5


# --------------------------------------------------------------------------- a simulated run of nights

MIDNIGHT = datetime(2027, 1, 4, tzinfo=UTC)
NIGHTS = 5


def _night_run(model_name: str = "jewett1999"):
    """Three ordinary days, then five 23:00-07:00 night shifts with day sleep 08:00-15:00 and no countermeasures."""
    model = load_model(model_name)
    steady = entrain(model, DailyPattern(23.0, 7.0))
    days = 3 + NIGHTS + 1
    layers, sleeps = [], []
    for d in range(days):
        base = MIDNIGHT + timedelta(days=d)
        layers.append(ambient(base + timedelta(hours=12), base + timedelta(hours=13), 3000.0, "daylight"))
    for d in range(4):                                         # the nights before days 0-3
        sleeps.append((MIDNIGHT + timedelta(days=d - 1, hours=23), MIDNIGHT + timedelta(days=d, hours=7)))
    shifts = []
    for n in range(NIGHTS):
        start = MIDNIGHT + timedelta(days=3 + n, hours=23)
        shifts.append((start, start + timedelta(hours=8)))
        layers.append(ambient(start, start + timedelta(hours=8), 300.0, "work"))
        sleeps.append((start + timedelta(hours=9), start + timedelta(hours=16)))
    layers += [sleep(a, b) for a, b in sleeps]
    end = MIDNIGHT + timedelta(days=days)
    schedule = LightSchedule.from_layers(MIDNIGHT, end, 150.0, layers)
    result = simulate(model, schedule, steady.state[:, 0], start=MIDNIGHT, end=end)
    cbt = np.array([cbtmin_times(result)[0]])
    h = lambda t: (t - MIDNIGHT).total_seconds() / 3600.0  # noqa: E731
    plan = plan_sleep([(np.array([h(a) for a, _ in sleeps]), np.array([h(b) for _, b in sleeps]))],
                      h(end), steady_s(23.0, 7.0, 0.0, TPM), TPM)
    w0 = np.array([h(a) for a, _ in shifts])
    w1 = np.array([h(b) for _, b in shifts])
    return model, plan, cbt, w0, w1, steady


def test_end_of_night_kss_is_highest_on_the_first_night_and_falls():
    # Sleepiness at the end of night shifts is worst on the first night (longest time awake) and eases
    # over the following nights as sleep is taken by day and the clock moves (Åkerstedt 1988, Sleep
    # 11:17; Folkard & Tucker 2003, Occup Med 53:95; from memory).
    model, plan, cbt, w0, w1, _ = _night_run()
    lag = acrophase_after_cbtmin(model)
    end_kss = TPM.kss(alertness(plan, np.array([0]), w1 - 1e-6, cbt, lag, TPM)[:, 0])
    assert int(np.argmax(end_kss)) == 0
    assert end_kss[-1] < end_kss[0] - 0.5
    assert np.all(np.diff(end_kss[1:]) <= 0.05)              # no rise again once the day sleep starts


def test_drive_home_after_the_first_night_is_flagged():
    # A drive home after a night awake reaches KSS >= 7 (Lee et al. 2016, PNAS 113:176: near-crashes in
    # 37.5 % of drives after night work, none after sleep); a drive after a day shift does not.
    model, plan, cbt, w0, w1, _ = _night_run()
    lag = acrophase_after_cbtmin(model)
    nights = shift_sleepiness(plan, np.array([0]), cbt, lag, w0, w1, 0.5, TPM)
    assert bool(nights.drive_flag[0, 0]) and nights.drive_kss[0, 0] >= SLEEPY_KSS
    assert nights.sleepy_hours[0, 0] > 1.0
    # Day shifts 08:00-16:00 on the three ordinary days (woken at 07:00, slept 23:00-07:00).
    days = shift_sleepiness(plan, np.array([0]), cbt, lag, np.array([8.0, 32.0, 56.0]), np.array([16.0, 40.0, 64.0]),
                            0.5, TPM)
    assert not days.drive_flag.any() and float(days.peak_kss.max()) < 5.0


def test_full_night_lowers_next_day_sleepiness_against_four_hours():
    # Restricting sleep to 4 h raises next-day sleepiness (Van Dongen et al. 2003, Sleep 26:117;
    # common practice).
    model = load_model("jewett1999")
    lag = acrophase_after_cbtmin(model)
    cbt = np.array([[4.5 + 24.0 * k for k in range(4)]])
    s0 = steady_s(23.0, 7.0, 0.0, TPM)
    full = plan_sleep([(np.array([-1.0, 23.0]), np.array([7.0, 31.0]))], 48.0, s0, TPM)
    short = plan_sleep([(np.array([-1.0, 27.0]), np.array([7.0, 31.0]))], 48.0, s0, TPM)
    day = np.arange(32.0, 44.0, 0.5)                       # 08:00-20:00 the next day
    full_kss = TPM.kss(alertness(full, np.array([0]), day, cbt, lag, TPM))
    short_kss = TPM.kss(alertness(short, np.array([0]), day, cbt, lag, TPM))
    assert float(short_kss.mean()) > float(full_kss.mean()) + 0.5
    assert np.all(short_kss >= full_kss)
