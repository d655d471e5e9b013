"""Ideal-gas enthalpy and entropy from the polynomial heat capacities.

Reference state: each pure component as an ideal gas at T_REF = 298.15 K and
P_REF = 101.325 kPa has H = 0 and S = 0; mixtures add the ideal entropy of
mixing, -R sum(x ln x).
"""

from __future__ import annotations

import math

import numpy as np

from .components import P_REF, R, T_REF
from .mixture import Mixture

_POWERS = np.arange(5)
_REF_POWERS_H = T_REF ** (_POWERS + 1) / (_POWERS + 1)  # integral of T^k from 0 to T_REF
_REF_POWERS_S = np.concatenate(([math.log(T_REF)], T_REF ** _POWERS[1:] / _POWERS[1:]))


def pure_enthalpies(mixture: Mixture, temperature: float) -> np.ndarray:
    """Ideal-gas molar enthalpy of each component, J/mol, at ``temperature`` (K)."""
    t = temperature
    powers_h = np.array([t, t * t / 2, t**3 / 3, t**4 / 4, t**5 / 5])
    return mixture.cp_coefficients @ (powers_h - _REF_POWERS_H)


def pure_entropies_at_reference_pressure(mixture: Mixture, temperature: float) -> np.ndarray:
    """Ideal-gas molar entropy of each component at ``temperature`` (K) and
    P_REF, J/(mol K): the integral of Cp/T from T_REF."""
    t = temperature
    powers_s = np.array([math.log(t), t, t * t / 2, t**3 / 3, t**4 / 4])
    return mixture.cp_coefficients @ (powers_s - _REF_POWERS_S)


def mixing_entropy(x: np.ndarray) -> float:
    """Ideal entropy of mixing, -R sum(x ln x), J/(mol K); zero fractions add nothing."""
    if len(x) == 1:
        return 0.0
    positive = x[x > 0.0]
    return float(-R * (positive @ np.log(positive)))


def enthalpy(mixture: Mixture, temperature: float, x: np.ndarray) -> float:
    """Ideal-gas molar enthalpy of the mixture, J/mol, at ``temperature`` (K)."""
    return float(np.dot(x, pure_enthalpies(mixture, temperature)))


def entropy(mixture: Mixture, temperature: float, pressure: float, x: np.ndarray) -> float:
    """Ideal-gas molar entropy of the mixture, J/(mol K), at ``temperature`` (K)
    and ``pressure`` (Pa), including the ideal entropy of mixing."""
    s_pure = float(np.dot(x, pure_entropies_at_reference_pressure(mixture, temperature)))
    return s_pure - R * math.log(pressure / P_REF) + mixing_entropy(x)


def heat_capacity(mixture: Mixture, temperature: float, x: np.ndarray) -> float:
    """Ideal-gas molar heat capacity of the mixture, J/(mol K), at ``temperature`` (K)."""
    t = temperature
    return float(x @ (mixture.cp_coefficients @ np.array([1.0, t, t * t, t**3, t**4])))


def enthalpy_batch(mixture: Mixture, temperatures: np.ndarray, x: np.ndarray) -> np.ndarray:
    """Ideal-gas molar enthalpies, J/mol, for an array of temperatures (K), one composition."""
    c = x @ mixture.cp_coefficients
    t = np.asarray(temperatures, dtype=float)
    # Horner form of sum c_k T^(k+1) / (k+1)
    value = ((((c[4] / 5 * t + c[3] / 4) * t + c[2] / 3) * t + c[1] / 2) * t + c[0]) * t
    return value - float(c @ _REF_POWERS_H)


def entropy_batch(
    mixture: Mixture, temperatures: np.ndarray, pressures: np.ndarray, x: np.ndarray
) -> np.ndarray:
    """Ideal-gas molar entropies, J/(mol K), for arrays of temperatures (K) and
    pressures (Pa), one composition, including the entropy of mixing."""
    c = x @ mixture.cp_coefficients
    t = np.asarray(temperatures, dtype=float)
    polynomial = (((c[4] / 4 * t + c[3] / 3) * t + c[2] / 2) * t + c[1]) * t
    value = c[0] * np.log(t) + polynomial - float(c @ _REF_POWERS_S)
    return value - R * np.log(np.asarray(pressures, dtype=float) / P_REF) + mixing_entropy(x)


_REF_H = [float(v) for v in _REF_POWERS_H]
_REF_S = [float(v) for v in _REF_POWERS_S]


def enthalpy_entropy(mixture: Mixture, temperature: float, pressure: float, x: np.ndarray) -> tuple[float, float]:
    """Ideal-gas molar enthalpy (J/mol) and entropy (J/(mol K)) of the mixture
    at ``temperature`` (K) and ``pressure`` (Pa), entropy of mixing included.

    The single-state hot path: one small matrix product, then scalar Horner sums.
    """
    terms = mixture.terms(x)
    c0, c1, c2, c3, c4 = terms.cp_coefficients
    t = temperature
    h = ((((c4 / 5 * t + c3 / 4) * t + c2 / 3) * t + c1 / 2) * t + c0) * t
    h -= c0 * _REF_H[0] + c1 * _REF_H[1] + c2 * _REF_H[2] + c3 * _REF_H[3] + c4 * _REF_H[4]
    s = c0 * math.log(t) + (((c4 / 4 * t + c3 / 3) * t + c2 / 2) * t + c1) * t
    s -= c0 * _REF_S[0] + c1 * _REF_S[1] + c2 * _REF_S[2] + c3 * _REF_S[3] + c4 * _REF_S[4]
    s += -R * math.log(pressure / P_REF) + terms.mixing_entropy
    return h, s
