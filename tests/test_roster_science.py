"""Roster planning against published night-work studies and facts of the trade.

Protocols are rebuilt with the roster machinery (shift layout, light at the eye, the batch
integrator and the roster metrics) and compared with the published results.  DLMO is read
after the protocol in dim light, as the studies measured it in a dim constant routine.
"""

from datetime import date, timedelta
from zoneinfo import ZoneInfo

import numpy as np
import pytest

from planner import load_model
from planner.rosters.model import Countermeasures, Draft, Roster, RosterPlan, ShiftType, roster_days
from planner.rosters.search import RosterEvaluator, plan_roster
from planner.world.light import Window
from planner.world.places import Place

MODELS = ["forger1999", "jewett1999", "hannay2019"]
#: An invented site for the protocols (laboratory studies: the place only sets daylight on commutes).
CHICAGO = Place("Chicago", ZoneInfo("America/Chicago"), 41.88, -87.63, 23.0, 7.0)
NIGHT = ShiftType("N", 23.0, 7.0)
#: Dim light of a constant routine [lux] (Khalsa et al. 2003, J Physiol 549:945: 2-7 lux; a round figure).
DIM_LUX = 5.0


def _clock_difference(a: float, b: float) -> float:
    return (a - b + 12.0) % 24.0 - 12.0


def _night_protocol(model_id: str, nights: int, sleep_h: tuple[float, float], *, light_h=None, lux=10_000.0,
                    glasses=False, brake=False, commute_minutes=30.0):
    """Consecutive 23:00-07:00 nights with fixed sleep and optional light; DLMO measured after, in dim light.

    Returns the entrained DLMO before [h of day] and the DLMO after the protocol [h of day].
    """
    draft = Draft("protocol", ("N",) * nights + (None,), 1)
    roster = Roster("protocol", CHICAGO, date(2027, 7, 5), (NIGHT,), (draft,), commute_minutes=commute_minutes,
                    work_lux=150.0, indoor_lux=150.0, measures=Countermeasures())
    evaluator = RosterEvaluator(roster, load_model(model_id))
    days = roster_days(roster, draft)
    commute = timedelta(minutes=commute_minutes)
    sleep = [(roster.at(days[0].date, -1.0), roster.at(days[0].date, 7.0))]
    bright, avoid, outdoor = [], [], []
    for day in days[:nights]:
        outdoor += [(day.work[0] - commute, day.work[0]), (day.work[1], day.work[1] + commute)]
        bed, wake = roster.at(day.date, 24.0 + sleep_h[0]), roster.at(day.date, 24.0 + sleep_h[1])
        sleep.append((bed, wake))
        if light_h is not None:
            bright.append(Window(roster.at(day.date, light_h[0]), roster.at(day.date, light_h[1]), lux, "light box"))
        if glasses:
            avoid.append(Window(day.work[1], day.work[1] + timedelta(hours=1.5), 0.15, "dark glasses"))
        if brake:
            bright.append(Window(wake + timedelta(hours=0.5), wake + timedelta(hours=1.0), 10_000.0, "daylight"))
    routine_start = sleep[-1][1] + timedelta(hours=1.0 if brake else 0.0)
    bright.append(Window(routine_start, routine_start + timedelta(hours=30), DIM_LUX, "constant routine"))
    metrics = evaluator.evaluate(draft, [RosterPlan(tuple(sleep), tuple(bright), tuple(avoid), tuple(outdoor))],
                                 final=True)
    rule = evaluator.model.file.markers.dlmo
    before = evaluator.ref.cbtmin_clock_h + (rule.offset_h if rule.rule == "cbtmin_offset" else -7.5)
    return before % 24.0, float(metrics.dlmo[0, nights] % 24.0)


@pytest.mark.parametrize("model_id", MODELS)
def test_compromise_intervention_moves_dlmo_to_the_early_morning(model_id):
    # Smith & Eastman 2008, Sleep 31:1639: bright light early in the night shift, dark glasses on the way
    # home, a fixed dark daytime sleep (08:30-15:30) and afternoon outdoor light moved DLMO to about
    # 04:30 after a week of nights, against about 00:30 without them.  Light: 3 h at 10,000 lux from
    # 23:30 stands in for the study's intermittent bright light (pattern and level from memory).
    _, treated = _night_protocol(model_id, 7, (8.5, 15.5), light_h=(23.5, 26.5), glasses=True, brake=True)
    before, control = _night_protocol(model_id, 7, (8.0, 15.0))
    # Published 04:30 vs 00:30; the van der Pol responses to bright light are smaller than measured
    # (science reference, section 3), so the bands are an hour wider than the published values.
    # Regression snapshot (measured here): treated 03:47-04:49, control 00:11-01:20 across the models.
    assert 2.5 <= treated <= 5.5
    assert _clock_difference(control, 0.5) == pytest.approx(0.0, abs=1.5)
    assert _clock_difference(treated, control) >= 2.0
    # "several hours later" than before the nights (Smith & Eastman 2008): baseline DLMO near 21:00
    assert _clock_difference(treated, before) >= 4.0


@pytest.mark.parametrize("model_id", MODELS)
def test_santhi_delay_protocol_delays_by_about_five_hours(model_id):
    # Santhi et al. 2008, J Biol Rhythms 23:341: shifts 23:00-07:00 with bright light 23:00-03:00 and
    # sleep 08:00-16:00 delayed DLMO by 4.98 h (three nights and 10,000 lux here: from memory).
    before, after = _night_protocol(model_id, 3, (8.0, 16.0), light_h=(23.0, 27.0), commute_minutes=0.0)
    assert _clock_difference(after, before) == pytest.approx(4.98, abs=1.0)


def test_santhi_delay_exceeds_the_advance_protocol():
    # Santhi et al. 2008, J Biol Rhythms 23:341: light 23:00-03:00 with sleep 08:00-16:00 delayed DLMO
    # 4.98 h; light 03:00-07:00 with sleep 14:00-22:00 advanced it 2.27 h (order and rough size).
    # jewett1999 reproduces both (regression snapshot, measured here: +5.10 h and -2.27 h).
    before, delayed = _night_protocol("jewett1999", 3, (8.0, 16.0), light_h=(23.0, 27.0), commute_minutes=0.0)
    _, advanced = _night_protocol("jewett1999", 3, (14.0, 22.0), light_h=(27.0, 31.0), commute_minutes=0.0)
    delay, advance = _clock_difference(delayed, before), -_clock_difference(advanced, before)
    assert advance > 0.5 and delay > 0.5
    assert delay > 1.5 * advance
    assert advance == pytest.approx(2.27, abs=1.0)


@pytest.mark.xfail(strict=True, reason=(
    "forger1999 and hannay2019 advance about as much as they delay in the Santhi et al. 2008 advance "
    "protocol (regression snapshot, measured here: forger1999 +4.75/-4.75 h, hannay2019 +4.96/-4.38 h), "
    "against the published 4.98 h delay vs 2.27 h advance. Strict: a model change that makes it pass "
    "should be looked at."))
@pytest.mark.parametrize("model_id", ["forger1999", "hannay2019"])
def test_santhi_asymmetry_in_the_other_models(model_id):
    before, delayed = _night_protocol(model_id, 3, (8.0, 16.0), light_h=(23.0, 27.0), commute_minutes=0.0)
    _, advanced = _night_protocol(model_id, 3, (14.0, 22.0), light_h=(27.0, 31.0), commute_minutes=0.0)
    # Santhi et al. 2008, J Biol Rhythms 23:341: delay / advance = 4.98 / 2.27, about 2.2
    assert _clock_difference(delayed, before) > 1.5 * -_clock_difference(advanced, before)


def _weekly(order: tuple[str, str, str]) -> Draft:
    pattern = []
    for code in order:
        pattern += [code] * 5 + [None] * 2
    return Draft("-".join(order), tuple(pattern), 2)


@pytest.mark.parametrize("model_id", MODELS)
def test_forward_rotation_disrupts_less_than_backward(model_id):
    # Czeisler, Moore-Ede & Coleman 1982, Science 217:460 (from memory): rotating forward (day -> evening
    # -> night) is less disruptive than backward; common practice in shift-work scheduling.  Weekly
    # rotation of 8-h shifts, five on and two off, the same hours either way, no light measures.
    site = Place("Rotterdam", ZoneInfo("Europe/Amsterdam"), 51.92, 4.48, 23.0, 7.0)
    shifts = (ShiftType("M", 7.0, 15.0), ShiftType("E", 15.0, 23.0), ShiftType("N", 23.0, 7.0))
    forward, backward = _weekly(("M", "E", "N")), _weekly(("N", "E", "M"))
    roster = Roster("rotation", site, date(2027, 3, 1), shifts, (forward, backward))
    result = plan_roster(roster, load_model(model_id), "nights")
    scores = {r.draft.name: r.baseline.score for r in result.drafts}
    # Regression snapshot (measured here): forward 21.2-23.9 h/wk, backward 21.7-26.6 h/wk.
    assert scores["M-E-N"] < scores["N-E-M"]


def test_population_with_longer_intrinsic_periods_drifts_later_on_nights():
    # Duffy et al. 2011, PNAS 108:15602: intrinsic periods 24.15 ± 0.2 h; a longer period delays more
    # easily (a facts-of-the-trade consequence of the PRC; Czeisler et al. 1999, Science 284:2177).
    draft = Draft("nights", ("N",) * 5 + (None,) * 2, 1)
    roster = Roster("nights", CHICAGO, date(2027, 7, 5), (NIGHT,), (draft,))
    model = load_model("forger1999")
    result = plan_roster(roster, model, "nights", workers=60, seed=3, sensitivity_sd_ln=0.0)
    population = result.drafts[0].population
    from planner.engine.population import draw_population
    tau = draw_population(model, 60, 3).tau_h
    last = population.metrics.cbtmin[:, 4]
    ok = np.isfinite(last)
    # With equal light sensitivity, CBTmin after the last night is later the longer tau is: monotone
    # (from memory; a longer period drifts later under the same light).
    order = np.argsort(tau[ok])
    assert np.all(np.diff(last[ok][order]) > -1e-6)
    # The reported spread is that of the drawn periods (Duffy et al. 2011: mean 24.15 h)
    assert population.tau_h["median"] == pytest.approx(24.15, abs=0.1)
    # Drawing light sensitivity as well (this planner's assumption) only widens the spread of the last CBTmin.
    varied = plan_roster(roster, model, "nights", workers=60, seed=3).drafts[0].population.cbtmin_clock_h[4]
    steady = population.cbtmin_clock_h[4]
    assert varied[2] - varied[0] >= steady[2] - steady[0]


def test_a_worker_at_the_edge_of_entrainment_does_not_fail_a_population_run():
    # A long intrinsic period with a weak light drive may not entrain to an ordinary day (the range of
    # entrainment shrinks with the zeitgeber's strength; from memory); such a drawn worker keeps the
    # state the free day gives them instead of failing everyone's run.
    from planner.engine.population import with_people
    from planner.rosters.search import reference
    draft = Draft("nights", ("N",) * 3, 1)
    roster = Roster("edge", CHICAGO, date(2027, 7, 5), (NIGHT,), (draft,))
    model = with_people(load_model("forger1999"), np.array([24.15, 24.9]), np.array([1.0, 0.05]))
    state = reference(roster, model).state
    assert state.shape == (3, 2) and np.all(np.isfinite(state))
