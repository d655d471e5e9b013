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
from .fugacity import CubicAtTP, CubicKernel, PhaseDerivatives
from .flash_support import solve
from .rachford_rice import RachfordRiceError, rachford_rice

SWITCH_TO_NEWTON = 1e-3  # max |ln f_y - ln f_x| at which substitution hands over
CONVERGED = 1e-11  # max |ln f_y - ln f_x| of a converged split
QUADRATIC = 1e-6  # below this mismatch the next Newton step is taken as the last
SUBSTITUTION_STEPS = 200
PINNED_CONVERGED = 1e-8  # a substitution this settled with the vapor fraction at 0 or 1 stays there
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
    falls below ``switch``."""
    start = substitution(state, z, k_start, beta_guess, switch)
    if start is None:
        return None
    ln_k, beta, iterations = start
    return _newton(state, z, ln_k, beta, iterations)


def substitution(state: CubicAtTP, z: np.ndarray, k_start: np.ndarray, beta_guess: float | None = None,
                 switch: float = SWITCH_TO_NEWTON) -> tuple[np.ndarray, float, int] | None:
    """Accelerated successive substitution on ln K from ``k_start`` until
    max |ln f_y - ln f_x| falls below ``switch`` with the vapor fraction
    inside (0, 1): (ln K, vapor fraction, steps taken) to hand to a Newton
    stage, or None when the iteration collapses to one phase."""
    ln_k = np.log(k_start)
    beta = beta_guess
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
        if error < PINNED_CONVERGED and not 0.0 < beta < 1.0:
            return None  # settled with the feed outside the split: one phase at these K-values
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
    return ln_k, beta, iterations


def split_from_nearby(state: CubicAtTP, z: np.ndarray, ln_k: np.ndarray, beta: float) -> Split | None:
    """The split of feed z at the state's T and P by Newton's method alone,
    from ln K and the vapor fraction of a converged split at a nearby state
    (carried along its own derivatives); None where Newton's method does not
    reach it. No substitution follows a failure: from such a start a failure
    almost always means the state has left the two-phase region, where
    substitution with the vapor fraction pinned at 0 or 1 only creeps for its
    full count of steps; the caller's stability test decides instead."""
    try:
        return _newton(state, z, _limited(ln_k), beta, 0)
    except SplitError:
        return None


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


TARGET_STEPS = 12  # Newton steps of the simultaneous PH/PS solve before the caller's search takes over
TARGET_HALVINGS = 4  # halvings of a step that leaves the two-phase region, before giving up
TARGET_T_STEP = 0.25  # largest temperature step, as a fraction of T


def split_at_target(kernel: CubicKernel, pressure: float, z: np.ndarray, kind: str, target: float,
                    tolerance: float, temperature: float, ln_k: np.ndarray,
                    beta: float) -> tuple[CubicAtTP, Split] | None:
    """The temperature (K) and two-phase split at ``pressure`` (Pa) whose
    enthalpy (``kind`` "H", J/mol) or entropy ("S", J/(mol K)) per mole of
    feed z meets ``target`` within ``tolerance``, by Newton's method on
    ln K and T together, from ln K and the vapor fraction ``beta`` of a
    split (converged, or from substitution part of the way) at
    ``temperature``. Returns (state at the answer's T, split there), or None
    where the iteration leaves the two-phase region or does not converge
    (the caller then searches T with a full split at each step).

    Equations: ln K_i + ln phi_i^y - ln phi_i^x = 0 and (value - target) /
    scale = 0. With v_i = beta y_i the vapor moles, dH = sum_i (hbar_i^y -
    hbar_i^x) dv_i + Cp dT at fixed phase amounts, where hbar_i - h_i^ig =
    -R T^2 d ln phi_i/dT (Michelsen, Fluid Phase Equilib. 33 (1987) 13,
    for the isenthalpic flash as one Newton system); for S,
    sbar_i = s_i^ig - R ln w_i - R T d ln phi_i/dT - R ln phi_i and the
    temperature term is Cp/T. Each step costs one set of phase derivatives,
    where a search on T alone converges a whole split at every T."""
    size = len(z)
    eye = np.eye(size)
    scale = R * temperature if kind == "H" else R  # makes the target equation dimensionless
    ln_k = np.array(ln_k, dtype=float)
    t = temperature
    matrix = np.empty((size + 1, size + 1))
    rhs = np.empty(size + 1)
    step = None
    for _ in range(TARGET_STEPS):
        halvings = 0
        while True:
            if step is not None:
                trial_ln_k = _limited(ln_k + step[:size])
                trial_t = t + float(step[size])
            else:
                trial_ln_k, trial_t = ln_k, t
            k = np.exp(trial_ln_k)
            try:
                trial_beta = rachford_rice(z, k, beta)
            except RachfordRiceError:
                trial_beta = -1.0
            if 0.0 < trial_beta < 1.0 and trial_t > 0.0:
                break
            if step is None or halvings == TARGET_HALVINGS:
                return None  # left the two-phase region: the caller brackets instead
            step = 0.5 * step
            halvings += 1
        ln_k, t, beta = trial_ln_k, trial_t, trial_beta
        state = kernel.at(t, pressure)
        k_minus_1 = k - 1.0
        denominator = 1.0 + beta * k_minus_1
        x = z / denominator
        y = k * x
        x_n, y_n = x / x.sum(), y / y.sum()
        props_y = state.derivatives(y_n)
        props_x = state.derivatives(x_n)
        ln_y, ln_x = np.log(y_n), np.log(x_n)
        gradient = ln_y - ln_x + props_y.ln_phi - props_x.ln_phi
        h_ideal = state.ideal_enthalpies()
        cp_ideal = state.ideal_heat_capacities()
        cp = beta * (float(y_n @ cp_ideal) + props_y.heat_capacity) + (1.0 - beta) * (
            float(x_n @ cp_ideal) + props_x.heat_capacity)
        rt = R * t
        partial_difference = -rt * t * (props_y.dlnphi_dT - props_x.dlnphi_dT)  # hbar^y - hbar^x
        if kind == "H":
            value = beta * (float(y_n @ h_ideal) + props_y.enthalpy) + (1.0 - beta) * (
                float(x_n @ h_ideal) + props_x.enthalpy)
            slope_t = cp
        else:
            s_ideal = state.ideal_entropies()
            value = beta * (float(y_n @ (s_ideal - R * ln_y)) + props_y.entropy) + (1.0 - beta) * (
                float(x_n @ (s_ideal - R * ln_x)) + props_x.entropy)
            partial_difference = partial_difference / t - R * gradient  # sbar^y - sbar^x
            slope_t = cp / t
        error = float(np.abs(gradient).max())
        miss = value - target
        if error < CONVERGED and abs(miss) <= tolerance:
            if float(np.abs(ln_y - ln_x).max()) < TRIVIAL_LN_K:
                return None
            result = Split(beta, x_n, y_n, ln_y - ln_x, props_x, props_y,
                           (props_x.enthalpy, props_x.entropy, props_x.heat_capacity),
                           (props_y.enthalpy, props_y.entropy, props_y.heat_capacity), error, 0)
            return state, result
        # d beta / d ln K_j from the Rachford-Rice equation, then d x / d ln K, d y / d ln K
        dbeta = (z * k / denominator**2) / float(z @ (k_minus_1**2 / denominator**2))
        dx = -(x / denominator)[:, None] * (beta * k * eye + k_minus_1[:, None] * dbeta[None, :])
        dy = k[:, None] * dx
        dy.flat[:: size + 1] += y
        dv = y[:, None] * dbeta[None, :] + beta * dy  # d(beta y_i) / d ln K_j
        matrix[:size, :size] = eye + props_y.dlnphi_dn @ dy - props_x.dlnphi_dn @ dx
        matrix[:size, size] = props_y.dlnphi_dT - props_x.dlnphi_dT
        matrix[size, :size] = (partial_difference @ dv) / scale
        matrix[size, size] = slope_t / scale
        rhs[:size] = -gradient
        rhs[size] = -miss / scale
        try:
            step = solve(matrix, rhs)
        except np.linalg.LinAlgError:
            return None
        if not np.all(np.isfinite(step)):
            return None
        # an extrapolation, not a leap: at most TARGET_T_STEP of T and 2 in any ln K
        reach = max(abs(float(step[size])) / (TARGET_T_STEP * t), float(np.abs(step[:size]).max()) / 2.0)
        if reach > 1.0:
            step = step / reach
    return None


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
