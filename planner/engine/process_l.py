"""Process L: light transduction into the pacemaker's drive, advanced exactly.

    dn/dt = 60·(α·(1 − n) − β·n)        (rates per minute, t in hours, hence 60)
    α     = α0·(I/I0)^p                 (forger1999, jewett1999)
    α     = α0·I^p/(I^p + I0)           (hannay2019)
    B̂     = G·α·(1 − n)

While light is constant, n relaxes exponentially to n∞ = α/(α + β) with rate
r = 60·(α + β) [1/h], so a step is advanced in closed form.  Because n does not
depend on the oscillator, everything the integrator needs from a step is an
*affine map of n at the step's start*: n at its end, and the mean drive B̂ over
the three sub-windows [0, h/6], [h/6, 5h/6], [5h/6, h] whose lengths match the
weights (1/6, 2/3, 1/6) of the classical Runge-Kutta stages.  Feeding those
exact means to the stages keeps the integral of the drive exact however fast n
moves in bright light, and light edges inside a step are handled the same way.

References: Forger, Jewett & Kronauer (1999) doi:10.1177/074873099129000867;
Jewett, Forger & Kronauer (1999) doi:10.1177/074873049901400608;
Hannay, Booth & Forger (2019) doi:10.1177/0748730419878298.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from planner.engine.oscillators import ProcessLCoefficients

#: Rates in the model files are per minute; the integrator's clock is in hours.
MINUTES_PER_HOUR = 60.0

#: Sub-windows of a step as fractions of its length, matched to the RK4 weights.
STAGE_WINDOWS = ((0.0, 1.0 / 6.0), (1.0 / 6.0, 5.0 / 6.0), (5.0 / 6.0, 1.0))


def activation_rate(lux: np.ndarray, pl: ProcessLCoefficients) -> np.ndarray:
    """Activation rate α [1/min] for illuminance ``lux`` [lux]; broadcasts with the coefficients."""
    lux = np.asarray(lux, dtype=float)
    if pl.form == "power":
        return pl.alpha0 * (lux / pl.I0) ** pl.p
    powered = lux ** pl.p
    return pl.alpha0 * powered / (powered + pl.I0)


def steady_state(lux: np.ndarray, pl: ProcessLCoefficients) -> np.ndarray:
    """n∞ = α/(α + β) under constant light [dimensionless]."""
    alpha = activation_rate(lux, pl)
    return alpha / (alpha + pl.decay)


def drive(lux: np.ndarray, n: np.ndarray, pl: ProcessLCoefficients) -> np.ndarray:
    """Unmodulated drive B̂ = G·α·(1 − n) at one instant."""
    return pl.G * activation_rate(lux, pl) * (1.0 - n)


@dataclass(frozen=True)
class StepMaps:
    """Affine maps of the step-start n, each array of the batch's step shape.

    ``n_end = n_gain·n + n_offset``; mean drive on sub-window i is
    ``drive_gain[i]·n + drive_offset[i]``.
    """

    n_gain: np.ndarray
    n_offset: np.ndarray
    drive_gain: tuple[np.ndarray, np.ndarray, np.ndarray]
    drive_offset: tuple[np.ndarray, np.ndarray, np.ndarray]


def step_maps(lengths: list[np.ndarray], lux: list[np.ndarray], pl: ProcessLCoefficients) -> StepMaps:
    """Maps for steps made of pieces of constant light.

    Parameters
    ----------
    lengths : list of ndarray
        Length of piece p of every step [h], in time order; zero for unused pieces.
    lux : list of ndarray
        Illuminance of piece p [lux], same shapes.
    pl : ProcessLCoefficients
        Broadcastable to the step shape (its last axis is the batch's N).
    """
    if len(lengths) == 1:
        return _single_piece_maps(lengths[0], lux[0], pl)
    total = sum(lengths)
    safe_total = np.where(total > 0, total, 1.0)
    gain = np.ones_like(total)     # n at a piece's start = gain·n0 + offset
    offset = np.zeros_like(total)
    drive_gain = [np.zeros_like(total) for _ in STAGE_WINDOWS]
    drive_offset = [np.zeros_like(total) for _ in STAGE_WINDOWS]
    piece_start = np.zeros_like(total)
    for length, level in zip(lengths, lux):
        alpha = activation_rate(level, pl)
        rate = MINUTES_PER_HOUR * (alpha + pl.decay)
        n_inf = alpha / (alpha + pl.decay)
        piece_end = piece_start + length
        for window, (lo, hi) in enumerate(STAGE_WINDOWS):
            a = np.clip(lo * total, piece_start, piece_end) - piece_start
            b = np.clip(hi * total, piece_start, piece_end) - piece_start
            # ∫_a^b (1 − n) dt with n(τ) = n∞ + (n_p − n∞)·e^(−rτ), affine in the step-start n.
            decay_part = (np.exp(-rate * a) - np.exp(-rate * b)) / rate
            scale = pl.G * alpha / np.maximum((hi - lo) * safe_total, 1e-300)
            drive_gain[window] = drive_gain[window] - scale * gain * decay_part
            drive_offset[window] = drive_offset[window] + scale * ((1.0 - n_inf) * (b - a) - (offset - n_inf) * decay_part)
        factor = np.exp(-rate * length)
        gain = gain * factor
        offset = offset * factor + n_inf * (1.0 - factor)
        piece_start = piece_end
    return StepMaps(gain, offset, tuple(drive_gain), tuple(drive_offset))


def _single_piece_maps(length: np.ndarray, lux: np.ndarray, pl: ProcessLCoefficients) -> StepMaps:
    """:func:`step_maps` for steps of constant light (the common case), with fewer exponentials."""
    alpha = activation_rate(lux, pl)
    rate = MINUTES_PER_HOUR * (alpha + pl.decay)
    n_inf = alpha / (alpha + pl.decay)
    bounds = [np.exp(-rate * (fraction * length)) for fraction in (1.0 / 6.0, 5.0 / 6.0, 1.0)]
    decays = (1.0 - bounds[0], bounds[0] - bounds[1], bounds[1] - bounds[2])
    drive_gain, drive_offset = [], []
    for (lo, hi), decay in zip(STAGE_WINDOWS, decays):
        window = (hi - lo) * length
        scale = pl.G * alpha / window
        part = decay / rate
        drive_gain.append(-scale * part)
        drive_offset.append(scale * ((1.0 - n_inf) * window + n_inf * part))
    return StepMaps(bounds[2], n_inf * (1.0 - bounds[2]), tuple(drive_gain), tuple(drive_offset))
