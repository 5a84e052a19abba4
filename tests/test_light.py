"""Light schedules: layer order, validation, exact edges on the step grid, real durations across clock changes."""

from __future__ import annotations

import calendar
from datetime import datetime, timedelta
from zoneinfo import ZoneInfo

import numpy as np
import pytest
from conftest import T0, at
from hypothesis import assume, given, settings
from hypothesis import strategies as st

from planner.errors import ScheduleError
from planner.world import segments_numba
from planner.world.light import (
    EDGE_TOLERANCE_H,
    LightLayer,
    LightSchedule,
    ambient,
    dark_glasses,
    hours_between,
    light_box,
    sample_on_grid,
    sleep,
)


def lux(schedule: LightSchedule, *hours: float) -> list[float]:
    return [float(v) for v in schedule.lux_at(np.array(hours))]


# --- layer semantics -------------------------------------------------------------------------

def test_set_replaces_at_least_raises_and_scale_multiplies():
    schedule = LightSchedule.from_layers(at(0), at(24), 150, [
        ambient(at(10), at(12), 3000, "daylight"),     # set
        light_box(at(11), at(13), 10_000),             # at least 10,000
        light_box(at(14), at(15), 50),                 # at least 50: below 150, changes nothing
        dark_glasses(at(16), at(18), 0.1),             # ×0.1
    ])
    # the layer rules themselves (planner/light.py docstring): set, max(level, v), level·transmission
    assert lux(schedule, 9, 10.5, 11.5, 12.5, 14.5, 17, 19) == [150, 3000, 10_000, 10_000, 150, 15, 150]


def test_layers_apply_in_the_order_given():
    box, glasses = light_box(at(8), at(9), 10_000), dark_glasses(at(8), at(9), 0.1)
    box_then_glasses = LightSchedule.from_layers(at(0), at(24), 150, [box, glasses])
    glasses_then_box = LightSchedule.from_layers(at(0), at(24), 150, [glasses, box])
    # analytic: 0.1·max(150, 10,000) = 1,000 vs max(0.1·150, 10,000) = 10,000
    assert lux(box_then_glasses, 8.5) == [1000]
    assert lux(glasses_then_box, 8.5) == [10_000]


def test_sleep_given_last_wins_over_every_light_source():
    layers = [ambient(at(6), at(9), 3000, "daylight"), light_box(at(6.5), at(7.5), 10_000)]
    eyes_shut = sleep(at(7), at(8))
    last = LightSchedule.from_layers(at(0), at(24), 150, layers + [eyes_shut])
    first = LightSchedule.from_layers(at(0), at(24), 150, [eyes_shut] + layers)
    # eyes closed: ~0 lux at the retina (science reference, shared conventions)
    assert lux(last, 6.25, 6.75, 7.25, 7.75, 8.5) == [3000, 10_000, 0, 0, 3000]
    # given first, later layers paint over it: the order is the caller's to choose
    assert lux(first, 7.25, 7.75) == [10_000, 3000]


def test_layer_parts_outside_the_schedule_are_ignored_and_equal_neighbours_merge():
    schedule = LightSchedule.from_layers(at(0), at(10), 150, [
        sleep(at(-5), at(2)), ambient(at(4), at(6), 150, "indoor"), light_box(at(9), at(30), 10_000)])
    # intervals: sleep 0-2, indoor 2-9 (the 150-lux layer equals the background), box 9-10
    assert [(hours_between(T0, a), hours_between(T0, b), v) for a, b, v in schedule.intervals()] == [
        (0.0, 2.0, 0.0), (2.0, 9.0, 150.0), (9.0, 10.0, 10_000.0)]


# --- validation ------------------------------------------------------------------------------

def test_naive_datetimes_are_rejected():
    naive = datetime(2027, 1, 4, 8, 0)
    with pytest.raises(ScheduleError):
        LightSchedule.from_layers(naive, naive + timedelta(days=1), 150, [])
    with pytest.raises(ScheduleError):
        light_box(naive, naive + timedelta(hours=1), 10_000)
    with pytest.raises(ScheduleError):
        LightSchedule(naive, np.array([0.0, 1.0]), np.array([150.0]))


@pytest.mark.parametrize("make", [
    lambda: ambient(at(1), at(2), -5.0),
    lambda: light_box(at(1), at(2), -0.001),
    lambda: LightSchedule.from_layers(at(0), at(1), -150.0, []),
    lambda: LightSchedule(T0, np.array([0.0, 1.0, 2.0]), np.array([150.0, -1.0])),
    lambda: ambient(at(1), at(2), float("nan")),
])
def test_negative_or_non_finite_lux_is_a_schedule_error(make):
    with pytest.raises(ScheduleError) as info:
        make()
    assert "lux" in info.value.one_line() or "value" in info.value.one_line()


@pytest.mark.parametrize("make", [
    lambda: sleep(at(8), at(7)),
    lambda: light_box(at(8), at(8), 10_000),
    lambda: LightSchedule.from_layers(at(5), at(4), 150, []),
    lambda: LightSchedule(T0, np.array([0.0, 2.0, 1.0]), np.array([150.0, 10.0])),
])
def test_reversed_or_empty_intervals_are_rejected(make):
    with pytest.raises(ScheduleError):
        make()


def test_transmission_above_one_and_unknown_kinds_are_rejected():
    with pytest.raises(ScheduleError):
        dark_glasses(at(1), at(2), 1.5)
    with pytest.raises(ScheduleError):
        LightLayer(at(1), at(2), "add", 10.0)


# --- sampling on the step grid -----------------------------------------------------------------

def test_an_edge_between_grid_points_splits_its_step_exactly():
    step = 0.5
    schedule = LightSchedule.from_layers(at(0), at(4), 20, [light_box(at(1.2), at(1.3), 10_000)])
    grid = sample_on_grid([schedule], at(0), at(4), step)
    # both edges lie inside the step 1.0-1.5 h: that step (index 2) alone is split
    assert list(grid.split_step) == [2] and list(grid.split_column) == [0]
    used = grid.split_lengths[0] > 0
    pieces, levels = grid.split_lengths[0][used], grid.split_lux[0][used]
    # analytic: pieces 0.2, 0.1, 0.2 h summing to the step, at 20, 10,000, 20 lux
    assert np.allclose(pieces, [0.2, 0.1, 0.2], atol=1e-12)
    assert pieces.sum() == pytest.approx(step, abs=1e-12)
    assert list(levels) == [20, 10_000, 20]
    # unsplit steps carry the level in force at their start
    assert grid.lux[:, 0].tolist() == [20] * 8


def test_an_edge_on_a_grid_point_does_not_split():
    schedule = LightSchedule.from_layers(at(0), at(3), 20, [light_box(at(1.0), at(1.5), 10_000)])
    grid = sample_on_grid([schedule], at(0), at(3), 0.5)
    assert grid.split_step.size == 0
    assert grid.lux[:, 0].tolist() == [20, 20, 10_000, 20, 20, 20]


def test_a_schedule_that_does_not_cover_the_span_is_refused():
    schedule = LightSchedule.constant(at(1), at(5), 150)
    with pytest.raises(ScheduleError):
        sample_on_grid([schedule], at(0), at(5), 0.5)


def _grid_light_integral(grid, column: int) -> float:
    """∫ lux dt over the grid for one column: whole steps plus the pieces of split steps."""
    lengths = np.diff(grid.times)
    whole = grid.lux[:, column] * lengths
    split = grid.split_column == column
    whole[grid.split_step[split]] = np.sum(grid.split_lengths[split] * grid.split_lux[split], axis=1)
    return float(whole.sum())


def _schedule_integral(schedule: LightSchedule, start: datetime) -> float:
    edges = schedule.relative_to(start)
    return float(np.sum(np.diff(edges) * schedule.lux))


@settings(max_examples=40, deadline=None)
@given(st.lists(st.tuples(st.floats(0.0, 47.0), st.floats(0.01, 6.0), st.sampled_from([0.0, 5.0, 3000.0, 10_000.0])),
                max_size=8),
       st.sampled_from([0.1, 0.25, 0.5, 1.0]))
def test_no_light_is_lost_or_moved_on_the_grid(boxes, step):
    layers = [ambient(at(a), at(a + d), v, "layer") for a, d, v in boxes]
    schedules = [LightSchedule.from_layers(at(0), at(48), 150, layers),
                 LightSchedule.from_layers(at(0), at(48), 40, layers[::-1])]
    grid = sample_on_grid(schedules, at(0), at(48), step)
    for column, schedule in enumerate(schedules):
        # analytic: the piecewise-constant integral is invariant under subdividing its intervals
        assert _grid_light_integral(grid, column) == pytest.approx(_schedule_integral(schedule, at(0)),
                                                                   rel=1e-12, abs=1e-9)
    # every split step's pieces add up to its length (analytic)
    lengths = np.diff(grid.times)
    assert np.allclose(grid.split_lengths.sum(axis=1), lengths[grid.split_step], atol=1e-9)


# --- real durations across clock changes -------------------------------------------------------

def _last_sunday(year: int, month: int) -> int:
    last = calendar.monthrange(year, month)[1]
    return max(day for day in range(last - 6, last + 1) if calendar.weekday(year, month, day) == calendar.SUNDAY)


@pytest.mark.parametrize("month, real_hours", [(3, 7.0), (10, 9.0)])
def test_a_clock_change_night_has_its_real_length(month, real_hours):
    berlin = ZoneInfo("Europe/Berlin")
    # EU clocks change on the last Sunday of March and October (Directive 2000/84/EC)
    day = _last_sunday(2027, month)
    bed = datetime(2027, month, day - 1, 23, 0, tzinfo=berlin)
    wake = datetime(2027, month, day, 7, 0, tzinfo=berlin)
    shift = (wake.utcoffset() - bed.utcoffset()).total_seconds() / 3600.0
    assert shift == (1.0 if month == 3 else -1.0)       # the precondition: this night has the change
    # 23:00 to 07:00 on the wall is 8 h minus the hour the clock jumps forward (plus it in autumn)
    assert hours_between(bed, wake) == real_hours
    schedule = LightSchedule.from_layers(bed - timedelta(hours=2), wake + timedelta(hours=2), 150, [sleep(bed, wake)])
    dark = [(a, b) for a, b, v in schedule.intervals() if v == 0]
    assert len(dark) == 1 and hours_between(*dark[0]) == pytest.approx(real_hours, abs=1e-9)
    assert hours_between(schedule.start, schedule.end) == pytest.approx(real_hours + 4.0, abs=1e-9)
    # a simulation grid over the night has the real number of steps
    grid = sample_on_grid([schedule], bed, wake, 0.5)
    assert grid.times[-1] == pytest.approx(real_hours, abs=1e-9) and grid.lux.shape == (int(real_hours * 2), 1)


# --- random layer sets against a brute-force reading ------------------------------------------

KIND_VALUES = {"set": st.floats(0.0, 20_000.0), "at_least": st.floats(0.0, 20_000.0), "scale": st.floats(0.0, 1.0)}


@st.composite
def layer_sets(draw):
    layers = []
    for _ in range(draw(st.integers(0, 7))):
        start = draw(st.floats(-3.0, 27.0))
        length = draw(st.floats(0.01, 12.0))
        kind = draw(st.sampled_from(list(KIND_VALUES)))
        layers.append((start, start + length, kind, draw(KIND_VALUES[kind])))
    return layers


def brute_force_lux(background: float, layers, hour: float) -> float:
    level = background
    for start, end, kind, value in layers:
        if start <= hour < end:
            level = value if kind == "set" else max(level, value) if kind == "at_least" else level * value
    return level


@settings(max_examples=80, deadline=None)
@given(layer_sets(), st.floats(0.0, 1000.0), st.lists(st.floats(0.0, 24.0, exclude_max=True), min_size=1, max_size=25))
def test_lux_at_matches_a_brute_force_reading_of_the_layers(layers, background, probes):
    schedule = LightSchedule.from_layers(at(0), at(24), background,
                                         [LightLayer(at(a), at(b), kind, value) for a, b, kind, value in layers])
    edges = np.array([t for a, b, *_ in layers for t in (a, b)] + [0.0, 24.0])
    # an instant on (or within float round-off of) an edge belongs to either side: not probed
    clear = [hour for hour in probes if np.min(np.abs(edges - hour)) > 1e3 * EDGE_TOLERANCE_H]
    assume(clear)
    for hour in clear:
        # analytic: the layer rules applied in order at that instant
        assert float(schedule.lux_at(np.array([hour]))[0]) == pytest.approx(brute_force_lux(background, layers, hour),
                                                                           rel=1e-12, abs=1e-12)


@st.composite
def crowded_layer_sets(draw):
    """Layer sets whose edges often coincide or lie within the edge tolerance of each other."""
    layers = draw(layer_sets())
    for _ in range(draw(st.integers(0, 3))):
        start = draw(st.sampled_from([0.0, 1.0, 5.5, 24.0])) + draw(st.sampled_from([0.0, 1e-12, -1e-12, 1e-6]))
        kind = draw(st.sampled_from(list(KIND_VALUES)))
        layers.append((start, start + draw(st.sampled_from([0.5, 1.0 + 1e-12, 23.0])), kind, draw(KIND_VALUES[kind])))
    return layers


@pytest.mark.skipif(not segments_numba.AVAILABLE, reason="numba is not installed")
@settings(max_examples=120, deadline=None)
@given(crowded_layer_sets(), st.floats(0.0, 1000.0))
def test_compiled_and_numpy_schedule_builders_agree_to_the_bit(layers, background):
    # the numpy builder is the reference (the compiled one is a loop translation of it)
    table = [LightLayer(at(a), at(b), kind, value) for a, b, kind, value in layers]
    built = {}
    for path in ("numpy", "compiled"):
        with pytest.MonkeyPatch.context() as patch:
            patch.setenv(segments_numba.KERNEL_ENVIRONMENT, path)
            built[path] = LightSchedule.from_layers(at(0), at(24), background, table)
    assert np.array_equal(built["numpy"].edges_h, built["compiled"].edges_h)
    assert np.array_equal(built["numpy"].lux, built["compiled"].lux)
