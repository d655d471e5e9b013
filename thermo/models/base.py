"""The two families of equations of state and what each must supply.

A pressure-explicit model, P = f(T, V, n), supplies its reduced residual
Helmholtz energy F = A_res / (R T) and first derivatives at (T, V, n).
A volume-explicit model, V = f(T, P, n), supplies its reduced residual Gibbs
energy g = G_res / (R T) and first derivatives at (T, P, n).
``thermo.departures`` turns either into H_res, S_res, G_res and ln(phi).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from ..mixture import Mixture

PRESSURE_EXPLICIT = "pressure-explicit"
VOLUME_EXPLICIT = "volume-explicit"
IDEAL = "ideal"


@dataclass(frozen=True)
class HelmholtzTerms:
    """F = A_res/(R T) for one mole of mixture at (T, V, x), with
    F_T = dF/dT (1/K), and F_n[i] = dF/dn_i at constant T and total V (per mole)."""

    F: float
    F_T: float
    F_n: np.ndarray


@dataclass(frozen=True)
class GibbsTerms:
    """g = G_res/(R T) for one mole at (T, P, x), with g_T = dg/dT (1/K),
    g_P = dg/dP (1/Pa), and g_n[i] = d(n g)/dn_i at constant T and P."""

    g: float
    g_T: float
    g_P: float
    g_n: np.ndarray


class PressureExplicitModel:
    """Base of models that give pressure from temperature and volume.

    ``at(T, x)`` returns an object holding whatever depends on temperature and
    composition only (for a cubic: a(T), b), so that roots and Helmholtz terms
    at several volumes reuse it.
    """

    family = PRESSURE_EXPLICIT
    name = ""
    mixture: Mixture

    def at(self, temperature: float, x: np.ndarray) -> "IsothermAtComposition":
        """Temperature- and composition-dependent part of the model at T (K)."""
        raise NotImplementedError

    def batch_roots(
        self, temperatures: np.ndarray, pressures: np.ndarray, x: np.ndarray
    ) -> tuple[np.ndarray, np.ndarray]:
        """Smallest and largest molar-volume roots, m3/mol, for arrays of T (K)
        and P (Pa) at one composition (equal where there is one root)."""
        raise NotImplementedError

    def batch_helmholtz(
        self, temperatures: np.ndarray, volumes: np.ndarray, x: np.ndarray
    ) -> tuple[np.ndarray, np.ndarray]:
        """Arrays of F and dF/dT (1/K) at T (K) and molar volume V (m3/mol)."""
        raise NotImplementedError


class IsothermAtComposition:
    """A pressure-explicit model fixed at one temperature and composition."""

    temperature: float

    def volume_roots(self, pressure: float) -> list[float]:
        """Molar volumes, m3/mol, with P(T, V) = pressure (Pa), smallest first."""
        raise NotImplementedError

    def helmholtz(self, volume: float) -> HelmholtzTerms:
        """Reduced residual Helmholtz energy and derivatives at molar volume V (m3/mol)."""
        raise NotImplementedError

    def pressure(self, volume: float) -> float:
        """Pressure, Pa, at molar volume V (m3/mol)."""
        raise NotImplementedError

    def liquid_like(self, volume: float) -> bool:
        """Whether a lone root at molar volume V (m3/mol) is denser than the
        model's own critical density, so better called liquid-like."""
        raise NotImplementedError


class VolumeExplicitModel:
    """Base of models that give volume from temperature and pressure."""

    family = VOLUME_EXPLICIT
    name = ""
    mixture: Mixture

    def gibbs(self, temperature: float, pressure: float, x: np.ndarray) -> GibbsTerms:
        """Reduced residual Gibbs energy and derivatives at T (K), P (Pa)."""
        raise NotImplementedError

    def compressibility(self, temperature: float, pressure: float, x: np.ndarray) -> float:
        """Compressibility factor Z = P V / (R T) at T (K), P (Pa)."""
        return 1.0 + pressure * self.gibbs(temperature, pressure, x).g_P
