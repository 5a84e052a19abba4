"""The night-work checks of the validation table: published protocols rebuilt with the roster machinery.

``smith2008``    a week of nights with bright light early in the shift, dark glasses home, dark day
                 sleep and afternoon outdoor light: DLMO about 04:30 against 00:30 without
                 (Smith & Eastman 2008, Sleep 31:1639).
``santhi2008``   three nights 23:00-07:00 with light 23:00-03:00 and sleep 08:00-16:00 delayed DLMO
                 4.98 h; light 03:00-07:00 and sleep 14:00-22:00 advanced it 2.27 h (Santhi et al.
                 2008, J Biol Rhythms 23:341).

The other checks are in :mod:`planner.engine.validation`.
"""

from __future__ import annotations

from datetime import date, timedelta
from typing import Callable
from zoneinfo import ZoneInfo

from planner.engine.parameters import ModelSpec
from planner.engine.validation import DIM_LUX, Check
from planner.rosters.model import Countermeasures, Draft, Roster, RosterPlan, ShiftType, roster_days
from planner.rosters.search import RosterEvaluator
from planner.world.light import Window
from planner.world.places import Place


def _clock_difference(a: float, b: float) -> float:
    return (a - b + 12.0) % 24.0 - 12.0


def night_protocol(model: ModelSpec, nights: int, sleep_h: tuple[float, float], *, light_h=None, lux=10_000.0,
                   glasses=False, brake=False, commute_minutes=30.0) -> tuple[float, float]:
    """Consecutive 23:00-07:00 nights with fixed sleep and optional light; DLMO measured after, in dim light.

    Built with the roster machinery (shift layout, light at the eye, the batch integrator and the roster
    metrics) at an invented site; DLMO is read after the protocol in a dim constant routine, as the
    studies measured it.

    Returns
    -------
    (float, float)
        The entrained DLMO before and the DLMO after the protocol [h of the day].
    """
    site = Place("Chicago", ZoneInfo("America/Chicago"), 41.88, -87.63, 23.0, 7.0)
    draft = Draft("protocol", ("N",) * nights + (None,), 1)
    roster = Roster("protocol", site, date(2027, 7, 5), (ShiftType("N", 23.0, 7.0),), (draft,),
                    commute_minutes=commute_minutes, work_lux=150.0, indoor_lux=150.0, measures=Countermeasures())
    evaluator = RosterEvaluator(roster, model)
    days = roster_days(roster, draft)
    commute = timedelta(minutes=commute_minutes)
    sleeps = [(roster.at(days[0].date, -1.0), roster.at(days[0].date, 7.0))]
    bright, avoid, outdoor = [], [], []
    for day in days[:nights]:
        outdoor += [(day.work[0] - commute, day.work[0]), (day.work[1], day.work[1] + commute)]
        bed, wake = roster.at(day.date, 24.0 + sleep_h[0]), roster.at(day.date, 24.0 + sleep_h[1])
        sleeps.append((bed, wake))
        if light_h is not None:
            bright.append(Window(roster.at(day.date, light_h[0]), roster.at(day.date, light_h[1]), lux, "light box"))
        if glasses:
            avoid.append(Window(day.work[1], day.work[1] + timedelta(hours=1.5), 0.15, "dark glasses"))
        if brake:
            # Afternoon outdoor light as a brake: daylight at the site (planner.world.daylight follows the sun).
            bright.append(Window(wake + timedelta(hours=0.5), wake + timedelta(hours=1.0), 10_000.0, "daylight"))
    routine_start = sleeps[-1][1] + timedelta(hours=1.0 if brake else 0.0)
    bright.append(Window(routine_start, routine_start + timedelta(hours=30), DIM_LUX, "constant routine"))
    metrics = evaluator.evaluate(draft, [RosterPlan(tuple(sleeps), tuple(bright), tuple(avoid), tuple(outdoor))],
                                 final=True)
    rule = evaluator.model.file.markers.dlmo
    before = evaluator.ref.cbtmin_clock_h + (rule.offset_h if rule.rule == "cbtmin_offset" else -7.5)
    return before % 24.0, float(metrics.dlmo[0, nights] % 24.0)


def compromise_dlmo(model: ModelSpec) -> tuple[float, float, float]:
    """Smith & Eastman 2008: (DLMO before, after the treated week, after the control week) [h of the day]."""
    _, treated = night_protocol(model, 7, (8.5, 15.5), light_h=(23.5, 26.5), glasses=True, brake=True)
    before, control = night_protocol(model, 7, (8.0, 15.0))
    return before, treated, control


def santhi_shifts(model: ModelSpec) -> tuple[float, float]:
    """Santhi et al. 2008: (delay, advance) of DLMO after the two protocols [h, both positive when as published]."""
    before, delayed = night_protocol(model, 3, (8.0, 16.0), light_h=(23.0, 27.0), commute_minutes=0.0)
    _, advanced = night_protocol(model, 3, (14.0, 22.0), light_h=(27.0, 31.0), commute_minutes=0.0)
    return _clock_difference(delayed, before), -_clock_difference(advanced, before)


def _smith(model: ModelSpec) -> list[Check]:
    _, treated, control = compromise_dlmo(model)
    source = "Smith & Eastman 2008, Sleep 31:1639"
    unwrap = lambda h: h if h < 12 else h - 24.0  # noqa: E731  (clock hours around midnight)
    return [Check("smith2008", "DLMO after a treated week of nights [clock h]", 4.5, unwrap(treated), 2.5, 5.5, source),
            Check("smith2008", "DLMO after an untreated week of nights [clock h]", 0.5, unwrap(control), -1.0, 2.0,
                  source)]


def _santhi(model: ModelSpec) -> list[Check]:
    delay, advance = santhi_shifts(model)
    source = "Santhi et al. 2008, J Biol Rhythms 23:341"
    return [Check("santhi2008", "DLMO delay, light 23:00-03:00 [h]", 4.98, delay, 3.98, 5.98, source),
            Check("santhi2008", "DLMO advance, light 03:00-07:00 [h]", 2.27, advance, 1.27, 3.27, source),
            Check("santhi2008", "delay / advance [ratio]", 4.98 / 2.27, delay / advance if advance > 0 else float("nan"),
                  1.5, float("inf"), source, "the asymmetry the tests ask for: delay at least 1.5 × advance")]




#: The checks of this module by key.
ROSTER_CHECKS: dict[str, Callable[[ModelSpec], list[Check]]] = {"smith2008": _smith, "santhi2008": _santhi}
