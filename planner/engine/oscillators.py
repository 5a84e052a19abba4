"""Equation families of the circadian pacemaker models (the model *structure*).

Each family holds the right-hand side of a published oscillator, written once
and vectorised over a batch of N schedules (or people).  The numbers live in
the parameter-set files under ``models/``; a family only declares which
parameters it needs, their units and their allowed sign.

Shape contract of :meth:`EquationFamily.derivatives`: ``state`` has shape
``(2, N)`` (the two oscillator variables; Process L's ``n`` is advanced
separately by :mod:`planner.engine.process_l`), ``drive`` has shape ``(N,)`` and is the
light drive without its state modulation, ``Bhat = G·α·(1 − n)``; the result
has shape ``(2, N)``.  Coefficients are arrays broadcastable to ``(N,)`` so that
people in a batch may differ in, e.g., intrinsic period.

References
----------
.. [1] Forger DB, Jewett ME, Kronauer RE (1999). A simpler model of the human
   circadian pacemaker. J Biol Rhythms 14(6):533-538. doi:10.1177/074873099129000867
.. [2] Jewett ME, Forger DB, Kronauer RE (1999). Revised limit cycle oscillator
   model of human circadian pacemaker. J Biol Rhythms 14(6):493-499.
   doi:10.1177/074873049901400608
.. [3] Hannay KM, Booth V, Forger DB (2019). Macroscopic models for human
   circadian rhythms. J Biol Rhythms 34(6):658-671. doi:10.1177/0748730419878298
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from types import SimpleNamespace
from typing import Literal, Mapping

import numpy as np

#: The van der Pol models measure time in hours and write the angular
#: frequency of a 24-h day, 2π/24 = π/12 rad/h, in front of both equations [1]_, [2]_.
DAY_ANGULAR_FREQUENCY = math.pi / 12.0

Sign = Literal["positive", "nonnegative", "any"]


@dataclass(frozen=True)
class ParameterRule:
    """What a family requires of one parameter."""

    units: str
    sign: Sign
    meaning: str


def _process_l_rules(decay_name: str, threshold_units: str) -> dict[str, ParameterRule]:
    return {
        "alpha0": ParameterRule("1/min", "positive", "Process L activation rate scale"),
        decay_name: ParameterRule("1/min", "positive", "Process L recovery rate of used-up elements"),
        "p": ParameterRule("1", "positive", "exponent of the light intensity in α"),
        "I0": ParameterRule(threshold_units, "positive", "light intensity scale of α"),
        "G": ParameterRule("1", "positive", "gain from activated elements to the drive B"),
    }


@dataclass(frozen=True)
class ProcessLCoefficients:
    """Process L constants of one model, each broadcastable to ``(N,)``.

    ``form`` is ``"power"`` for α = α0·(I/I0)^p [1]_, [2]_ and ``"saturating"``
    for α = α0·I^p/(I^p + I0) [3]_.
    """

    form: Literal["power", "saturating"]
    alpha0: np.ndarray
    decay: np.ndarray
    p: np.ndarray
    I0: np.ndarray
    G: np.ndarray


class EquationFamily:
    """Base class of an oscillator's equations."""

    key: str = ""
    state_names: tuple[str, str, str] = ("", "", "n")
    parameter_rules: Mapping[str, ParameterRule] = {}
    decay_name: str = "beta"
    alpha_form: Literal["power", "saturating"] = "power"
    #: "x_minimum": CBTmin is read from the minimum of the first state variable;
    #: "phase_angle": from the crossing of a phase angle by the second one.
    marker_kind: Literal["x_minimum", "phase_angle"] = "x_minimum"

    def coefficients(self, values: Mapping[str, np.ndarray]) -> SimpleNamespace:
        """Derived constants used by :meth:`derivatives`."""
        raise NotImplementedError

    def process_l(self, values: Mapping[str, np.ndarray]) -> ProcessLCoefficients:
        return ProcessLCoefficients(
            form=self.alpha_form,
            alpha0=values["alpha0"],
            decay=values[self.decay_name],
            p=values["p"],
            I0=values["I0"],
            G=values["G"],
        )

    def derivatives(self, state: np.ndarray, drive: np.ndarray, c: SimpleNamespace) -> np.ndarray:
        """Time derivative [1/h] of the oscillator state; see the module's shape contract."""
        raise NotImplementedError

    def state_from_angle(self, angle: np.ndarray, c: SimpleNamespace) -> np.ndarray:
        """A state near the limit cycle at phase ``angle`` [rad] (π at the x minimum / CBTmin)."""
        raise NotImplementedError

    def phase_angle(self, state: np.ndarray) -> np.ndarray:
        """Phase angle [rad] of oscillator states of shape ``(2, ...)``, increasing with time."""
        raise NotImplementedError

    def amplitude(self, state: np.ndarray) -> np.ndarray:
        """Oscillator amplitude of states of shape ``(2, ...)`` (radius in its phase plane)."""
        raise NotImplementedError


class _VanDerPol(EquationFamily):
    """Shared parts of the Kronauer-style van der Pol oscillators [1]_, [2]_."""

    state_names = ("x", "xc", "n")

    def phase_angle(self, state: np.ndarray) -> np.ndarray:
        # With no light x ≈ cos(ωt) and xc ≈ −sin(ωt), so atan2(−xc, x) grows with
        # time and equals π at the minimum of x.
        return np.arctan2(-state[1], state[0])

    def amplitude(self, state: np.ndarray) -> np.ndarray:
        return np.hypot(state[0], state[1])

    def state_from_angle(self, angle: np.ndarray, c: SimpleNamespace) -> np.ndarray:
        angle = np.asarray(angle, dtype=float)
        return np.stack([np.cos(angle), -np.sin(angle)])

    def _light_terms(self, state, drive, c):
        x, xc = state[0], state[1]
        # B = G·α·(1 − n)·(1 − 0.4·x)·(1 − 0.4·xc): the drive's circadian modulation [1]_, [2]_.
        return drive * (1.0 - c.sx * x) * (1.0 - c.sxc * xc)


class Forger1999(_VanDerPol):
    """Forger, Jewett & Kronauer (1999) simpler model [1]_.

    dx/dt  = (π/12)·(xc + B)
    dxc/dt = (π/12)·(μ·(xc − 4·xc³/3) − x·[(24/(f·τx))² + k·B])
    """

    key = "forger1999"
    parameter_rules = {
        "tau_x": ParameterRule("h", "positive", "intrinsic period of the oscillator"),
        "mu": ParameterRule("1", "positive", "stiffness of the van der Pol damping"),
        "k": ParameterRule("1", "any", "light coupling into the period term"),
        "period_factor": ParameterRule("1", "positive", "correction so the dark period equals τx"),
        "modulation_x": ParameterRule("1", "any", "circadian modulation of the drive by x"),
        "modulation_xc": ParameterRule("1", "any", "circadian modulation of the drive by xc"),
        **_process_l_rules("beta", "lux"),
    }

    def coefficients(self, values):
        return SimpleNamespace(
            w=DAY_ANGULAR_FREQUENCY,
            mu=values["mu"],
            k=values["k"],
            omega_sq=(24.0 / (values["period_factor"] * values["tau_x"])) ** 2,
            sx=values["modulation_x"],
            sxc=values["modulation_xc"],
        )

    def dark_x_rate(self, state, c):
        """dx/dt with no light reaching the eye (B = 0): :meth:`derivatives` ``[0]`` with a zero drive."""
        return c.w * (state[1] + 0.0)

    def derivatives(self, state, drive, c):
        x, xc = state[0], state[1]
        light = self._light_terms(state, drive, c)
        out = np.empty_like(state)
        out[0] = c.w * (xc + light)
        out[1] = c.w * (c.mu * (xc - (4.0 / 3.0) * xc * xc * xc) - x * (c.omega_sq + c.k * light))
        return out


class Jewett1999(_VanDerPol):
    """Jewett, Forger & Kronauer (1999) revised model [2]_.

    dx/dt  = (π/12)·(xc + μ·(x/3 + 4·x³/3 − 256·x⁷/105) + B)
    dxc/dt = (π/12)·(q·B·xc − x·[(24/(f·τx))² + k·B])
    """

    key = "jewett1999"
    parameter_rules = {
        "tau_x": ParameterRule("h", "positive", "intrinsic period of the oscillator"),
        "mu": ParameterRule("1", "positive", "stiffness of the 7th-order damping"),
        "q": ParameterRule("1", "any", "direct drive of xc by light"),
        "k": ParameterRule("1", "any", "light coupling into the period term"),
        "period_factor": ParameterRule("1", "positive", "correction so the dark period equals τx"),
        "modulation_x": ParameterRule("1", "any", "circadian modulation of the drive by x"),
        "modulation_xc": ParameterRule("1", "any", "circadian modulation of the drive by xc"),
        **_process_l_rules("beta", "lux"),
    }

    def coefficients(self, values):
        return SimpleNamespace(
            w=DAY_ANGULAR_FREQUENCY,
            mu=values["mu"],
            q=values["q"],
            k=values["k"],
            omega_sq=(24.0 / (values["period_factor"] * values["tau_x"])) ** 2,
            sx=values["modulation_x"],
            sxc=values["modulation_xc"],
        )

    def dark_x_rate(self, state, c):
        """dx/dt with no light reaching the eye (B = 0): :meth:`derivatives` ``[0]`` with a zero drive."""
        x = state[0]
        x3 = x * x * x
        x7 = x3 * x3 * x
        return c.w * (state[1] + c.mu * (x / 3.0 + (4.0 / 3.0) * x3 - (256.0 / 105.0) * x7) + 0.0)

    def derivatives(self, state, drive, c):
        x, xc = state[0], state[1]
        light = self._light_terms(state, drive, c)
        x2 = x * x
        x3 = x2 * x
        x7 = x3 * x3 * x
        out = np.empty_like(state)
        out[0] = c.w * (xc + c.mu * (x / 3.0 + (4.0 / 3.0) * x3 - (256.0 / 105.0) * x7) + light)
        out[1] = c.w * (c.q * light * xc - x * (c.omega_sq + c.k * light))
        return out


class Hannay2019(EquationFamily):
    """Hannay, Booth & Forger (2019) single-population macroscopic model [3]_.

    dR/dt = −γ·R + (K/2)·cos(β1)·R·(1 − R⁴) + L_R
    dψ/dt = ω0 + (K/2)·sin(β1)·(1 + R⁴) + L_ψ
    """

    key = "hannay2019"
    state_names = ("R", "psi", "n")
    decay_name = "delta"
    alpha_form = "saturating"
    marker_kind = "phase_angle"
    parameter_rules = {
        "omega0": ParameterRule("rad/h", "positive", "intrinsic angular frequency"),
        "K": ParameterRule("1/h", "positive", "coupling strength of the neuronal population"),
        "gamma": ParameterRule("1/h", "positive", "spread of the population's frequencies"),
        "beta1": ParameterRule("rad", "any", "phase lag of the coupling"),
        "A1": ParameterRule("1/h", "any", "first-harmonic light response"),
        "A2": ParameterRule("1/h", "any", "second-harmonic light response"),
        "betaL1": ParameterRule("rad", "any", "phase of the first light harmonic"),
        "betaL2": ParameterRule("rad", "any", "phase of the second light harmonic"),
        "sigma": ParameterRule("rad/h", "any", "light's direct effect on the phase velocity"),
        **_process_l_rules("delta", "lux^p"),
    }

    def coefficients(self, values):
        half_k = values["K"] / 2.0
        return SimpleNamespace(
            gamma=values["gamma"],
            radial=half_k * np.cos(values["beta1"]),
            angular=half_k * np.sin(values["beta1"]),
            omega0=values["omega0"],
            half_a1=values["A1"] / 2.0,
            half_a2=values["A2"] / 2.0,
            cos_l1=np.cos(values["betaL1"]),
            sin_l1=np.sin(values["betaL1"]),
            cos_l2=np.cos(values["betaL2"]),
            sin_l2=np.sin(values["betaL2"]),
            sigma=values["sigma"],
        )

    def derivatives(self, state, drive, c):
        r, psi = state[0], state[1]
        r4 = r * r * r * r
        r8 = r4 * r4
        # cos/sin of ψ + βL1 and 2ψ + βL2 by the angle-addition formulas: two
        # transcendental calls per evaluation instead of four.
        cos_psi, sin_psi = np.cos(psi), np.sin(psi)
        cos_2psi = cos_psi * cos_psi - sin_psi * sin_psi
        sin_2psi = 2.0 * sin_psi * cos_psi
        cos_first = cos_psi * c.cos_l1 - sin_psi * c.sin_l1
        sin_first = sin_psi * c.cos_l1 + cos_psi * c.sin_l1
        cos_second = cos_2psi * c.cos_l2 - sin_2psi * c.sin_l2
        sin_second = sin_2psi * c.cos_l2 + cos_2psi * c.sin_l2
        a1 = c.half_a1 * drive
        a2 = c.half_a2 * drive
        out = np.empty_like(state)
        out[0] = (-c.gamma * r + c.radial * r * (1.0 - r4)
                  + a1 * (1.0 - r4) * cos_first + a2 * r * (1.0 - r8) * cos_second)
        out[1] = (c.omega0 + c.angular * (1.0 + r4) + c.sigma * drive
                  - a1 * (r * r * r + 1.0 / r) * sin_first - a2 * (1.0 + r8) * sin_second)
        return out

    def steady_amplitude(self, c: SimpleNamespace) -> np.ndarray:
        """Amplitude R of the dark limit cycle: where −γR + (K/2)cos(β1)R(1 − R⁴) = 0 [3]_."""
        return np.clip(1.0 - c.gamma / c.radial, 1e-6, 1.0) ** 0.25

    def state_from_angle(self, angle, c):
        angle = np.asarray(angle, dtype=float)
        return np.stack([np.broadcast_to(self.steady_amplitude(c), angle.shape).astype(float), angle])

    def phase_angle(self, state):
        return np.asarray(state[1])

    def amplitude(self, state):
        return np.asarray(state[0])


FAMILIES: dict[str, EquationFamily] = {f.key: f for f in (Forger1999(), Jewett1999(), Hannay2019())}
