"""Light at the eye: piecewise-constant schedules of lux in absolute (UTC) time.

A :class:`LightSchedule` is built from a background level and *layers* applied
in order: ``set`` replaces the level (sleep = 0 lux because the eyes are shut,
outdoor daylight), ``at_least`` raises it to a floor (a light box in front of
the eyes), ``scale`` multiplies it (dark glasses with their transmission).

For the integrator the schedules of a batch are sampled onto one time grid by
:func:`sample_on_grid`.  Grid steps are **not** aligned to light edges: an edge
that falls inside a step *splits that step into pieces for that schedule only*
(:class:`GridLight` keeps the pieces), and :mod:`planner.engine.process_l` advances
Process L exactly through every piece, so no edge is lost or moved.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from datetime import datetime, timedelta, timezone
from typing import Literal, Sequence

import numpy as np

from planner.errors import ScheduleError
from planner.hashing import hash_once
from planner.world import segments_numba

SECONDS_PER_HOUR = 3600.0
#: Edges closer than this to a grid point are treated as on it [h] (about 4 ms);
#: it only absorbs float round-off of datetime arithmetic.
EDGE_TOLERANCE_H = 1e-6


def _require_aware(moment: datetime, what: str) -> datetime:
    if not isinstance(moment, datetime):
        raise ScheduleError(f"{what} must be a datetime, got {type(moment).__name__}", field=what)
    if moment.tzinfo is None or moment.utcoffset() is None:
        raise ScheduleError("times must carry a time zone (floating local times are ambiguous)", field=what)
    return moment.astimezone(timezone.utc)


def hours_between(earlier: datetime, later: datetime) -> float:
    """Real elapsed hours from ``earlier`` to ``later`` (both aware).

    Both are converted to UTC first: Python subtracts two datetimes that share a
    tzinfo as wall-clock times, which is wrong across a clock change.
    """
    return (later.astimezone(timezone.utc) - earlier.astimezone(timezone.utc)).total_seconds() / SECONDS_PER_HOUR


@dataclass(frozen=True)
class LightLayer:
    """One interval of a light schedule.

    Parameters
    ----------
    start, end : datetime
        Aware datetimes; ``end`` after ``start``.
    kind : {"set", "at_least", "scale"}
        How the layer changes the level beneath it.
    value : float
        Lux for ``set`` and ``at_least`` [lux]; transmission for ``scale`` [0..1].
    source : str
        What the light is (``"sleep"``, ``"daylight"``, ``"light box"``, ``"dark glasses"`` ...).
    """

    start: datetime
    end: datetime
    kind: Literal["set", "at_least", "scale"]
    value: float
    source: str = ""

    def __post_init__(self):
        start = _require_aware(self.start, "start")
        end = _require_aware(self.end, "end")
        if end <= start:
            raise ScheduleError(f"{self.source or 'light'} interval ends ({end.isoformat()}) "
                                f"at or before it starts ({start.isoformat()})", field="end")
        if self.kind not in ("set", "at_least", "scale"):
            raise ScheduleError(f"unknown layer kind {self.kind!r}; allowed: set, at_least, scale", field="kind")
        if not math.isfinite(self.value) or self.value < 0:
            raise ScheduleError(f"{self.source or 'light'} value must be a finite number >= 0, got {self.value}",
                                field="value")
        if self.kind == "scale" and self.value > 1:
            raise ScheduleError(f"transmission must lie in [0, 1], got {self.value}", field="value")
        object.__setattr__(self, "start", start)
        object.__setattr__(self, "end", end)


def sleep(start: datetime, end: datetime) -> LightLayer:
    """Eyes shut: 0 lux at the retina."""
    return LightLayer(start, end, "set", 0.0, "sleep")


def ambient(start: datetime, end: datetime, lux: float, source: str = "indoor") -> LightLayer:
    """Ambient light replacing the level beneath (indoor lighting, outdoor daylight) [lux]."""
    return LightLayer(start, end, "set", lux, source)


def light_box(start: datetime, end: datetime, lux: float) -> LightLayer:
    """A light box: at least ``lux`` at the eye while it is in use [lux]."""
    return LightLayer(start, end, "at_least", lux, "light box")


def dark_glasses(start: datetime, end: datetime, transmission: float) -> LightLayer:
    """Dark (or blue-blocking) glasses passing the fraction ``transmission`` of the light."""
    return LightLayer(start, end, "scale", transmission, "dark glasses")


def layer_table(layers: Sequence[LightLayer], start: datetime) -> tuple:
    """Layers as arrays for :meth:`LightSchedule.from_layer_table`: first and last hour of each
    [h since ``start``], whether it is a ``set`` layer, whether a ``scale`` layer, and its value.

    Tables of consecutive groups of layers join by concatenating each of their parts
    (:func:`join_tables`): the result is the table of the joined list of layers.
    """
    start = _require_aware(start, "start")
    # Layer times are UTC (LightLayer converts them), so plain subtraction is elapsed time.
    first = np.array([(layer.start - start).total_seconds() for layer in layers], dtype=float) / SECONDS_PER_HOUR
    last = np.array([(layer.end - start).total_seconds() for layer in layers], dtype=float) / SECONDS_PER_HOUR
    is_set = np.array([layer.kind == "set" for layer in layers], dtype=bool)
    is_scale = np.array([layer.kind == "scale" for layer in layers], dtype=bool)
    values = np.array([float(layer.value) for layer in layers], dtype=float)
    return first, last, is_set, is_scale, values


#: Layer tables of tuples of layers by (id of the tuple, start); each entry keeps its tuple alive, so
#: an id is not reused while its entry stands.  Cleared when it grows past ``_TABLES_KEPT`` entries.
_TABLES: dict = {}
_TABLES_KEPT = 20_000


def _remembered_table(group: tuple, start: datetime) -> tuple:
    key = (id(group), start)
    found = _TABLES.get(key)
    if found is None:
        if len(_TABLES) >= _TABLES_KEPT:
            _TABLES.clear()
        found = _TABLES[key] = (group, layer_table(group, start))
    return found[1]


def join_tables(tables: Sequence[tuple]) -> tuple:
    """One layer table of several (:func:`layer_table`), in order."""
    if len(tables) == 1:
        return tables[0]
    return (np.concatenate([t[0] for t in tables]), np.concatenate([t[1] for t in tables]),
            np.concatenate([t[2] for t in tables]), np.concatenate([t[3] for t in tables]),
            np.concatenate([t[4] for t in tables]))


@dataclass(frozen=True)
class LightSchedule:
    """Piecewise-constant illuminance at the eye.

    Attributes
    ----------
    epoch : datetime
        UTC instant of hour 0.
    edges_h : ndarray, shape (M + 1,)
        Strictly increasing interval edges [h since ``epoch``].
    lux : ndarray, shape (M,)
        Illuminance on each interval [lux].
    """

    epoch: datetime
    edges_h: np.ndarray
    lux: np.ndarray

    def __post_init__(self):
        epoch = _require_aware(self.epoch, "epoch")
        edges = np.asarray(self.edges_h, dtype=float)
        lux = np.asarray(self.lux, dtype=float)
        if edges.ndim != 1 or lux.ndim != 1 or edges.size != lux.size + 1 or lux.size == 0:
            raise ScheduleError("a schedule needs M >= 1 lux values and M + 1 edges")
        if not np.all(np.isfinite(edges)) or np.any(np.diff(edges) <= 0):
            raise ScheduleError("schedule edges must be finite and strictly increasing")
        if not np.all(np.isfinite(lux)) or np.any(lux < 0):
            bad = float(lux[~(np.isfinite(lux) & (lux >= 0))][0])
            raise ScheduleError(f"lux must be a finite number >= 0, got {bad}", field="lux")
        object.__setattr__(self, "epoch", epoch)
        object.__setattr__(self, "edges_h", edges)
        object.__setattr__(self, "lux", lux)

    @property
    def start(self) -> datetime:
        return self.epoch + timedelta(hours=float(self.edges_h[0]))

    @property
    def end(self) -> datetime:
        return self.epoch + timedelta(hours=float(self.edges_h[-1]))

    @classmethod
    def constant(cls, start: datetime, end: datetime, lux: float) -> "LightSchedule":
        """One level from ``start`` to ``end`` [lux]."""
        return cls.from_layers(start, end, lux, ())

    @classmethod
    def from_layers(cls, start: datetime, end: datetime, background_lux: float,
                    layers: Sequence[LightLayer]) -> "LightSchedule":
        """Build a schedule from a background level and layers applied in order.

        Parts of layers outside ``[start, end]`` are ignored.  Put ``sleep``
        layers last so that closed eyes win over any light source.
        """
        start = _require_aware(start, "start")
        end = _require_aware(end, "end")
        if end <= start:
            raise ScheduleError("schedule ends at or before it starts", field="end")
        if not math.isfinite(background_lux) or background_lux < 0:
            raise ScheduleError(f"background lux must be a finite number >= 0, got {background_lux}",
                                field="background_lux")
        return cls.from_layer_table(start, end, background_lux, *layer_table(layers, start))

    @classmethod
    def from_layer_groups(cls, start: datetime, end: datetime, background_lux: float,
                          groups: Sequence[Sequence[LightLayer]]) -> "LightSchedule":
        """:meth:`from_layers` of the groups' layers joined in order, the same schedule.

        A group that is a tuple is converted once and remembered while it lives (searches build
        many plans from the same tuples of layers: a day's daylight, a plan's sleep).
        """
        start = _require_aware(start, "start")
        if not math.isfinite(background_lux) or background_lux < 0 or _require_aware(end, "end") <= start:
            return cls.from_layers(start, end, background_lux, [layer for group in groups for layer in group])
        tables = [_remembered_table(group, start) if isinstance(group, tuple) else layer_table(group, start)
                  for group in groups]
        return cls.from_layer_table(start, end, background_lux, *join_tables(tables))

    @classmethod
    def from_layer_table(cls, start: datetime, end: datetime, background_lux: float, first: np.ndarray,
                         last: np.ndarray, is_set: np.ndarray, is_scale: np.ndarray,
                         values: np.ndarray) -> "LightSchedule":
        """:meth:`from_layers` with the layers given as a :func:`layer_table` (searches keep the
        tables of layers many plans share and join them, instead of converting every layer again)."""
        start = _require_aware(start, "start")
        end = _require_aware(end, "end")
        span = hours_between(start, end)
        if segments_numba.wanted() and np.all(np.isfinite(values)) and np.all(values >= 0):
            edges, lux = segments_numba.segments(span, np.asarray(first, dtype=float), np.asarray(last, dtype=float),
                                                 np.asarray(is_set, dtype=np.bool_),
                                                 np.asarray(is_scale, dtype=np.bool_),
                                                 np.asarray(values, dtype=float), float(background_lux),
                                                 EDGE_TOLERANCE_H)
            if math.isfinite(background_lux) and background_lux >= 0 and edges.size > 1:
                return cls._valid(start, edges, lux)   # increasing edges and finite lux >= 0 by construction
            return cls(start, edges, lux)
        a = np.clip(first, 0.0, span)
        b = np.clip(last, 0.0, span)
        edges = np.unique(np.concatenate(([0.0, span], a, b)))
        edges = edges[np.concatenate(([True], np.diff(edges) > EDGE_TOLERANCE_H))]
        edges[-1] = span
        lefts, rights = edges[:-1], edges[1:]
        mids = 0.5 * (lefts + rights)
        # Applying the layers in order: a segment takes the value of the last "set" layer over it
        # (or the background), then every later "at_least" / "scale" layer over it, in order.
        # Layer i lies over the segments whose middle is inside it: segments lo[i] to hi[i] - 1.
        lo = np.searchsorted(mids, a, side="right")
        hi = np.maximum(np.searchsorted(mids, b, side="left"), lo)
        widths = hi - lo
        layer_of = np.repeat(np.arange(a.size), widths)          # (layer, segment) pairs, layer by layer
        segment_of = np.arange(layer_of.size) - np.repeat(np.cumsum(widths) - widths, widths) + lo[layer_of]
        last_set = np.full(mids.size, -1)
        setting = is_set[layer_of]
        np.maximum.at(last_set, segment_of[setting], layer_of[setting])
        lux = np.where(last_set >= 0, values[np.maximum(last_set, 0)] if a.size else 0.0, float(background_lux))
        for index in np.nonzero(~is_set & (widths > 0))[0]:
            part = slice(lo[index], hi[index])
            over = last_set[part] < index
            if is_scale[index]:
                lux[part][over] *= values[index]
            else:
                lux[part][over] = np.maximum(lux[part][over], values[index])
        keep = np.concatenate(([True], lux[1:] != lux[:-1]))
        return cls(start, np.append(edges[:-1][keep], span), lux[keep])

    @classmethod
    def _valid(cls, epoch: datetime, edges_h: np.ndarray, lux: np.ndarray) -> "LightSchedule":
        """A schedule from arrays known to be valid (float, strictly increasing edges, finite lux
        >= 0), without checking them again."""
        schedule = object.__new__(cls)
        object.__setattr__(schedule, "epoch", epoch)
        object.__setattr__(schedule, "edges_h", edges_h)
        object.__setattr__(schedule, "lux", lux)
        return schedule

    def relative_to(self, epoch: datetime) -> np.ndarray:
        """Edges [h] measured from another ``epoch``."""
        return self.edges_h + hours_between(_require_aware(epoch, "epoch"), self.epoch)

    def lux_at(self, hours: np.ndarray) -> np.ndarray:
        """Lux in force at ``hours`` since ``epoch`` (right-continuous), shape of ``hours``."""
        index = np.searchsorted(self.edges_h, hours, side="right") - 1
        return self.lux[np.clip(index, 0, self.lux.size - 1)]

    def intervals(self) -> list[tuple[datetime, datetime, float]]:
        """The schedule as (start, end, lux) triples in UTC."""
        starts = [self.epoch + timedelta(hours=float(h)) for h in self.edges_h]
        return [(starts[i], starts[i + 1], float(self.lux[i])) for i in range(self.lux.size)]


class GridLight:
    """A batch of N schedules on one integration grid.

    Attributes
    ----------
    epoch : datetime
        UTC instant of hour 0.
    times : ndarray, shape (K + 1,)
        Grid points [h since ``epoch``].
    lux : ndarray, shape (K, N)
        Lux at the start of each step [lux]; the whole step unless it is split.  When the batch
        is given as ``levels`` and ``level_index`` it is formed from them on first use (the
        compiled kernel never needs it).
    split_step, split_column : ndarray, shape (E,)
        The (step, schedule) pairs that a light edge splits.
    split_lengths, split_lux : ndarray, shape (E, P)
        Their pieces, in time order [h] and [lux]; unused pieces have length 0.
    levels : ndarray, shape (U,), optional
        The distinct lux values of ``lux`` [lux] (a schedule batch has few).
    level_index : ndarray of int, shape (K, N), optional
        ``lux == levels[level_index]``; lets per-level work be done once.  It may be laid out
        column by column in memory (a transposed view), as sampling builds it.
    """

    __slots__ = ("epoch", "times", "_lux", "split_step", "split_column", "split_lengths", "split_lux",
                 "levels", "level_index", "_index_by_step")

    def __init__(self, epoch: datetime, times: np.ndarray, lux: np.ndarray | None, split_step: np.ndarray,
                 split_column: np.ndarray, split_lengths: np.ndarray, split_lux: np.ndarray,
                 levels: np.ndarray | None = None, level_index: np.ndarray | None = None):
        if lux is None and (levels is None or level_index is None):
            raise ValueError("GridLight needs lux, or levels with level_index")
        self.epoch = epoch
        self.times = times
        self._lux = lux
        self.split_step = split_step
        self.split_column = split_column
        self.split_lengths = split_lengths
        self.split_lux = split_lux
        self.levels = levels
        self.level_index = level_index
        self._index_by_step = None

    @property
    def lux(self) -> np.ndarray:
        if self._lux is None:
            self._lux = np.ascontiguousarray(self.levels[self.level_index])
        return self._lux

    def level_index_by_step(self) -> np.ndarray:
        """``level_index`` laid out step by step in memory (C order, shape (K, N)), made once."""
        if self._index_by_step is None:
            self._index_by_step = np.ascontiguousarray(self.level_index)
        return self._index_by_step

    @property
    def size(self) -> int:
        shape = self.level_index.shape if self._lux is None else self._lux.shape
        return shape[1]

    def _repeated_light(self, columns: np.ndarray) -> tuple:
        """lux, levels and level_index of the batch whose column j is this batch's ``columns[j]``."""
        if self.level_index is None:
            return self.lux[:, columns], None, None
        index = np.ascontiguousarray(self.level_index.T[columns]).T
        return None, self.levels, index

    def repeated(self, count: int) -> "GridLight":
        """The batch of one schedule repeated ``count`` times (e.g. for N people)."""
        if self.size != 1:
            raise ScheduleError(f"only a single schedule can be repeated, not {self.size}")
        e = self.split_step.size
        lux, levels, index = self._repeated_light(np.zeros(count, dtype=np.int64))
        return GridLight(self.epoch, self.times, lux,
                         np.tile(self.split_step, count), np.repeat(np.arange(count), e),
                         np.tile(self.split_lengths, (count, 1)), np.tile(self.split_lux, (count, 1)),
                         levels, index)

    def each_repeated(self, count: int) -> "GridLight":
        """Every schedule of the batch repeated ``count`` times in a row: column j of the result is
        schedule ``j // count`` (e.g. C candidate schedules for N people each).

        The same as sampling the repeated list of schedules, without sampling each copy again.
        """
        if count == 1:
            return self
        split_order = np.argsort(self.split_column, kind="stable")
        split_step, split_column = self.split_step[split_order], self.split_column[split_order]
        copies = np.arange(count)
        # column-major like sample_on_grid: each new column's splits together, in step order
        new_column = (split_column[:, None] * count + copies[None, :]).ravel()
        order = np.lexsort((np.repeat(split_step, count), new_column))
        lux, levels, index = self._repeated_light(np.repeat(np.arange(self.size), count))
        return GridLight(self.epoch, self.times, lux,
                         np.repeat(split_step, count)[order], new_column[order],
                         np.repeat(self.split_lengths[split_order], count, axis=0)[order],
                         np.repeat(self.split_lux[split_order], count, axis=0)[order], levels, index)


def step_grid(span_h: float, step_h: float) -> np.ndarray:
    """Grid points 0, step, 2·step, ... ending exactly at ``span_h`` [h]; the last step may be shorter."""
    count = max(1, math.ceil(span_h / step_h - 1e-9))
    times = np.arange(count + 1, dtype=float) * step_h
    times[-1] = span_h
    return times


def sample_on_grid(schedules: Sequence[LightSchedule], start: datetime, end: datetime,
                   step_h: float) -> GridLight:
    """Sample schedules onto a common step grid from ``start`` to ``end``.

    All schedules are handled in one vectorised pass over their edges laid end to
    end: one :func:`numpy.searchsorted` places every edge on the grid.

    Raises
    ------
    ScheduleError
        When a schedule does not cover ``[start, end]``.
    """
    if not schedules:
        raise ScheduleError("no light schedules to simulate")
    start = _require_aware(start, "start")
    end = _require_aware(end, "end")
    span = hours_between(start, end)
    if span <= 0:
        raise ScheduleError("simulation ends at or before it starts", field="end")
    times = step_grid(span, step_h)
    lefts = times[:-1]
    size = len(schedules)
    edges = [schedule.relative_to(start) for schedule in schedules]
    for column, (schedule, e) in enumerate(zip(schedules, edges)):
        if e[0] > EDGE_TOLERANCE_H or e[-1] < span - EDGE_TOLERANCE_H:
            raise ScheduleError(f"light schedule {column} covers {schedule.start.isoformat()} to "
                                f"{schedule.end.isoformat()} but the simulation runs from "
                                f"{start.isoformat()} to {end.isoformat()}")
    counts = np.array([e.size for e in edges])
    column_of_edge = np.repeat(np.arange(size), counts)
    all_edges = np.concatenate(edges)
    all_lux = np.concatenate([schedule.lux for schedule in schedules])
    # Grid points per interval: the step starting at t_k takes the lux in force at t_k.
    below = np.searchsorted(lefts + EDGE_TOLERANCE_H, all_edges, side="left")
    last_edge = np.cumsum(counts) - 1
    below[last_edge] = lefts.size
    below[last_edge - counts + 1] = 0
    points = np.delete(np.diff(below), last_edge[:-1])
    levels, interval_level = np.unique(all_lux, return_inverse=True)
    # Laid out column by column, as the compiled kernel reads it; a (K, N) view of it for the rest.
    level_index = np.repeat(interval_level.astype(np.int32), points).reshape(size, lefts.size).T

    interior = np.nonzero((all_edges > EDGE_TOLERANCE_H) & (all_edges < span - EDGE_TOLERANCE_H))[0]
    inner, inner_column = all_edges[interior], column_of_edge[interior]
    # The grid is uniform but for a shorter last step, so an edge's step follows by division
    # (an edge within round-off of a grid point may land on either side: it is on the grid).
    step_of_edge = np.clip(np.floor(inner / step_h).astype(np.int64), 0, lefts.size - 1)
    off_grid = np.minimum(inner - times[step_of_edge], times[step_of_edge + 1] - inner) > EDGE_TOLERANCE_H
    inner, inner_column, step_of_edge = inner[off_grid], inner_column[off_grid], step_of_edge[off_grid]
    # Lux of the interval an inner edge opens: interval index = edge index − column (one more
    # edge than intervals per schedule).
    opened_lux = all_lux[interior[off_grid] - inner_column]
    if inner.size == 0:
        return GridLight(start, times, None, np.zeros(0, int), np.zeros(0, int), np.zeros((0, 1)), np.zeros((0, 1)),
                         levels, level_index)
    group_key = inner_column * lefts.size + step_of_edge
    unique_keys, first, per_group = np.unique(group_key, return_index=True, return_counts=True)
    pieces = int(per_group.max()) + 1
    group = np.repeat(np.arange(unique_keys.size), per_group)
    rank = np.arange(inner.size) - first[group]
    split_column = unique_keys // lefts.size
    split_step = unique_keys % lefts.size
    bounds = np.repeat(times[split_step + 1][:, None], pieces + 1, axis=1)
    bounds[:, 0] = times[split_step]
    bounds[group, rank + 1] = inner
    # Piece 0 has the lux in force at the step's start, piece r + 1 that of the r-th inner edge;
    # unused pieces (length 0) repeat the last used one.
    split_lux = np.repeat(levels[level_index[split_step, split_column]][:, None], pieces, axis=1)
    split_lux[group, rank + 1] = opened_lux
    last_used = np.maximum.accumulate(np.where(np.arange(pieces)[None, :] <= per_group[:, None],
                                               np.arange(pieces)[None, :], 0), axis=1)
    split_lux = np.take_along_axis(split_lux, last_used, axis=1)
    return GridLight(start, times, None, split_step, split_column, np.diff(bounds, axis=1), split_lux,
                     levels, level_index)


#: The sky plans assume unless told otherwise (:mod:`planner.world.daylight`): the IES overcast sky, the
#: dimmest of the three, so a plan does not count on sunshine that may not come (a design choice of this planner).
DEFAULT_SKY = "overcast"
#: How outdoor time is spent unless told otherwise: in the open.
DEFAULT_EXPOSURE = "open"


#: Cabin illuminance on a flight while awake [lux] (dimmed cabin and window shades; invented default,
#: stated so the user can change it).
DEFAULT_CABIN_LUX = 50.0


@dataclass(frozen=True)
class LightOptions:
    """The light the traveller can get.

    Attributes
    ----------
    indoor_lux : float  [lux]
    box_lux : float  [lux] light box at the eye
    box_max_minutes : float  [min/day]
    glasses_transmission : float  [0..1] dark glasses
    daylight : bool  whether outdoor daylight may be prescribed
    daylight_lux : float or None  [lux] cap on daylight at the eye (None: as the sky gives it)
    daylight_max_minutes : float  [min/day] prescribed outdoor time
    cabin_lux : float  [lux]
    sky : {"clear", "partly", "overcast"}  sky type of the daylight model (:mod:`planner.world.daylight`)
    daylight_exposure : {"open", "shade", "window"}  how outdoor time is spent
    """

    indoor_lux: float = 150.0
    box_lux: float = 10_000.0
    box_max_minutes: float = 60.0
    glasses_transmission: float = 0.1
    daylight: bool = True
    daylight_lux: float | None = None
    daylight_max_minutes: float = 120.0
    cabin_lux: float = DEFAULT_CABIN_LUX
    sky: str = DEFAULT_SKY
    daylight_exposure: str = DEFAULT_EXPOSURE


@hash_once
@dataclass(frozen=True)
class Window:
    """A prescribed light window (UTC), with what gives the light."""

    start: datetime
    end: datetime
    lux: float
    source: str

    @property
    def minutes(self) -> float:
        return hours_between(self.start, self.end) * 60.0
