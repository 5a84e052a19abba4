"""Light schedules: layer semantics, validation, and no lost edges on the step grid."""

from datetime import datetime, timedelta, timezone
from zoneinfo import ZoneInfo

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from planner import LightSchedule, ScheduleError, ambient, dark_glasses, light_box, sample_on_grid, sleep
from planner.world.light import LightLayer, hours_between

T0 = datetime(2027, 1, 4, tzinfo=timezone.utc)


def at(hours):
    return T0 + timedelta(hours=hours)


def test_layers_apply_in_order_and_sleep_wins():
    schedule = LightSchedule.from_layers(at(0), at(24), 150, [
        ambient(at(12), at(13), 5000, "daylight"),
        light_box(at(7), at(8), 10_000),
        light_box(at(12.5), at(13), 2000),        # weaker than daylight: "at least" keeps 5000
        dark_glasses(at(18), at(20), 0.1),
        sleep(at(7.5), at(7.75)),
    ])
    probe = np.array([1, 7.25, 7.6, 12.25, 12.75, 19, 21])
    # dark glasses multiply by their transmission; the eyes shut give 0 lux (science reference, section 1)
    assert list(schedule.lux_at(probe)) == [150, 10_000, 0, 5000, 5000, 15, 150]


def test_times_must_be_aware_and_lux_non_negative():
    with pytest.raises(ScheduleError):
        LightSchedule.from_layers(datetime(2027, 1, 4), datetime(2027, 1, 5), 150, [])
    with pytest.raises(ScheduleError):
        ambient(at(1), at(2), -5)
    with pytest.raises(ScheduleError):
        light_box(at(3), at(2), 10_000)
    with pytest.raises(ScheduleError):
        dark_glasses(at(1), at(2), 1.5)


def test_a_spring_forward_night_has_its_real_length():
    berlin = ZoneInfo("Europe/Berlin")
    # EU clocks go forward at 01:00 UTC on the last Sunday of March (Directive 2000/84/EC)
    bed = datetime(2027, 3, 27, 23, 0, tzinfo=berlin)
    wake = datetime(2027, 3, 28, 7, 0, tzinfo=berlin)
    assert hours_between(bed, wake) == 7.0
    schedule = LightSchedule.from_layers(bed - timedelta(hours=1), wake + timedelta(hours=1), 150, [sleep(bed, wake)])
    dark = [(a, b) for a, b, lux in schedule.intervals() if lux == 0]
    assert len(dark) == 1 and hours_between(*dark[0]) == 7.0


def test_an_edge_between_grid_points_is_kept():
    schedule = LightSchedule.from_layers(at(0), at(3), 10, [light_box(at(1.1), at(1.35), 10_000)])
    grid = sample_on_grid([schedule], at(0), at(3), 0.5)
    # both edges fall inside the step 1.0-1.5 h: three pieces, lengths add up to the step (analytic)
    assert list(grid.split_step) == [2]
    lengths, lux = grid.split_lengths[0], grid.split_lux[0]
    used = lengths > 0
    assert np.allclose(lengths[used], [0.1, 0.25, 0.15])
    assert list(lux[used]) == [10, 10_000, 10]
    assert grid.lux[2, 0] == 10


def _layer(data):
    start = data.draw(st.floats(-2, 30))
    length = data.draw(st.floats(0.05, 10))
    kind = data.draw(st.sampled_from(["set", "at_least", "scale"]))
    value = data.draw(st.floats(0, 1)) if kind == "scale" else data.draw(st.floats(0, 20_000))
    return LightLayer(at(start), at(start + length), kind, value, kind)


@settings(max_examples=60, deadline=None)
@given(st.data())
def test_lux_matches_a_brute_force_reading_of_the_layers(data):
    layers = [_layer(data) for _ in range(data.draw(st.integers(0, 6)))]
    background = data.draw(st.floats(0, 500))
    schedule = LightSchedule.from_layers(at(0), at(24), background, layers)
    probes = np.array(data.draw(st.lists(st.floats(0.001, 23.999), min_size=1, max_size=20)))
    for hour, lux in zip(probes, schedule.lux_at(probes)):
        expected = background
        for layer in layers:
            a, b = hours_between(T0, layer.start), hours_between(T0, layer.end)
            if a <= hour < b and not (abs(hour - a) < 1e-6 or abs(hour - b) < 1e-6):
                expected = {"set": layer.value, "at_least": max(expected, layer.value),
                            "scale": expected * layer.value}[layer.kind]
            elif abs(hour - a) < 1e-6 or abs(hour - b) < 1e-6:
                return  # a probe on an edge is ambiguous by construction
        assert lux == pytest.approx(expected)   # analytic: the layer rules applied in order
