"""Reading local wall times: clock-change gaps and repeats, day lengths, clock strings.

Expected values come from the published daylight-saving rules, not from the
time-zone database the code reads:

* EU (Directive 2000/84/EC, common practice since 1996): summer time from the
  last Sunday of March to the last Sunday of October, changing at 01:00 UTC;
  Central European Time is UTC+01:00, summer time UTC+02:00.
* US (Energy Policy Act of 2005, in force since 2007): daylight time from the
  second Sunday of March to the first Sunday of November, changing at 02:00
  local time; New York is UTC-05:00 in winter and UTC-04:00 in summer.
"""

import calendar
from datetime import date, datetime, timedelta, timezone

import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from planner.errors import InputError, PhaseplanError
from planner.world.localtime import local_day_bounds, parse_clock, resolve_local, to_utc, zone

HOUR = timedelta(hours=1)


def last_sunday(year: int, month: int) -> date:
    days = calendar.monthrange(year, month)[1]
    d = date(year, month, days)
    return d - timedelta(days=(d.weekday() - calendar.SUNDAY) % 7)


def nth_sunday(year: int, month: int, n: int) -> date:
    d = date(year, month, 1)
    first = d + timedelta(days=(calendar.SUNDAY - d.weekday()) % 7)
    return first + timedelta(weeks=n - 1)


# --------------------------------------------------------------------------- spring forward

def test_berlin_spring_forward_gap_rejected_with_what_the_clocks_do():
    # EU rule: last Sunday of March 2026 is the 29th; clocks jump 02:00 -> 03:00 CET (Directive 2000/84/EC)
    assert last_sunday(2026, 3) == date(2026, 3, 29)
    with pytest.raises(InputError) as info:
        resolve_local("2026-03-29 02:30", "Europe/Berlin", field="flights[0].depart", source="trip.toml")
    err = info.value
    assert isinstance(err, PhaseplanError)
    assert err.field == "flights[0].depart" and err.source == "trip.toml"
    assert "does not exist in Europe/Berlin: clocks jump from 02:00 to 03:00 on 2026-03-29" in err.message
    assert err.one_line().startswith("trip.toml: flights[0].depart: ")


def test_berlin_times_around_the_gap_are_accepted_with_the_rule_offsets():
    # CET = UTC+01:00 before the change, CEST = UTC+02:00 after (EU rule, Directive 2000/84/EC)
    before = resolve_local("2026-03-29 01:59", "Europe/Berlin")
    after = resolve_local(datetime(2026, 3, 29, 3, 0), "Europe/Berlin")
    assert before.utcoffset() == HOUR
    assert after.utcoffset() == 2 * HOUR
    # 01:59 CET and 03:00 CEST are one real minute apart: the change is at 01:00 UTC (EU rule)
    assert to_utc(after) - to_utc(before) == timedelta(minutes=1)
    assert to_utc(after) == datetime(2026, 3, 29, 1, 0, tzinfo=timezone.utc)


def test_new_york_spring_forward_gap_rejected():
    # US rule: second Sunday of March 2026 is the 8th, clocks 02:00 -> 03:00 local (Energy Policy Act of 2005)
    assert nth_sunday(2026, 3, 2) == date(2026, 3, 8)
    with pytest.raises(InputError, match="does not exist in America/New_York: clocks jump from 02:00 to 03:00 "
                                         "on 2026-03-08"):
        resolve_local("2026-03-08T02:30", "America/New_York")


def test_sydney_spring_forward_gap_rejected():
    # New South Wales: clocks 02:00 -> 03:00 on the first Sunday of October, 2026-10-04 (from memory)
    assert nth_sunday(2026, 10, 1) == date(2026, 10, 4)
    with pytest.raises(InputError, match="clocks jump from 02:00 to 03:00 on 2026-10-04"):
        resolve_local("2026-10-04 02:30", "Australia/Sydney")


# --------------------------------------------------------------------------- fall back

def test_berlin_fall_back_needs_fold():
    # EU rule: last Sunday of October 2026 is the 25th; clocks go back 03:00 CEST -> 02:00 CET (Directive 2000/84/EC)
    assert last_sunday(2026, 10) == date(2026, 10, 25)
    with pytest.raises(InputError) as info:
        resolve_local("2026-10-25 02:30", "Europe/Berlin", field="shift.start")
    message = info.value.message
    assert info.value.field == "shift.start"
    assert "occurs twice in Europe/Berlin" in message
    assert "clocks go back from 03:00 to 02:00 on 2026-10-25" in message
    assert "fold=0" in message and "fold=1" in message


def test_berlin_fall_back_fold_picks_the_occurrence():
    first = resolve_local("2026-10-25 02:30", "Europe/Berlin", fold=0)
    second = resolve_local("2026-10-25 02:30", "Europe/Berlin", fold=1)
    # first occurrence in CEST (UTC+02:00), second in CET (UTC+01:00): EU rule, Directive 2000/84/EC
    assert first.utcoffset() == 2 * HOUR
    assert second.utcoffset() == HOUR
    assert first.isoformat() == "2026-10-25T02:30:00+02:00"
    assert second.isoformat() == "2026-10-25T02:30:00+01:00"
    # the same wall time an hour of real time apart (EU rule: one hour repeats)
    assert to_utc(second) - to_utc(first) == HOUR


def test_offset_in_the_text_picks_the_occurrence_and_must_be_in_use():
    # +01:00 is CET, in use for the second 02:30 on 2026-10-25 (EU rule, Directive 2000/84/EC)
    second = resolve_local("2026-10-25T02:30+01:00", "Europe/Berlin")
    assert second.utcoffset() == HOUR
    assert to_utc(second) == datetime(2026, 10, 25, 1, 30, tzinfo=timezone.utc)
    # Berlin never uses +05:00 (CET/CEST only, EU rule)
    with pytest.raises(InputError, match="does not use"):
        resolve_local("2026-10-25T02:30+05:00", "Europe/Berlin")


def test_new_york_fall_back_needs_fold():
    # US rule: first Sunday of November 2026 is the 1st, clocks 02:00 EDT -> 01:00 EST (Energy Policy Act of 2005)
    assert nth_sunday(2026, 11, 1) == date(2026, 11, 1)
    with pytest.raises(InputError, match="occurs twice in America/New_York"):
        resolve_local("2026-11-01 01:30", "America/New_York")
    # EDT = UTC-04:00, EST = UTC-05:00 (US rule)
    assert resolve_local("2026-11-01 01:30", "America/New_York", fold=0).utcoffset() == -4 * HOUR
    assert resolve_local("2026-11-01 01:30", "America/New_York", fold=1).utcoffset() == -5 * HOUR


def test_fold_is_ignored_for_ordinary_times_and_checked_for_values():
    # 12:00 on 2026-06-15 is plain CEST, UTC+02:00 (EU rule)
    for fold in (None, 0, 1):
        assert resolve_local("2026-06-15 12:00", "Europe/Berlin", fold=fold).utcoffset() == 2 * HOUR
    with pytest.raises(InputError) as info:
        resolve_local("2026-06-15 12:00", "Europe/Berlin", fold=2)
    assert info.value.field == "fold"


eu_years = st.integers(min_value=2002, max_value=2037)
minute_of_day = st.integers(min_value=0, max_value=24 * 60 - 1)


@settings(max_examples=150, deadline=None)
@given(year=eu_years, minute=minute_of_day, zone_name=st.sampled_from(["Europe/Berlin", "Europe/Paris",
                                                                       "Europe/Rome", "Europe/Warsaw"]))
def test_cet_zones_follow_the_eu_rule_on_change_days(year, minute, zone_name):
    # CET zones: gap [02:00, 03:00) on the last Sunday of March, repeat [02:00, 03:00) on the last Sunday of
    # October (01:00 UTC changes, Directive 2000/84/EC)
    for day, kind in ((last_sunday(year, 3), "gap"), (last_sunday(year, 10), "repeat")):
        wall = datetime.combine(day, datetime.min.time()) + timedelta(minutes=minute)
        inside = 2 <= wall.hour < 3
        if inside:
            with pytest.raises(InputError, match="does not exist" if kind == "gap" else "occurs twice"):
                resolve_local(wall, zone_name)
        else:
            resolved = resolve_local(wall, zone_name)
            summer = (wall.hour >= 3) if kind == "gap" else (wall.hour < 2)
            # CEST = UTC+02:00 in summer time, CET = UTC+01:00 otherwise (EU rule)
            assert resolved.utcoffset() == (2 * HOUR if summer else HOUR)
            assert resolved.replace(tzinfo=None) == wall


@settings(max_examples=100, deadline=None)
@given(year=st.integers(min_value=2007, max_value=2037), minute=minute_of_day)
def test_new_york_follows_the_us_rule_on_change_days(year, minute):
    # gap [02:00, 03:00) on the second Sunday of March, repeat [01:00, 02:00) on the first Sunday of November
    # (Energy Policy Act of 2005)
    spring = datetime.combine(nth_sunday(year, 3, 2), datetime.min.time()) + timedelta(minutes=minute)
    autumn = datetime.combine(nth_sunday(year, 11, 1), datetime.min.time()) + timedelta(minutes=minute)
    if 2 <= spring.hour < 3:
        with pytest.raises(InputError, match="does not exist"):
            resolve_local(spring, "America/New_York")
    else:
        # EST = UTC-05:00 before the change, EDT = UTC-04:00 after (US rule)
        expected = -4 * HOUR if spring.hour >= 3 else -5 * HOUR
        assert resolve_local(spring, "America/New_York").utcoffset() == expected
    if 1 <= autumn.hour < 2:
        with pytest.raises(InputError, match="occurs twice"):
            resolve_local(autumn, "America/New_York")
        first = resolve_local(autumn, "America/New_York", fold=0)
        second = resolve_local(autumn, "America/New_York", fold=1)
        assert to_utc(second) - to_utc(first) == HOUR  # one hour repeats (US rule)
    else:
        expected = -4 * HOUR if autumn.hour < 1 else -5 * HOUR  # EDT before, EST after (US rule)
        assert resolve_local(autumn, "America/New_York").utcoffset() == expected


# --------------------------------------------------------------------------- zones and input forms

def test_unknown_zone_rejected_with_how_to_write_one():
    with pytest.raises(InputError) as info:
        resolve_local("2026-06-15 12:00", "Mars/Olympus", source="trip.toml")
    assert "Mars/Olympus" in info.value.message
    assert '"Europe/Berlin"' in info.value.message
    assert info.value.source == "trip.toml"
    with pytest.raises(InputError, match="Europe/Berlin"):
        zone("Mars/Olympus")


@pytest.mark.parametrize("bad", ["", "   ", "../etc/passwd", "Europe/", 42, None])
def test_malformed_zone_names_rejected(bad):
    with pytest.raises(InputError, match="Europe/Berlin"):
        zone(bad)


def test_wrong_case_zone_name_gets_a_suggestion():
    # IANA names are case-sensitive; "Europe/Berlin" is the canonical spelling (IANA tz database)
    with pytest.raises(InputError, match='did you mean "Europe/Berlin"'):
        zone("europe/berlin")


def test_known_zone_is_returned_and_tzinfo_passes_through():
    berlin = zone("Europe/Berlin")
    # CEST, UTC+02:00 in mid-June (EU rule)
    assert datetime(2026, 6, 15, 12, tzinfo=berlin).utcoffset() == 2 * HOUR
    assert zone(berlin) is berlin
    assert zone(timezone.utc) is timezone.utc


@pytest.mark.parametrize("text", ["2026-13-01 07:00", "tomorrow 07:00", "07:30", "", "2026-03-29"])
def test_unreadable_local_times_rejected(text):
    with pytest.raises(InputError, match="2026-03-29 07:30"):
        resolve_local(text, "Europe/Berlin")


def test_date_object_is_not_a_local_time():
    with pytest.raises(InputError, match="without a time of day"):
        resolve_local(date(2026, 6, 15), "Europe/Berlin")


def test_to_utc_rejects_floating_times():
    with pytest.raises(InputError, match="time zone") as info:
        to_utc(datetime(2026, 6, 15, 12), field="departure")
    assert info.value.field == "departure"
    with pytest.raises(InputError):
        to_utc("2026-06-15 12:00")
    # 12:00 CEST is 10:00 UTC (EU rule: UTC+02:00 in summer)
    assert to_utc(resolve_local("2026-06-15 12:00", "Europe/Berlin")) == datetime(2026, 6, 15, 10, tzinfo=timezone.utc)


# --------------------------------------------------------------------------- day bounds

def test_berlin_change_days_are_23_and_25_hours_long():
    start, end = local_day_bounds(date(2026, 3, 29), "Europe/Berlin")
    # one hour skipped on the last Sunday of March (EU rule, Directive 2000/84/EC)
    assert end - start == 23 * HOUR
    # local midnight CET = 23:00 UTC the evening before (CET = UTC+01:00)
    assert start == datetime(2026, 3, 28, 23, tzinfo=timezone.utc)
    start, end = local_day_bounds(date(2026, 10, 25), "Europe/Berlin")
    # one hour repeated on the last Sunday of October (EU rule)
    assert end - start == 25 * HOUR
    start, end = local_day_bounds(date(2026, 6, 15), "Europe/Berlin")
    assert end - start == 24 * HOUR  # no change in mid-June (EU rule)
    assert start.tzinfo == timezone.utc and end.tzinfo == timezone.utc


def test_new_york_change_days_are_23_and_25_hours_long():
    # second Sunday of March skips an hour, first Sunday of November repeats one (Energy Policy Act of 2005)
    start, end = local_day_bounds(date(2026, 3, 8), "America/New_York")
    assert end - start == 23 * HOUR
    start, end = local_day_bounds(date(2026, 11, 1), "America/New_York")
    assert end - start == 25 * HOUR


def test_day_starting_after_a_midnight_jump():
    # Chile: clocks go from 00:00 to 01:00 on the first Sunday of September, 2026-09-06, UTC-04:00 -> -03:00
    # (from memory)
    start, end = local_day_bounds(date(2026, 9, 6), "America/Santiago")
    assert end - start == 23 * HOUR
    assert start == datetime(2026, 9, 6, 4, tzinfo=timezone.utc)
    with pytest.raises(InputError, match="clocks jump from 00:00 to 01:00 on 2026-09-06"):
        resolve_local("2026-09-06 00:30", "America/Santiago")


def test_day_bounds_input_checks():
    with pytest.raises(InputError):
        local_day_bounds(datetime(2026, 6, 15, 12), "Europe/Berlin")
    with pytest.raises(InputError, match="Europe/Berlin"):
        local_day_bounds(date(2026, 6, 15), "Mars/Olympus")


# --------------------------------------------------------------------------- clock strings

@pytest.mark.parametrize("text, hours", [
    ("07:30", 7.5),          # 30 min = 0.5 h
    ("7:30", 7.5),
    ("00:00", 0.0),          # midnight
    ("23:59", 23 + 59 / 60),
    ("12:00:36", 12.01),     # 36 s = 0.01 h
    (" 06:15 ", 6.25),       # 15 min = 0.25 h
])
def test_parse_clock_reads_24_hour_times(text, hours):
    assert parse_clock(text) == pytest.approx(hours, abs=1e-12)


@pytest.mark.parametrize("text", ["25:00", "24:00", "7h", "", "  ", "07:60", "7:3", "07.30", "-01:00",
                                  "07:30:60", "7:30pm", "\u0667:\u0663\u0660"])
def test_parse_clock_rejects_malformed_times(text):
    with pytest.raises(InputError) as info:
        parse_clock(text, field="sleep.start", source="me.toml")
    assert info.value.field == "sleep.start"
    assert info.value.source == "me.toml"
    message = info.value.message
    assert "HH:MM" in message or "run from 00" in message  # says what is allowed


def test_parse_clock_rejects_non_text():
    with pytest.raises(InputError):
        parse_clock(7.5)


@given(hour=st.integers(0, 23), minute=st.integers(0, 59))
def test_parse_clock_any_valid_time(hour, minute):
    # HH:MM is hour + minute / 60 hours after midnight (definition of the 24-hour clock)
    assert parse_clock(f"{hour:02d}:{minute:02d}") == pytest.approx(hour + minute / 60, abs=1e-12)
