"""The tangent-plane stability test of a feed at fixed T and P
(Michelsen, Fluid Phase Equilib. 9 (1982) 1-19).

A feed z is unstable when some trial composition w has a negative
tangent-plane distance. In terms of unnormalised trial moles W,

    tm(W) = 1 + sum_i W_i (ln W_i + ln phi_i(w) - d_i - 1),
    d_i = ln z_i + ln phi_i(z),

whose stationary points satisfy ln W_i = d_i - ln phi_i(w). Two trials are
started from Wilson's K-values, one vapor-like (W = z K) and one liquid-like
(W = z / K); where a second liquid may form (components of very different
cohesion, e.g. water with hydrocarbons), near-pure trials of those
components follow, as Michelsen and Mollerup (2007, ch. 10) advise. Each is iterated by successive substitution, with Michelsen's
dominant-eigenvalue extrapolation every few steps, and finished by Newton's
method on alpha_i = 2 sqrt(W_i) when substitution is slow. Any W with
tm < 0 proves instability; stability needs every trial to end at the
trivial solution (W = z) or at a stationary point with tm >= 0.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from .flash_support import solve
from .fugacity import CubicAtTP

UNSTABLE_TM = -1e-9  # tm below this proves instability beyond rounding
TRIVIAL_DISTANCE = 1e-4  # sum (ln W - ln z)^2 below this (with tm >= 0): the trial is falling onto the feed
CONVERGED_STEP = 1e-10  # max |delta ln W| of a converged stationary point
SETTLED_STEP = 0.1  # a trial whose steps are this small ...
SETTLED_MARGIN = 1e3  # ... and whose tm exceeds this many times sum W delta^2 has settled above zero
SUBSTITUTION_STEPS = 40  # before the Newton finish
NEWTON_STEPS = 30
ACCELERATE_EVERY = 5
# Extra near-pure liquid trials where condensable components (Tc above this
# fraction of T) differ in cohesion sqrt(a_c)/b by more than this ratio.
CONDENSABLE_TR = 0.6
# 1.25, not higher: under both cubics (no k_ij) a second liquid that the
# Wilson-seeded trials miss forms in ammonia with isobutane (contrast 1.77) or
# 1-butene (1.68), ethanol with ethylbenzene and isobutane (1.32), nitrous oxide
# with methanol, oxygen and argon (1.29), each found by
# tests/equipment/test_outlet_phase.py. Natural gases of light hydrocarbons
# and nitrogen (at most 1.2) stay below; with CO2 (1.27) they are tested.
LIQUID_CONTRAST = 1.25
SCREEN_STEPS = 3  # substitution steps of a near-pure screening trial
NEAR_PURE = 0.9  # mole fraction above which a stationary point counts as nearly pure
PERMANENT_GAS_TC = 100.0  # K: hydrogen, helium, neon never condense in process streams
LN_W_LIMIT = 200.0  # ln W is held above -this, so that no trial mole number underflows to zero
LN_W_HIGH = 50.0  # and below this: a trial of e^50 moles per mole of feed has run away
MAX_EIGEN = 0.95  # dominant-eigenvalue extrapolation only where substitution is not creeping
MAX_JUMP = 5.0  # and by at most this much in any ln W
MIN_CURVATURE = 1e-3  # the Newton finish's curvatures are taken as at least this (see _descent_step)


@dataclass(frozen=True)
class TrialResult:
    """Where one trial phase ended: its normalised composition, tm, and how."""

    kind: str  # "vapor-like" or "liquid-like"
    composition: np.ndarray
    tm: float
    outcome: str  # "unstable", "trivial", "stationary"
    iterations: int


@dataclass(frozen=True)
class StabilityResult:
    """Outcome of the stability test at one T (K), P (Pa) and feed.

    ``k_estimate`` (y/x) seeds a two-phase flash when the feed is unstable.
    ``slow`` marks a test whose trials converged slowly toward the feed:
    the sign of a near-critical state.
    """

    stable: bool
    trials: tuple[TrialResult, ...]
    k_estimate: np.ndarray | None
    slow: bool


class StabilityError(ArithmeticError):
    """A trial that neither proved instability nor reached a stationary point."""


def _trial(state: CubicAtTP, z: np.ndarray, ln_z: np.ndarray, d: np.ndarray, ln_w: np.ndarray, kind: str) -> TrialResult:
    previous_tm = math.inf
    previous_delta = None
    saved_plain = None
    iterations = 0
    for iterations in range(1, SUBSTITUTION_STEPS + 1):
        ln_w = np.minimum(np.maximum(ln_w, -LN_W_LIMIT), LN_W_HIGH)
        w_moles = np.exp(ln_w)
        total = float(w_moles.sum())
        ln_phi, _, _ = state.ln_phi(w_moles * (1.0 / total))
        ln_w_new = d - ln_phi
        delta = ln_w_new - ln_w
        # tm = 1 + sum W (ln W + ln phi - d - 1) = 1 - sum W - sum W delta
        tm = 1.0 - total - float(w_moles @ delta)
        if saved_plain is not None and tm > previous_tm:
            # The extrapolation overshot: return to the plain iterate.
            ln_w = saved_plain
            saved_plain = None
            previous_delta = None
            continue
        saved_plain = None
        if tm < UNSTABLE_TM:
            return TrialResult(kind, w_moles / total, tm, "unstable", iterations)
        gap = ln_w_new - ln_z
        if tm >= 0.0 and float(gap @ gap) < TRIVIAL_DISTANCE:
            return TrialResult(kind, z, 0.0, "trivial", iterations)
        step = float(np.abs(delta).max())
        if step < CONVERGED_STEP or (step < SETTLED_STEP and tm > SETTLED_MARGIN * float(w_moles @ (delta * delta))):
            # Substitution lowers tm at every step, by about sum W delta^2 and
            # geometrically less at each: a tm this far above that stays positive.
            return TrialResult(kind, w_moles / total, tm, "stationary", iterations)
        previous_tm = tm
        if previous_delta is not None and iterations % ACCELERATE_EVERY == 0:
            eigen = float(delta @ delta) / float(previous_delta @ delta) if float(previous_delta @ delta) != 0.0 else 0.0
            if 0.0 < eigen < MAX_EIGEN:
                saved_plain = ln_w_new
                jump = delta * (eigen / (1.0 - eigen))
                largest = float(np.abs(jump).max())
                if largest > MAX_JUMP:
                    jump *= MAX_JUMP / largest
                ln_w = ln_w_new + jump
                previous_delta = None
                continue
        previous_delta = delta
        ln_w = ln_w_new
    if saved_plain is not None:
        ln_w = saved_plain  # never hand an untested extrapolation to Newton's method
    return _newton_trial(state, z, ln_z, d, ln_w, kind, iterations)


def _newton_trial(state, z, ln_z, d, ln_w, kind, done):
    """Second-order finish on alpha = 2 sqrt(W), with step halving on tm."""
    w_moles = np.exp(np.clip(ln_w, -LN_W_LIMIT, LN_W_LIMIT))
    for step_count in range(1, NEWTON_STEPS + 1):
        total = float(w_moles.sum())
        props = state.derivatives(w_moles / total)
        ln_phi = props.ln_phi
        ln_w = np.log(w_moles)
        residual = ln_w + ln_phi - d
        tm = 1.0 + float(w_moles @ (residual - 1.0))
        if tm < UNSTABLE_TM:
            return TrialResult(kind, w_moles / total, tm, "unstable", done + step_count)
        distance = float((ln_w - ln_z) @ (ln_w - ln_z))
        if distance < TRIVIAL_DISTANCE and tm >= 0.0:
            return TrialResult(kind, z, 0.0, "trivial", done + step_count)
        if float(np.abs(residual).max()) < CONVERGED_STEP:
            return TrialResult(kind, w_moles / total, tm, "stationary", done + step_count)
        root_w = np.sqrt(w_moles)
        gradient = root_w * residual
        hessian = np.eye(len(z)) + np.outer(root_w, root_w) * props.dlnphi_dn / total
        step = _descent_step(hessian, gradient)
        alpha = 2.0 * root_w
        for _ in range(20):
            trial_alpha = alpha + step
            trial_w = np.maximum(trial_alpha, 1e-80) ** 2 / 4.0
            trial_total = float(trial_w.sum())
            trial_phi, _, _ = state.ln_phi(trial_w / trial_total)
            trial_tm = 1.0 + float(trial_w @ (np.log(trial_w) + trial_phi - d - 1.0))
            if trial_tm <= tm + 1e-14 * max(1.0, abs(tm)):
                break
            step *= 0.5
        w_moles = trial_w
    raise StabilityError(f"{kind} trial phase did not converge in {done + NEWTON_STEPS} iterations")


def _descent_step(hessian: np.ndarray, gradient: np.ndarray) -> np.ndarray:
    """Newton's step on tm(alpha), or where the Hessian is not positive
    definite (a trial near the spinodal, close to a near-critical feed:
    Newton's step then climbs, and halving it stalls the trial) the step
    with each curvature taken by its magnitude, floored at MIN_CURVATURE,
    which descends along every direction, the one of negative curvature too."""
    curvatures, vectors = np.linalg.eigh(hessian)
    if float(curvatures.min()) > MIN_CURVATURE:
        try:
            return solve(hessian, -gradient)
        except np.linalg.LinAlgError:
            pass
    along = vectors.T @ gradient
    return -(vectors @ (along / np.maximum(np.abs(curvatures), MIN_CURVATURE)))


def _second_liquid_candidates(state: CubicAtTP, z: np.ndarray, trials) -> list[int]:
    """Components whose near-pure liquid is worth a trial of its own: where
    the condensable components' cohesion sqrt(a_c)/b (a regular-solution
    measure) differs by more than LIQUID_CONTRAST, a second liquid may form
    that Wilson-seeded trials miss (water with hydrocarbons; CO2, H2S or
    ammonia with heavier ones). Ordered from the most cohesive; components
    of which a stationary point found is nearly pure are left out."""
    kernel = state.kernel
    if kernel.size < 2:
        return []
    condensable = kernel.tc > CONDENSABLE_TR * state.temperature
    if np.count_nonzero(condensable) < 2:
        return []
    cohesion = kernel.sqrt_ac / kernel.b
    if float(cohesion[condensable].max()) < LIQUID_CONTRAST * float(cohesion[condensable].min()):
        return []
    # A near-pure start would only find again a stationary point that is itself
    # nearly pure in its component; one merely rich in it (a vapor-like point of
    # half ammonia, say) says nothing of the near-pure liquid.
    dominant = {int(np.argmax(t.composition)) for t in trials
                if t.outcome == "stationary" and float(t.composition.max()) >= NEAR_PURE}
    order = np.argsort(-cohesion)
    return [int(i) for i in order if condensable[i] and int(i) not in dominant]


def _near_pure(size: int, component: int) -> np.ndarray:
    start = np.full(size, 1e-3 / size)
    start[component] += 1.0 - 1e-3
    return start


def _screened_components(state: CubicAtTP, z: np.ndarray, trials, done: list[int],
                         liquid: bool | None = None) -> list[int]:
    """Condensable components whose near-pure liquid gets a short screen:
    every one not tried in full already, nor nearly pure in a stationary
    point found, when the tested phase is a liquid. The cohesion contrast of
    _second_liquid_candidates is a rough guide (ethanol with hydrocarbons
    splits into two liquids at a contrast of 1.3, under the cubics' own
    equilibrium); the screen costs SCREEN_STEPS evaluations of ln phi per
    component."""
    if state.kernel.size < 2:
        return []
    if liquid is None:
        liquid = state.ln_phi(z)[2]
    if not liquid:
        return []
    condensable = state.kernel.tc > CONDENSABLE_TR * state.temperature
    pure = {int(np.argmax(t.composition)) for t in trials
            if t.outcome == "stationary" and float(t.composition.max()) >= NEAR_PURE}
    return [i for i in range(state.kernel.size) if condensable[i] and i not in done and i not in pure]


def _screen(state: CubicAtTP, z, d, components: list[int]) -> TrialResult | None:
    """Near-pure trials of ``components``, all at once, cut short at
    SCREEN_STEPS substitution steps: the first whose tm falls below zero by
    then as an unstable TrialResult, else None (a miscible component's trial
    only creeps toward the feed, and following it to the end would cost a
    full trial each)."""
    if not components:
        return None
    ln_w = np.log(np.array([_near_pure(len(z), i) for i in components]))
    for _ in range(SCREEN_STEPS):
        w_moles = np.exp(ln_w)
        totals = w_moles.sum(axis=1)
        ln_phi = state.ln_phi_rows(w_moles / totals[:, None])
        ln_w_new = np.minimum(np.maximum(d - ln_phi, -LN_W_LIMIT), LN_W_HIGH)
        tm = 1.0 - totals - np.einsum("ij,ij->i", w_moles, ln_w_new - ln_w)
        tm[~np.isfinite(tm)] = np.inf  # a trial that broke down proves nothing
        lowest = int(np.argmin(tm))
        if tm[lowest] < UNSTABLE_TM:
            return TrialResult("liquid-like", w_moles[lowest] / totals[lowest], float(tm[lowest]), "unstable",
                               SCREEN_STEPS)
        ln_w = ln_w_new
    return None


def second_liquid_possible(kernel) -> bool:
    """Whether a mixture can form two liquids at all: its components, leaving
    out the permanent gases (Tc below PERMANENT_GAS_TC), differ in cohesion
    sqrt(a_c)/b by more than LIQUID_CONTRAST."""
    if kernel.size < 2:
        return False
    condensable = kernel.tc > PERMANENT_GAS_TC
    if np.count_nonzero(condensable) < 2:
        return False
    cohesion = kernel.sqrt_ac / kernel.b
    return float(cohesion[condensable].max()) >= LIQUID_CONTRAST * float(cohesion[condensable].min())


def stability_test(state: CubicAtTP, z: np.ndarray, k_wilson: np.ndarray,
                   ln_phi_feed: np.ndarray | None = None, vapor_trial: bool = True,
                   seed: np.ndarray | None = None, extra_trials: bool = True,
                   feed_liquid: bool | None = None) -> StabilityResult:
    """Tangent-plane test of feed z (mole fractions over the kernel's active
    components, all positive) at the state's T and P, with trials seeded by
    the K-values ``k_wilson`` applied to z, or to ``seed`` where given (for a
    phase of a split, the feed: a nearly pure phase seeds poor trials, and
    the tangent plane is the same from every phase). ``vapor_trial`` False
    leaves out the vapor-like trial (testing a liquid already in equilibrium
    with a vapor, that trial only finds the vapor again); ``extra_trials``
    False leaves out the near-pure second-liquid trials; ``feed_liquid``
    (whether z sits on a liquid-like root, if the caller knows) spares an
    evaluation of ln phi."""
    ln_z = np.log(z)
    if ln_phi_feed is None:
        ln_phi_feed, _, feed_liquid = state.ln_phi(z)
    d = ln_z + ln_phi_feed
    ln_k = np.log(k_wilson)
    base = ln_z if seed is None else np.log(seed)
    liquid = _trial(state, z, ln_z, d, base - ln_k, "liquid-like")
    if vapor_trial:
        vapor = _trial(state, z, ln_z, d, base + ln_k, "vapor-like")
    else:
        vapor = TrialResult("vapor-like", z, 0.0, "skipped", 0)
    trials = (vapor, liquid)
    slow = any(t.outcome == "trivial" and t.iterations > SUBSTITUTION_STEPS // 2 for t in trials)
    unstable_vapor = vapor.outcome == "unstable"
    unstable_liquid = liquid.outcome == "unstable"
    if not (unstable_vapor or unstable_liquid):
        candidates = _second_liquid_candidates(state, z, trials) if extra_trials else []
        for candidate in candidates:
            extra = _trial(state, z, ln_z, d, np.log(_near_pure(len(z), candidate)), "liquid-like")
            trials = trials + (extra,)
            if extra.outcome == "unstable":
                return StabilityResult(False, trials, z / extra.composition, slow)
        if extra_trials:
            extra = _screen(state, z, d, _screened_components(state, z, trials, candidates, feed_liquid))
            if extra is not None:
                trials = trials + (extra,)
                return StabilityResult(False, trials, z / extra.composition, slow)
        return StabilityResult(True, trials, None, slow)
    if unstable_vapor and unstable_liquid:
        k = vapor.composition / liquid.composition
    elif unstable_vapor:
        k = vapor.composition / z
    else:
        k = z / liquid.composition
    return StabilityResult(False, trials, k, slow)
