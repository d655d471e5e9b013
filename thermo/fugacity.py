"""Fugacity coefficients of the generic two-parameter cubic, and their
derivatives, at a fixed temperature and pressure: what the flash needs.

The flash evaluates ln(phi) thousands of times at one (T, P) for changing
compositions, so the temperature-dependent parts (the attraction matrix
a_ij(T) and its temperature derivatives) are built once per (T, P) and every
composition costs a handful of vector operations and one cubic.

Everything follows from the reduced residual Helmholtz energy of the cubic,

    F(T, V, n) = -n ln(1 - B/V) - D(T) f(V, B) / T,
    f = ln((V + d1 B)/(V + d2 B)) / (R B (d1 - d2)),
    B = sum n_i b_i,  D = sum_ij n_i n_j a_ij(T),

and the general relations of Michelsen and Mollerup, *Thermodynamic Models:
Fundamentals and Computational Aspects* (2nd ed., 2007), ch. 2-3, for ln(phi)
and its derivatives at constant T and P. The constants are read from the
model's public parameters and mixture, so the results agree with
``thermo.departures.residual`` for the same model.

SI units throughout: K, Pa, m3/mol, J/mol, J/(mol K).
"""

from __future__ import annotations

import math
import weakref
from dataclasses import dataclass

import numpy as np

from .components import R
from .departures import LIQUID_LIKE, VAPOR_LIKE, Residual
from .models.cubic import CubicModel


@dataclass(frozen=True)
class PhaseDerivatives:
    """One phase at (T, P, x) with the derivatives the flash uses.

    ``dlnphi_dn[i, j]`` is n d ln(phi_i)/d n_j at constant T, P (per mole of
    phase, dimensionless); ``dlnphi_dT`` is 1/K, ``dlnphi_dP`` is 1/Pa.
    Residual enthalpy J/mol, entropy J/(mol K), heat capacity Cp_res J/(mol K),
    Gibbs energy J/mol, molar volume m3/mol.
    """

    ln_phi: np.ndarray
    dlnphi_dn: np.ndarray
    dlnphi_dT: np.ndarray
    dlnphi_dP: np.ndarray
    compressibility: float
    molar_volume: float
    enthalpy: float
    entropy: float
    heat_capacity: float
    gibbs: float
    liquid_like: bool


class CubicKernel:
    """Constants of one cubic model over a subset of its components
    (``active``: indices into the model's mixture)."""

    def __init__(self, model: CubicModel, active: tuple[int, ...]):
        mixture = model.mixture
        parameters = model.parameters
        index = np.asarray(active, dtype=int)
        self.model = model
        self.active = active
        self.size = len(active)
        tc = mixture.critical_temperature[index]
        pc = mixture.critical_pressure[index]
        self.tc = tc
        self.pc = pc
        self.omega = mixture.acentric_factor[index]
        sqrt_ac = np.sqrt(parameters.omega_a * (R * tc) ** 2 / pc)
        self.sqrt_ac = sqrt_ac  # sqrt(a) at the critical temperature, sqrt(Pa m6)/mol
        kappa = parameters.kappa(mixture.acentric_factor)[index]
        # sqrt(a_i(T)) = q0_i - q1_i sqrt(T), the Soave-form alpha function
        self.q0 = sqrt_ac * (1.0 + kappa)
        self.q1 = sqrt_ac * kappa / np.sqrt(tc)
        self.b = parameters.omega_b * R * tc / pc  # m3/mol
        self.one_minus_k = 1.0 - mixture.kij[np.ix_(index, index)]
        self.delta1 = parameters.delta1
        self.delta2 = parameters.delta2
        self.span = parameters.delta1 - parameters.delta2
        self.coef_b = parameters.delta1 + parameters.delta2
        self.coef_bb = parameters.delta1 * parameters.delta2
        # A lone root denser than the model's own critical density is liquid-like.
        self.liquid_z_over_b = parameters.critical_compressibility / parameters.omega_b
        self.cp_coefficients = mixture.cp_coefficients[index]
        self._last = None

    def at(self, temperature: float, pressure: float) -> "CubicAtTP":
        """The kernel fixed at T (K) and P (Pa); the last one is kept, since
        a flash asks for the same state several times in a row."""
        last = self._last
        if last is not None and last.temperature == temperature and last.pressure == pressure:
            return last
        state = CubicAtTP(self, temperature, pressure)
        self._last = state
        return state


_KERNELS: "weakref.WeakKeyDictionary[CubicModel, dict]" = weakref.WeakKeyDictionary()


def kernel_for(model: CubicModel, active: tuple[int, ...] | None = None) -> CubicKernel:
    """The (cached) cubic kernel of ``model`` over components ``active``
    (indices; all components when None)."""
    if active is None:
        active = tuple(range(model.mixture.size))
    per_model = _KERNELS.get(model)
    if per_model is None:
        per_model = {}
        _KERNELS[model] = per_model
    kernel = per_model.get(active)
    if kernel is None:
        kernel = CubicKernel(model, active)
        per_model[active] = kernel
    return kernel


def _polish(z: float, c2: float, c1: float, c0: float) -> float:
    """Two Newton steps on z^3 + c2 z^2 + c1 z + c0 (the closed forms are
    already accurate to rounding except near a double root)."""
    for _ in range(2):
        df = (3.0 * z + 2.0 * c2) * z + c1
        if df == 0.0:
            break
        step = (((z + c2) * z + c1) * z + c0) / df
        z -= step
        if abs(step) <= 1e-15 * abs(z):
            break
    return z


def _cubic_roots(c2: float, c1: float, c0: float) -> tuple[float, ...]:
    """The smallest and largest real roots of z^3 + c2 z^2 + c1 z + c0
    (one value where there is one real root), Newton-polished."""
    shift = c2 / 3.0
    p = c1 - c2 * shift
    q = 2.0 * shift**3 - shift * c1 + c0
    half_q = 0.5 * q
    third_p = p / 3.0
    disc = half_q * half_q + third_p**3
    if disc > 0.0:
        root_disc = math.sqrt(disc)
        u = -half_q + root_disc
        v = -half_q - root_disc
        t = math.copysign(abs(u) ** (1.0 / 3.0), u) + math.copysign(abs(v) ** (1.0 / 3.0), v)
        return (_polish(t - shift, c2, c1, c0),)
    if third_p >= 0.0:
        return (_polish(-shift, c2, c1, c0),)
    r = math.sqrt(-third_p)
    phi = math.acos(max(-1.0, min(1.0, -half_q / (r * r * r))))
    two_r = 2.0 * r
    # cos(phi/3) >= cos((phi - 2 pi)/3) >= cos((phi + 2 pi)/3) for phi in [0, pi]
    largest = two_r * math.cos(phi / 3.0) - shift
    smallest = two_r * math.cos((phi + 2.0 * math.pi) / 3.0) - shift
    return (_polish(smallest, c2, c1, c0), _polish(largest, c2, c1, c0))


class CubicAtTP:
    """The cubic at one temperature (K) and pressure (Pa); methods take a
    mole-fraction vector over the kernel's active components."""

    __slots__ = (
        "kernel", "temperature", "pressure", "sqrt_t", "q", "a", "big_a", "big_b",
        "_a_t", "_a_tt", "_ideal",
    )

    def __init__(self, kernel: CubicKernel, temperature: float, pressure: float):
        self.kernel = kernel
        self.temperature = temperature
        self.pressure = pressure
        self.sqrt_t = math.sqrt(temperature)
        q = kernel.q0 - kernel.q1 * self.sqrt_t
        self.q = q
        self.a = q[:, None] * q * kernel.one_minus_k  # Pa m6/mol2
        rt = R * temperature
        self.big_a = self.a * (pressure / (rt * rt))
        self.big_b = kernel.b * (pressure / rt)
        self._a_t = None
        self._a_tt = None
        self._ideal = None

    # --- roots ------------------------------------------------------------
    def _roots(self, big_a: float, big_b: float) -> tuple[float, ...]:
        k = self.kernel
        c2 = (k.coef_b - 1.0) * big_b - 1.0
        c1 = big_a + k.coef_bb * big_b * big_b - k.coef_b * big_b * (big_b + 1.0)
        c0 = -(big_a * big_b + k.coef_bb * big_b * big_b * (big_b + 1.0))
        return tuple(z for z in _cubic_roots(c2, c1, c0) if z > big_b)

    def _choose(self, big_a: float, big_b: float, root: str) -> tuple[float, float, bool]:
        """Compressibility, ln((Z + d1 B)/(Z + d2 B)) and liquid-likeness of the
        root asked for ("auto": lowest Gibbs energy)."""
        k = self.kernel
        roots = self._roots(big_a, big_b)
        if not roots:
            raise ArithmeticError("no volume root")
        d1, d2 = k.delta1, k.delta2
        if len(roots) == 1 or root == "vapor":
            z = roots[-1]
            log_ratio = math.log((z + d1 * big_b) / (z + d2 * big_b))
            liquid = z < k.liquid_z_over_b * big_b if len(roots) == 1 else False
            return z, log_ratio, liquid
        z_l = roots[0]
        log_l = math.log((z_l + d1 * big_b) / (z_l + d2 * big_b))
        if root == "liquid":
            return z_l, log_l, True
        z_v = roots[-1]
        log_v = math.log((z_v + d1 * big_b) / (z_v + d2 * big_b))
        scale = big_a / (big_b * k.span)
        g_l = z_l - 1.0 - math.log(z_l - big_b) - scale * log_l
        g_v = z_v - 1.0 - math.log(z_v - big_b) - scale * log_v
        if g_l < g_v:
            return z_l, log_l, True
        return z_v, log_v, False

    # --- fast path: ln(phi) only ----------------------------------------------
    def ln_phi(self, x: np.ndarray, root: str = "auto") -> tuple[np.ndarray, float, bool]:
        """ln(phi_i), Z and whether the root is liquid-like, at mole fractions x."""
        s = self.big_a @ x
        big_a = float(s @ x)
        big_b = float(self.big_b @ x)
        z, log_ratio, liquid = self._choose(big_a, big_b, root)
        # ln phi_i = (b_i/b)(Z - 1) - ln(Z - B) - A/(B (d1 - d2)) ln(...) (2 s_i/A - b_i/b), regrouped
        attraction = big_a / (big_b * self.kernel.span) * log_ratio
        ln_phi = self.big_b * ((z - 1.0 + attraction) / big_b) - s * (2.0 * attraction / big_a)
        ln_phi -= math.log(z - big_b)
        return ln_phi, z, liquid

    def ln_phi_rows(self, rows: np.ndarray) -> np.ndarray:
        """ln(phi_i) of each row of mole fractions (one composition per row,
        lowest-Gibbs root each): ``ln_phi`` for many trial phases at once."""
        s = rows @ self.big_a
        big_a = np.einsum("ij,ij->i", s, rows)
        big_b = rows @ self.big_b
        z = np.empty(len(rows))
        log_ratio = np.empty(len(rows))
        for k in range(len(rows)):
            z[k], log_ratio[k], _ = self._choose(float(big_a[k]), float(big_b[k]), "auto")
        attraction = big_a / (big_b * self.kernel.span) * log_ratio
        return (self.big_b[None, :] * ((z - 1.0 + attraction) / big_b)[:, None]
                - s * (2.0 * attraction / big_a)[:, None] - np.log(z - big_b)[:, None])

    def reduced_gibbs(self, x: np.ndarray, root: str = "auto") -> float:
        """G_res / (R T) of one mole at mole fractions x."""
        big_a = float(x @ self.big_a @ x)
        big_b = float(self.big_b @ x)
        z, log_ratio, _ = self._choose(big_a, big_b, root)
        return z - 1.0 - math.log(z - big_b) - big_a / (big_b * self.kernel.span) * log_ratio

    # --- temperature derivatives of the attraction ------------------------------
    def _attraction_t(self) -> tuple[np.ndarray, np.ndarray]:
        if self._a_t is None:
            k = self.kernel
            t = self.temperature
            dq = -k.q1 / (2.0 * self.sqrt_t)
            d2q = k.q1 / (4.0 * self.sqrt_t * t)
            q = self.q
            cross = np.outer(dq, q)
            self._a_t = (cross + cross.T) * k.one_minus_k
            second = np.outer(d2q, q)
            self._a_tt = (second + second.T + 2.0 * np.outer(dq, dq)) * k.one_minus_k
        return self._a_t, self._a_tt

    # --- residual properties without composition derivatives ------------------
    def residual_terms(self, x: np.ndarray, root: str = "auto") -> tuple[float, float, float, float, bool, np.ndarray]:
        """Z, molar volume (m3/mol), H_res (J/mol), S_res (J/(mol K)),
        liquid-likeness and ln(phi) at mole fractions x."""
        t = self.temperature
        s = self.big_a @ x
        big_a = float(s @ x)
        big_b = float(self.big_b @ x)
        z, log_ratio, liquid = self._choose(big_a, big_b, root)
        span = self.kernel.span
        bi_b = self.big_b / big_b
        ln_phi = bi_b * (z - 1.0) - math.log(z - big_b) - (big_a / (big_b * span) * log_ratio) * (
            2.0 * s / big_a - bi_b
        )
        a_t, _ = self._attraction_t()
        a = float(x @ self.a @ x)
        da = float(x @ a_t @ x)
        b = float(self.kernel.b @ x)
        rt = R * t
        # F and T dF/dT at (T, V) from the reduced variables (V/b = Z/B).
        f_value = -math.log(1.0 - big_b / z) - a / (rt * b * span) * log_ratio
        minus_t_ft = (t * da - a) * log_ratio / (rt * b * span)
        ln_z = math.log(z)
        h_res = rt * (minus_t_ft + z - 1.0)
        s_res = R * (minus_t_ft - f_value + ln_z)
        volume = z * rt / self.pressure
        return z, volume, h_res, s_res, liquid, ln_phi

    def residual(self, x: np.ndarray, root: str = "auto") -> Residual:
        """The engine's Residual record at mole fractions x (root as asked)."""
        z, volume, h_res, s_res, liquid, ln_phi = self.residual_terms(x, root)
        rt = R * self.temperature
        return Residual(
            temperature=self.temperature,
            pressure=self.pressure,
            compressibility=z,
            molar_volume=volume,
            enthalpy=h_res,
            entropy=s_res,
            gibbs=h_res - self.temperature * s_res,
            ln_phi=ln_phi,
            root=LIQUID_LIKE if liquid else VAPOR_LIKE,
        )

    # --- thermal properties without composition derivatives ------------------
    def thermal(self, x: np.ndarray, root: str = "auto") -> tuple[float, float, float, bool]:
        """H_res (J/mol), S_res (J/(mol K)), Cp_res (J/(mol K)) and
        liquid-likeness at mole fractions x: what a temperature search needs."""
        k = self.kernel
        t, p = self.temperature, self.pressure
        big_a = float(x @ self.big_a @ x)
        big_b = float(self.big_b @ x)
        z, log_ratio, liquid = self._choose(big_a, big_b, root)
        # The bilinear forms x.a.x, x.a_T.x and x.a_TT.x from sqrt(a_i) = q_i and
        # its derivatives, without building the derivative matrices.
        dq = k.q1 * (-0.5 / self.sqrt_t)
        d2q = k.q1 * (0.25 / (self.sqrt_t * t))
        u, v_t = x * self.q, x * dq
        mu = k.one_minus_k @ u
        d = float(u @ mu)
        d_t = 2.0 * float(v_t @ mu)
        d_tt = 2.0 * float((x * d2q) @ mu) + 2.0 * float(v_t @ (k.one_minus_k @ v_t))
        b = float(k.b @ x)
        rt = R * t
        v = z * rt / p
        v1, v2 = v + k.delta1 * b, v + k.delta2 * b
        v_minus_b = v - b
        f = log_ratio / (R * b * k.span)
        f_v = -1.0 / (R * v1 * v2)
        f_vv = (2.0 * v + k.coef_b * b) / (R * (v1 * v2) ** 2)
        shift = (d - t * d_t) / (t * t)
        big_f = -math.log(1.0 - b / v) - d / t * f
        f_t = f * shift
        f_tt = f * (-d_tt / t - 2.0 * d / t**3 + 2.0 * d_t / t**2)
        f_vv_total = 1.0 / v_minus_b**2 - 1.0 / v**2 - d / t * f_vv
        p_v = -rt * f_vv_total - rt / (v * v)
        p_t = p / t - rt * f_v * shift
        minus_t_ft = -t * f_t
        ln_z = math.log(z)
        return (
            rt * (minus_t_ft + z - 1.0),
            R * (minus_t_ft - big_f + ln_z),
            R * (-t * t * f_tt - 2.0 * t * f_t) - t * p_t * p_t / p_v - R,
            liquid,
        )

    # --- full second-order information ----------------------------------------
    def derivatives(self, x: np.ndarray, root: str = "auto") -> PhaseDerivatives:
        """ln(phi) with its composition, temperature and pressure derivatives,
        and H_res, S_res, Cp_res, G_res at mole fractions x (one mole)."""
        k = self.kernel
        t, p = self.temperature, self.pressure
        rt = R * t
        a_t, a_tt = self._attraction_t()
        bi = k.b
        ai = self.a @ x
        ai_t = a_t @ x
        d = float(ai @ x)
        d_t = float(ai_t @ x)
        d_tt = float(x @ a_tt @ x)
        d_i = 2.0 * ai
        d_it = 2.0 * ai_t
        b = float(bi @ x)
        z, log_ratio, liquid = self._choose(d * p / (rt * rt), b * p / rt, root)
        v = z * rt / p
        d1, d2 = k.delta1, k.delta2
        v1, v2 = v + d1 * b, v + d2 * b
        v_minus_b = v - b
        g = math.log(1.0 - b / v)
        g_v = b / (v * v_minus_b)
        g_b = -1.0 / v_minus_b
        g_vv = -1.0 / v_minus_b**2 + 1.0 / v**2
        g_bv = 1.0 / v_minus_b**2
        g_bb = -1.0 / v_minus_b**2
        f = log_ratio / (R * b * k.span)
        f_v = -1.0 / (R * v1 * v2)
        f_b = -(f + v * f_v) / b
        f_vv = (2.0 * v + k.coef_b * b) / (R * (v1 * v2) ** 2)
        f_bv = -(2.0 * f_v + v * f_vv) / b
        f_bb = -(2.0 * f_b + v * f_bv) / b
        d_over_t = d / t
        shift = (d - t * d_t) / (t * t)
        big_f = -g - d_over_t * f
        f_t = f * shift
        f_tt = f * (-d_tt / t - 2.0 * d / t**3 + 2.0 * d_t / t**2)
        f_vv_total = -g_vv - d_over_t * f_vv
        f_vt = f_v * shift
        f_big_b = -g_b - d_over_t * f_b
        f_big_d = -f / t
        f_nb = -g_b
        f_bv_total = -g_bv - d_over_t * f_bv
        f_bb_total = -g_bb - d_over_t * f_bb
        f_dv = -f_v / t
        f_bd = -f_b / t
        f_bt = f_b * shift
        f_dt = f / (t * t)
        p_v = -rt * f_vv_total - rt / (v * v)
        p_t = p / t - rt * f_vt
        ln_z = math.log(z)
        minus_t_ft = -t * f_t
        # Every per-component vector is a combination of 1, b_i, (a x)_i and (a_T x)_i:
        # F_i = -g + F_B b_i + F_D D_i, P_i = RT/V - RT F_iV, F_iT = F_BT b_i + F_DT D_i + F_D D_iT,
        # and the symmetric part c_j of F_ij = b_i c_j + c_i b_j + F_D D_ij; one product builds them all.
        p_row = (rt / v + rt * g_v, -rt * f_bv_total, -2.0 * rt * f_dv, 0.0)
        to_scaled = 1.0 / (rt * p_v)
        along_t = p_t * to_scaled
        rows = np.array((
            (-g - ln_z, f_big_b, 2.0 * f_big_d, 0.0),
            (p_row[0] * to_scaled, p_row[1] * to_scaled, p_row[2] * to_scaled, 0.0),
            (f_nb, 0.5 * f_bb_total, 2.0 * f_bd, 0.0),
            (1.0 / t + along_t * p_row[0], f_bt + along_t * p_row[1], 2.0 * f_dt + along_t * p_row[2], 2.0 * f_big_d),
            (-to_scaled * p_row[0] - 1.0 / p, -to_scaled * p_row[1], -to_scaled * p_row[2], 0.0),
        ))
        basis = np.empty((4, k.size))
        basis[0] = 1.0
        basis[1] = bi
        basis[2] = ai
        basis[3] = ai_t
        ln_phi, scaled, c, dlnphi_dt, dlnphi_dp = rows @ basis
        p_i = scaled * (rt * p_v)
        bc = bi[:, None] * c
        dlnphi_dn = bc + bc.T + (2.0 * f_big_d) * self.a + (p_i[:, None] * scaled + 1.0)
        return PhaseDerivatives(
            ln_phi=ln_phi,
            dlnphi_dn=dlnphi_dn,
            dlnphi_dT=dlnphi_dt,
            dlnphi_dP=dlnphi_dp,
            compressibility=z,
            molar_volume=v,
            enthalpy=rt * (minus_t_ft + z - 1.0),
            entropy=R * (minus_t_ft - big_f + ln_z),
            heat_capacity=R * (-t * t * f_tt - 2.0 * t * f_t) - t * p_t * p_t / p_v - R,
            gibbs=rt * (big_f + z - 1.0 - ln_z),
            liquid_like=liquid,
        )

    # --- ideal-gas parts over the active components -----------------------------
    def _ideal_parts(self) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
        if self._ideal is None:
            from .components import P_REF, T_REF

            t = self.temperature
            t2, t3, t4 = t * t, t**3, t**4
            powers = np.array((
                (t - T_REF, math.log(t / T_REF), 1.0),
                ((t2 - T_REF**2) / 2, t - T_REF, t),
                ((t3 - T_REF**3) / 3, (t2 - T_REF**2) / 2, t2),
                ((t4 - T_REF**4) / 4, (t3 - T_REF**3) / 3, t3),
                ((t4 * t - T_REF**5) / 5, (t4 - T_REF**4) / 4, t4),
            ))
            h, s, cp = (self.kernel.cp_coefficients @ powers).T
            self._ideal = (h, s - R * math.log(self.pressure / P_REF), cp)
        return self._ideal

    def ideal_enthalpies(self) -> np.ndarray:
        """Pure ideal-gas enthalpies of the active components at T, J/mol."""
        return self._ideal_parts()[0]

    def ideal_entropies(self) -> np.ndarray:
        """Pure ideal-gas entropies of the active components at T and P,
        J/(mol K) (no entropy of mixing)."""
        return self._ideal_parts()[1]

    def ideal_heat_capacities(self) -> np.ndarray:
        """Pure ideal-gas Cp of the active components at T, J/(mol K)."""
        return self._ideal_parts()[2]
