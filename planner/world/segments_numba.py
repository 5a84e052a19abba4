"""Compiled builder of a light schedule's segments from its layers.

:meth:`planner.world.light.LightSchedule.from_layer_table` applies layers to a background level
with numpy: a few dozen array calls per schedule, which is most of the cost when a search builds
thousands of schedules of a handful of layers each.  :func:`segments` does the same with plain
loops, compiled: the same edges, the same tolerance and the same arithmetic in the same order, so
the two give the same schedule to the last bit (tests/test_light.py).

numba is optional: :data:`AVAILABLE` is False when it cannot be imported, and schedules are then
built with numpy.  Setting the environment variable ``PHASEPLAN_KERNEL`` to ``numpy`` keeps every
computation on the numpy path (the reference), this one included.
"""

from __future__ import annotations

import os

import numpy as np

try:   # numba is optional: without it the numpy code is used
    from numba import njit
except ImportError:   # pragma: no cover - exercised by forcing the numpy path in the tests
    AVAILABLE = False
else:
    AVAILABLE = True

#: Environment variable choosing the computation path: "auto" (default), "compiled" or "numpy".
KERNEL_ENVIRONMENT = "PHASEPLAN_KERNEL"


def wanted() -> bool:
    """Whether schedules are built here: numba is there and the numpy path is not asked for."""
    return AVAILABLE and os.environ.get(KERNEL_ENVIRONMENT, "auto").strip().lower() != "numpy"


if AVAILABLE:
    @njit(cache=True, error_model="numpy")
    def segments(span, first, last, is_set, is_scale, values, background, tolerance):
        """Edges [h] and lux of the schedule of a layer table (see ``from_layer_table``).

        Parameters
        ----------
        span : float
            Length of the schedule [h].
        first, last : ndarray, shape (L,)
            Each layer's first and last hour [h since the schedule's start].
        is_set, is_scale : ndarray of bool, shape (L,)
            Whether the layer sets the level, or scales it (else it raises it to at least its value).
        values : ndarray, shape (L,)
            Lux of a ``set`` or ``at_least`` layer [lux]; transmission of a ``scale`` layer [0..1].
        background : float
            Level beneath every layer [lux].
        tolerance : float
            Edges closer than this to the edge before them are dropped [h].

        Returns
        -------
        edges : ndarray, shape (M + 1,)
        lux : ndarray, shape (M,)
        """
        count = first.size
        a = np.minimum(np.maximum(first, 0.0), span)
        b = np.minimum(np.maximum(last, 0.0), span)
        every = np.empty(2 * count + 2)
        every[0] = 0.0
        every[1] = span
        every[2:2 + count] = a
        every[2 + count:] = b
        every = np.sort(every)
        # the distinct edges, each kept when more than ``tolerance`` after the distinct one before it
        edges = np.empty(every.size)
        kept = 0
        previous = 0.0
        for i in range(every.size):
            value = every[i]
            if i > 0 and value == every[i - 1]:
                continue
            if kept == 0 or value - previous > tolerance:
                edges[kept] = value
                kept += 1
            previous = value
        edges = edges[:kept]
        edges[kept - 1] = span
        pieces = kept - 1
        mids = np.empty(pieces)
        for s in range(pieces):
            mids[s] = 0.5 * (edges[s] + edges[s + 1])
        lo = np.searchsorted(mids, a, side="right")
        hi = np.maximum(np.searchsorted(mids, b, side="left"), lo)
        last_set = np.full(pieces, -1)
        for layer in range(count):
            if is_set[layer]:
                for s in range(lo[layer], hi[layer]):
                    last_set[s] = layer   # layers go in order: the last one over a segment wins
        lux = np.empty(pieces)
        for s in range(pieces):
            lux[s] = values[last_set[s]] if last_set[s] >= 0 else background
        for layer in range(count):
            if is_set[layer]:
                continue
            for s in range(lo[layer], hi[layer]):
                if last_set[s] < layer:
                    if is_scale[layer]:
                        lux[s] *= values[layer]
                    else:
                        lux[s] = max(lux[s], values[layer])
        out_edges = np.empty(pieces + 1)
        out_lux = np.empty(pieces)
        used = 0
        for s in range(pieces):
            if s == 0 or lux[s] != lux[s - 1]:
                out_edges[used] = edges[s]
                out_lux[used] = lux[s]
                used += 1
        out_edges[used] = span
        return out_edges[:used + 1], out_lux[:used]
