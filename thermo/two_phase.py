"""The two-phase split of a feed at fixed T and P (Michelsen, Fluid Phase
Equilib. 9 (1982) 21-40).

Successive substitution on ln K = ln phi_x - ln phi_y, each step solving the
Rachford-Rice equation for the vapor fraction, accelerated every few steps by
extrapolating along the dominant eigenvalue (accepted only where it lowers
the Gibbs energy); then Newton's method on ln K, with the analytic Jacobian
from Phi_ij = n d ln(phi_i)/d n_j of both phases and the vapor fraction's
own dependence on K, until ln f_i^y - ln f_i^x vanishes. The temperature
derivative of the split uses the Hessian of the Gibbs energy in the moles
v_i of the y phase,

    H_ij = (delta_ij / y_i - 1 + Phi^y_ij) / beta + (delta_ij / x_i - 1 + Phi^x_ij) / (1 - beta).
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from .components import R
from .fugacity import CubicAtTP, PhaseDerivatives
from .flash_support import solve
from .rachford_rice import RachfordRiceError, rachford_rice

SWITCH_TO_NEWTON = 1e-3  # max |ln f_y - ln f_x| at which substitution hands over
SWITCH_WARM = 1e-2  # the same for a start from a nearby converged split
CONVERGED = 1e-11  # max |ln f_y - ln f_x| of a converged split
QUADRATIC = 1e-6  # below this mismatch the next Newton step is taken as the last
SUBSTITUTION_STEPS = 200
NEWTON_STEPS = 30
ACCELERATE_EVERY = 5
TRIVIAL_LN_K = 1e-4  # max |ln K| below which the phases have merged into one
LN_K_LIMIT = 200.0  # |ln K| is held below this, so that no mole fraction underflows to zero


@dataclass(frozen=True)
class Split:
    """A converged two-phase split at the state's T (K) and P (Pa).

    ``beta`` is the mole fraction of the y phase (the one richer in light
    components); ``x`` and ``y`` are mole fractions over the active
    components; ``props_x`` and ``props_y`` the phases' derivatives at the
    last Newton iterate (within one quadratic step of the solution: good for
    derivatives); ``thermal_x`` and ``thermal_y`` hold (H_res J/mol,
    S_res J/(mol K), Cp_res J/(mol K)) at the solution itself;
    ``fugacity_error`` is max |ln f_i^y - ln f_i^x| there.
    """

    beta: float
    x: np.ndarray
    y: np.ndarray
    ln_k: np.ndarray
    props_x: PhaseDerivatives
    props_y: PhaseDerivatives
    thermal_x: tuple[float, float, float]
    thermal_y: tuple[float, float, float]
    fugacity_error: float
    iterations: int


def _limited(ln_k: np.ndarray) -> np.ndarray:
    return np.minimum(np.maximum(ln_k, -LN_K_LIMIT), LN_K_LIMIT)


class SplitError(ArithmeticError):
    """A split that neither converged nor collapsed to one phase."""


def _compositions(z, k, beta):
    x = z / (1.0 + beta * (k - 1.0))
    y = k * x
    return x / x.sum(), y / y.sum()


def _reduced_gibbs(beta, x, y, ln_phi_x, ln_phi_y):
    return (1.0 - beta) * float(x @ (np.log(x) + ln_phi_x)) + beta * float(y @ (np.log(y) + ln_phi_y))


def split(state: CubicAtTP, z: np.ndarray, k_start: np.ndarray, beta_guess: float | None = None,
          switch: float = SWITCH_TO_NEWTON) -> Split | None:
    """The two-phase split of feed z at the state's T and P, started from
    K-values ``k_start``; None when the iteration collapses to one phase
    (trivial K-values, or a vapor fraction outside (0, 1) at convergence).
    Substitution hands over to Newton's method once max |ln f_y - ln f_x|
    falls below ``switch`` (larger for a start already near the answer)."""
    ln_k = np.log(k_start)
    beta = beta_guess
    if switch >= SWITCH_WARM:
        # A start from a converged split at a nearby state: Newton at once.
        try:
            result = _newton(state, z, _limited(ln_k), beta, 0)
        except SplitError:
            result = None
        if result is not None:
            return result
    previous_delta = None
    saved = None
    previous_gibbs = math.inf
    error = math.inf
    iterations = 0
    for iterations in range(1, SUBSTITUTION_STEPS + 1):
        ln_k = _limited(ln_k)
        if float(np.abs(ln_k).max()) < TRIVIAL_LN_K:
            return None
        k = np.exp(ln_k)
        try:
            beta = rachford_rice(z, k, beta)
        except RachfordRiceError:
            return None
        x, y = _compositions(z, k, beta)
        ln_phi_x, _, _ = state.ln_phi(x)
        ln_phi_y, _, _ = state.ln_phi(y)
        gibbs = _reduced_gibbs(min(max(beta, 0.0), 1.0), x, y, ln_phi_x, ln_phi_y)
        if saved is not None and gibbs > previous_gibbs:
            ln_k, beta = saved
            saved = None
            previous_delta = None
            continue
        saved = None
        ln_k_new = ln_phi_x - ln_phi_y
        delta = ln_k_new - ln_k
        error = float(np.abs(delta).max())
        previous_gibbs = gibbs
        if error < switch and 0.0 < beta < 1.0:
            ln_k = ln_k_new
            break
        if previous_delta is not None and iterations % ACCELERATE_EVERY == 0:
            overlap = float(previous_delta @ delta)
            eigen = float(delta @ delta) / overlap if overlap != 0.0 else 0.0
            if 0.0 < eigen < 0.95:
                saved = (ln_k_new, beta)
                jump = delta * (eigen / (1.0 - eigen))
                largest = float(np.abs(jump).max())
                if largest > 5.0:
                    jump *= 5.0 / largest  # an extrapolation, not a leap
                ln_k = ln_k_new + jump
                previous_delta = None
                continue
        previous_delta = delta
        ln_k = ln_k_new
    if not (0.0 < beta < 1.0):
        return None
    return _newton(state, z, ln_k, beta, iterations)


def _newton(state: CubicAtTP, z: np.ndarray, ln_k: np.ndarray, beta: float, done: int) -> Split | None:
    """Newton's method on ln K with the vapor fraction from Rachford-Rice at
    every step; the phase compositions z / (1 + beta (K - 1)) never suffer
    the cancellation that moles z - v would for components almost wholly in
    one phase. A step that does not lower the largest mismatch is replaced by
    a substitution step."""
    size = len(z)
    eye = np.eye(size)
    previous_error = math.inf
    for step_count in range(1, NEWTON_STEPS + 1):
        ln_k = _limited(ln_k)
        k = np.exp(ln_k)
        try:
            beta = rachford_rice(z, k, beta)
        except RachfordRiceError:
            return None
        if not 0.0 < beta < 1.0:
            return None
        k_minus_1 = k - 1.0
        denominator = 1.0 + beta * k_minus_1
        x = z / denominator
        y = k * x
        props_y = state.derivatives(y / y.sum())
        props_x = state.derivatives(x / x.sum())
        gradient = ln_k + props_y.ln_phi - props_x.ln_phi
        error = float(np.abs(gradient).max())
        if error < CONVERGED:
            if float(np.abs(ln_k).max()) < TRIVIAL_LN_K:
                return None
            x, y = x / x.sum(), y / y.sum()
            return Split(beta, x, y, np.log(y) - np.log(x), props_x, props_y,
                         (props_x.enthalpy, props_x.entropy, props_x.heat_capacity),
                         (props_y.enthalpy, props_y.entropy, props_y.heat_capacity),
                         error, done + step_count)
        if error > previous_error:
            # Newton lost ground: one substitution step from here instead.
            ln_k = props_x.ln_phi - props_y.ln_phi
            previous_error = math.inf
            continue
        previous_error = error
        # d beta / d ln K_j from the Rachford-Rice equation
        weight = z * k / denominator**2
        dbeta = -weight / -float(z @ (k_minus_1**2 / denominator**2))
        # dx_i/dlnK_j = -x_i / D_i (beta K_j delta_ij + (K_i - 1) dbeta_j)
        dx = -(x / denominator)[:, None] * (beta * k * eye + k_minus_1[:, None] * dbeta[None, :])
        dy = k[:, None] * dx
        dy.flat[:: size + 1] += y
        jacobian = eye + props_y.dlnphi_dn @ dy - props_x.dlnphi_dn @ dx
        try:
            step = solve(jacobian, -gradient)
        except np.linalg.LinAlgError:
            raise SplitError("singular Jacobian in the Newton stage") from None
        largest = float(np.abs(step).max())
        if largest > 2.0:
            step *= 2.0 / largest
        if error < QUADRATIC:
            # One more step lands within rounding: check it with ln(phi) alone
            # rather than a fresh set of derivatives.
            final = _checked_step(state, z, _limited(ln_k + step), beta, props_x, props_y,
                                  done + step_count)
            if final is not None:
                return final
        ln_k = ln_k + step
    raise SplitError(f"Newton stage did not reach equal fugacities in {NEWTON_STEPS} steps")


def _checked_step(state, z, ln_k, beta, props_x, props_y, iterations) -> Split | None:
    """The split at ln K if its fugacities agree to CONVERGED, else None."""
    k = np.exp(ln_k)
    try:
        beta = rachford_rice(z, k, beta)
    except RachfordRiceError:
        return None
    if not 0.0 < beta < 1.0:
        return None
    x, y = _compositions(z, k, beta)
    ln_phi_x, _, _ = state.ln_phi(x)
    ln_phi_y, _, _ = state.ln_phi(y)
    ln_x, ln_y = np.log(x), np.log(y)
    error = float(np.abs(ln_y + ln_phi_y - ln_x - ln_phi_x).max())
    if not error < CONVERGED or float(np.abs(ln_y - ln_x).max()) < TRIVIAL_LN_K:
        return None
    thermal_x = state.thermal(x)[:3]
    thermal_y = state.thermal(y)[:3]
    return Split(beta, x, y, ln_y - ln_x, props_x, props_y, thermal_x, thermal_y, error, iterations)


def temperature_derivative(state: CubicAtTP, z: np.ndarray, result: Split) -> tuple[float, np.ndarray]:
    """dH/dT at constant P (J/(mol K)) of the equilibrium two-phase mixture,
    phase change included, and dv/dT (1/K) of the y-phase moles, by implicit
    differentiation of the equilibrium conditions."""
    t = state.temperature
    beta = result.beta
    x, y = result.x, result.y
    px, py = result.props_x, result.props_y
    size = len(z)
    hessian = (py.dlnphi_dn - 1.0) / beta + (px.dlnphi_dn - 1.0) / (1.0 - beta)
    hessian.flat[:: size + 1] += 1.0 / (beta * y) + 1.0 / ((1.0 - beta) * x)
    dv_dt = solve(hessian, -(py.dlnphi_dT - px.dlnphi_dT))
    h_ideal = state.ideal_enthalpies()
    cp_ideal = state.ideal_heat_capacities()
    rt2 = R * t * t
    partial_y = h_ideal - rt2 * py.dlnphi_dT
    partial_x = h_ideal - rt2 * px.dlnphi_dT
    cp_y = float(y @ cp_ideal) + result.thermal_y[2]
    cp_x = float(x @ cp_ideal) + result.thermal_x[2]
    return beta * cp_y + (1.0 - beta) * cp_x + float((partial_y - partial_x) @ dv_dt), dv_dt
