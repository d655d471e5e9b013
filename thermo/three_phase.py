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
Where substitution creeps (two liquids near a critical end point), Newton's
method on the Gibbs energy itself finishes the split (``_newton_finish``).

N components have N + 1 phases at fixed P at one temperature only (the
phase rule leaves them no freedom; a binary's vapor and two liquids):
``invariant_point`` finds that temperature and the compositions together
by Newton's method.
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
NEWTON_AFTER = 60  # substitution steps before a slow split is handed to Newton's method on G
NEWTON_STEPS = 60
NEWTON_CONVERGED = 1e-12  # max |ln f_ik - ln f_ir(i)| at which Newton's method on G stops
NEWTON_ROUNDING = 1e-7  # below this mismatch a step is judged by the mismatch, not by G
NEWTON_MAX_LOG_STEP = 5.0  # at most this change of any ln n_ik in one Newton step


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
        # Each component's 1/phi is scaled by its largest over the phases: Q
        # shifts by a constant and its gradient, Hessian and the compositions
        # are unchanged, but a nearly insoluble gas over a nearly involatile
        # liquid (neon and water at 15 K: ln phi from -490 to +162) no longer
        # overflows E_i and the Hessian into a singular matrix.
        inverse_phi = np.exp(-(ln_phi - ln_phi.min(axis=0)))
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
        if iteration == NEWTON_AFTER:
            finished = _newton_finish(state, z, beta, compositions)
            if finished is not None:
                beta, compositions = finished
                break
    else:
        finished = _newton_finish(state, z, beta, compositions)
        if finished is None:
            return None
        beta, compositions = finished
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


def _newton_finish(state: CubicAtTP, z: np.ndarray, beta: np.ndarray,
                   compositions: np.ndarray) -> tuple[np.ndarray, np.ndarray] | None:
    """(amounts, compositions) of the phases present in a slow substitution
    (two liquids close to a critical end point converge by substitution at a
    rate near 1: 500 steps once left them 0.1 apart in make-up), finished
    by Newton's method on the Gibbs energy G/RT = sum_k n_k . ln f_k.

    Each component's mole numbers in the phase holding most of it follow
    from the feed (no cancellation: that phase's share is never a small
    difference); the variables are w_ik = ln n_ik of the others, so that a
    nearly pure phase's traces move by ratios, not by amounts it does not
    have. With r(i) the holding phase and M_k = (diag(1/x_k) - 1 + Phi_k) / N_k
    (Phi_k the phase's n d ln phi / d n) the gradient in n_ik is
    ln f_ik - ln f_ir(i) and the Hessian entry of (i, k) and (j, l) is
    M_k,ij ([k = l] - [k = r(j)]) - M_r(i),ij ([r(i) = l] - [r(i) = r(j)]);
    in w both are scaled by n and the gradient joins the diagonal. Steps
    keep every mole number positive and lower G. None if the phases do not
    converge in NEWTON_STEPS (the caller keeps its own verdict)."""
    present = np.flatnonzero(beta > VANISHED)
    if len(present) < 2:
        return None
    rows = compositions[present] / compositions[present].sum(axis=1)[:, None]
    moles = beta[present][:, None] * rows  # n_ik
    count, size = moles.shape
    holder = np.argmax(moles, axis=0)  # r(i)
    holders = [int(r) for r in holder]
    free = [(i, k) for i in range(size) for k in range(count) if k != holder[i]]
    free_i = np.array([i for i, _ in free])
    free_k = np.array([k for _, k in free])

    def complete(n_free):
        n = np.zeros((count, size))
        n[free_k, free_i] = n_free
        n[holder, np.arange(size)] = z - n.sum(axis=0)
        return n

    def evaluate(n):
        totals = n.sum(axis=1)
        x = n / totals[:, None]
        phases = [state.derivatives(row) for row in x]
        ln_f = np.log(x) + np.array([ph.ln_phi for ph in phases])
        return float(np.sum(n * ln_f)), ln_f, phases, totals, x

    def mismatch(ln_f):
        return ln_f[free_k, free_i] - ln_f[holder[free_i], free_i]

    n_free = moles[free_k, free_i]
    moles = complete(n_free)
    g, ln_f, phases, totals, x = evaluate(moles)
    for _ in range(NEWTON_STEPS):
        gradient = mismatch(ln_f)
        if not np.all(np.isfinite(gradient)):
            return None
        if float(np.abs(gradient).max()) < NEWTON_CONVERGED:
            logs = np.log(x)
            if any(float(np.abs(logs[k] - logs[l]).max()) < MERGE
                   for k in range(count) for l in range(k + 1, count)):
                return None  # two phases have become one: no split of this many
            amounts = np.zeros(len(beta))
            full = np.zeros_like(compositions)
            amounts[present] = totals
            full[present] = x
            return amounts, full
        blocks = [(np.diag(1.0 / x[k]) - 1.0 + phases[k].dlnphi_dn) / totals[k] for k in range(count)]
        hessian = np.empty((len(free), len(free)))
        for a, (i, k) in enumerate(free):
            r_i = holders[i]
            for b, (j, l) in enumerate(free):
                r_j = holders[j]
                hessian[a, b] = (blocks[k][i, j] * (float(k == l) - float(k == r_j))
                                 - blocks[r_i][i, j] * (float(r_i == l) - float(r_i == r_j)))
        step = _descent_step(n_free[:, None] * hessian * n_free[None, :] + np.diag(n_free * gradient),
                             n_free * gradient)
        if step is None:
            return None
        scale = min(1.0, NEWTON_MAX_LOG_STEP / float(np.abs(step).max())) if np.any(step) else 1.0
        for _ in range(40):
            trial_free = n_free * np.exp(scale * step)
            trial = complete(trial_free)
            if np.all(trial[holder, np.arange(size)] > 0.0):
                g_trial, ln_f_trial, phases_trial, totals_trial, x_trial = evaluate(trial)
                if math.isfinite(g_trial) and g_trial <= g + 1e-13 * abs(g):
                    break
                # So close that G's rounding hides the descent: the smaller mismatch decides.
                closer = float(np.abs(mismatch(ln_f_trial)).max())
                if float(np.abs(gradient).max()) < NEWTON_ROUNDING and closer < float(np.abs(gradient).max()):
                    break
            scale *= 0.5
        else:
            return None
        n_free, moles = trial_free, trial
        g, ln_f, phases, totals, x = g_trial, ln_f_trial, phases_trial, totals_trial, x_trial
    return None


def _descent_step(hessian: np.ndarray, gradient: np.ndarray) -> np.ndarray | None:
    """The Newton step -H^-1 g where H is positive definite. Where it is not
    (a phase inside its spinodal, on its way to another make-up) each
    curvature is taken by its magnitude, floored at 1e-6 of the largest, so
    that the step descends; and since there the gradient can be all but
    zero (a saddle of G), the direction of negative curvature is added too,
    downhill, as long as the Newton part (the line search shortens both).
    None if the step is not finite."""
    curvatures, vectors = np.linalg.eigh(0.5 * (hessian + hessian.T))
    largest = float(np.abs(curvatures).max())
    if not (math.isfinite(largest) and largest > 0.0):
        return None
    along = vectors.T @ gradient
    step = -vectors @ (along / np.maximum(np.abs(curvatures), 1e-14 * largest))
    if curvatures[0] < 0.0:
        escape = vectors[:, 0] * (-1.0 if along[0] > 0.0 else 1.0)
        step = step + escape * max(float(np.linalg.norm(step)), 1e-3)
    return step if np.all(np.isfinite(step)) else None


# --- N + 1 phases of N components at fixed pressure: constants and result ---------
INVARIANT_NEWTON_STEPS = 30
INVARIANT_CONVERGED = 1e-11  # max |residual| in ln f at which the Newton solve stops (verified to 1e-8 after)
INVARIANT_MAX_T_STEP = 0.05  # at most this fraction of T in one Newton step
INVARIANT_MAX_U_STEP = 2.0  # and at most this much in a phase's ln(x_j / x_main)


@dataclass(frozen=True)
class CoexistingPhases:
    """N + 1 phases of N components at fixed P (a binary's three):
    ``temperature`` (K, the one temperature at which they coexist), ``compositions`` (rows of mole
    fractions) and the volume ``roots`` ("vapor" or "liquid") each was
    solved on."""

    temperature: float
    compositions: np.ndarray
    roots: tuple[str, ...]


def invariant_point(kernel: CubicKernel, pressure: float, temperature: float, starts: list[np.ndarray],
                    roots: tuple[str, ...]) -> CoexistingPhases | None:
    """The temperature (K) at pressure (Pa) at which N + 1 phases of N
    components coexist (a ternary's four: water, two liquids and a vapor of
    oxygen and carbonyl sulfide), and their compositions: by the phase rule
    a point (for a binary, its three phases), by Newton's method on ln f_i(phase 0) = ln f_i(phase k), k = 1..N, in T and each
    phase's u_j = ln(x_j / x_r) (r the phase's main component, so that
    traces keep full precision), each phase on its volume root (``roots``),
    from ``temperature`` and the ``starts`` (N + 1 rows). None if Newton
    does not converge."""
    size = kernel.size
    count = size + 1
    t = float(temperature)
    starts = [np.asarray(row, dtype=float) / float(np.sum(row)) for row in starts]
    main = [int(np.argmax(row)) for row in starts]
    others = [[j for j in range(size) if j != main[k]] for k in range(count)]
    u = [np.log(starts[k][others[k]] / starts[k][main[k]]) for k in range(count)]
    width = size - 1
    for _ in range(INVARIANT_NEWTON_STEPS):
        state = kernel.at(t, pressure)
        rows, ln_f, d_du, d_dt = [], [], [], []
        for k in range(count):
            ratios = np.ones(size)
            ratios[others[k]] = np.exp(u[k])
            row = ratios / ratios.sum()
            props = state.derivatives(row, roots[k])
            rows.append(row)
            ln_f.append(np.log(row) + props.ln_phi)
            free = others[k]
            # d ln x_i / d u_j = delta_ij - x_j; d ln phi_i / d u_j = Phi_ij x_j - x_j (Phi x)_i
            phi = props.dlnphi_dn
            block = -np.outer(np.ones(size), row[free]) + phi[:, free] * row[free] - np.outer(phi @ row, row[free])
            block[free, np.arange(width)] += 1.0
            d_du.append(block)
            d_dt.append(props.dlnphi_dT)
        residual = np.concatenate([ln_f[0] - ln_f[k] for k in range(1, count)])
        if not np.all(np.isfinite(residual)):
            return None
        if float(np.abs(residual).max()) < INVARIANT_CONVERGED:
            return CoexistingPhases(t, np.array(rows), tuple(roots))
        jacobian = np.zeros((size * size, 1 + count * width))
        for k in range(1, count):
            band = slice((k - 1) * size, k * size)
            jacobian[band, 0] = d_dt[0] - d_dt[k]
            jacobian[band, 1:1 + width] = d_du[0]
            jacobian[band, 1 + k * width:1 + (k + 1) * width] = -d_du[k]
        try:
            step = solve(jacobian, -residual)
        except np.linalg.LinAlgError:
            return None  # two of the phases have become one (or the roots have met)
        if not np.all(np.isfinite(step)):
            return None
        scale = 1.0
        if abs(step[0]) > INVARIANT_MAX_T_STEP * t:
            scale = INVARIANT_MAX_T_STEP * t / abs(step[0])
        largest = float(np.abs(step[1:]).max())
        if largest > INVARIANT_MAX_U_STEP:
            scale = min(scale, INVARIANT_MAX_U_STEP / largest)
        t += scale * step[0]
        u = [u[k] + scale * step[1 + k * width:1 + (k + 1) * width] for k in range(count)]
    return None
