"""Populations of simulated people: intrinsic periods drawn from a published distribution.

A population is one :class:`~planner.parameters.ModelSpec` whose per-person parameters are
arrays of shape ``(N,)``, so that the batch integrator simulates every person in one call
(see :mod:`planner.integrate`, shape contract ``(3, N)``).

References
----------
.. [1] Duffy JF, Cain SW, Chang AM, et al. (2011). Sex difference in the near-24-hour
   intrinsic period of the human circadian timing system. PNAS 108(Suppl 3):15602-15608.
   doi:10.1073/pnas.1010666108 -- intrinsic period 24.15 ± 0.20 h (mean ± SD, n = 157).
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from planner.errors import InputError
from planner.parameters import ModelSpec

#: Intrinsic period of sighted adults, mean and SD [h] (Duffy et al. 2011, PNAS 108:15602) [1]_.
DUFFY2011_TAU_MEAN_H = 24.15
DUFFY2011_TAU_SD_H = 0.20
DUFFY2011_CITATION = ("Duffy JF, Cain SW, Chang AM, Phillips AJK, Münch MY, Gronfier C, Wyatt JK, Dijk DJ, "
                      "Wright KP Jr, Czeisler CA (2011). Sex difference in the near-24-hour intrinsic period of the "
                      "human circadian timing system. PNAS 108(Suppl 3):15602-15608. doi:10.1073/pnas.1010666108")
#: The percentiles reported for a population: 10th, median, 90th (common practice for a spread).
REPORTED_PERCENTILES = (10.0, 50.0, 90.0)


def intrinsic_period_values(model: ModelSpec, tau_h: np.ndarray | float) -> dict[str, np.ndarray]:
    """Parameter overrides that give a model the intrinsic period ``tau_h`` in darkness [h].

    van der Pol models (forger1999, jewett1999): ``tau_x`` is the dark period by construction
    (their period factor corrects for the damping term; Forger et al. 1999, Jewett et al. 1999).
    hannay2019: the dark phase velocity is ω0 + (K/2)·sin(β1)·(1 + R*⁴) on the dark limit cycle
    of amplitude R* (Hannay et al. 2019, eq. for dψ/dt with L = 0), so ω0 is set to
    2π/τ − (K/2)·sin(β1)·(1 + R*⁴).

    Parameters
    ----------
    model : ModelSpec
    tau_h : float or ndarray of shape (N,)
        Intrinsic period [h], each in (20, 28).
    """
    tau = np.asarray(tau_h, dtype=float)
    if not np.all(np.isfinite(tau)) or np.any((tau <= 20.0) | (tau >= 28.0)):
        raise InputError(f"intrinsic period must lie between 20 and 28 h, got {tau.min():g}..{tau.max():g}",
                         field="tau_h")
    if "tau_x" in model.values:
        return {"tau_x": tau}
    if "omega0" in model.values:
        c = model.coefficients
        r_star = model.family.steady_amplitude(c)
        return {"omega0": 2.0 * math.pi / tau - c.angular * (1.0 + r_star ** 4)}
    raise InputError(f"model {model.id} has no parameter that sets the intrinsic period", field="model")


@dataclass(frozen=True)
class Population:
    """N simulated people.

    Attributes
    ----------
    model : ModelSpec
        The parameter set with per-person arrays of shape (N,).
    tau_h : ndarray, shape (N,)
        Intrinsic period of each person [h].
    seed : int or None
        Seed the draw came from (None for given values).
    """

    model: ModelSpec
    tau_h: np.ndarray
    seed: int | None

    @property
    def size(self) -> int:
        return int(self.tau_h.size)


def draw_population(model: ModelSpec, size: int, seed: int = 0, *, tau_mean_h: float = DUFFY2011_TAU_MEAN_H,
                    tau_sd_h: float = DUFFY2011_TAU_SD_H) -> Population:
    """Draw ``size`` people whose intrinsic periods are normal(mean, SD), reproducibly from ``seed``.

    The default distribution is that of Duffy et al. (2011), 24.15 ± 0.20 h [1]_; draws are
    clipped to ±4 SD so that no person falls outside the models' range of entrainment.
    """
    if not isinstance(size, (int, np.integer)) or size < 1:
        raise InputError(f"population size must be a whole number >= 1, got {size!r}", field="workers")
    if not tau_sd_h >= 0:
        raise InputError(f"SD of the intrinsic period must be >= 0, got {tau_sd_h}", field="tau_sd_h")
    rng = np.random.default_rng(seed)
    tau = tau_mean_h + tau_sd_h * np.clip(rng.standard_normal(int(size)), -4.0, 4.0)
    return Population(model.with_values(**intrinsic_period_values(model, tau)), tau, seed)


def spread(values: np.ndarray, axis: int = -1) -> dict[str, np.ndarray | float]:
    """10th percentile, median and 90th percentile of ``values`` along ``axis``, NaNs ignored."""
    values = np.asarray(values, dtype=float)
    if not np.any(np.isfinite(values)):   # nothing to summarise: NaN, without numpy's all-NaN warning
        shape = np.delete(np.shape(values), axis) if values.ndim > 1 else ()
        nothing = np.full(shape, np.nan) if shape else math.nan
        return {"p10": nothing, "median": nothing, "p90": nothing}
    low, mid, high = np.nanpercentile(values, REPORTED_PERCENTILES, axis=axis)
    return {"p10": low, "median": mid, "p90": high}
