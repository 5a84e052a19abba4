"""Travel sleep placed by the plan's direction (planner.trips.travel_sleep), on a trip of our own with a
CBTmin put where the test wants it, so the placement rules are checked without a search.

An invented traveller flies Lisbon → Singapore overnight (a 15-h flight). Light before CBTmin delays the body
clock and light after it advances it, with the crossover at CBTmin (Khalsa et al. 2003, J Physiol 549:945,
type 1 PRC): an advance plan sleeps aboard before CBTmin, a delay plan after it.
"""

from __future__ import annotations

from datetime import datetime, timedelta, timezone

import pytest

from planner.trips.model import (
    Flight,
    Trip,
    TravelSleep,
    bed_sleep,
    fill_long_gaps,
    habitual_sleep,
    sleep_spots,
    trip_days,
)
from planner.trips.travel_sleep import travel_sleep_options
from planner.world.localtime import zone
from planner.world.places import Place

UTC = timezone.utc
LISBON = Place("Lisbon", zone("Europe/Lisbon"), 38.72, -9.14)
SINGAPORE = Place("Singapore", zone("Asia/Singapore"), 1.35, 103.82)
DEPART = datetime(2027, 5, 19, 20, 0, tzinfo=UTC)      # 21:00 in Lisbon
ARRIVE = DEPART + timedelta(hours=15)                  # 19:00 in Singapore the next day
#: A CBTmin in the middle of the flight (about 05:00 on the Lisbon clock, an entrained sleeper's minimum
#: two to three hours before waking; from memory, cf. science reference: DLMO ~2 h before bedtime, CBTmin ~DLMO + 7 h).
CBTMIN = datetime(2027, 5, 20, 4, 0, tzinfo=UTC)


@pytest.fixture(scope="module")
def trip() -> Trip:
    flight = Flight(LISBON, SINGAPORE, DEPART, ARRIVE)
    return Trip("Invented tester: Lisbon to Singapore", LISBON, (flight,), preparation_days=1,
                max_shift_h_per_day=1.0, end=ARRIVE + timedelta(days=3))


def options_for(trip: Trip, strategy: str) -> list[TravelSleep]:
    travel_day = next(d for d in trip_days(trip) if d.kind == "travel")
    cbtmins = [CBTMIN + timedelta(days=k) for k in range(-3, 5)]
    return travel_sleep_options(trip, bed_sleep(trip), cbtmins, strategy, (travel_day.start, travel_day.end))


def test_advance_plans_sleep_aboard_before_cbtmin_and_delay_plans_after_it(trip):
    # Khalsa et al. 2003, J Physiol 549:945: the delay lobe lies before CBTmin and the advance lobe after it;
    # sleep (darkness) belongs in the lobe where cabin light would move the clock the wrong way.
    spot_start, spot_end, _ = sleep_spots(trip)[0]
    for strategy in ("advance", "delay"):
        options = options_for(trip, strategy)
        assert len(options) >= 2                       # several placements for the simulator to choose from
        for option in options:
            for a, b in option.episodes:
                assert spot_start <= a < b <= spot_end
                assert b - a >= timedelta(hours=1.5)   # one sleep cycle at least (common practice)
                if strategy == "advance":
                    assert CBTMIN - timedelta(hours=10) <= a and b <= CBTMIN, (a, b)
                else:
                    assert CBTMIN <= a and b <= CBTMIN + timedelta(hours=10), (a, b)
                assert a.minute % 15 == 0 and b.minute % 15 == 0 and a.second == b.second == 0
    advance = {o.episodes for o in options_for(trip, "advance") if o.episodes}   # not the "eye mask only" one
    delay = {o.episodes for o in options_for(trip, "delay") if o.episodes}
    assert advance and delay and not advance & delay


def test_eye_masks_cover_the_awake_wrong_way_lobe_on_the_flight_only(trip):
    # an eye mask is worn seated on the plane (common practice, no single source), while awake, in the
    # light-avoidance lobe (Khalsa et al. 2003), at most 4 h and at least 15 min (the planner's window limits)
    spot_start, spot_end, _ = sleep_spots(trip)[0]
    masks = 0
    for strategy in ("advance", "delay"):
        for option in options_for(trip, strategy):
            for window in option.eye_mask:
                masks += 1
                assert window.source == "eye mask" and window.lux == 0.0
                assert spot_start <= window.start < window.end <= spot_end
                assert timedelta(minutes=15) <= window.end - window.start <= timedelta(hours=4)
                assert not any(a < window.end and window.start < b for a, b in option.episodes)
                lo, hi = ((CBTMIN - timedelta(hours=10), CBTMIN) if strategy == "advance"
                          else (CBTMIN, CBTMIN + timedelta(hours=10)))
                assert lo <= window.start and window.end <= hi
    assert masks >= 2   # the "eye mask only" placement has one per strategy at least


def test_a_placed_travel_sleep_reaches_the_plan_sleep(trip):
    option = options_for(trip, "advance")[0]
    sleep = habitual_sleep(trip, (), option)
    for a, b in option.episodes:
        assert any(x <= a and b <= y for x, y in sleep)
    # without a placement the traveller sleeps aboard in the destination's night (the usual advice, common practice)
    default = habitual_sleep(trip)
    assert default != sleep


def test_a_forced_nap_goes_into_the_preferred_hours_when_they_keep_the_gap_under_a_day():
    # 24 h awake impairs performance like 0.1 % blood alcohol (Dawson & Reid 1997, Nature 388:235, from memory):
    # a waking gap over 24 h gets a nap; among the starts that keep both parts under 24 h, the preferred hours win.
    depart = datetime(2027, 5, 19, 12, 0, tzinfo=UTC)
    flight = Flight(LISBON, SINGAPORE, depart, depart + timedelta(hours=20))
    trip = Trip("Invented tester: a long day", LISBON, (flight,), preparation_days=0, max_shift_h_per_day=1.0,
                end=depart + timedelta(days=3))
    awake_from, asleep_at = depart - timedelta(hours=2), depart + timedelta(hours=34)   # 36 h awake
    spot_start, spot_end, _ = sleep_spots(trip)[0]
    preferred = (depart + timedelta(hours=9), depart + timedelta(hours=11))   # early in the feasible starts
    plain = fill_long_gaps(trip, [(awake_from - timedelta(hours=8), awake_from), (asleep_at, asleep_at + timedelta(hours=8))])
    chosen = fill_long_gaps(trip, [(awake_from - timedelta(hours=8), awake_from), (asleep_at, asleep_at + timedelta(hours=8))],
                            [preferred])
    for sleep in (plain, chosen):
        assert len(sleep) == 3
        assert all((b[0] - a[1]) <= timedelta(hours=24) for a, b in zip(sleep[:-1], sleep[1:]))
    nap = chosen[1]
    assert min(nap[1], preferred[1]) - max(nap[0], preferred[0]) > timedelta(0)
    assert nap != plain[1]
