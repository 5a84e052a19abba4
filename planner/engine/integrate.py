"""Batch integrator: N light schedules (or N people) through one model at once.

Scheme
------
Fixed steps on a grid shared by the batch (:func:`planner.world.light.sample_on_grid`).
Process L is advanced exactly through each piece of constant light
(:mod:`planner.engine.process_l`); the two oscillator variables are advanced with the
classical fourth-order Runge-Kutta method whose stages receive the exact mean
drive of the matching sub-window of the step.  All arithmetic is numpy over the
batch axis, so the cost per step hardly depends on N for N up to a few thousand.

Shape contract: states are ``(3, N)`` (oscillator variables, then n); the
recorded trajectory is ``(K + 1, 3, N)`` on the ``K + 1`` grid points.

Kernels
-------
The same scheme runs on one of two kernels: ``"numpy"`` (this module, the reference) or
``"compiled"`` (:mod:`planner.engine.kernel_numba`, one schedule per loop iteration on every core;
needs numba).  ``"auto"`` takes the compiled one when numba is installed.  The choice is the
``kernel`` argument of :func:`integrate` and :func:`simulate`, else the environment variable
``PHASEPLAN_KERNEL`` (``auto``, ``numpy`` or ``compiled``), else ``"auto"``.
"""

from __future__ import annotations

import dataclasses
import os
from dataclasses import dataclass
from datetime import datetime, timedelta
from typing import Sequence

import numpy as np

from planner.engine import kernel_numba, process_l
from planner.engine.oscillators import ProcessLCoefficients
from planner.engine.parameters import ModelSpec
from planner.engine.process_l import MINUTES_PER_HOUR
from planner.errors import InputError
from planner.world import segments_numba
from planner.world.light import GridLight, LightSchedule, sample_on_grid

#: Steps whose Process L maps are built together; bounds memory to CHUNK·N per map.
CHUNK_STEPS = 256

#: Sub-steps used by :func:`fine_steps` to re-integrate one grid step (a 30-min step in 1-min steps).
FINE_SUBSTEPS = 30

#: Environment variable choosing the kernel when no ``kernel`` argument is given (light schedules
#: are built on the same path: :mod:`planner.world.segments_numba`).
KERNEL_ENVIRONMENT = segments_numba.KERNEL_ENVIRONMENT
KERNELS = ("auto", "numpy", "compiled")

STATUS_SUCCESS = 0
STATUS_NONFINITE = 1


@dataclass(frozen=True)
class SimulationResult:
    """Outcome of a batch integration.

    Attributes
    ----------
    success : bool
        True when every state stayed finite.
    status : int
        0 success, 1 a state became non-finite (see ``message``).
    message : str
        Human-readable outcome.
    model : ModelSpec
        The parameter set used.
    epoch : datetime
        UTC instant of hour 0.
    times : ndarray, shape (K + 1,)
        Grid points [h since ``epoch``].
    states : ndarray, shape (K + 1, 3, N)
        State on the grid; after a failure, rows from the failing step on are NaN.
    drive : ndarray, shape (K + 1, N)
        Unmodulated drive B̂ = G·α·(1 − n) just after each grid point.
    step_h : float
        Nominal step [h].
    light : GridLight
        The light the batch was integrated with (for re-integrating single steps finely).
    kernel : str
        The kernel that integrated it, ``"numpy"`` or ``"compiled"`` (:func:`fine_steps` uses the same).
    """

    success: bool
    status: int
    message: str
    model: ModelSpec
    epoch: datetime
    times: np.ndarray
    states: np.ndarray
    drive: np.ndarray
    step_h: float
    light: GridLight | None = dataclasses.field(default=None, repr=False)
    kernel: str = "numpy"

    @property
    def size(self) -> int:
        return self.states.shape[2]

    @property
    def final_state(self) -> np.ndarray:
        """State at the last grid point, shape (3, N)."""
        return self.states[-1]

    def datetimes(self) -> list[datetime]:
        """Grid points as aware UTC datetimes."""
        return [self.epoch + timedelta(hours=float(t)) for t in self.times]

    def derivatives(self, *, light_off: bool = False) -> np.ndarray:
        """Time derivatives [1/h] of the oscillator variables on the grid, shape (K + 1, 2, N).

        With ``light_off`` the drive is set to 0: the derivatives the same states would have
        with no light reaching the eye.
        """
        family, c = self.model.family, self.model.coefficients
        # (2, K + 1, N) views: per-person coefficients of shape (N,) broadcast along the last axis.
        oscillator = np.moveaxis(self.states[:, :2, :], 1, 0)
        drive = np.zeros(self.states.shape[::2]) if light_off else self.drive
        return np.moveaxis(family.derivatives(oscillator, drive, c), 0, 1)


def _take_coefficients(c, columns: np.ndarray):
    """Oscillator coefficients of some batch columns (per-person arrays are indexed)."""
    return type(c)(**{name: (np.asarray(v)[columns] if np.ndim(v) == 1 else v) for name, v in vars(c).items()})


def fine_steps(result: SimulationResult, rows: np.ndarray, columns: np.ndarray,
               substeps: int = FINE_SUBSTEPS) -> tuple[np.ndarray, np.ndarray]:
    """Re-integrate single grid steps with ``substeps`` smaller steps, from the recorded states.

    Used to place markers inside a step where the trajectory bends sharply (bright light while
    a marker passes), which interpolation between grid points cannot follow.

    Parameters
    ----------
    rows, columns : ndarray of int, shape (E,)
        Step index (the step from ``times[row]`` to ``times[row + 1]``) and schedule of each.

    Returns
    -------
    times : ndarray, shape (substeps + 1, E)
        Fine time points [h since epoch].
    oscillator : ndarray, shape (substeps + 1, 2, E)
        Oscillator states at those points.
    """
    if result.kernel == "compiled":
        return kernel_numba.fine_steps(result, rows, columns, substeps)
    light = result.light
    model = result.model
    family = model.family
    c = _take_coefficients(model.coefficients, columns)
    pl = _take(model.process_l, columns)
    starts = result.times[rows]
    lengths = result.times[rows + 1] - starts
    pieces = max(1, light.split_lengths.shape[1]) if light.split_step.size else 1
    piece_lengths = np.zeros((rows.size, pieces))
    piece_lux = np.zeros((rows.size, pieces))
    piece_lengths[:, 0] = lengths
    piece_lux[:, 0] = light.lux[rows, columns]
    if light.split_step.size:
        width = light.size
        split_keys = light.split_step * width + light.split_column
        order = np.argsort(split_keys)
        wanted = rows * width + columns
        found = np.searchsorted(split_keys[order], wanted)
        found = np.clip(found, 0, order.size - 1)
        hit = split_keys[order][found] == wanted
        piece_lengths[hit] = light.split_lengths[order][found[hit]]
        piece_lux[hit] = light.split_lux[order][found[hit]]
    piece_start = np.concatenate([np.zeros((rows.size, 1)), np.cumsum(piece_lengths, axis=1)[:, :-1]], axis=1)
    piece_end = piece_start + piece_lengths
    y = result.states[rows, :2, columns].T.copy()
    n = result.states[rows, 2, columns].copy()
    h = lengths / substeps
    times = starts[None, :] + h[None, :] * np.arange(substeps + 1)[:, None]
    path = np.empty((substeps + 1, 2, rows.size))
    path[0] = y
    with np.errstate(over="ignore", invalid="ignore"):
        for j in range(substeps):
            lo, hi = (j * h)[:, None], ((j + 1) * h)[:, None]
            clipped = np.clip(np.minimum(piece_end, hi) - np.maximum(piece_start, lo), 0.0, None)
            maps = process_l.step_maps(list(clipped.T), list(piece_lux.T), pl)
            u1, u2, u3 = (g * n + o for g, o in zip(maps.drive_gain, maps.drive_offset))
            k1 = family.derivatives(y, u1, c)
            k2 = family.derivatives(y + 0.5 * h * k1, u2, c)
            k3 = family.derivatives(y + 0.5 * h * k2, u2, c)
            k4 = family.derivatives(y + h * k3, u3, c)
            y = y + (h / 6.0) * (k1 + 2.0 * (k2 + k3) + k4)
            n = maps.n_gain * n + maps.n_offset
            path[j + 1] = y
    return times, path


def _take(pl: ProcessLCoefficients, columns: np.ndarray) -> ProcessLCoefficients:
    """Process L coefficients of some batch columns (per-person arrays are indexed)."""
    def pick(value):
        array = np.asarray(value)
        return array[columns] if array.ndim == 1 else array
    return dataclasses.replace(pl, **{f: pick(getattr(pl, f)) for f in ("alpha0", "decay", "p", "I0", "G")})


def _fields(maps: process_l.StepMaps) -> tuple[np.ndarray, ...]:
    return (maps.n_gain, maps.n_offset, *maps.drive_gain, *maps.drive_offset)


def _shared(pl: ProcessLCoefficients) -> bool:
    """True when every person in the batch has the same Process L parameters."""
    return all(np.ndim(getattr(pl, name)) == 0 for name in ("alpha0", "decay", "p", "I0", "G"))


def _check_batch_parameters(model: ModelSpec, size: int) -> None:
    for name, value in model.values.items():
        shape = np.shape(value)
        if shape not in ((), (size,)):
            raise InputError(f"per-person parameter {name} has shape {shape}; expected () or ({size},)",
                             field=f"parameters.{name}")


def resolve_kernel(kernel: str | None = None) -> str:
    """The kernel a call will use, ``"numpy"`` or ``"compiled"`` (see the module docstring).

    Raises
    ------
    InputError
        For an unknown name, or ``"compiled"`` when numba is not installed.
    """
    source = "kernel"
    if kernel is None:
        kernel, source = os.environ.get(KERNEL_ENVIRONMENT, "auto").strip().lower() or "auto", KERNEL_ENVIRONMENT
    if kernel not in KERNELS:
        raise InputError(f"{source} is {kernel!r}; expected one of {', '.join(KERNELS)}", field=source)
    if kernel == "compiled" and not kernel_numba.AVAILABLE:
        raise InputError(f"{source} asks for the compiled kernel but numba is not installed "
                         "(pip install numba, or use the numpy kernel)", field=source)
    if kernel == "auto":
        return "compiled" if kernel_numba.AVAILABLE else "numpy"
    return kernel


def integrate(model: ModelSpec, light: GridLight, initial_state: np.ndarray, *,
              kernel: str | None = None) -> SimulationResult:
    """Integrate a batch already sampled on its grid.

    Parameters
    ----------
    model : ModelSpec
        Parameter set; values may be per-person arrays of shape (N,).
    light : GridLight
        The batch's light on its grid.
    initial_state : array_like, shape (3,) or (3, N)
        State at ``light.times[0]``.
    kernel : {"auto", "numpy", "compiled"}, optional
        Which implementation of the scheme runs (see :func:`resolve_kernel`); the results agree
        to rounding.
    """
    chosen = resolve_kernel(kernel)
    size = light.size
    _check_batch_parameters(model, size)
    state0 = np.broadcast_to(np.asarray(initial_state, dtype=float).reshape(3, -1), (3, size)).copy()
    if not np.all(np.isfinite(state0)):
        raise InputError("initial state must be finite", field="initial_state")
    family, c, pl = model.family, model.coefficients, model.process_l
    times = light.times
    steps = times.size - 1
    lengths = np.diff(times)
    if chosen == "compiled" and not kernel_numba.supports(family.key, pl.form):
        chosen = "numpy"
    if chosen == "compiled":
        states, drives, failure = kernel_numba.integrate_batch(model, light, state0)
    else:
        states, drives, failure = _integrate_numpy(model, light, state0)
    common = dict(model=model, epoch=light.epoch, times=times, step_h=float(lengths.max()) if steps else 0.0,
                  light=light, kernel=chosen)
    if failure is not None:
        step, column = failure
        states[step + 1:] = np.nan
        drives[step + 1:] = np.nan
        when = light.epoch + timedelta(hours=float(times[step]))
        return SimulationResult(False, STATUS_NONFINITE,
                                f"state of schedule {column} became non-finite in the step starting "
                                f"{when.isoformat()}; reduce the step or check the parameters",
                                states=states, drive=drives, **common)
    return SimulationResult(True, STATUS_SUCCESS, f"integrated {size} schedule(s) over {steps} steps",
                            states=states, drive=drives, **common)


def _integrate_numpy(model: ModelSpec, light: GridLight,
                     state0: np.ndarray) -> tuple[np.ndarray, np.ndarray, tuple[int, int] | None]:
    """The numpy kernel: all schedules advance together, one step at a time."""
    family, c, pl = model.family, model.coefficients, model.process_l
    size = light.size
    times = light.times
    steps = times.size - 1
    lengths = np.diff(times)
    states = np.empty((steps + 1, 3, size))
    drives = np.empty((steps + 1, size))
    states[0] = state0
    y = state0[:2].copy()
    n = state0[2].copy()
    order = np.argsort(light.split_step, kind="stable")
    split_step = light.split_step[order]
    split_column = light.split_column[order]
    split_lengths = light.split_lengths[order]
    split_lux = light.split_lux[order]
    nominal = float(lengths.max()) if steps else 0.0
    per_level = level_index = None
    if light.level_index is not None and _shared(pl) and steps:
        level_index = light.level_index_by_step()   # read one step (row) at a time
        levels = light.levels
        per_level = np.stack([np.asarray(f) for f in _fields(process_l.step_maps([np.full(levels.shape, nominal)],
                                                                                  [levels], pl))], axis=1)
    # Overflow is detected below and reported in the result, so numpy's warnings are silenced.
    with np.errstate(over="ignore", invalid="ignore"):
        failure = _advance(family, c, pl, light, lengths, states, y, n, per_level, level_index, nominal,
                           split_step, split_column, split_lengths, split_lux)
    if steps:
        drives[:steps] = process_l.drive(light.lux, states[:steps, 2], pl)
        drives[steps] = process_l.drive(light.lux[-1], states[steps, 2], pl)
    else:
        drives[0] = 0.0
    return states, drives, failure


def _advance(family, c, pl, light: GridLight, lengths, states, y, n, per_level, level_index, nominal,
             split_step, split_column, split_lengths, split_lux) -> tuple[int, int] | None:
    """Run the fixed-step scheme over the grid, filling ``states``; the first non-finite (step, column) or None."""
    derivatives = family.derivatives
    steps = lengths.size
    for chunk_start in range(0, steps, CHUNK_STEPS):
        chunk_end = min(chunk_start + CHUNK_STEPS, steps)
        chunk_lux = light.lux[chunk_start:chunk_end]
        chunk_h = lengths[chunk_start:chunk_end, None]
        if per_level is not None:
            # Shared Process L: the maps of a full step depend only on the lux level.
            block = per_level[level_index[chunk_start:chunk_end]]   # one gather: (S, N, 8)
            n_gain, n_offset, g1, g2, g3, o1, o2, o3 = (block[..., f] for f in range(8))
            short = np.nonzero(np.abs(chunk_h[:, 0] - nominal) > 1e-9)[0]   # only the last step can be shorter
            if short.size:
                exact = process_l.step_maps([np.broadcast_to(chunk_h[short], chunk_lux[short].shape)],
                                            [chunk_lux[short]], pl)
                for target, source in zip((n_gain, n_offset, g1, g2, g3, o1, o2, o3), _fields(exact)):
                    target[short] = source
        else:
            maps = process_l.step_maps([np.broadcast_to(chunk_h, chunk_lux.shape)], [chunk_lux], pl)
            n_gain, n_offset, g1, g2, g3, o1, o2, o3 = (f.copy() for f in _fields(maps))
        lo, hi = np.searchsorted(split_step, [chunk_start, chunk_end])
        if hi > lo:
            rows = split_step[lo:hi] - chunk_start
            cols = split_column[lo:hi]
            piece_maps = process_l.step_maps(list(split_lengths[lo:hi].T), list(split_lux[lo:hi].T),
                                             _take(pl, cols))
            n_gain[rows, cols] = piece_maps.n_gain
            n_offset[rows, cols] = piece_maps.n_offset
            for target, source in zip((g1, g2, g3), piece_maps.drive_gain):
                target[rows, cols] = source
            for target, source in zip((o1, o2, o3), piece_maps.drive_offset):
                target[rows, cols] = source
        for i in range(chunk_end - chunk_start):
            h = chunk_h[i, 0]
            half = 0.5 * h
            u_first = g1[i] * n + o1[i]
            u_middle = g2[i] * n + o2[i]
            u_last = g3[i] * n + o3[i]
            k1 = derivatives(y, u_first, c)
            k2 = derivatives(y + half * k1, u_middle, c)
            k3 = derivatives(y + half * k2, u_middle, c)
            k4 = derivatives(y + h * k3, u_last, c)
            y = y + (h / 6.0) * (k1 + 2.0 * (k2 + k3) + k4)
            n = n_gain[i] * n + n_offset[i]
            states[chunk_start + i + 1, :2] = y
            states[chunk_start + i + 1, 2] = n
        if not (np.all(np.isfinite(y)) and np.all(np.isfinite(n))):
            return _first_nonfinite(states, chunk_start, chunk_end)
    return None


def _first_nonfinite(states: np.ndarray, chunk_start: int, chunk_end: int) -> tuple[int, int]:
    bad = ~np.isfinite(states[chunk_start + 1:chunk_end + 1]).all(axis=1)
    row, column = np.argwhere(bad)[0]
    return chunk_start + int(row), int(column)


def default_step_h(model: ModelSpec) -> float:
    """The step validated for the model [h]."""
    return model.step_minutes / MINUTES_PER_HOUR


def simulate(model: ModelSpec, schedules: LightSchedule | Sequence[LightSchedule], initial_state: np.ndarray,
             *, start: datetime | None = None, end: datetime | None = None,
             step_minutes: float | None = None, kernel: str | None = None) -> SimulationResult:
    """Simulate one or more light schedules.

    Parameters
    ----------
    model : ModelSpec
        Parameter set (see :func:`planner.engine.parameters.load_model`).
    schedules : LightSchedule or sequence of LightSchedule
        N schedules covering ``[start, end]``; a single schedule means N = 1.
    initial_state : array_like, shape (3,) or (3, N)
        State at ``start``.
    start, end : datetime, optional
        Span to simulate; default the latest start and earliest end of the schedules.
    step_minutes : float, optional
        Step [min]; default the model file's validated step.
    kernel : {"auto", "numpy", "compiled"}, optional
        See :func:`integrate`.
    """
    if isinstance(schedules, LightSchedule):
        schedules = [schedules]
    if not schedules:
        raise InputError("no light schedules to simulate")
    start = start or max(s.start for s in schedules)
    end = end or min(s.end for s in schedules)
    step_h = default_step_h(model) if step_minutes is None else step_minutes / MINUTES_PER_HOUR
    if not step_h > 0:
        raise InputError(f"step must be positive, got {step_minutes} min", field="step_minutes")
    light = sample_on_grid(schedules, start, end, step_h)
    people = model_batch_size(model)
    if light.size == 1 and people > 1:
        light = light.repeated(people)
    return integrate(model, light, initial_state, kernel=kernel)


def model_batch_size(model: ModelSpec) -> int:
    """N implied by per-person parameter arrays (1 when all are scalars)."""
    sizes = {np.size(v) for v in model.values.values() if np.ndim(v) == 1}
    if len(sizes) > 1:
        raise InputError(f"per-person parameters have different lengths {sorted(sizes)}", field="parameters")
    return sizes.pop() if sizes else 1


#: Step of the search simulations [min].  Candidates are only ranked at this step; the
#: baseline and every reported plan are simulated again at the model file's validated step.
#: At 30 min CBTmin stays within a few minutes of the validated step even under bright light
#: at night (measured here, tests/test_integrator.py), far below the 1-h re-entrainment tolerance.
SEARCH_STEP_MINUTES = 30.0
