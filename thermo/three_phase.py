"""A split into more than two phases at fixed T and P (in practice vapor and
two liquids: water with hydrocarbons), by Michelsen's multiphase method
(Michelsen, Comput. Chem. Eng. 18 (1994) 545).

With the fugacity coefficients phi_ik of each phase k held fixed, the phase
amounts beta_k minimise the convex function

    Q(beta) = sum_k beta_k - sum_i z_i ln E_i,   E_i = sum_k beta_k / phi_ik,

subject to beta_k >= 0, and the phase compositions follow as
x_ik = z_i / (phi_ik E_i). Minimising Q by Newton's method (dropping a phase
whose amount would go negative), then updating phi_ik from the new
compositions, is successive substitution; at its fixed point every
component's fugacity x_ik phi_ik P is the same in every phase present.

A binary has three phases at fixed P at one temperature only (the phase
rule leaves it no freedom): ``binary_three_phase`` finds that temperature
and the three compositions together by Newton's method.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from .flash_support import solve
from .fugacity import CubicAtTP, CubicKernel

CONVERGED = 1e-11  # max change of ln phi between substitution steps
SUBSTITUTION_STEPS = 500
ACCELERATE_EVERY = 6
VANISHED = 1e-12  # a phase amount below this has left the split
MERGE = 1e-2  # max |ln x_k - ln x_l| at which two phases are taken as one


@dataclass(frozen=True)
class MultiSplit:
    """A converged split: ``amounts`` (mol per mol feed) and ``compositions``
    (one row of mole fractions per phase, over the active components);
    ``fugacity_error`` is the largest |ln f_ik - ln f_il| between phases."""

    amounts: np.ndarray
    compositions: np.ndarray
    fugacity_error: float
    iterations: int


def _q(z: np.ndarray, inverse_phi: np.ndarray, beta: np.ndarray) -> float:
    return float(beta.sum() - z @ np.log(beta @ inverse_phi))


def _phase_amounts(z: np.ndarray, inverse_phi: np.ndarray, beta: np.ndarray) -> np.ndarray:
    """Minimise Q over beta >= 0 for fixed 1/phi (rows: phases): Newton's
    method on the phases present, with backtracking and the bound kept, then
    the Karush-Kuhn-Tucker test of the phases left out (one returns if its
    gradient is negative)."""
    beta = beta.copy()
    active = beta > 0.0
    if not np.any(active):
        beta[:] = 1.0 / len(beta)
        active[:] = True
    for _ in range(len(beta) + 5):
        for _ in range(100):
            e = beta @ inverse_phi
            ratio = z / e
            gradient = 1.0 - inverse_phi @ ratio
            index = np.flatnonzero(active)
            g = gradient[index]
            if float(np.abs(g).max()) < 1e-13:
                break
            weighted = inverse_phi[index] * (ratio / e)
            step = solve(weighted @ inverse_phi[index].T, -g)
            scale, hit = 1.0, None
            negative = np.flatnonzero(step < 0.0)
            if negative.size:
                limits = -beta[index[negative]] / step[negative]
                j = int(np.argmin(limits))
                if limits[j] < 1.0:
                    scale, hit = float(limits[j]), int(index[negative[j]])
            q_now = _q(z, inverse_phi, beta)
            for _ in range(40):
                trial = beta.copy()
                trial[index] += scale * step
                if hit is not None:
                    trial[hit] = 0.0  # the step was cut to land this phase on its bound
                trial = np.maximum(trial, 0.0)
                if np.any(trial[index] > 0.0) and _q(z, inverse_phi, trial) <= q_now + 1e-15 * abs(q_now):
                    break
                scale *= 0.5
                hit = None
            beta = trial
            active = beta > 0.0
        e = beta @ inverse_phi
        gradient = 1.0 - inverse_phi @ (z / e)
        returning = np.flatnonzero((~active) & (gradient < -1e-12))
        if returning.size == 0:
            return beta
        j = int(returning[np.argmin(gradient[returning])])
        active[j] = True
        beta[j] = 1e-10
    return beta


def _merge_alike(compositions: np.ndarray, beta: np.ndarray) -> int | None:
    """The index of a phase whose composition has come within MERGE of
    another's (its amount is handed to that one), or None."""
    logs = np.log(compositions / compositions.sum(axis=1)[:, None])
    for k in range(len(beta)):
        for l in range(k + 1, len(beta)):
            if float(np.abs(logs[k] - logs[l]).max()) < MERGE:
                beta[k] += beta[l]
                return l
    return None


def multiphase_split(state: CubicAtTP, z: np.ndarray, starts: list[np.ndarray]) -> MultiSplit | None:
    """The split of feed z (over the kernel's active components, all
    positive) at the state's T and P, from the start compositions
    ``starts`` (one per phase); None when it fails to converge."""
    compositions = np.array(starts, dtype=float)
    compositions = compositions / compositions.sum(axis=1)[:, None]
    phases = len(compositions)
    ln_phi = np.array([state.ln_phi(c)[0] for c in compositions])
    beta = np.full(phases, 1.0 / phases)
    history = []
    for iteration in range(1, SUBSTITUTION_STEPS + 1):
        inverse_phi = np.exp(-ln_phi)
        beta = _phase_amounts(z, inverse_phi, beta)
        e = beta @ inverse_phi
        compositions = (z / e) * inverse_phi
        present = beta > VANISHED
        # Every phase is updated, an absent one too: it then acts as a trial
        # phase that either returns or settles as a stable non-phase.
        new_ln_phi = np.array([state.ln_phi(row / row.sum())[0] for row in compositions])
        merged = _merge_alike(compositions, beta)
        if merged is not None:
            # Two phases have become one: go on with one fewer.
            keep = [k for k in range(len(beta)) if k != merged]
            beta, new_ln_phi, compositions = beta[keep], new_ln_phi[keep], compositions[keep]
            ln_phi = new_ln_phi
            history.clear()
            continue
        change = new_ln_phi[present] - ln_phi[present]
        step = float(np.abs(change).max()) if change.size else 0.0
        history.append(new_ln_phi - ln_phi)
        ln_phi = new_ln_phi
        if step < CONVERGED:
            break
        if iteration % ACCELERATE_EVERY == 0 and len(history) >= 2:
            last, before = history[-1][present].ravel(), history[-2][present].ravel()
            overlap = float(before @ last)
            eigen = float(last @ last) / overlap if overlap != 0.0 else 0.0
            if 0.0 < eigen < 0.95:
                ln_phi = ln_phi + history[-1] * (eigen / (1.0 - eigen))
                history.clear()
    else:
        return None
    keep = np.flatnonzero(beta > VANISHED)
    amounts = beta[keep]
    rows = compositions[keep]
    rows = rows / rows.sum(axis=1)[:, None]
    # Fresh fugacities of the phases returned, for the verification.
    ln_f = np.array([np.log(r) + state.ln_phi(r)[0] for r in rows])
    error = float(np.max(ln_f.max(axis=0) - ln_f.min(axis=0))) if len(rows) > 1 else 0.0
    if not math.isfinite(error):
        return None
    return MultiSplit(amounts, rows, error, iteration)


# --- a binary's three phases at fixed pressure ------------------------------------
BINARY_NEWTON_STEPS = 30
BINARY_CONVERGED = 1e-11  # max |residual| in ln f at which the Newton solve stops (verified to 1e-8 after)
BINARY_MAX_T_STEP = 0.05  # at most this fraction of T in one Newton step
BINARY_MAX_U_STEP = 2.0  # and at most this much in ln(x_0 / x_1)


@dataclass(frozen=True)
class BinaryThreePhase:
    """The three phases of a binary at fixed P: ``temperature`` (K, the one
    temperature at which they coexist), ``compositions`` (rows of mole
    fractions) and the volume ``roots`` ("vapor" or "liquid") each was
    solved on."""

    temperature: float
    compositions: np.ndarray
    roots: tuple[str, ...]


def binary_three_phase(kernel: CubicKernel, pressure: float, temperature: float, starts: list[np.ndarray],
                       roots: tuple[str, ...]) -> BinaryThreePhase | None:
    """The temperature (K) at pressure (Pa) at which three phases of a binary
    coexist, and their compositions: Newton's method on the four equations
    ln f_i(phase 0) = ln f_i(phase k), k = 1, 2, in T and the three phases'
    u = ln(x_0 / x_1) (a phase nearly pure in either component keeps its
    minor mole fraction to full precision), each phase held on its volume
    root (``roots``), from ``temperature`` and the ``starts`` (three rows).
    By the phase rule (2 components, 3 phases, P fixed) the solution is a
    point. None if Newton does not converge."""
    t = float(temperature)
    u = np.array([math.log(float(row[0]) / float(row[1])) for row in starts])
    sign = np.array([1.0, -1.0])
    for _ in range(BINARY_NEWTON_STEPS):
        state = kernel.at(t, pressure)
        rows = _logit_rows(u)
        ln_f, d_du, d_dt = [], [], []
        for k in range(3):
            row = rows[k]
            props = state.derivatives(row, roots[k])
            ln_f.append(np.log(row) + props.ln_phi)
            # dx = (1, -1) x_0 x_1 du; at one mole d ln phi_i = sum_j (n d ln phi_i/d n_j) dx_j
            weight = row[0] * row[1]
            d_du.append(np.array([row[1], -row[0]]) + weight * (props.dlnphi_dn @ sign))
            d_dt.append(props.dlnphi_dT)
        residual = np.concatenate([ln_f[0] - ln_f[1], ln_f[0] - ln_f[2]])
        if not np.all(np.isfinite(residual)):
            return None
        if float(np.abs(residual).max()) < BINARY_CONVERGED:
            return BinaryThreePhase(t, rows, tuple(roots))
        jacobian = np.zeros((4, 4))
        jacobian[0:2, 0] = d_dt[0] - d_dt[1]
        jacobian[2:4, 0] = d_dt[0] - d_dt[2]
        jacobian[0:2, 1] = d_du[0]
        jacobian[2:4, 1] = d_du[0]
        jacobian[0:2, 2] = -d_du[1]
        jacobian[2:4, 3] = -d_du[2]
        try:
            step = solve(jacobian, -residual)
        except np.linalg.LinAlgError:
            return None  # two of the phases have become one (or the roots have met)
        if not np.all(np.isfinite(step)):
            return None
        # Short steps in T and u: Newton from a start this close needs no more.
        scale = 1.0
        if abs(step[0]) > BINARY_MAX_T_STEP * t:
            scale = BINARY_MAX_T_STEP * t / abs(step[0])
        largest = float(np.abs(step[1:]).max())
        if largest > BINARY_MAX_U_STEP:
            scale = min(scale, BINARY_MAX_U_STEP / largest)
        t += scale * step[0]
        u = u + scale * step[1:]
    return None


def _logit_rows(u: np.ndarray) -> np.ndarray:
    """Rows (x_0, x_1) with ln(x_0 / x_1) = u, each to full relative precision."""
    first = 1.0 / (1.0 + np.exp(-u))
    second = 1.0 / (1.0 + np.exp(u))
    return np.column_stack([first, second])
