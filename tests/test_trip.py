"""Trip planning against published light responses and common practice, and the `trip`/`demo` commands.

Each demo trip (scenarios/, invented travellers) is planned once per session (``demo_plans``);
the command-line tests reuse those plans through a stand-in for ``planner.service.search_trip`` that
returns the stored result for the same trip, so formatting is tested without planning again.
One end-to-end run in a subprocess plans the short demo for real.
"""

from __future__ import annotations

import math
import subprocess
import sys
from datetime import datetime, timedelta
from pathlib import Path

import astral
import astral.sun
import numpy as np
import pytest
from test_cli import one_json_document
from typer.testing import CliRunner

import planner.service
from planner import load_model
from planner.cli import app
from planner.trips.model import Flight, Plan, Trip, habitual_sleep, trip_days, where_at
from planner.trips.scenario import builtin_scenario_paths
from planner.trips.search import REENTRAINMENT_TOLERANCE_H, Evaluator, TripPlanner
from planner.world.light import LightOptions, Window
from planner.world.localtime import resolve_local, to_utc, zone
from planner.world.places import Place

REPO = Path(__file__).resolve().parent.parent
SCENARIOS = REPO / "scenarios"
EAST_DEMO, WEST_DEMO, SHORT_DEMO = "lisbon-tokyo", "frankfurt-vancouver", "madrid-newyork-short"


def run(*args: str):
    return CliRunner().invoke(app, list(args), env={"COLUMNS": "200"})


def days_or_inf(days: int | None) -> float:
    return math.inf if days is None else float(days)


@pytest.fixture(scope="module")
def model():
    return load_model("forger1999")


@pytest.fixture(scope="module")
def demo_plans(planned_demos):
    """name -> (trip, info, TripPlanResult) for every shipped demo trip, planned once per session."""
    return {name: planned_demos(name) for name in builtin_scenario_paths()}


@pytest.fixture
def stored_plans(demo_plans, monkeypatch):
    """Let the CLI reuse the module's plans for the same trip (auto strategy, the file's own model)."""
    real = planner.service.search_trip

    def stand_in(trip, model, strategy="auto", **kwargs):
        for stored_trip, info, result in demo_plans.values():
            if stored_trip == trip and strategy == "auto" and model.id == info.model:
                return result
        return real(trip, model, strategy, **kwargs)

    monkeypatch.setattr(planner.service, "search_trip", stand_in)
    return demo_plans


def all_outcomes(result):
    return [(name, r.outcome) for name, r in result.alternatives.items()]


def overlaps(a_start, a_end, b_start, b_end) -> bool:
    return a_start < b_end and b_start < a_end


# --------------------------------------------------------------------------- the demo plans

def test_recommended_plan_reentrains_no_later_than_no_plan(demo_plans):
    for name, (trip, info, result) in demo_plans.items():
        best = result.recommended.outcome
        if best.aim == "home":
            continue   # staying on home time does not aim at the destination (next test)
        assert result.success, (name, result.message)
        # a planned light schedule re-entrains at least as fast as none (Dean, Forger & Klerman 2009,
        # PLoS Comput Biol 5:e1000418: optimised light schedules shorten re-entrainment)
        assert days_or_inf(best.reentrainment_days) <= days_or_inf(result.baseline.reentrainment_days), name


def test_nine_hours_east_the_plan_is_strictly_faster_and_advances(demo_plans):
    trip, _, result = demo_plans[EAST_DEMO]
    assert result.strategy == "advance"
    best = result.recommended.outcome
    # strictly sooner than no plan for a >= 6-h eastward trip (Burgess et al. 2003, J Biol Rhythms 18:318:
    # a pre-flight advance with morning light shortens jet lag; Dean et al. 2009 for optimised light)
    assert days_or_inf(best.reentrainment_days) < days_or_inf(result.baseline.reentrainment_days)
    # it moves the clock 9 h earlier, the Lisbon (UTC+0) to Tokyo (UTC+9) difference (IANA tz database),
    # within the 1-h re-entrainment tolerance
    assert best.direction == "advance" and best.net_shift_h == pytest.approx(-9.0, abs=1.0)


def test_without_a_plan_nine_hours_east_goes_the_long_way_round(demo_plans):
    _, _, result = demo_plans[EAST_DEMO]
    # after large eastward flights the clock often re-entrains by delaying instead of advancing
    # (antidromic re-entrainment; common practice, no single source): delays come easier than advances
    assert result.baseline.direction == "delay" and result.baseline.net_shift_h > 6.0


def test_nine_hours_west_the_plan_delays(demo_plans):
    _, _, result = demo_plans[WEST_DEMO]
    best = result.recommended.outcome
    assert result.strategy == "delay" and best.direction == "delay"
    # Frankfurt (UTC+2) to Vancouver (UTC-7) in May is 9 h west (IANA tz database): a 9-h delay, within the
    # 1-h tolerance plus the last day's residual error
    residual = abs([d.error_h for d in best.days if math.isfinite(d.error_h)][-1])
    assert best.net_shift_h == pytest.approx(9.0, abs=REENTRAINMENT_TOLERANCE_H + residual)


def test_a_short_trip_home_again_stays_on_home_time(demo_plans):
    trip, info, result = demo_plans[SHORT_DEMO]
    assert info.round_trip and result.strategy == "home" and result.success
    assert "home time" in result.reason and "2 full days away" in result.reason
    held = result.recommended.outcome
    # two days away are far fewer than the ~6 days 6 time zones take (about one day per time zone;
    # common practice, no single source): the body clock should stay within 1 h of home time
    assert held.aim == "home" and held.max_away_error_h <= REENTRAINMENT_TOLERANCE_H
    assert result.baseline.reentrainment_days is None
    # home sleep is on the home clock: 23:00 in Madrid (UTC+2) is 17:00 in New York (UTC-4) (IANA tz)
    nights_in_new_york = [a.astimezone(zone("America/New_York")) for a, _ in held.plan.sleep
                          if where_at(trip, a) == trip.flights[0].destination]
    assert nights_in_new_york and all(a.hour == 17 and a.minute == 0 for a in nights_in_new_york)


def test_light_windows_avoid_sleep_busy_hours_and_flights(demo_plans):
    for name, (trip, _, result) in demo_plans.items():
        for strategy, outcome in all_outcomes(result):
            plan = outcome.plan
            windows = list(plan.bright) + list(plan.avoid)
            blocked = list(plan.sleep) + [(b.start, b.end) for b in trip.busy] + \
                [(f.depart, f.arrive) for f in trip.flights]
            for window in windows:
                assert window.end > window.start and trip.start <= window.start and window.end <= trip.end
                # an eye mask is the one light-avoidance worn in a seat on a flight (tests/test_trip_followable.py)
                spans = blocked if window.source != "eye mask" else list(plan.sleep) + [(b.start, b.end) for b in trip.busy]
                for a, b in spans:
                    # a prescribed window is a time the traveller is awake and free (the planner's rule)
                    assert not overlaps(window.start, window.end, a, b), (name, strategy, window, a, b)
            bright = sorted(plan.bright, key=lambda w: w.start)
            for first, second in zip(bright, bright[1:]):
                assert first.end <= second.start, (name, strategy, first, second)


def test_daylight_windows_fall_while_the_sun_is_up(demo_plans):
    checked = 0
    for name, (trip, _, result) in demo_plans.items():
        for strategy, outcome in all_outcomes(result):
            for window in outcome.plan.bright:
                if window.source != "daylight":
                    continue
                place = where_at(trip, window.start)
                assert place is not None and where_at(trip, window.end) == place
                local_day = window.start.astimezone(place.zone).date()
                sun = astral.sun.sun(astral.Observer(place.latitude, place.longitude), date=local_day,
                                     tzinfo=place.zone)
                # sunrise/sunset of the astral reference library, within its horizon difference
                # from NOAA's (under 2 min at these latitudes; see tests/test_sun.py)
                slack = timedelta(minutes=2)
                assert sun["sunrise"] - slack <= window.start and window.end <= sun["sunset"] + slack, \
                    (name, strategy, window, sun["sunrise"], sun["sunset"])
                checked += 1
    assert checked > 0


def test_daily_light_never_exceeds_its_caps(demo_plans):
    for name, (trip, _, result) in demo_plans.items():
        days = trip_days(trip)
        caps = {"light box": trip.light.box_max_minutes, "daylight": trip.light.daylight_max_minutes}
        for strategy, outcome in all_outcomes(result):
            used: dict[tuple[int, str], float] = {}
            for window in outcome.plan.bright:
                day = next(d.index for d in days if d.start <= window.start < d.end)
                used[(day, window.source)] = used.get((day, window.source), 0.0) + window.minutes
            for (day, source), minutes in used.items():
                # the file's caps (box_max_minutes, daylight_max_minutes) per trip day
                assert minutes <= caps[source] + 1e-6, (name, strategy, day, source, minutes)


# --------------------------------------------------------------------------- published light responses

def plain_trip(prep_days: int, *, depart: str = "2027-10-09 18:00", arrive: str = "2027-10-10 08:00",
               light: LightOptions = LightOptions(daylight=False)) -> Trip:
    """Invented: Chicago to London with ``prep_days`` days at home first, no daylight prescribed."""
    home = Place("Chicago", zone("America/Chicago"), 41.88, -87.63)
    away = Place("London", zone("Europe/London"), 51.51, -0.13)
    flight = Flight(home, away, to_utc(resolve_local(depart, home.zone)), to_utc(resolve_local(arrive, away.zone)))
    return Trip("invented", home, (flight,), prep_days, 1.0, away.midnight_after(flight.arrive) + timedelta(days=1),
                light)


def cbtmin_shift_h(reference, changed, day: int) -> float:
    """+ advance, − delay: how much earlier the changed plan's CBTmin is on ``day`` [h]."""
    return (reference.days[day].cbtmin - changed.days[day].cbtmin).total_seconds() / 3600.0


def test_evening_light_delays_and_morning_light_advances(model):
    trip = plain_trip(4)
    evaluator = Evaluator(trip, model)
    sleep = tuple(habitual_sleep(trip))
    day1 = trip_days(trip)[1]
    control = Plan(sleep)
    cbtmin = evaluator.evaluate([control])[0].days[1].cbtmin
    # three hours of 10,000 lux up to bedtime (20:00-23:00 local), before the next CBTmin, and three hours
    # from waking the next morning (07:00-10:00), after that CBTmin
    before = Window(day1.start + timedelta(hours=20), day1.start + timedelta(hours=23), 10_000.0, "light box")
    after = Window(day1.start + timedelta(hours=31), day1.start + timedelta(hours=34), 10_000.0, "light box")
    assert cbtmin < before.end < cbtmin + timedelta(days=1) < after.start
    outcomes = evaluator.evaluate([control, Plan(sleep, (before,)), Plan(sleep, (after,))])
    delayed = cbtmin_shift_h(outcomes[0], outcomes[1], 3)
    advanced = cbtmin_shift_h(outcomes[0], outcomes[2], 3)
    # light before CBTmin delays, after CBTmin advances (Khalsa et al. 2003, J Physiol 549:945)
    assert delayed < -0.15
    assert advanced > 0.15


def gradual_advance_plans(trip: Trip, lux: float):
    """Sleep 1 h earlier on each of 3 nights, with intermittent light after each early waking:
    four 30-min pulses an hour apart over 3.5 h (the protocol of Eastman et al. 2005)."""
    sleep = habitual_sleep(trip, [0.0, -1.0, -2.0, -3.0, -3.0, -3.0])
    pulses = []
    if lux > 0:
        for night in (2, 3, 4):   # the episodes ending on the 1st, 2nd and 3rd early morning
            wake = sleep[night][1]
            pulses += [Window(wake + timedelta(hours=k), wake + timedelta(hours=k + 0.5), lux, "light box")
                       for k in range(4)]
    return Plan(tuple(sleep), tuple(pulses))


def test_three_day_gradual_advance_moves_the_clock_one_to_two_and_a_half_hours(model):
    trip = plain_trip(6, depart="2027-10-09 18:00")
    evaluator = Evaluator(trip, model)
    days = trip_days(trip)
    assert [d.kind for d in days[:6]] == ["preparation"] * 6
    control, dim, bright = evaluator.evaluate([Plan(tuple(habitual_sleep(trip))), gradual_advance_plans(trip, 0.0),
                                               gradual_advance_plans(trip, 5_000.0)])
    # CBTmin on the morning after the third light session: the DLMO measured the evening before moves with it
    advance = cbtmin_shift_h(control, bright, 5)
    # 3 days of 1-h earlier sleep with morning bright light advance DLMO about 1.4-2.1 h
    # (Burgess et al. 2003, J Biol Rhythms 18:318; Eastman et al. 2005, Sleep 28:33): roughly 1-2.5 h
    assert 1.0 <= advance <= 2.5
    # morning bright light adds to what the earlier sleep alone does (Burgess et al. 2003: 0.6 h dim vs
    # 1.5-2.1 h with bright light)
    assert advance - cbtmin_shift_h(control, dim, 5) >= 0.3


MIRRORED = {
    # invented: Reykjavik (UTC+0, no DST) to places 6 h east / west without DST in March
    "east": ("Asia/Dhaka", 23.81, 90.41),
    "west": ("America/Belize", 17.50, -88.20),
}


def mirrored_trip(direction: str) -> Trip:
    home = Place("Reykjavik", zone("Atlantic/Reykjavik"), 64.15, -21.94)
    tz, lat, lon = MIRRORED[direction]
    away = Place(tz.split("/")[1], zone(tz), lat, lon)
    depart = to_utc(resolve_local("2027-03-10 12:00", home.zone))
    flight = Flight(home, away, depart, depart + timedelta(hours=8))
    return Trip("invented", home, (flight,), 0, 1.0, away.midnight_after(flight.arrive) + timedelta(days=16))


@pytest.mark.xfail(strict=True, reason=(
    "the van der Pol and macroscopic models on this planner's ordinary day re-entrain a 6-h advance sooner "
    "than a 6-h delay (regression snapshot, measured here, days without a plan east/west: forger1999 7/10, "
    "jewett1999 6/8, hannay2019 7/9; forger1999 with a plan 5/5), against common practice. Strict: a model "
    "or planner change that makes it pass should be looked at."))
def test_delays_come_faster_than_advances_for_equal_shifts(model):
    east, west = (TripPlanner(mirrored_trip(d), model).baseline() for d in ("east", "west"))
    assert east.direction == "advance" and west.direction == "delay"
    # westward (delaying) re-entrainment is faster than eastward for equal shifts, often quoted as
    # ~1.5 h/day vs ~1 h/day (common practice, no single source)
    assert days_or_inf(west.reentrainment_days) < days_or_inf(east.reentrainment_days)


# --------------------------------------------------------------------------- infeasible targets

def test_twelve_hours_in_two_days_without_light_is_reported_not_raised(tmp_path):
    text = (SCENARIOS / "lisbon-tokyo.toml").read_text(encoding="utf-8")
    text = (text.replace('"Europe/Lisbon"', '"America/Sao_Paulo"').replace("latitude = 38.72", "latitude = -23.55")
                .replace("longitude = -9.14", "longitude = -46.63").replace("preparation_days = 3", "preparation_days = 0")
                .replace("stay_days = 10", "stay_days = 2").replace("box_max_minutes = 60", "box_max_minutes = 0")
                .replace("daylight = true", "daylight = false"))
    path = tmp_path / "too-far.toml"
    path.write_text(text, encoding="utf-8")
    human = run("trip", str(path), "--strategy", "advance")
    assert human.exit_code == 0 and human.stdout == "" and "Not reached:" in human.stderr
    result = run("trip", str(path), "--strategy", "advance", "--json")
    # São Paulo (UTC-3) to Tokyo (UTC+9) is 12 h (IANA tz database): no clock moves that far in 2 days
    # (about one day per time zone; common practice, no single source) -> best plan, success False, exit 0
    assert result.exit_code == 0, result.stderr
    document = one_json_document(result.stdout)
    assert document["success"] is False and document["reentrainment_days"] is None
    assert "not reached" in document["message"] and "h from the destination's target" in document["message"]
    assert list(document["alternatives"]) == ["advance"] and document["strategy"] == "advance"
    assert document["days"] and all(not d["bright_light"] for d in document["days"])   # no light resources


# --------------------------------------------------------------------------- the commands

def offset_of(text: str) -> timedelta:
    moment = datetime.fromisoformat(text)
    assert moment.tzinfo is not None, f"{text} carries no UTC offset"
    return moment.utcoffset()


def test_demo_json_carries_the_plan(stored_plans):
    result = run("demo", "--json")
    assert result.exit_code == 0, result.stderr
    document = one_json_document(result.stdout)
    trip, _, plan = stored_plans[EAST_DEMO]
    for key in ("model", "citations", "strategy", "reentrainment_days", "success", "message", "reason", "baseline",
                "alternatives", "days", "simulated", "cautions"):
        assert key in document, key
    assert document["command"] == "demo" and document["model"]["id"] == "jewett1999"
    # the model's published DOI (Jewett, Forger & Kronauer 1999, J Biol Rhythms 14:493)
    assert "10.1177/074873049901400608" in document["model"]["citation"]
    assert document["citations"][0]["doi"] == "10.1177/074873049901400608"
    assert document["strategy"] == plan.strategy and document["success"] is plan.success
    assert document["reentrainment_days"] == plan.recommended.outcome.reentrainment_days
    assert document["simulated"] == plan.simulated > 0
    assert set(document["alternatives"]) == {"advance", "delay"}
    for entry in [document["baseline"], *document["alternatives"].values()]:
        for key in ("reentrainment_days", "direction", "net_phase_shift_h"):
            assert key in entry
    for entry in document["alternatives"].values():
        for key in ("light_box_minutes", "near_low_amplitude", "refined"):
            assert key in entry
    assert document["baseline"]["direction"] == plan.baseline.direction
    assert len(document["days"]) == len(trip_days(trip))
    lisbon, tokyo = timedelta(hours=0), timedelta(hours=9)   # UTC offsets in March (IANA tz database)
    for day in document["days"]:
        for key in ("date", "time_zone", "kind", "sleep", "bright_light", "light_avoidance", "cbtmin",
                    "phase_error_h"):
            assert key in day, key
        for window in day["bright_light"]:
            assert {"start", "end", "minutes", "lux", "source"} <= set(window)
        for window in day["sleep"] + day["bright_light"] + day["light_avoidance"]:
            assert offset_of(window["start"]) in (lisbon, tokyo) and offset_of(window["end"]) in (lisbon, tokyo)
        expected = lisbon if day["time_zone"] == "Europe/Lisbon" else tokyo
        if day["kind"] != "travel":
            assert offset_of(day["start"]) == expected
            assert day["cbtmin"] is None or offset_of(day["cbtmin"]) == expected
    assert {d["time_zone"] for d in document["days"]} == {"Europe/Lisbon", "Asia/Tokyo"}
    sources = [source for caution in document["cautions"] for source in caution["sources"]]
    # caution sources (the project's science reference, section 6)
    # the papers' own bibliographic data (CNS Spectrums 10(8); PNAS 113(1):176-181)
    assert any(s.startswith("Terman M, Terman JS 2005") and "CNS Spectrums" in s for s in sources)
    assert any(s.startswith("Lee ML et al. 2016") and "PNAS 113(1):176" in s for s in sources)
    # jewett1999 advances 2.5 h in 3 gradual days where 1.4-1.9 h was measured (Eastman et al. 2005, Sleep
    # 28:33; regression snapshot, measured here): the demo's preparation days are flagged optimistic.
    note = document["preparation_days_note"]
    assert trip.preparation_days > 0 and note["optimistic"] and note["model_advance_h"] > 1.9
    # The sleepiest hour of the travel day falls near the body clock's minimum, still on Lisbon time after
    # landing (alertness is lowest near the circadian trough: Åkerstedt & Folkard 1997, Chronobiol Int 14:115).
    travel = [row for row in document["sleepiest_hours"] if row["kind"] == "travel"]
    # with the planned sleep in flight the travel day's sleepiest hour is milder than a night awake would be
    # (regression snapshot, measured here: KSS 5.2 with sleep in flight, 7+ without)
    assert travel and travel[0]["mean_kss"] >= 5.0
    cbtmin = next(d["cbtmin"] for d in document["days"] if d["date"] == travel[0]["date"])
    gap_h = (datetime.fromisoformat(travel[0]["start"]) - datetime.fromisoformat(cbtmin)).total_seconds() / 3600
    # with the trough slept through in flight, the sleepiest waking hour lies next to that sleep: still on the
    # low side of the body clock, within 8 h of CBTmin (Åkerstedt & Folkard 1997; regression snapshot 5.5 h)
    assert abs(gap_h) <= 8.0
    day = next(d for d in document["days"] if d["date"] == travel[0]["date"])
    start = datetime.fromisoformat(travel[0]["start"])
    assert not any(datetime.fromisoformat(s["start"]) <= start < datetime.fromisoformat(s["end"]) for s in day["sleep"])
    assert {row["kind"] for row in document["sleepiest_hours"]} == {"travel", "arrival"}


def test_trip_human_output_goes_to_stderr(stored_plans):
    result = run("trip", str(SCENARIOS / f"{EAST_DEMO}.toml"))
    assert result.exit_code == 0, result.stderr
    assert result.stdout == ""
    text = result.stderr
    for words in ("Day-by-day plan", "CBTmin", "JST", "WET", "Advance, delay or no plan", "Recommended:",
                  "Cautions", "Bright light", "Dark glasses", "Sleep loss", "licensed clinician", "Citation"):
        assert words in text, words
    # the no-plan clock delays ~15 h instead of advancing 9 h (antidromic; common practice, no single source)
    assert "the long way round" in text


def test_demo_list_names_the_shipped_trips():
    result = run("demo", "--list", "--json")
    assert result.exit_code == 0
    names = [entry["name"] for entry in one_json_document(result.stdout)["demos"]]
    assert names == sorted(p.stem for p in SCENARIOS.glob("*.toml"))   # the files in scenarios/


def test_short_trip_end_to_end_in_a_subprocess():
    completed = subprocess.run([sys.executable, "-m", "planner", "trip", str(SCENARIOS / f"{SHORT_DEMO}.toml"),
                                "--json"], capture_output=True, text=True, cwd=REPO, timeout=120)
    assert completed.returncode == 0, completed.stderr
    assert completed.stderr == ""   # no spinner or notes with --json
    document = one_json_document(completed.stdout)
    assert document["strategy"] == "home" and document["aim"] == "home" and document["success"] is True
    assert set(document["alternatives"]) == {"advance", "delay", "home"}
    # sleep in New York on the home clock: 23:00 Madrid = 17:00 EDT (UTC-4) (IANA tz database)
    new_york = [s for d in document["days"] if d["kind"] == "stay" and d["time_zone"] == "America/New_York"
                for s in d["sleep"]]
    assert new_york and all(s["start"].endswith("T17:00-04:00") for s in new_york)


def test_daily_phase_errors_read_the_local_clock_as_zoneinfo_does(model):
    # Python's datetime and zoneinfo (stdlib, IANA tz database) read the local clock of each CBTmin;
    # London leaves summer time on 2027-10-31 (IANA tz database), a day the search reads one CBTmin at a time
    home = Place("Chicago", zone("America/Chicago"), 41.88, -87.63)
    away = Place("London", zone("Europe/London"), 51.51, -0.13)
    flight = Flight(home, away, to_utc(resolve_local("2027-10-25 18:00", home.zone)),
                    to_utc(resolve_local("2027-10-26 08:00", away.zone)))
    trip = Trip("invented", home, (flight,), 0, 1.0, away.midnight_after(flight.arrive) + timedelta(days=8))
    evaluator = Evaluator(trip, model)
    places, day_start, day_end, target = evaluator._day_table("route")
    rng = np.random.default_rng(11)
    hours = day_start[:, None] + rng.uniform(0.0, 1.0, (day_start.size, 400)) * (day_end - day_start)[:, None]
    hours[:, :3] = np.round(hours[:, :3] * 3600.0) / 3600.0   # on whole seconds, where truncation bites
    hours[1, 5] = np.nan                                       # a day without a CBTmin
    got = evaluator._clock_errors_h(hours, places, target)
    for i in range(hours.shape[0]):
        for j in range(hours.shape[1]):
            if not np.isfinite(hours[i, j]):
                assert np.isnan(got[i, j])
                continue
            local = (trip.start + timedelta(hours=float(hours[i, j]))).astimezone(places[i].zone)
            clock = local.hour + local.minute / 60 + local.second / 3600
            error = (clock - target[i]) % 24.0
            assert got[i, j] == (error - 24.0 if error > 12.0 else error), (i, j)
    assert any(day.start.astimezone(away.zone).utcoffset() != day.end.astimezone(away.zone).utcoffset()
               for day in evaluator.days)   # the clock-change day is among them
