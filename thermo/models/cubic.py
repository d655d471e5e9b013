"""One generic two-parameter cubic equation of state,

    P = R T / (V - b) - a(T) / ((V + d1 b)(V + d2 b)),

with van der Waals one-fluid mixing: a = sum_ij x_i x_j sqrt(a_i a_j)(1 - k_ij),
b = sum_i x_i b_i. Peng-Robinson and Soave-Redlich-Kwong are parameter sets.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import Callable

import numpy as np

from ..components import R
from ..mixture import Mixture
from .base import HelmholtzTerms, IsothermAtComposition, PressureExplicitModel


def _peng_robinson_kappa(omega: np.ndarray) -> np.ndarray:
    # Peng and Robinson, Ind. Eng. Chem. Fundam. 15 (1976) 59, and for omega > 0.49
    # Robinson and Peng, GPA Research Report RR-28 (1978).
    original = 0.37464 + 1.54226 * omega - 0.26992 * omega**2
    heavy = 0.379642 + 1.48503 * omega - 0.164423 * omega**2 + 0.016666 * omega**3
    return np.where(omega > 0.49, heavy, original)


def _soave_m(omega: np.ndarray) -> np.ndarray:
    # Soave, Chem. Eng. Sci. 27 (1972) 1197.
    return 0.480 + 1.574 * omega - 0.176 * omega**2


@dataclass(frozen=True)
class CubicParameters:
    """The constants that make the generic cubic a named equation of state."""

    name: str
    delta1: float
    delta2: float
    omega_a: float
    omega_b: float
    kappa: Callable[[np.ndarray], np.ndarray]
    critical_compressibility: float  # the model's own Zc, for labelling lone roots


PENG_ROBINSON = CubicParameters(
    name="peng-robinson",
    delta1=1.0 + math.sqrt(2.0),
    delta2=1.0 - math.sqrt(2.0),
    omega_a=0.45723553,
    omega_b=0.07779607,
    kappa=_peng_robinson_kappa,
    critical_compressibility=0.30740,
)

SOAVE_REDLICH_KWONG = CubicParameters(
    name="soave-redlich-kwong",
    delta1=1.0,
    delta2=0.0,
    omega_a=0.42748023,
    omega_b=0.08664035,
    kappa=_soave_m,
    critical_compressibility=1.0 / 3.0,
)


def _real_cubic_roots(c2: float, c1: float, c0: float) -> list[float]:
    """Real roots of z^3 + c2 z^2 + c1 z + c0, ascending, polished by Newton."""
    shift = c2 / 3.0
    p = c1 - c2 * shift
    q = 2.0 * shift**3 - shift * c1 + c0
    half_q = q / 2.0
    third_p = p / 3.0
    disc = half_q * half_q + third_p**3
    if disc > 0.0:
        root_disc = math.sqrt(disc)
        u = -half_q + root_disc
        v = -half_q - root_disc
        t = math.copysign(abs(u) ** (1.0 / 3.0), u) + math.copysign(abs(v) ** (1.0 / 3.0), v)
        roots = [t - shift]
    else:
        r = math.sqrt(-third_p) if third_p < 0.0 else 0.0
        if r == 0.0:
            roots = [-shift]
        else:
            cos_arg = max(-1.0, min(1.0, -half_q / (r**3)))
            phi = math.acos(cos_arg)
            roots = sorted(
                2.0 * r * math.cos((phi - 2.0 * math.pi * k) / 3.0) - shift for k in range(3)
            )
    polished = []
    for z in roots:
        for _ in range(3):
            f = ((z + c2) * z + c1) * z + c0
            df = (3.0 * z + 2.0 * c2) * z + c1
            if df == 0.0:
                break
            step = f / df
            z -= step
            if abs(step) <= 1e-15 * max(1.0, abs(z)):
                break
        polished.append(z)
    return polished


class CubicModel(PressureExplicitModel):
    """A two-parameter cubic equation of state over a Mixture (SI units)."""

    def __init__(self, mixture: Mixture, parameters: CubicParameters):
        self.mixture = mixture
        self.parameters = parameters
        self.name = parameters.name
        tc = mixture.critical_temperature
        pc = mixture.critical_pressure
        self._tc = tc
        self._sqrt_ac = np.sqrt(parameters.omega_a * (R * tc) ** 2 / pc)
        self._b = parameters.omega_b * R * tc / pc
        self._kappa = parameters.kappa(mixture.acentric_factor)
        self._one_minus_k = 1.0 - mixture.kij
        self._delta1 = parameters.delta1
        self._delta2 = parameters.delta2
        self._coef_b = parameters.delta1 + parameters.delta2
        self._coef_bb = parameters.delta1 * parameters.delta2
        # sqrt(a_i(T)) = q0_i - q1_i sqrt(T), the Soave form of alpha(T) rearranged
        self._q0 = self._sqrt_ac * (1.0 + self._kappa)
        self._q1 = self._sqrt_ac * self._kappa / np.sqrt(tc)

    # Temperature-dependent attraction, shared by the scalar and batch paths.
    def attraction(self, temperature: float, x: np.ndarray) -> tuple[float, float, np.ndarray]:
        """a (Pa m6/mol2), da/dT (Pa m6/(mol2 K)) and D_i = d(n^2 a)/dn_i
        (Pa m6/mol2) at ``temperature`` (K) and mole fractions ``x``."""
        root_t = math.sqrt(temperature)
        q = self._q0 - self._q1 * root_t
        weighted = self._one_minus_k @ (q * x)
        a = float(x @ (q * weighted))
        da = -float(x @ (self._q1 * weighted)) / root_t
        return a, da, 2.0 * q * weighted

    def at(self, temperature: float, x: np.ndarray) -> "CubicIsotherm":
        return CubicIsotherm(self, temperature, x)

    def covolume(self, x: np.ndarray) -> float:
        """Mixture co-volume b, m3/mol."""
        return float(self._b @ x)

    # --- batch path: many states, one composition -------------------------------
    def _batch_attraction(self, temperatures: np.ndarray, x: np.ndarray):
        t = np.asarray(temperatures, dtype=float)[:, None]
        sqrt_tr = np.sqrt(t / self._tc)
        q = self._sqrt_ac * (1.0 + self._kappa * (1.0 - sqrt_tr))
        dq = -self._sqrt_ac * self._kappa * sqrt_tr / (2.0 * t)
        if len(x) == 1:
            a = q[:, 0] ** 2
            da = 2.0 * q[:, 0] * dq[:, 0]
            return a, da
        weighted = (q * x) @ self._one_minus_k
        a = np.einsum("ij,ij->i", q * x, weighted)
        da = 2.0 * np.einsum("ij,ij->i", dq * x, weighted)
        return a, da

    def batch_roots(self, temperatures, pressures, x):
        t = np.asarray(temperatures, dtype=float)
        p = np.asarray(pressures, dtype=float)
        a, _ = self._batch_attraction(t, x)
        b = self.covolume(x)
        rt = R * t
        big_a = a * p / rt**2
        big_b = b * p / rt
        c2 = (self._coef_b - 1.0) * big_b - 1.0
        c1 = big_a + self._coef_bb * big_b**2 - self._coef_b * big_b * (big_b + 1.0)
        c0 = -(big_a * big_b + self._coef_bb * big_b**2 * (big_b + 1.0))
        z_small, z_large = _batch_cubic_extreme_roots(c2, c1, c0, big_b)
        return z_small * rt / p, z_large * rt / p

    def batch_helmholtz(self, temperatures, volumes, x):
        t = np.asarray(temperatures, dtype=float)
        v = np.asarray(volumes, dtype=float)
        a, da = self._batch_attraction(t, x)
        b = self.covolume(x)
        span = (self._delta1 - self._delta2) * b
        log_ratio = np.log((v + self._delta1 * b) / (v + self._delta2 * b))
        f = -np.log1p(-b / v) - a / (R * t * span) * log_ratio
        f_t = -(t * da - a) * log_ratio / (R * t * t * span)
        return f, f_t


def _batch_cubic_extreme_roots(c2, c1, c0, big_b):
    """Smallest and largest real roots above B of arrays of monic cubics."""
    shift = c2 / 3.0
    p = c1 - c2 * shift
    q = 2.0 * shift**3 - shift * c1 + c0
    disc = (q / 2.0) ** 2 + (p / 3.0) ** 3
    one = disc > 0.0
    root_disc = np.sqrt(np.where(one, disc, 0.0))
    t_one = np.cbrt(-q / 2.0 + root_disc) + np.cbrt(-q / 2.0 - root_disc)
    r = np.sqrt(np.where(one, 0.0, -p / 3.0))
    with np.errstate(divide="ignore", invalid="ignore"):
        cos_arg = np.clip(np.where(r > 0, -q / 2.0 / np.where(r > 0, r, 1.0) ** 3, 0.0), -1.0, 1.0)
    phi = np.arccos(cos_arg)
    t_large = 2.0 * r * np.cos(phi / 3.0)
    t_small = 2.0 * r * np.cos((phi + 2.0 * np.pi) / 3.0)
    z_large = np.where(one, t_one, t_large) - shift
    z_small = np.where(one, t_one, t_small) - shift
    z_small = np.where(z_small > big_b, z_small, z_large)
    for z in (z_small, z_large):
        for _ in range(2):
            f = ((z + c2) * z + c1) * z + c0
            df = (3.0 * z + 2.0 * c2) * z + c1
            z -= f / np.where(df == 0.0, 1.0, df)
    return z_small, z_large


class CubicIsotherm(IsothermAtComposition):
    """A cubic model at one temperature and composition."""

    __slots__ = ("model", "temperature", "x", "a", "da_dT", "d_i", "b", "b_i")

    def __init__(self, model: CubicModel, temperature: float, x: np.ndarray):
        self.model = model
        self.temperature = temperature
        self.x = x
        self.a, self.da_dT, self.d_i = model.attraction(temperature, x)
        self.b_i = model._b
        self.b = float(model._b @ x)

    def volume_roots(self, pressure: float) -> list[float]:
        m = self.model
        rt = R * self.temperature
        big_a = self.a * pressure / (rt * rt)
        big_b = self.b * pressure / rt
        c2 = (m._coef_b - 1.0) * big_b - 1.0
        c1 = big_a + m._coef_bb * big_b * big_b - m._coef_b * big_b * (big_b + 1.0)
        c0 = -(big_a * big_b + m._coef_bb * big_b * big_b * (big_b + 1.0))
        roots = [z for z in _real_cubic_roots(c2, c1, c0) if z > big_b]
        return [z * rt / pressure for z in roots]

    def pressure(self, volume: float) -> float:
        m = self.model
        b = self.b
        return R * self.temperature / (volume - b) - self.a / (
            (volume + m._delta1 * b) * (volume + m._delta2 * b)
        )

    def helmholtz(self, volume: float) -> HelmholtzTerms:
        m = self.model
        t, b, a = self.temperature, self.b, self.a
        d1, d2 = m._delta1, m._delta2
        span = (d1 - d2) * b
        v1, v2 = volume + d1 * b, volume + d2 * b
        log_ratio = math.log(v1 / v2)
        repulsion = -math.log1p(-b / volume)
        rt = R * t
        f = repulsion - a / (rt * span) * log_ratio
        f_t = -(t * self.da_dT - a) * log_ratio / (rt * t * span)
        dlog_db = d1 / v1 - d2 / v2
        f_n = (
            repulsion
            + self.b_i / (volume - b)
            - (self.d_i * log_ratio + a * self.b_i * (dlog_db - log_ratio / b)) / (rt * span)
        )
        return HelmholtzTerms(F=f, F_T=f_t, F_n=f_n)

    def liquid_like(self, volume: float) -> bool:
        critical_volume_over_b = self.model.parameters.critical_compressibility / self.model.parameters.omega_b
        return volume < critical_volume_over_b * self.b


def peng_robinson(mixture: Mixture) -> CubicModel:
    """Peng-Robinson (1976; 1978 kappa for omega > 0.49) over ``mixture``."""
    return CubicModel(mixture, PENG_ROBINSON)


def soave_redlich_kwong(mixture: Mixture) -> CubicModel:
    """Soave-Redlich-Kwong (1972) over ``mixture``."""
    return CubicModel(mixture, SOAVE_REDLICH_KWONG)
