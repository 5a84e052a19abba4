"""Compiled batch kernel: the scheme of :mod:`planner.engine.integrate`, one schedule per loop iteration.

The numpy path in :mod:`planner.engine.integrate` advances all N schedules together one step at a
time; this kernel turns the loops round: every schedule (column) is integrated over the whole
grid on its own, and the columns are shared out over the machine's cores with
``numba.prange``.  The arithmetic is the same, term for term and in the same order (but for
hannay2019's cos ψ and sin ψ, from a series of this module that the compiler can vectorise,
where numpy calls its own cos and sin):

- Process L is advanced exactly through each piece of constant light (the closed-form maps of
  :func:`planner.engine.process_l.step_maps`, with the mean drive over the Runge-Kutta sub-windows
  [0, h/6], [h/6, 5h/6], [5h/6, h]);
- the oscillator is advanced with classical fourth-order Runge-Kutta, each stage fed the exact
  mean drive of its sub-window;
- full steps of one lux level share their maps, computed once per level and distinct set of
  Process L parameters (one set for a single person, one per person for a population).

So the two paths agree to rounding (tests/test_kernel.py checks 1e-9 on the state).

The equations are those of :mod:`planner.engine.oscillators`: Forger, Jewett & Kronauer (1999)
doi:10.1177/074873099129000867 (simpler model), Jewett, Forger & Kronauer (1999)
doi:10.1177/074873049901400608 (revised model, 7th-order damping) and Hannay, Booth & Forger
(2019) doi:10.1177/0748730419878298 (macroscopic model); Process L as in those papers.

numba is optional: :data:`AVAILABLE` is False when it cannot be imported, and the integrator
then keeps to the numpy path.  Compiled code is cached on disk (``cache=True``), so only the
first call on a machine pays for compilation; :func:`warm_up` makes that call and reports its
cost separately.
"""

from __future__ import annotations

import math
import time
from contextlib import contextmanager
from dataclasses import dataclass
from types import SimpleNamespace

import numpy as np

try:   # numba is optional: without it the numpy path is used
    import numba
    from numba import njit, prange
except ImportError:   # pragma: no cover - exercised by forcing the fallback in the tests
    numba = None
    AVAILABLE = False
else:
    AVAILABLE = True

#: Family code in the kernel, and the order its coefficients are packed in (names of the
#: family's ``coefficients`` namespace in :mod:`planner.engine.oscillators`).
FAMILY_CODES = {"forger1999": 0, "jewett1999": 1, "hannay2019": 2}
COEFFICIENT_ORDER = {
    "forger1999": ("w", "mu", "k", "omega_sq", "sx", "sxc"),
    "jewett1999": ("w", "mu", "k", "omega_sq", "sx", "sxc", "q"),
    "hannay2019": ("gamma", "radial", "angular", "omega0", "half_a1", "half_a2",
                   "cos_l1", "sin_l1", "cos_l2", "sin_l2", "sigma"),
}
#: Process L forms: α = α0·(I/I0)^p ("power") or α0·I^p/(I^p + I0) ("saturating").
FORM_CODES = {"power": 0, "saturating": 1}
PROCESS_L_ORDER = ("alpha0", "decay", "p", "I0", "G")

#: Rates in the model files are per minute; the integrator's clock is in hours.
_MINUTES_PER_HOUR = 60.0
#: Options of every compiled function.  Cached on disk; numpy's error model, under which a
#: division by zero gives inf or nan as in the numpy path instead of raising: the zero test of
#: Python's model sits in every loop that divides and stops the compiler from vectorising it
#: (measured: hannay2019's Runge-Kutta loop, which divides by R, 6× slower).  A state that turns
#: non-finite is caught as a failed column either way.
_COMPILED = {"cache": True, "error_model": "numpy"}
#: 2π in three parts for the reduction of an angle (Cody & Waite 1980): the first two hold 32
#: significant bits each, so their products with a whole number of turns below 2²¹ are exact;
#: and 1/(2π).
_TWO_PI_HIGH = 6.2831853069365025
_TWO_PI_MIDDLE = 2.4308402025215864e-10
_TWO_PI_LOW = 8.089064995183803e-21
_INVERSE_TWO_PI = 0.15915494309189535
#: Taylor coefficients of sin (odd powers) and cos (even powers): (−1)^k / n!.
_SIN_3, _SIN_5, _SIN_7, _SIN_9, _SIN_11, _SIN_13, _SIN_15, _SIN_17 = (
    (-1.0) ** k / math.factorial(2 * k + 1) for k in range(1, 9))
_COS_2, _COS_4, _COS_6, _COS_8, _COS_10, _COS_12, _COS_14, _COS_16, _COS_18 = (
    (-1.0) ** k / math.factorial(2 * k) for k in range(1, 10))
#: Columns a thread advances together (one cache line of float64 is 8).
_BLOCK = 16
#: Steps whose length differs from the nominal step by more than this get their own maps [h].
_NOMINAL_TOLERANCE_H = 1e-9


def supports(family_key: str, form: str) -> bool:
    """True when the kernel implements this equation family and Process L form."""
    return AVAILABLE and family_key in FAMILY_CODES and form in FORM_CODES


@dataclass(frozen=True)
class CompileReport:
    """What the first call of the kernel cost.

    Attributes
    ----------
    seconds : float
        Wall time of the first call [s]: compilation, or loading the on-disk cache.
    from_cache : bool
        True when the compiled code was loaded from the cache instead of compiled.
    threads : int
        Threads the kernel runs on.
    """

    seconds: float
    from_cache: bool
    threads: int


def thread_count() -> int:
    """Threads the compiled kernel uses (numba's current setting); 1 without numba."""
    return int(numba.get_num_threads()) if AVAILABLE else 1


#: Work below which a second thread costs more than it saves (measured here on 2 cores shared with
#: other processes: a trip search batch of 60 schedules ran 1.5-2x slower on 2 threads than on 1):
#: columns of the integrator, lux levels × columns of the level tables, and steps re-integrated finely.
COLUMNS_PER_THREAD = 256
LEVELS_PER_THREAD = 4096
STEPS_PER_THREAD = 2048


@contextmanager
def threads_for(parts: int):
    """Run the block's kernel calls on at most ``parts`` threads (at least 1, at most the current setting)."""
    if not AVAILABLE:
        yield
        return
    before = numba.get_num_threads()
    wanted = max(1, min(int(parts), before))
    if wanted == before:
        yield
        return
    numba.set_num_threads(wanted)
    try:
        yield
    finally:
        numba.set_num_threads(before)


def set_thread_count(count: int) -> None:
    """Limit the kernel to ``count`` threads (at most numba's ``NUMBA_NUM_THREADS``)."""
    if AVAILABLE:
        numba.set_num_threads(max(1, min(int(count), numba.config.NUMBA_NUM_THREADS)))


if AVAILABLE:
    @njit(**_COMPILED)
    def _activation(lux, form, alpha0, p, i0):
        """α [1/min] for ``lux`` (see :func:`planner.engine.process_l.activation_rate`)."""
        if form == 0:
            return alpha0 * (lux / i0) ** p
        powered = lux ** p
        return alpha0 * powered / (powered + i0)

    @njit(**_COMPILED)
    def _single_piece(length, lux, form, pl, out):
        """Maps of a step of constant light, into ``out`` (n_gain, n_offset, g1, g2, g3, o1, o2, o3);
        :func:`planner.engine.process_l._single_piece_maps` term for term."""
        alpha0, decay, p, i0, gain_g = pl[0], pl[1], pl[2], pl[3], pl[4]
        alpha = _activation(lux, form, alpha0, p, i0)
        rate = _MINUTES_PER_HOUR * (alpha + decay)
        n_inf = alpha / (alpha + decay)
        b0 = math.exp(-rate * ((1.0 / 6.0) * length))
        b1 = math.exp(-rate * ((5.0 / 6.0) * length))
        b2 = math.exp(-rate * (1.0 * length))
        decays = (1.0 - b0, b0 - b1, b1 - b2)
        widths = (1.0 / 6.0 - 0.0, 5.0 / 6.0 - 1.0 / 6.0, 1.0 - 5.0 / 6.0)
        for w in range(3):
            window = widths[w] * length
            scale = gain_g * alpha / window
            part = decays[w] / rate
            out[2 + w] = -scale * part
            out[5 + w] = scale * ((1.0 - n_inf) * window + n_inf * part)
        out[0] = b2
        out[1] = n_inf * (1.0 - b2)

    @njit(**_COMPILED)
    def _pieces(lengths, levels, form, pl, out):
        """Maps of a step split into pieces of constant light (``lengths`` [h], ``levels`` [lux]);
        :func:`planner.engine.process_l.step_maps` term for term."""
        alpha0, decay, p, i0, gain_g = pl[0], pl[1], pl[2], pl[3], pl[4]
        total = 0.0
        for length in lengths:
            total += length
        safe_total = total if total > 0 else 1.0
        gain = 1.0
        offset = 0.0
        for f in range(2, 8):
            out[f] = 0.0
        piece_start = 0.0
        los = (0.0, 1.0 / 6.0, 5.0 / 6.0)
        his = (1.0 / 6.0, 5.0 / 6.0, 1.0)
        for q in range(lengths.size):
            length = lengths[q]
            alpha = _activation(levels[q], form, alpha0, p, i0)
            rate = _MINUTES_PER_HOUR * (alpha + decay)
            n_inf = alpha / (alpha + decay)
            piece_end = piece_start + length
            for w in range(3):
                a = min(max(los[w] * total, piece_start), piece_end) - piece_start
                b = min(max(his[w] * total, piece_start), piece_end) - piece_start
                decay_part = (math.exp(-rate * a) - math.exp(-rate * b)) / rate
                scale = gain_g * alpha / max((his[w] - los[w]) * safe_total, 1e-300)
                out[2 + w] = out[2 + w] - scale * gain * decay_part
                out[5 + w] = out[5 + w] + scale * ((1.0 - n_inf) * (b - a) - (offset - n_inf) * decay_part)
            factor = math.exp(-rate * length)
            gain = gain * factor
            offset = offset * factor + n_inf * (1.0 - factor)
            piece_start = piece_end
        out[0] = gain
        out[1] = offset

    @njit(**_COMPILED)
    def _forger_derivatives(y0, y1, u, c, b):
        """Forger, Jewett & Kronauer (1999): dx/dt = (π/12)·(xc + B),
        dxc/dt = (π/12)·(μ·(xc − 4·xc³/3) − x·[(24/(f·τx))² + k·B]), B = B̂·(1 − 0.4·x)·(1 − 0.4·xc)."""
        w, mu, k, omega_sq, sx, sxc = c[0, b], c[1, b], c[2, b], c[3, b], c[4, b], c[5, b]
        light = u * (1.0 - sx * y0) * (1.0 - sxc * y1)
        d0 = w * (y1 + light)
        d1 = w * (mu * (y1 - (4.0 / 3.0) * y1 * y1 * y1) - y0 * (omega_sq + k * light))
        return d0, d1

    @njit(**_COMPILED)
    def _jewett_derivatives(y0, y1, u, c, b):
        """Jewett, Forger & Kronauer (1999): dx/dt = (π/12)·(xc + μ·(x/3 + 4·x³/3 − 256·x⁷/105) + B),
        dxc/dt = (π/12)·(q·B·xc − x·[(24/(f·τx))² + k·B])."""
        w, mu, k, omega_sq, sx, sxc, q = c[0, b], c[1, b], c[2, b], c[3, b], c[4, b], c[5, b], c[6, b]
        light = u * (1.0 - sx * y0) * (1.0 - sxc * y1)
        x2 = y0 * y0
        x3 = x2 * y0
        x7 = x3 * x3 * y0
        d0 = w * (y1 + mu * (y0 / 3.0 + (4.0 / 3.0) * x3 - (256.0 / 105.0) * x7) + light)
        d1 = w * (q * light * y1 - y0 * (omega_sq + k * light))
        return d0, d1

    @njit(**_COMPILED)
    def _cos_sin(angle):
        """cos and sin of ``angle`` [rad] with no branch and no call, so that the compiler can
        vectorise the loop around it (a call of math.cos or math.sin stops it from doing so).

        The angle is reduced to r in [−π, π] (2π in three parts, Cody & Waite 1980, so that the
        reduction adds no error of its own over the few thousand radians of a long run); cos and
        sin of r/4 come from their Taylor series to r¹⁸ and r¹⁷ (remainder under 1e-19 for
        |r/4| ≤ π/4), and two doublings give those of r.  Agrees with numpy's cos and sin to a
        few units in the last place (tests/test_kernel.py)."""
        turns = math.floor(angle * _INVERSE_TWO_PI + 0.5)
        reduced = ((angle - turns * _TWO_PI_HIGH) - turns * _TWO_PI_MIDDLE) - turns * _TWO_PI_LOW
        q = 0.25 * reduced
        s = q * q
        sin_q = q * (1.0 + s * (_SIN_3 + s * (_SIN_5 + s * (_SIN_7 + s * (_SIN_9 + s * (
            _SIN_11 + s * (_SIN_13 + s * (_SIN_15 + s * _SIN_17))))))))
        cos_q = 1.0 + s * (_COS_2 + s * (_COS_4 + s * (_COS_6 + s * (_COS_8 + s * (
            _COS_10 + s * (_COS_12 + s * (_COS_14 + s * (_COS_16 + s * _COS_18))))))))
        sin_h = 2.0 * sin_q * cos_q
        cos_h = (cos_q - sin_q) * (cos_q + sin_q)
        return (cos_h - sin_h) * (cos_h + sin_h), 2.0 * sin_h * cos_h

    @njit(**_COMPILED)
    def _hannay_derivatives(r, cos_psi, sin_psi, u, c, b):
        """Hannay, Booth & Forger (2019): dR/dt = −γ·R + (K/2)·cos(β1)·R·(1 − R⁴) + L_R,
        dψ/dt = ω0 + (K/2)·sin(β1)·(1 + R⁴) + L_ψ; ψ given by its cosine and sine."""
        r4 = r * r * r * r
        r8 = r4 * r4
        # cos/sin of ψ + βL1 and 2ψ + βL2 by the angle-addition formulas, as in planner.engine.oscillators.
        cos_2psi = cos_psi * cos_psi - sin_psi * sin_psi
        sin_2psi = 2.0 * sin_psi * cos_psi
        cos_first = cos_psi * c[6, b] - sin_psi * c[7, b]
        sin_first = sin_psi * c[6, b] + cos_psi * c[7, b]
        cos_second = cos_2psi * c[8, b] - sin_2psi * c[9, b]
        sin_second = sin_2psi * c[8, b] + cos_2psi * c[9, b]
        a1 = c[4, b] * u
        a2 = c[5, b] * u
        d0 = (-c[0, b] * r + c[1, b] * r * (1.0 - r4)
              + a1 * (1.0 - r4) * cos_first + a2 * r * (1.0 - r8) * cos_second)
        d1 = (c[3, b] + c[2, b] * (1.0 + r4) + c[10, b] * u
              - a1 * (r * r * r + 1.0 / r) * sin_first - a2 * (1.0 + r8) * sin_second)
        return d0, d1

    @njit(**_COMPILED)
    def _forger_steps(x, xc, drive, c, h, width):
        """One classical RK4 step of every column of a block (Forger, Jewett & Kronauer 1999).

        ``drive`` rows 2–4 are the stages' mean-drive gains and rows 5–7 their offsets, affine in
        n (row 8), which rows 0–1 advance.  One loop per family on purpose: with the family
        tested inside the loop the compiler no longer vectorises it (measured 2.7× slower)."""
        half = 0.5 * h
        sixth = h / 6.0
        for b in range(width):
            n = drive[8, b]
            u_first = drive[2, b] * n + drive[5, b]
            u_middle = drive[3, b] * n + drive[6, b]
            u_last = drive[4, b] * n + drive[7, b]
            y0 = x[b]
            y1 = xc[b]
            a0, a1 = _forger_derivatives(y0, y1, u_first, c, b)
            b0, b1 = _forger_derivatives(y0 + half * a0, y1 + half * a1, u_middle, c, b)
            c0, c1 = _forger_derivatives(y0 + half * b0, y1 + half * b1, u_middle, c, b)
            d0, d1 = _forger_derivatives(y0 + h * c0, y1 + h * c1, u_last, c, b)
            x[b] = y0 + sixth * (a0 + 2.0 * (b0 + c0) + d0)
            xc[b] = y1 + sixth * (a1 + 2.0 * (b1 + c1) + d1)
            drive[8, b] = drive[0, b] * n + drive[1, b]

    @njit(**_COMPILED)
    def _jewett_steps(x, xc, drive, c, h, width):
        """One classical RK4 step of every column of a block (Jewett, Forger & Kronauer 1999).

        ``drive`` rows 2–4 are the stages' mean-drive gains and rows 5–7 their offsets, affine in
        n (row 8), which rows 0–1 advance.  One loop per family on purpose: with the family
        tested inside the loop the compiler no longer vectorises it (measured 2.7× slower)."""
        half = 0.5 * h
        sixth = h / 6.0
        for b in range(width):
            n = drive[8, b]
            u_first = drive[2, b] * n + drive[5, b]
            u_middle = drive[3, b] * n + drive[6, b]
            u_last = drive[4, b] * n + drive[7, b]
            y0 = x[b]
            y1 = xc[b]
            a0, a1 = _jewett_derivatives(y0, y1, u_first, c, b)
            b0, b1 = _jewett_derivatives(y0 + half * a0, y1 + half * a1, u_middle, c, b)
            c0, c1 = _jewett_derivatives(y0 + half * b0, y1 + half * b1, u_middle, c, b)
            d0, d1 = _jewett_derivatives(y0 + h * c0, y1 + h * c1, u_last, c, b)
            x[b] = y0 + sixth * (a0 + 2.0 * (b0 + c0) + d0)
            xc[b] = y1 + sixth * (a1 + 2.0 * (b1 + c1) + d1)
            drive[8, b] = drive[0, b] * n + drive[1, b]

    @njit(**_COMPILED)
    def _hannay_steps(x, xc, drive, c, h, width):
        """One classical RK4 step of every column of a block (Hannay, Booth & Forger 2019).

        ``drive`` rows 2–4 are the stages' mean-drive gains and rows 5–7 their offsets, affine in
        n (row 8), which rows 0–1 advance.  One loop per family on purpose: with the family
        tested inside the loop the compiler no longer vectorises it (measured 2.7× slower).
        cos ψ and sin ψ of every stage come from :func:`_cos_sin`, where the numpy kernel calls
        numpy's cos and sin: the two agree to rounding (tests/test_kernel.py)."""
        half = 0.5 * h
        sixth = h / 6.0
        for b in range(width):
            n = drive[8, b]
            u_first = drive[2, b] * n + drive[5, b]
            u_middle = drive[3, b] * n + drive[6, b]
            u_last = drive[4, b] * n + drive[7, b]
            y0 = x[b]
            y1 = xc[b]
            cos_a, sin_a = _cos_sin(y1)
            a0, a1 = _hannay_derivatives(y0, cos_a, sin_a, u_first, c, b)
            cos_b, sin_b = _cos_sin(y1 + half * a1)
            b0, b1 = _hannay_derivatives(y0 + half * a0, cos_b, sin_b, u_middle, c, b)
            cos_c, sin_c = _cos_sin(y1 + half * b1)
            c0, c1 = _hannay_derivatives(y0 + half * b0, cos_c, sin_c, u_middle, c, b)
            cos_d, sin_d = _cos_sin(y1 + h * c1)
            d0, d1 = _hannay_derivatives(y0 + h * c0, cos_d, sin_d, u_last, c, b)
            x[b] = y0 + sixth * (a0 + 2.0 * (b0 + c0) + d0)
            xc[b] = y1 + sixth * (a1 + 2.0 * (b1 + c1) + d1)
            drive[8, b] = drive[0, b] * n + drive[1, b]

    @njit(parallel=True, **_COMPILED)
    def _level_tables(form, process_l, nominal, levels, level_maps, level_alpha):
        """Maps of a full step at each lux level, and α at each level, for every column of ``process_l``
        (one column when the batch shares its Process L parameters)."""
        for j in prange(level_maps.shape[0]):
            pl = np.ascontiguousarray(process_l[:, j])
            for u in range(levels.size):
                _single_piece(nominal, levels[u], form, pl, level_maps[j, u])
                level_alpha[j, u] = _activation(levels[u], form, pl[0], pl[2], pl[3])

    @njit(parallel=True, **_COMPILED)
    def _integrate_columns(family, form, coefficients, process_l, lengths, nominal, levels, level_index,
                           split_first, split_step, split_lengths, split_lux, state0, states, drives, failed,
                           level_maps, level_alpha, table_of_column):
        """Integrate every column over the grid; see :func:`integrate_batch` for the arguments.

        Columns go in blocks of ``_BLOCK``.  A thread advances its block one step at a time: it
        gathers each column's Process L maps (shared per lux level, or computed for a split or
        short step), then runs one branch-free Runge-Kutta loop over the block, which the
        compiler vectorises, and writes rows that lie next to each other in memory.
        """
        steps = lengths.size
        size = state0.shape[1]
        blocks = (size + _BLOCK - 1) // _BLOCK
        for block in prange(blocks):
            first = block * _BLOCK
            width = min(_BLOCK, size - first)
            c = np.empty((coefficients.shape[0], width))
            pl = np.empty((width, 5))
            table = np.empty(width, dtype=np.int64)    # the row of level_maps / level_alpha of each column
            x = np.empty(width)
            xc = np.empty(width)
            # Rows 0-7: the step's maps (n_gain, n_offset, drive gains, drive offsets); row 8: n.
            drive = np.empty((9, width))
            split = np.empty(width, dtype=np.int64)
            maps = np.empty(8)
            for b in range(width):
                j = first + b
                c[:, b] = coefficients[:, j]
                pl[b] = process_l[:, j]
                table[b] = table_of_column[j]
                x[b] = state0[0, j]
                xc[b] = state0[1, j]
                drive[8, b] = state0[2, j]
                states[0, 0, j] = x[b]
                states[0, 1, j] = xc[b]
                states[0, 2, j] = drive[8, b]
                split[b] = split_first[j]
                failed[j] = -1
            for k in range(steps):
                h = lengths[k]
                full = abs(h - nominal) <= _NOMINAL_TOLERANCE_H
                for b in range(width):
                    j = first + b
                    level = level_index[j, k]
                    drives[k, j] = pl[b, 4] * level_alpha[table[b], level] * (1.0 - drive[8, b])
                    if split[b] < split_first[j + 1] and split_step[split[b]] == k:
                        _pieces(split_lengths[split[b]], split_lux[split[b]], form, pl[b], maps)
                        split[b] += 1
                        for f in range(8):
                            drive[f, b] = maps[f]
                    elif not full:
                        _single_piece(h, levels[level], form, pl[b], maps)
                        for f in range(8):
                            drive[f, b] = maps[f]
                    else:
                        for f in range(8):
                            drive[f, b] = level_maps[table[b], level, f]
                if family == 0:
                    _forger_steps(x, xc, drive, c, h, width)
                elif family == 1:
                    _jewett_steps(x, xc, drive, c, h, width)
                else:
                    _hannay_steps(x, xc, drive, c, h, width)
                total = 0.0
                for b in range(width):
                    j = first + b
                    states[k + 1, 0, j] = x[b]
                    states[k + 1, 1, j] = xc[b]
                    states[k + 1, 2, j] = drive[8, b]
                    total += x[b] + xc[b] + drive[8, b]
                if not math.isfinite(total):
                    for b in range(width):
                        if failed[first + b] < 0 and not (math.isfinite(x[b]) and math.isfinite(xc[b])
                                                          and math.isfinite(drive[8, b])):
                            failed[first + b] = k
            for b in range(width):
                j = first + b
                if steps == 0:
                    drives[0, j] = 0.0
                else:
                    drives[steps, j] = pl[b, 4] * level_alpha[table[b], level_index[j, steps - 1]] * (1.0 - drive[8, b])


    @njit(parallel=True, **_COMPILED)
    def _fine_columns(family, form, coefficients, process_l, times, rows, columns, states, levels, level_index,
                      split_first, split_step, split_lengths, split_lux, substeps, out_times, out_path):
        """Re-integrate single grid steps in ``substeps`` sub-steps; see :func:`fine_steps`.

        A sub-step inside one piece of constant light takes the single-piece maps (computed once
        per piece and sub-step length); one that straddles a light edge takes the maps of its pieces.
        """
        pieces = split_lengths.shape[1]
        chunk = 32
        for first in prange((rows.size + chunk - 1) // chunk):
            piece_lengths = np.zeros(pieces)
            piece_lux = np.zeros(pieces)
            piece_start = np.empty(pieces)
            piece_end = np.empty(pieces)
            clipped = np.empty(pieces)
            maps = np.empty(8)
            x = np.empty(1)
            xc = np.empty(1)
            drive = np.empty((9, 1))
            column = np.empty((coefficients.shape[0], 1))
            for e in range(first * chunk, min(first * chunk + chunk, rows.size)):
                r = rows[e]
                j = columns[e]
                pl = process_l[:, j]
                start = times[r]
                length = times[r + 1] - start
                used = 1
                piece_lengths[0] = length
                piece_lux[0] = levels[level_index[j, r]]
                lo_index = split_first[j]
                hi_index = split_first[j + 1]
                found = lo_index + np.searchsorted(split_step[lo_index:hi_index], r)
                if found < hi_index and split_step[found] == r:
                    used = pieces
                    piece_lengths[:] = split_lengths[found]
                    piece_lux[:] = split_lux[found]
                edge = 0.0
                for q in range(used):
                    piece_start[q] = edge
                    edge += piece_lengths[q]
                    piece_end[q] = edge
                h = length / substeps
                y0 = states[r, 0, j]
                y1 = states[r, 1, j]
                n = states[r, 2, j]
                out_path[0, 0, e] = y0
                out_path[0, 1, e] = y1
                column[:, 0] = coefficients[:, j]
                for s in range(substeps + 1):
                    out_times[s, e] = start + h * s
                held = -1      # the piece whose single-piece maps ``maps`` holds
                for s in range(substeps):
                    lo = s * h
                    hi = (s + 1) * h
                    inside = 0
                    last = 0
                    for q in range(used):
                        clipped[q] = max(min(piece_end[q], hi) - max(piece_start[q], lo), 0.0)
                        if clipped[q] > 0.0:
                            inside += 1
                            last = q
                    if inside > 1:
                        _pieces(clipped[:used], piece_lux[:used], form, pl, maps)
                        held = -1
                    elif last != held or abs(clipped[last] - h) > _NOMINAL_TOLERANCE_H:
                        _single_piece(clipped[last], piece_lux[last], form, pl, maps)
                        held = last if abs(clipped[last] - h) <= _NOMINAL_TOLERANCE_H else -1
                    x[0] = y0
                    xc[0] = y1
                    for f in range(8):
                        drive[f, 0] = maps[f]
                    drive[8, 0] = n
                    if family == 0:
                        _forger_steps(x, xc, drive, column, h, 1)
                    elif family == 1:
                        _jewett_steps(x, xc, drive, column, h, 1)
                    else:
                        _hannay_steps(x, xc, drive, column, h, 1)
                    y0 = x[0]
                    y1 = xc[0]
                    n = drive[8, 0]
                    out_path[s + 1, 0, e] = y0
                    out_path[s + 1, 1, e] = y1


def _packed(namespace_or_values, names, size: int) -> np.ndarray:
    """Rows of per-column values, each broadcast to ``size`` columns."""
    rows = np.empty((len(names), size))
    for row, name in enumerate(names):
        rows[row] = np.broadcast_to(np.asarray(namespace_or_values(name), dtype=float), (size,))
    return rows


#: The last batch's arrays with its model and light: the markers re-integrate steps of the batch just
#: integrated (:func:`fine_steps`), which then need not pack it again.
_LAST_BATCH: list = [None, None, None]


def _batch_arrays(model, light) -> tuple[np.ndarray, ...]:
    """The kernel's view of a batch: packed coefficients, lux levels and split steps grouped by column."""
    last_model, last_light, arrays = _LAST_BATCH
    if last_model is model and last_light is light:
        return arrays
    arrays = _pack_batch(model, light)
    _LAST_BATCH[:] = [model, light, arrays]
    return arrays


def _pack_batch(model, light) -> tuple[np.ndarray, ...]:
    size = light.size
    coefficients = _packed(lambda name: getattr(model.coefficients, name), COEFFICIENT_ORDER[model.family.key], size)
    process_l = _packed(lambda name: getattr(model.process_l, name), PROCESS_L_ORDER, size)
    if light.level_index is not None and light.levels is not None:
        levels = np.ascontiguousarray(light.levels, dtype=float)
        # (N, K): each column's steps next to each other, as the kernel walks them (no copy when
        # the grid was sampled, which lays the index out this way)
        level_index = np.ascontiguousarray(light.level_index.T, dtype=np.int32)
    else:
        levels, inverse = np.unique(light.lux, return_inverse=True)
        level_index = np.ascontiguousarray(inverse.reshape(light.lux.shape).T, dtype=np.int32)
    # Split steps grouped by column, in step order within each column (CSR-like offsets); sampling
    # already gives them in this order, which is then kept without a sort.
    split_column = np.asarray(light.split_column, dtype=np.int64)
    split_step = np.asarray(light.split_step, dtype=np.int64)
    split_lengths = np.asarray(light.split_lengths, dtype=float)
    split_lux = np.asarray(light.split_lux, dtype=float)
    key = split_column * (light.times.size + 1) + split_step
    if np.any(key[1:] < key[:-1]):
        order = np.argsort(key, kind="stable")
        split_column, split_step = split_column[order], split_step[order]
        split_lengths, split_lux = split_lengths[order], split_lux[order]
    split_first = np.searchsorted(split_column, np.arange(size + 1)).astype(np.int64)
    split_step = np.ascontiguousarray(split_step)
    split_lengths = np.ascontiguousarray(split_lengths)
    split_lux = np.ascontiguousarray(split_lux)
    return coefficients, process_l, levels, level_index, split_first, split_step, split_lengths, split_lux


def fine_steps(result, rows: np.ndarray, columns: np.ndarray, substeps: int) -> tuple[np.ndarray, np.ndarray]:
    """:func:`planner.engine.integrate.fine_steps` on the compiled kernel (same arguments and results)."""
    model, light = result.model, result.light
    batch = _batch_arrays(model, light)
    coefficients, process_l, levels, level_index, split_first, split_step, split_lengths, split_lux = batch
    rows = np.ascontiguousarray(rows, dtype=np.int64)
    columns = np.ascontiguousarray(columns, dtype=np.int64)
    out_times = np.empty((substeps + 1, rows.size))
    out_path = np.empty((substeps + 1, 2, rows.size))
    with threads_for(rows.size // STEPS_PER_THREAD):
        _fine_columns(FAMILY_CODES[model.family.key], FORM_CODES[model.process_l.form], coefficients, process_l,
                      np.ascontiguousarray(result.times, dtype=float), rows, columns,
                      np.ascontiguousarray(result.states), levels, level_index, split_first, split_step,
                      split_lengths, split_lux, int(substeps), out_times, out_path)
    return out_times, out_path


def integrate_batch(model, light, state0: np.ndarray) -> tuple[np.ndarray, np.ndarray, tuple[int, int] | None]:
    """Integrate a batch with the compiled kernel: the arguments of
    :func:`planner.engine.integrate.integrate`, with ``state0`` already a finite (3, N) array.

    Returns
    -------
    states : ndarray, shape (K + 1, 3, N)
    drives : ndarray, shape (K + 1, N)
        Unmodulated drive B̂ just after each grid point.
    failure : (step, column) or None
        The first step (and its lowest column) whose state became non-finite.
    """
    family = model.family
    pl = model.process_l
    size = light.size
    times = light.times
    lengths = np.ascontiguousarray(np.diff(times))
    steps = lengths.size
    nominal = float(lengths.max()) if steps else 0.0
    batch = _batch_arrays(model, light)
    states = np.empty((steps + 1, 3, size))
    drives = np.empty((steps + 1, size))
    failed = np.empty(size, dtype=np.int64)
    coefficients, process_l, levels, level_index, split_first, split_step, split_lengths, split_lux = batch
    form = FORM_CODES[pl.form]
    # The maps of a full step at each lux level depend only on Process L: computed once for each
    # distinct set of its parameters (one for a single person; one per person for C candidates × N people)
    distinct, table_of_column = np.unique(process_l, axis=1, return_inverse=True)
    distinct = np.ascontiguousarray(distinct)
    level_maps = np.empty((distinct.shape[1], levels.size, 8))
    level_alpha = np.empty((distinct.shape[1], levels.size))
    with threads_for(distinct.shape[1] * levels.size // LEVELS_PER_THREAD):
        _level_tables(form, distinct, nominal, levels, level_maps, level_alpha)
    with threads_for(size // COLUMNS_PER_THREAD):
        _integrate_columns(FAMILY_CODES[family.key], form, coefficients, process_l, lengths, nominal,
                           levels, level_index, split_first, split_step, split_lengths, split_lux,
                           np.ascontiguousarray(state0, dtype=float), states, drives, failed, level_maps, level_alpha,
                           np.ascontiguousarray(table_of_column.reshape(-1), dtype=np.int64))
    bad = np.nonzero(failed >= 0)[0]
    if bad.size == 0:
        return states, drives, None
    step = int(failed[bad].min())
    column = int(bad[failed[bad] == step][0])
    return states, drives, (step, column)


def warm_up() -> CompileReport | None:
    """Call the kernel once on a tiny batch of every family (compiling it or loading the cache).

    Returns None without numba.  The time is the cost a process pays once, reported apart
    from the speed of later calls.
    """
    if not AVAILABLE:
        return None
    from datetime import datetime, timedelta, timezone

    from planner.engine.parameters import load_model
    from planner.world.light import LightSchedule, light_box, sample_on_grid

    start = datetime(2027, 1, 1, tzinfo=timezone.utc)
    schedule = LightSchedule.from_layers(start, start + timedelta(hours=2), 100.0,
                                         [light_box(start + timedelta(minutes=25), start + timedelta(minutes=50),
                                                    1000.0)])
    light = sample_on_grid([schedule], start, start + timedelta(hours=2), 0.5)
    hits_before = sum(_integrate_columns.stats.cache_hits.values())
    began = time.perf_counter()
    for key in FAMILY_CODES:
        model = load_model(key)
        state = np.vstack([model.family.state_from_angle(np.array([math.pi]), model.coefficients), [[0.0]]])
        states, _, _ = integrate_batch(model, light, state)
        ran = SimpleNamespace(model=model, light=light, times=light.times, states=states)
        fine_steps(ran, np.array([0, 3]), np.array([0, 0]), 4)     # a step split by a light edge, and one not
    seconds = time.perf_counter() - began
    hits = sum(_integrate_columns.stats.cache_hits.values()) - hits_before
    return CompileReport(seconds, hits > 0, thread_count())
