"""The two-phase split of a feed at fixed T and P (Michelsen, Fluid Phase
Equilib. 9 (1982) 21-40).

Successive substitution on ln K = ln phi_x - ln phi_y, each step solving the
Rachford-Rice equation for the vapor fraction, accelerated every few steps by
extrapolating along the dominant eigenvalue (accepted only where it lowers
the Gibbs energy); then Newton's method on the moles v_i of the y phase with
the analytic Hessian of the Gibbs energy,

    H_ij = (delta_ij / y_i - 1 + Phi^y_ij) / beta + (delta_ij / x_i - 1 + Phi^x_ij) / (1 - beta),

Phi_ij = n d ln(phi_i)/d n_j, until ln f_i^y - ln f_i^x vanishes.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from .components import R
from .fugacity import CubicAtTP, PhaseDerivatives
from .rachford_rice import RachfordRiceError, rachford_rice

SWITCH_TO_NEWTON = 1e-5  # max |ln f_y - ln f_x| at which substitution hands over
SWITCH_WARM = 1e-2  # the same for a start from a nearby converged split
CONVERGED = 1e-11  # max |ln f_y - ln f_x| of a converged split
FULL_STEP = 1e-4  # below this mismatch a Newton step is taken whole, without a line search
SUBSTITUTION_STEPS = 200
NEWTON_STEPS = 30
ACCELERATE_EVERY = 5
TRIVIAL_LN_K = 1e-4  # max |ln K| below which the phases have merged into one


@dataclass(frozen=True)
class Split:
    """A converged two-phase split at the state's T (K) and P (Pa).

    ``beta`` is the mole fraction of the y phase (the one richer in light
    components); ``x`` and ``y`` are mole fractions over the active
    components; ``props_x`` and ``props_y`` the phases' derivatives at the
    solution; ``fugacity_error`` is max |ln f_i^y - ln f_i^x|.
    """

    beta: float
    x: np.ndarray
    y: np.ndarray
    ln_k: np.ndarray
    props_x: PhaseDerivatives
    props_y: PhaseDerivatives
    fugacity_error: float
    iterations: int


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
    previous_delta = None
    saved = None
    previous_gibbs = math.inf
    error = math.inf
    iterations = 0
    for iterations in range(1, SUBSTITUTION_STEPS + 1):
        if float(np.max(np.abs(ln_k))) < TRIVIAL_LN_K:
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
        error = float(np.max(np.abs(delta)))
        previous_gibbs = gibbs
        if error < switch and 0.0 < beta < 1.0:
            break
        if previous_delta is not None and iterations % ACCELERATE_EVERY == 0:
            overlap = float(previous_delta @ delta)
            eigen = float(delta @ delta) / overlap if overlap != 0.0 else 0.0
            if 0.0 < eigen < 1.0:
                saved = (ln_k_new, beta)
                ln_k = ln_k_new + delta * (eigen / (1.0 - eigen))
                previous_delta = None
                continue
        previous_delta = delta
        ln_k = ln_k_new
    else:
        if not (0.0 < beta < 1.0):
            return None
    if not (0.0 < beta < 1.0):
        return None
    return _newton(state, z, beta * y, iterations)


def _newton(state: CubicAtTP, z: np.ndarray, v: np.ndarray, done: int) -> Split | None:
    """Newton's method on the moles v of the y phase (per mole of feed)."""
    size = len(z)
    ones = np.ones((size, size))
    for step_count in range(1, NEWTON_STEPS + 1):
        beta = float(v.sum())
        liquid_moles = z - v
        y = v / beta
        x = liquid_moles / (1.0 - beta)
        props_y = state.derivatives(y)
        props_x = state.derivatives(x)
        ln_y, ln_x = np.log(y), np.log(x)
        gradient = ln_y + props_y.ln_phi - ln_x - props_x.ln_phi
        error = float(np.max(np.abs(gradient)))
        if error < CONVERGED:
            ln_k = ln_y - ln_x
            if float(np.max(np.abs(ln_k))) < TRIVIAL_LN_K:
                return None
            return Split(beta, x, y, ln_k, props_x, props_y, error, done + step_count)
        hessian = (np.diag(1.0 / y) - ones + props_y.dlnphi_dn) / beta + (
            np.diag(1.0 / x) - ones + props_x.dlnphi_dn
        ) / (1.0 - beta)
        try:
            step = np.linalg.solve(hessian, -gradient)
        except np.linalg.LinAlgError:
            raise SplitError("singular Gibbs-energy Hessian in the Newton stage") from None
        # Keep both phases' moles positive: shorten the step toward the bounds.
        scale = 1.0
        for bound_scale in (_limit(v, step), _limit(liquid_moles, -step)):
            scale = min(scale, bound_scale)
        if error < FULL_STEP and scale == 1.0:
            v = v + step
            continue
        gibbs = _reduced_gibbs(beta, x, y, props_x.ln_phi, props_y.ln_phi)
        for _ in range(30):
            trial_v = v + scale * step
            trial_beta = float(trial_v.sum())
            if 0.0 < trial_beta < 1.0:
                trial_y = trial_v / trial_beta
                trial_x = (z - trial_v) / (1.0 - trial_beta)
                phi_y, _, _ = state.ln_phi(trial_y)
                phi_x, _, _ = state.ln_phi(trial_x)
                trial_gibbs = _reduced_gibbs(trial_beta, trial_x, trial_y, phi_x, phi_y)
                if trial_gibbs <= gibbs + 1e-13 * max(1.0, abs(gibbs)):
                    break
            scale *= 0.5
        v = trial_v
    raise SplitError(f"Newton stage did not reach equal fugacities in {NEWTON_STEPS} steps")


def _limit(moles: np.ndarray, step: np.ndarray) -> float:
    """Largest fraction of ``step`` (at most 1) keeping ``moles`` above a tenth
    of their current values."""
    shrinking = step < 0.0
    if not np.any(shrinking):
        return 1.0
    return float(min(1.0, np.min(-0.9 * moles[shrinking] / step[shrinking])))


def temperature_derivative(state: CubicAtTP, z: np.ndarray, result: Split) -> tuple[float, np.ndarray]:
    """dH/dT at constant P (J/(mol K)) of the equilibrium two-phase mixture,
    phase change included, and dv/dT (1/K) of the y-phase moles, by implicit
    differentiation of the equilibrium conditions."""
    t = state.temperature
    beta = result.beta
    x, y = result.x, result.y
    px, py = result.props_x, result.props_y
    size = len(z)
    ones = np.ones((size, size))
    hessian = (np.diag(1.0 / y) - ones + py.dlnphi_dn) / beta + (np.diag(1.0 / x) - ones + px.dlnphi_dn) / (1.0 - beta)
    dv_dt = np.linalg.solve(hessian, -(py.dlnphi_dT - px.dlnphi_dT))
    h_ideal = state.ideal_enthalpies()
    cp_ideal = state.ideal_heat_capacities()
    rt2 = R * t * t
    partial_y = h_ideal - rt2 * py.dlnphi_dT
    partial_x = h_ideal - rt2 * px.dlnphi_dT
    cp_y = float(y @ cp_ideal) + py.heat_capacity
    cp_x = float(x @ cp_ideal) + px.heat_capacity
    return beta * cp_y + (1.0 - beta) * cp_x + float((partial_y - partial_x) @ dv_dt), dv_dt
