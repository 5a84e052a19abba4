"""Scores of simulated plans for many columns at once (the average person's plans, or people).

The same numbers as the per-column definitions in :mod:`planner.trips.search` (:func:`~planner.trips.search.person_score`,
:func:`planner.engine.markers.reentrainment`, :func:`~planner.trips.search._net_shift_h`), computed for a
batch in a few array operations: each column's sums run over a contiguous row of its own, so that they
add up in the same order as for a single column.
"""

from __future__ import annotations

import numpy as np

from planner.engine.markers import HOURS_PER_DAY, phase_difference

#: Tolerance for "re-entrained": CBTmin within 1 h of the target (the issue's definition; common practice).
REENTRAINMENT_TOLERANCE_H = 1.0


def people_reentrainment(stay: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Each person's days to re-entrain (inf when not within the time away) and score before the plan's
    burden, from the daily CBTmin errors over the time away ``stay`` (S, N) [h]: per column, what
    :func:`planner.engine.markers.reentrainment` (target 0, the re-entrainment tolerance) and
    :func:`planner.trips.search.person_score` give, computed for all columns at once."""
    errors = phase_difference(stay, 0.0)
    ok = (np.abs(errors) <= REENTRAINMENT_TOLERANCE_H) & np.isfinite(errors)
    count = stay.shape[0]
    settled = ok[-1] if count else np.zeros(stay.shape[1], dtype=bool)
    # the day after the last day out of tolerance (0 when none is)
    failing = np.where(~ok, np.arange(count)[:, None], -1).max(axis=0, initial=-1)
    days = np.where(settled, failing + 1.0, np.inf)
    # person_score: days needed (the days away + 5 when never) + a twentieth of the mean |error|
    magnitude = np.ascontiguousarray(np.abs(stay).T)      # rows: people, as person_score reads each
    finite = np.isfinite(magnitude).any(axis=1)
    with np.errstate(invalid="ignore", divide="ignore"):
        residual = np.where(finite, np.nanmean(np.where(finite[:, None], magnitude, 0.0), axis=1), 12.0)
    needed = np.where(settled, failing + 1.0, count + 5.0)
    return days, needed + 0.05 * residual


def net_shifts_h(times: np.ndarray) -> np.ndarray:
    """Net movement of each column's daily CBTmin [h] (as :func:`planner.trips.search._net_shift_h` on each column:
    the sum of daily moves, each the shortest way round the clock), shape (C,)."""
    out = np.zeros(times.shape[1])
    rows = np.ascontiguousarray(times.T)     # one row per column
    finite = np.isfinite(rows)
    counts = finite.sum(axis=1)
    # each row's known times moved to its front, in order; rows with as many known times go together,
    # so that each row's moves are summed exactly as a row of its own would be
    known = np.take_along_axis(rows, np.argsort(~finite, axis=1, kind="stable"), axis=1)
    for count in np.unique(counts[counts > 1]):
        same = counts == count
        out[same] = np.sum(phase_difference(np.mod(np.diff(known[same, :count], axis=1), HOURS_PER_DAY), 0.0),
                           axis=1)
    return out
