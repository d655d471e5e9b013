"""Phase equilibrium of a stream: TP, PH, PS flashes, flashes at a given
vapor fraction, bubble and dew points, and pure-component saturation.

At fixed T and P a cubic-model feed is tested for stability by the tangent
plane (``thermo.stability``); an unstable feed is split into two phases
(``thermo.two_phase``), and for three or more components the phases of the
split are tested in turn: where a third phase would form (vapor with two
liquids, as water with hydrocarbons) the multiphase method takes over
(``thermo.three_phase``). A pure component has one phase except on its
saturation curve (``thermo.saturation``). PH and PS flashes search the
temperature with Newton's method inside a maintained bracket, falling back to
bisection, on the equilibrium enthalpy or entropy, whose temperature
derivative (phase change included) is analytic. For a pure component inside
its two-phase region the temperature is the saturation temperature and the
vapor fraction carries the enthalpy or entropy; for a binary whose target
falls in the jump at its three-phase temperature (a vapor and two liquids
coexist at one temperature per pressure), the state is the three phases at
that temperature and their amounts carry it; likewise N + 1 phases of N
components (a ternary's four), which the phase rule also fixes at one
temperature.

The ideal-gas and virial models have no liquid root: their streams are
single-phase vapor, and saturation requests on them raise FlashError.

Every result is verified before it is returned: equal ln fugacities to
1e-8 and closed mass balances for a split, the H or S target met to a tight
tolerance; otherwise FlashError names the state and what failed. Notes in
StreamState.notes: "near-critical" (a pure component within 2 % of Tc and
10 % of Pc, a split with all K within 20 % of 1, or a stability test whose
trials crept onto the feed), "three-phase", "liquid-liquid" (no vapor among
the phases). A stream of three phases still has the phase label
"two-phase" (more than one phase); its phases say which.

A vapor-fraction flash (flash_pv, flash_tv) looks first for the two-phase
point; where its liquid proves unstable (a second liquid, as water beside
hydrocarbons, would form), or the two-phase search fails for a feed that can
form two liquids, it finds the temperature (or pressure) at which the full
equilibrium, every phase included, has that vapor fraction. Where the vapor
fraction of a binary at fixed pressure jumps across the value asked (its
vapor and two liquids coexist at one temperature T*), the state is the three
phases at T*, the vapor's amount the fraction asked; any other jump (at
fixed temperature, or with more components) is refused with FlashError
saying so and what to specify instead.
Not handled: bubble and dew points (bubble_temperature and the rest,
envelope) look for two phases only and refuse where a second liquid would
form; four or more phases are not sought elsewhere.

SI units: K, Pa, J/mol, J/(mol K); compositions are mole-fraction vectors
over the model's mixture.
"""

from __future__ import annotations

import functools
import itertools
import math
from dataclasses import dataclass

import numpy as np

from .bubble_dew import EnvelopePoint, envelope_point
from .components import R
from .departures import LIQUID_LIKE, StateInputError, check_state
from .flash_support import (
    LIQUID_LIQUID,
    NEAR_CRITICAL,
    THREE_PHASE,
    FlashError,
    describe_state,
    lazy_description,
    near_critical_pure,
    near_critical_split,
    wilson_k,
)
from .fugacity import CubicAtTP, CubicKernel, kernel_for
from .models.base import PRESSURE_EXPLICIT
from .models.cubic import CubicModel
from .properties import combine_phases, phase_state, single_phase_state
from .saturation import (
    SaturationPoint,
    lee_kesler_pressure,
    saturation_point,
    saturation_pressure,
    saturation_temperature,
    saturation_temperature_point,
    vaporization_enthalpy,
)
from .stability import StabilityError, second_liquid_possible, stability_test
from .state import LIQUID, VAPOR, StreamState
from .three_phase import MERGE as MULTI_MERGE
from .three_phase import CoexistingPhases, MultiSplit, invariant_point, multiphase_split
from .two_phase import (
    Split,
    SplitError,
    split,
    split_at_target,
    split_from_nearby,
    substitution,
    temperature_derivative,
)

__all__ = [
    "FlashError",
    "flash_tp",
    "flash_ph",
    "flash_ps",
    "flash_pv",
    "flash_tv",
    "bubble_temperature",
    "bubble_pressure",
    "dew_temperature",
    "dew_pressure",
    "envelope",
    "saturation_point",
    "saturation_pressure",
    "saturation_temperature",
    "vaporization_enthalpy",
    "lee_kesler_pressure",
    "NEAR_CRITICAL",
]

VERIFY_FUGACITY = 1e-8  # max |ln f_y - ln f_x| of a returned split
VERIFY_BALANCE = 1e-10  # max |beta y + (1 - beta) x - z| of a returned split
ENTHALPY_TOLERANCE = 1e-5  # J/mol, PH target (about 1e-9 of a typical molar enthalpy scale, R T ~ 2 kJ/mol)
ENTROPY_TOLERANCE = 1e-8  # J/(mol K), PS target
T_SEARCH_LOW = 10.0  # K, the temperature search of PH and PS flashes stays inside
T_SEARCH_HIGH = 5000.0  # K
FAST_PASS_STEPS = 12  # one-phase temperature search before the equilibrium search takes over
LAST_STEP = 1e-3  # K: a Newton step this short in the one-phase search lands within the tolerance


_KEYWORD_SPECS = (("temperature", "T"), ("pressure", "P"), ("vapor_fraction", "vapor_fraction"))


def _guarded(operation: str, spec_names: tuple[str, ...], x_index: int | None = None):
    """Turn a numerical breakdown deep inside a flash (overflow, a singular
    matrix, a cubic without a root) into a FlashError naming the request;
    numpy's floating-point warnings are silenced inside, since every answer
    is verified before it is returned. ``spec_names`` name the positional
    arguments after the model; the composition is the one after them, or
    at ``x_index``."""

    def decorate(function):
        @functools.wraps(function)
        def guarded(model, *args, **kwargs):
            with np.errstate(all="ignore"):
                try:
                    return function(model, *args, **kwargs)
                except (FlashError, StateInputError):
                    raise
                except (ArithmeticError, np.linalg.LinAlgError, ValueError) as error:
                    values = dict(zip(spec_names, args))
                    values.update({short: kwargs[long] for long, short in _KEYWORD_SPECS if long in kwargs})
                    spec = {k: float(v) for k, v in values.items() if isinstance(v, (int, float))}
                    at = len(spec_names) if x_index is None else x_index
                    x = np.asarray(args[at] if len(args) > at else kwargs.get("x", []), dtype=float)
                    raise FlashError(
                        f"{operation} of {describe_state(model, x, **spec)}: numerical breakdown ({error})"
                    ) from None

        return guarded

    return decorate


# --- preparing a request -------------------------------------------------------
def _prepare(model, temperature, pressure, x):
    """Validated, normalised composition and the indices of its nonzero components."""
    x = np.asarray(x, dtype=float)
    if x.shape != (model.mixture.size,):
        raise StateInputError(
            f"composition has {x.size} entries but the mixture has {model.mixture.size} components "
            f"({', '.join(model.mixture.names)})"
        )
    check_state(temperature, pressure, x)
    z = x / x.sum()
    active = tuple(int(i) for i in np.flatnonzero(z > 0.0))
    return z, active


def _is_cubic(model) -> bool:
    return model.family == PRESSURE_EXPLICIT and isinstance(model, CubicModel)


def _embed(values: np.ndarray, active: tuple[int, ...], size: int) -> np.ndarray:
    full = np.zeros(size)
    full[list(active)] = values
    return full


# --- equilibrium at fixed T and P over the active components -------------------
@dataclass(frozen=True)
class _Equilibrium:
    """The equilibrium at one (T, P): one phase (``split`` and ``multi``
    None, ``root`` the chosen volume root), a two-phase split, or a split
    found by the multiphase method (``multi``: three phases, or a different
    pair than the two-phase flash found); ``notes`` for the stream."""

    state: CubicAtTP
    z: np.ndarray
    split: Split | None
    root: str
    notes: tuple[str, ...]
    multi: MultiSplit | None = None


def _equilibrium(kernel: CubicKernel, temperature: float, pressure: float, z: np.ndarray, where: str,
                 warm: tuple[np.ndarray, float] | None = None) -> _Equilibrium:
    """Phase equilibrium of feed z (over the kernel's components, all
    positive); ``warm`` = (ln K, vapor fraction) from a nearby split, tried
    first (kept only if it lowers the Gibbs energy below the feed's)."""
    state = kernel.at(temperature, pressure)
    if kernel.size == 1:
        notes = (NEAR_CRITICAL,) if near_critical_pure(float(kernel.tc[0]), float(kernel.pc[0]), temperature, pressure) else ()
        return _Equilibrium(state, z, None, "auto", notes)
    ln_phi_feed, _, feed_liquid = state.ln_phi(z)
    if warm is not None:
        result = split_from_nearby(state, z, warm[0], warm[1])
        if result is not None and _lowers_gibbs(state, z, ln_phi_feed, result):
            return _from_split(state, z, result, where)
    stability = _stability(kernel, state, z, ln_phi_feed, where, feed_liquid)
    if stability.stable:
        return _one_phase(state, z, stability)
    return _split_unstable(kernel, state, z, stability, where)


def _stability(kernel: CubicKernel, state: CubicAtTP, z: np.ndarray, ln_phi_feed: np.ndarray, where,
               feed_liquid: bool | None = None):
    """The tangent-plane test of feed z at the state's T and P, Wilson-seeded."""
    try:
        return stability_test(state, z, wilson_k(kernel.tc, kernel.pc, kernel.omega, state.temperature,
                                                 state.pressure), ln_phi_feed, feed_liquid=feed_liquid)
    except StabilityError as error:
        raise FlashError(f"{where}: stability test failed: {error}") from None


def _one_phase(state: CubicAtTP, z: np.ndarray, stability) -> _Equilibrium:
    return _Equilibrium(state, z, None, "auto", (NEAR_CRITICAL,) if stability.slow else ())


def _split_unstable(kernel: CubicKernel, state: CubicAtTP, z: np.ndarray, stability, where) -> _Equilibrium:
    """The equilibrium of a feed the stability test found unstable."""
    result = None
    for start in (stability.k_estimate, wilson_k(kernel.tc, kernel.pc, kernel.omega, state.temperature, state.pressure)):
        try:
            result = split(state, z, start)
        except SplitError:
            result = None
        if result is not None:
            break
    if result is None:
        # Substitution on K fell back onto the feed (as it can between two liquids
        # of very different make-up): the multiphase method from the trial phase
        # that proved the instability and the rest of the feed.
        trial = next(t.composition for t in stability.trials if t.outcome == "unstable")
        rest = np.maximum(z - 0.5 * trial, 1e-3 * z)
        found = multiphase_split(state, z, [rest, trial])
        if found is not None and len(found.amounts) >= 2:
            return _from_multi(state, z, found, where)
        raise FlashError(
            f"{where}: the stability test found the feed unstable, but the two-phase split "
            "collapsed to one phase or did not converge"
        )
    return _from_split(state, z, result, where)


def _lowers_gibbs(state, z, ln_phi_feed, result: Split) -> bool:
    g_feed = float(z @ (np.log(z) + ln_phi_feed))
    g_split = (1.0 - result.beta) * float(result.x @ (np.log(result.x) + result.props_x.ln_phi)) + result.beta * float(
        result.y @ (np.log(result.y) + result.props_y.ln_phi)
    )
    return g_split < g_feed - 1e-12


def _from_split(state: CubicAtTP, z: np.ndarray, result: Split, where: str) -> _Equilibrium:
    _verify_split(state, z, result, where)
    notes = (NEAR_CRITICAL,) if near_critical_split(result.ln_k) else ()
    if _both_liquid(state, result):
        notes = notes + (LIQUID_LIQUID,)
    return _Equilibrium(state, z, result, "auto", notes)


def _both_liquid(state: CubicAtTP, result: Split) -> bool:
    """Whether a split is liquid-liquid: both roots liquid-like, and the
    lighter phase below its own (Kay's rule) pseudo-critical temperature, so
    that a dense vapor near a critical point is still called vapor."""
    if not (result.props_x.liquid_like and result.props_y.liquid_like):
        return False
    lighter = result.y if result.props_y.molar_volume >= result.props_x.molar_volume else result.x
    return state.temperature < float(lighter @ state.kernel.tc)


def _verify_split(state: CubicAtTP, z: np.ndarray, result: Split, where: str) -> None:
    # fugacity_error was evaluated from ln(phi) at the very compositions returned
    mismatch = result.fugacity_error
    balance = float(np.abs(result.beta * result.y + (1.0 - result.beta) * result.x - z).max())
    if not (mismatch < VERIFY_FUGACITY and balance < VERIFY_BALANCE and 0.0 < result.beta < 1.0):
        raise FlashError(
            f"{where}: the two-phase split failed verification (ln-fugacity mismatch {mismatch:.3g}, "
            f"mass-balance error {balance:.3g}, vapor fraction {result.beta:.6g})"
        )


def _third_phase(kernel: CubicKernel, eq: _Equilibrium, where, warm: MultiSplit | None = None,
                 test_warm: bool = True) -> _Equilibrium:
    """The equilibrium once the phases of a two-phase answer are tested for
    stability themselves: where a third phase would form (vapor and two
    liquids), Michelsen's multiphase split from the two phases and the trial
    phase that proved the instability; otherwise ``eq`` unchanged. A
    binary's split is tested too: where its phase proves unstable the split
    is a metastable one (water with n-hexane at 5 bar once came out 60 %
    vapor at 375 K, where two liquids have the lower Gibbs energy), and the
    multiphase method finds the stable pair. ``test_warm`` False returns a
    split reached from ``warm`` untested (for a finite-difference neighbour
    of a state that is tested itself)."""
    if kernel.size < 2:
        return eq
    state = eq.state
    if warm is not None:
        found = multiphase_split(state, eq.z, list(warm.compositions))
        if found is not None and len(found.amounts) == len(warm.amounts):
            # Carried on from a neighbouring temperature the phases can outlast
            # their range (two liquids of water and n-octane were once kept 7 K
            # past where the vapor forms): they are tested like any other answer.
            eq = _from_multi(state, eq.z, found, where)
            if not test_warm:
                return eq
    if eq.split is None and eq.multi is None:
        return eq
    phases = [eq.split.y, eq.split.x] if eq.split is not None else list(eq.multi.compositions)
    has_vapor = eq.split is not None and not eq.split.props_y.liquid_like and LIQUID_LIQUID not in eq.notes
    k_wilson = wilson_k(kernel.tc, kernel.pc, kernel.omega, state.temperature, state.pressure)
    for _ in range(2):
        try:
            # Trials seeded from the phase itself, then (a nearly pure phase seeds
            # poorly) from the feed, against the same tangent plane.
            stability = stability_test(state, phases[-1], k_wilson, vapor_trial=not has_vapor)
            if stability.stable and second_liquid_possible(kernel):
                stability = stability_test(state, phases[-1], k_wilson, seed=eq.z, extra_trials=False)
                if stability.stable and has_vapor:
                    # A second liquid close to the vapor in make-up (carbon dioxide condensing
                    # beside water just below the three-phase temperature) is reached only by
                    # the vapor's own liquid-like trial; from the water it falls onto the vapor.
                    stability = stability_test(state, phases[0], k_wilson, vapor_trial=False, extra_trials=False)
            if stability.stable and eq.multi is not None:
                # Each phase of a multiphase split seeds trials of its own: near a
                # four-phase temperature of a ternary (water, oxygen and carbonyl
                # sulfide at 46 bar) an oxygen-rich phase carried on from above
                # outlasted its range, and only the water's trials found the liquid
                # that replaces it.
                for phase in phases[:-1]:
                    stability = stability_test(state, phase, k_wilson, extra_trials=False)
                    if not stability.stable:
                        break
        except StabilityError:
            return eq
        if stability.stable:
            return eq
        trial = next(t.composition for t in stability.trials if t.outcome == "unstable")
        if len(phases) + 1 > kernel.size:
            # More phases than components coexist at one temperature only (a
            # binary's three, a ternary's four): the stable state is the trial
            # with all but one of the phases.
            found = _lowest_set(state, eq.z, phases, trial, kernel.size - 1)
        else:
            found = multiphase_split(state, eq.z, phases + [trial])
        if found is not None and len(found.amounts) == 1:
            # Every pairing fell back onto the feed: phases carried on from a
            # neighbouring temperature had outlasted the feed's own single phase
            # (water with n-octane 7 K above its three-phase temperature, all
            # vapor by then). The feed stands if it passes its own test.
            ln_phi_feed, _, feed_liquid = state.ln_phi(eq.z)
            feed_test = _stability(kernel, state, eq.z, ln_phi_feed, where, feed_liquid)
            if feed_test.stable:
                return _one_phase(state, eq.z, feed_test)
            found = None
        if found is None:
            raise FlashError(
                f"{where}: the two-phase answer is unstable (a third phase would form), "
                "and the multiphase split did not converge"
            )
        eq = _from_multi(state, eq.z, found, where)
        phases = list(found.compositions)
    return eq


def _lowest_set(state: CubicAtTP, z: np.ndarray, phases, trial, keep: int) -> MultiSplit | None:
    """The split of lowest Gibbs energy that the multiphase method reaches
    from the trial phase with each choice of ``keep`` of ``phases`` (one
    phase, the feed, where every choice falls back onto it); None if none
    converges."""
    best, best_g = None, math.inf
    for chosen in itertools.combinations(phases, keep):
        try:
            found = multiphase_split(state, z, list(chosen) + [trial])
        except (ArithmeticError, np.linalg.LinAlgError):
            found = None
        if found is None:
            continue
        g = sum(float(a) * float(row @ (np.log(row) + state.ln_phi(row)[0]))
                for a, row in zip(found.amounts, found.compositions))
        if g < best_g or (best is not None and len(best.amounts) < 2 <= len(found.amounts) and g <= best_g + 1e-12):
            best, best_g = found, g
    return best


def _from_multi(state: CubicAtTP, z: np.ndarray, found: MultiSplit, where) -> _Equilibrium:
    balance = float(np.abs(found.amounts @ found.compositions - z).max())
    if not (found.fugacity_error < VERIFY_FUGACITY and balance < VERIFY_BALANCE):
        raise FlashError(
            f"{where}: the multiphase split failed verification (ln-fugacity mismatch "
            f"{found.fugacity_error:.3g}, mass-balance error {balance:.3g})"
        )
    notes = (THREE_PHASE,) if len(found.amounts) >= 3 else ()
    return _Equilibrium(state, z, None, "auto", notes, found)


# --- building stream states ----------------------------------------------------
def _stream(model, temperature: float, pressure: float, z_full: np.ndarray, active, eq: _Equilibrium) -> StreamState:
    full = kernel_for(model).at(temperature, pressure)
    size = model.mixture.size
    if eq.multi is not None:
        return _multi_stream(model, full, temperature, pressure, z_full, active, eq)
    if eq.split is None:
        res = full.residual(z_full, eq.root)
        label = LIQUID if res.root == LIQUID_LIKE else VAPOR
        phase = phase_state(model, temperature, pressure, z_full, label, 1.0, res)
        return combine_phases(model, temperature, pressure, z_full, (phase,), eq.notes)
    result = eq.split
    x_full = _embed(result.x, active, size)
    y_full = _embed(result.y, active, size)
    res_x = full.residual(x_full)
    res_y = full.residual(y_full)
    both_liquid = LIQUID_LIQUID in eq.notes
    y_lighter = res_y.molar_volume >= res_x.molar_volume
    light_label, heavy_label = (LIQUID, LIQUID) if both_liquid else (VAPOR, LIQUID)
    label_y, label_x = (light_label, heavy_label) if y_lighter else (heavy_label, light_label)
    phase_y = phase_state(model, temperature, pressure, y_full, label_y, result.beta, res_y)
    phase_x = phase_state(model, temperature, pressure, x_full, label_x, 1.0 - result.beta, res_x)
    phases = (phase_y, phase_x) if label_y == VAPOR else (phase_x, phase_y)
    return combine_phases(model, temperature, pressure, z_full, phases, eq.notes)


def _multi_stream(model, full, temperature, pressure, z_full, active, eq: _Equilibrium) -> StreamState:
    """Phases of a multiphase split: the lightest is the vapor when its root
    is vapor-like or it lies above its own pseudo-critical temperature; the
    rest are liquids."""
    size = model.mixture.size
    rows = [_embed(row, active, size) for row in eq.multi.compositions]
    residuals = [full.residual(row) for row in rows]
    lightest = int(np.argmax([r.molar_volume for r in residuals]))
    light = residuals[lightest]
    vapor_like = light.root != LIQUID_LIKE or temperature >= float(rows[lightest] @ model.mixture.critical_temperature)
    phases = []
    for k, (row, res) in enumerate(zip(rows, residuals)):
        label = VAPOR if (k == lightest and vapor_like) else LIQUID
        phases.append(phase_state(model, temperature, pressure, row, label, float(eq.multi.amounts[k]), res))
    phases.sort(key=lambda p: p.label != VAPOR)
    notes = eq.notes
    if len(phases) > 1 and not any(p.label == VAPOR for p in phases):
        notes = notes + (LIQUID_LIQUID,)
    return combine_phases(model, temperature, pressure, z_full, tuple(phases), notes)


def _saturated_stream(model, point: SaturationPoint, z_full: np.ndarray, active, beta: float,
                      notes: tuple[str, ...]) -> StreamState:
    """A pure component at its saturation point with vapor fraction beta."""
    t, p = point.temperature, point.pressure
    full = kernel_for(model).at(t, p)
    phases = []
    if beta > 0.0:
        phases.append(phase_state(model, t, p, z_full, VAPOR, beta, full.residual(z_full, "vapor")))
    if beta < 1.0:
        phases.append(phase_state(model, t, p, z_full, LIQUID, 1.0 - beta, full.residual(z_full, "liquid")))
    return combine_phases(model, t, p, z_full, tuple(phases), notes)


# --- TP flash ----------------------------------------------------------------
@_guarded("TP flash", ("T", "P"))
def flash_tp(model, temperature: float, pressure: float, x: np.ndarray) -> StreamState:
    """Equilibrium state at temperature (K), pressure (Pa) and overall mole
    fractions x: one phase, or a vapor-liquid split.

    Ideal-gas and virial streams are single-phase vapor. Raises FlashError
    when no verified answer is reached; StateInputError for impossible input.
    """
    z, active = _prepare(model, temperature, pressure, x)
    if not _is_cubic(model):
        return single_phase_state(model, temperature, pressure, z)
    kernel = kernel_for(model, active)
    where = lazy_description("TP flash of ", model, z, T=temperature, P=pressure)
    eq = _equilibrium(kernel, temperature, pressure, z[list(active)], where)
    eq = _third_phase(kernel, eq, where)
    return _stream(model, temperature, pressure, z, active, eq)


# --- PH and PS flashes -----------------------------------------------------------
@_guarded("PH flash", ("P", "H"))
def flash_ph(model, pressure: float, enthalpy: float, x: np.ndarray, guess: float = 300.0) -> StreamState:
    """Equilibrium state at pressure (Pa) with molar enthalpy ``enthalpy``
    (J/mol, the engine's reference state); ``guess`` (K) starts the
    temperature search. Valves use it."""
    return _flash_p_spec(model, pressure, enthalpy, x, guess, "H")


@_guarded("PS flash", ("P", "S"))
def flash_ps(model, pressure: float, entropy: float, x: np.ndarray, guess: float = 300.0) -> StreamState:
    """Equilibrium state at pressure (Pa) with molar entropy ``entropy``
    (J/(mol K)); ``guess`` (K) starts the temperature search. Compressors
    and expanders use it."""
    return _flash_p_spec(model, pressure, entropy, x, guess, "S")


def _flash_p_spec(model, pressure, target, x, guess, kind) -> StreamState:
    if not (isinstance(target, (int, float)) and math.isfinite(target)):
        raise StateInputError(f"the {'enthalpy' if kind == 'H' else 'entropy'} target {target!r} is not a finite number")
    if not (math.isfinite(guess) and guess > 0.0):
        guess = 300.0
    z, active = _prepare(model, guess, pressure, x)
    spec = {"P": pressure, kind: target}
    where = lazy_description(("PH" if kind == "H" else "PS") + " flash of ", model, z, **spec)
    tolerance = ENTHALPY_TOLERANCE if kind == "H" else ENTROPY_TOLERANCE
    if not _is_cubic(model):
        return _single_model_p_spec(model, pressure, target, z, guess, kind, where, tolerance)
    kernel = kernel_for(model, active)
    za = z[list(active)]
    if kernel.size == 1:
        return _pure_p_spec(model, kernel, pressure, target, z, active, guess, kind, where, tolerance)
    return _mixture_p_spec(model, kernel, pressure, target, z, za, active, guess, kind, where, tolerance)


class _TemperatureJump(FlashError):
    """The temperature search closed its bracket on a jump in H or S: the
    payloads of the evaluations just below and just above it travel along,
    for a caller that can resolve the jump (a binary's three phases)."""

    def __init__(self, message: str, temperature: float, below, above):
        super().__init__(message)
        self.temperature = temperature
        self.below = below
        self.above = above


def _beyond_search_message(where: str, what: str, side: str, bound: float) -> str:
    """The refusal of a PH/PS target that no temperature of the search range
    (``bound`` in K, the end passed on ``side`` "below" or "above") meets,
    said as what it means for the unit: its outlet would lie beyond that end."""
    if bound == T_SEARCH_LOW:
        end = f"{bound:.6g} K, the lowest temperature statepath searches"
    elif bound == T_SEARCH_HIGH:
        end = f"{bound:.6g} K, the highest temperature statepath searches"
    else:  # a pure component's saturation temperature bounding one phase's search
        end = f"{bound:.6g} K, the saturation temperature at this pressure"
    # a heater's or exchanger's duty sets an outlet enthalpy; an outlet pressure and inlet set an entropy
    check = "check the duty's size and sign" if what == "enthalpy" else "check the outlet pressure and the inlet"
    return f"{where}: the {what} asked would take the stream {side} {end}: no real outlet state has this {what}; {check}"


def _search_temperature(evaluate, target, guess, low, high, tolerance, where, what, max_steps=200,
                        last_step: float = 0.0):
    """Temperature (K) at which evaluate(T) -> (value, d value/dT, payload)
    meets ``target``, for a value rising with T: Newton's method inside a
    maintained bracket, bisection when Newton leaves the bracket or stops
    halving the miss; one-sided steps are limited so that a phase boundary
    is approached, not jumped. Returns (T, payload); raises FlashError when
    no temperature in [low, high] meets the target.

    With ``last_step`` > 0, a bracketed-or-converging Newton step shorter
    than that many kelvin is taken without evaluating its end (payload None):
    for a caller that evaluates and verifies the state there anyway."""
    t = min(max(guess, low), high)
    below = above = None  # temperatures known to give values below / above the target
    below_payload = above_payload = None
    previous = math.inf
    for _ in range(max_steps):
        value, slope, payload = evaluate(t)
        miss = value - target
        if abs(miss) <= tolerance:
            return t, payload
        if last_step > 0.0 and slope > 0.0 and abs(miss / slope) < last_step and abs(miss) < 0.5 * previous:
            return t - miss / slope, None
        if miss < 0.0:
            below, below_payload = t, payload
            if t >= high:
                raise FlashError(_beyond_search_message(where, what, "above", high))
        else:
            above, above_payload = t, payload
            if t <= low:
                raise FlashError(_beyond_search_message(where, what, "below", low))
        lo = below if below is not None else low
        hi = above if above is not None else high
        if hi - lo <= 1e-13 * t:
            raise _TemperatureJump(
                f"{where}: no temperature meets the {what} target: the {what} jumps across it at {t:.10g} K",
                t, below_payload, above_payload,
            )
        newton = t - miss / slope if slope > 0.0 and math.isfinite(slope) else math.nan
        if below is not None and above is not None:
            progressing = abs(miss) <= 0.5 * previous
            candidate = newton if (lo < newton < hi and progressing) else 0.5 * (lo + hi)
        else:
            candidate = min(max(newton, t * 0.6), t * 1.6) if math.isfinite(newton) else (
                t * 1.3 if miss < 0.0 else t / 1.3
            )
            # toward an unexplored end, go no further than the end itself
            candidate = min(max(candidate, low), high)
        previous = abs(miss)
        t = candidate
    raise FlashError(f"{where}: the temperature search did not converge in {max_steps} steps")


def _single_model_p_spec(model, pressure, target, z, guess, kind, where, tolerance):
    """Vapor-only models (ideal gas, virial): one phase, a smooth rising H(T)."""
    step = 1e-4

    def evaluate(t):
        state = single_phase_state(model, t, pressure, z)
        upper = single_phase_state(model, t * (1 + step), pressure, z)
        value = state.enthalpy if kind == "H" else state.entropy
        value_up = upper.enthalpy if kind == "H" else upper.entropy
        return value, (value_up - value) / (t * step), state

    try:
        _, state = _search_temperature(evaluate, target, guess, T_SEARCH_LOW, T_SEARCH_HIGH, tolerance, where,
                                       "enthalpy" if kind == "H" else "entropy")
    except StateInputError as error:
        raise FlashError(f"{where}: {error}") from None
    return state


def _phase_value(state: CubicAtTP, x: np.ndarray, root: str, kind: str) -> tuple[float, float, bool]:
    """H (J/mol) or S (J/(mol K)) of one phase and its temperature derivative."""
    h_res, s_res, cp_res, liquid = state.thermal(x, root)
    cp = float(x @ state.ideal_heat_capacities()) + cp_res
    if kind == "H":
        return float(x @ state.ideal_enthalpies()) + h_res, cp, liquid
    mixing = -R * float(x @ np.log(x)) if len(x) > 1 else 0.0
    return float(x @ state.ideal_entropies()) + mixing + s_res, cp / state.temperature, liquid


def _pure_p_spec(model, kernel, pressure, target, z_full, active, guess, kind, where, tolerance):
    pc = float(kernel.pc[0])
    tc = float(kernel.tc[0])
    x = np.ones(1)
    what = "enthalpy" if kind == "H" else "entropy"

    def searcher(root):
        def evaluate(t):
            state = kernel.at(t, pressure)
            value, slope, _ = _phase_value(state, x, root, kind)
            return value, slope, None
        return evaluate

    low, high, root = T_SEARCH_LOW, T_SEARCH_HIGH, "auto"
    if pressure < pc:
        point = saturation_temperature_point(model, pressure, active[0])
        sat = kernel.at(point.temperature, pressure)
        liquid_value, _, _ = _phase_value(sat, x, "liquid", kind)
        vapor_value, _, _ = _phase_value(sat, x, "vapor", kind)
        if liquid_value <= target <= vapor_value:
            beta = (target - liquid_value) / (vapor_value - liquid_value)
            notes = (NEAR_CRITICAL,) if near_critical_pure(tc, pc, point.temperature, pressure) else ()
            stream = _saturated_stream(model, point, z_full, active, beta, notes)
            return _verified_target(stream, target, kind, tolerance, where)
        if target < liquid_value:
            high, root = point.temperature, "liquid"
        else:
            low, root = point.temperature, "vapor"
    t, _ = _search_temperature(searcher(root), target, guess, low, high, tolerance, where, what)
    notes = (NEAR_CRITICAL,) if near_critical_pure(tc, pc, t, pressure) else ()
    res = kernel_for(model).at(t, pressure).residual(z_full, root)
    if pressure < pc:
        label = LIQUID if root == "liquid" else VAPOR
    else:
        label = LIQUID if res.root == LIQUID_LIKE else VAPOR
    phase = phase_state(model, t, pressure, z_full, label, 1.0, res)
    stream = combine_phases(model, t, pressure, z_full, (phase,), notes)
    return _verified_target(stream, target, kind, tolerance, where)


def _verified_target(stream: StreamState, target: float, kind: str, tolerance: float, where: str) -> StreamState:
    value = stream.enthalpy if kind == "H" else stream.entropy
    # Assembling the stream adds rounding of its own; allow a few ulps beyond the search tolerance.
    if not abs(value - target) <= tolerance + 1e-12 * abs(target):
        raise FlashError(
            f"{where}: the state found misses the {'enthalpy' if kind == 'H' else 'entropy'} target by {value - target:.3g}"
        )
    return stream


def _equilibrium_value(eq: _Equilibrium, kind: str):
    """H or S of an equilibrium (per mole of feed), its temperature derivative
    at constant P (phase change included), and for a split d ln K/dT and
    d beta/dT (None for one phase)."""
    state = eq.state
    if eq.multi is not None:
        raise ArithmeticError("a multiphase split has no analytic temperature derivative here")
    if eq.split is None:
        value, slope, _ = _phase_value(state, eq.z, eq.root, kind)
        return value, slope, None, None
    result = eq.split
    dh_dt, dv_dt = temperature_derivative(state, eq.z, result)
    dbeta_dt = float(dv_dt.sum())
    # v = beta y and l = (1 - beta) x, so d ln y = dv/v - dbeta/beta and d ln x = -dv/l + dbeta/(1 - beta)
    v = result.beta * result.y
    liquid = (1.0 - result.beta) * result.x
    dlnk_dt = dv_dt / v - dbeta_dt / result.beta + dv_dt / liquid - dbeta_dt / (1.0 - result.beta)
    h_ideal = state.ideal_enthalpies()
    if kind == "H":
        value = result.beta * (float(result.y @ h_ideal) + result.thermal_y[0]) + (1.0 - result.beta) * (
            float(result.x @ h_ideal) + result.thermal_x[0]
        )
        return value, dh_dt, dlnk_dt, dbeta_dt
    s_ideal = state.ideal_entropies()
    s_y = float(result.y @ s_ideal) - R * float(result.y @ np.log(result.y)) + result.thermal_y[1]
    s_x = float(result.x @ s_ideal) - R * float(result.x @ np.log(result.x)) + result.thermal_x[1]
    return result.beta * s_y + (1.0 - result.beta) * s_x, dh_dt / state.temperature, dlnk_dt, dbeta_dt


def _mixture_p_spec(model, kernel, pressure, target, z_full, za, active, guess, kind, where, tolerance):
    what = "enthalpy" if kind == "H" else "entropy"
    # First pass: one phase with its lowest-Gibbs root, no stability test on the way;
    # the answer stands if the feed proves stable there.
    single_t = None
    try:
        def single(t):
            value, slope, _ = _phase_value(kernel.at(t, pressure), za, "auto", kind)
            return value, slope, None

        # The last Newton step (quadratic by then) is not evaluated here: the state
        # at its end is built and its H or S verified below in any case.
        single_t, _ = _search_temperature(single, target, guess, T_SEARCH_LOW, T_SEARCH_HIGH, tolerance, where, what,
                                          max_steps=FAST_PASS_STEPS, last_step=LAST_STEP)
    except (FlashError, ArithmeticError):
        single_t = None
    known = {}
    multiphase = second_liquid_possible(kernel)
    start = None
    if single_t is not None:
        state = kernel.at(single_t, pressure)
        ln_phi_feed, _, feed_liquid = state.ln_phi(za)
        stability = _stability(kernel, state, za, ln_phi_feed, where, feed_liquid)
        if stability.stable:
            eq = _one_phase(state, za, stability)
            stream = _stream(model, single_t, pressure, z_full, active, eq)
            if abs((stream.enthalpy if kind == "H" else stream.entropy) - target) <= tolerance:
                return _verified_target(stream, target, kind, tolerance, where)
            # the unevaluated last step did not land: the equilibrium search goes on from there
        elif not multiphase:
            # Fast route: a few substitution steps from the stability test's K-values,
            # then Newton's method on ln K and T together.
            found = _two_phase_at_target(kernel, state, za, kind, target, tolerance, stability.k_estimate, where)
            if found is not None:
                t, eq = found
                checked = _third_phase(kernel, eq, where)
                if checked is eq:
                    return _verified_target(_stream(model, t, pressure, z_full, active, eq), target, kind,
                                            tolerance, where)
                multiphase, start, guess, known = True, checked.multi, t, {}
        if start is None:
            eq = _one_phase(state, za, stability) if stability.stable else _split_unstable(
                kernel, state, za, stability, where)
            guess = single_t
            known[single_t] = eq
    # Second pass: the equilibrium state at each temperature, started from the
    # last split carried to the new temperature along its own d ln K / dT; where
    # two liquids can form, with the phases' own stability tested each time.
    for _ in range(3):
        evaluate = _equilibrium_evaluator(kernel, pressure, za, kind, where, known, multiphase, start)
        try:
            t, eq = _search_temperature(evaluate, target, guess, T_SEARCH_LOW, T_SEARCH_HIGH, tolerance, where, what)
        except _TemperatureJump as jump:
            # A binary's H (or S) jumps at the one temperature where it has three
            # phases: a target inside the jump is met there by the phase amounts.
            stream = _invariant_state_at_target(model, kernel, pressure, target, z_full, za, active, kind,
                                                   tolerance, where, jump)
            if stream is None:
                raise
            return stream
        checked = _third_phase(kernel, eq, where)
        if checked is eq:
            break
        # The answer's own phases proved unstable: search again from there with
        # the multiphase equilibrium at every temperature.
        multiphase, start, guess, known = True, checked.multi, t, {}
    return _verified_target(_stream(model, t, pressure, z_full, active, checked), target, kind, tolerance, where)


def _phases_of(eq) -> list[tuple[np.ndarray, str]]:
    """(composition, volume root) of each phase of an equilibrium."""
    if eq is None:
        return []
    if eq.split is not None:
        result = eq.split
        return [(result.y, "liquid" if result.props_y.liquid_like else "vapor"),
                (result.x, "liquid" if result.props_x.liquid_like else "vapor")]
    rows = list(eq.multi.compositions) if eq.multi is not None else [eq.z]
    return [(row, "liquid" if eq.state.ln_phi(row)[2] else "vapor") for row in rows]


def _invariant_state_at_target(model, kernel, pressure, target, z_full, za, active, kind, tolerance, where,
                                  jump: _TemperatureJump) -> StreamState | None:
    """The state at the temperature T* (at this pressure) where N + 1 phases
    of N components coexist (a binary's vapor and two liquids, a ternary's
    four phases) whose phase amounts carry the H or S target, where the
    temperature search found the target inside the jump at T*: the amounts
    from the component balances and the target (``_invariant_state``);
    None where no such state passes."""

    def closing(state: CubicAtTP, found: CoexistingPhases):
        return [_phase_value(state, row, root, kind)[0] for row, root in zip(found.compositions, found.roots)], target

    def accept(stream: StreamState) -> bool:
        try:
            _verified_target(stream, target, kind, tolerance, where)
        except FlashError:
            return False
        return True

    return _invariant_state(model, kernel, pressure, z_full, za, active, where, jump.temperature,
                                     jump.below, jump.above, closing, accept)


def _invariant_state(model, kernel, pressure, z_full, za, active, where, temperature, below, above,
                     closing, accept) -> StreamState | None:
    """The state of N + 1 phases of N components at pressure (Pa), which by
    the phase rule coexist at one temperature T* only, where a search at
    fixed P found the H, S or vapor fraction jumping near ``temperature``
    (K) between the equilibria ``below`` and ``above``: T* and the phases by
    Newton's method on equal fugacities (``invariant_point``) from the
    phases either side, the
    amounts from the N component balances and one more linear equation, ``closing(state, found)`` -> (coefficient of each
    phase's amount, right-hand side). Kept only if every amount lies in
    [0, 1], the split passes the multiphase verification (fugacities, mass
    balance), no further phase lowers the Gibbs energy (tangent-plane test
    from each phase, and seeded from the feed) and ``accept(stream)``;
    None otherwise."""
    candidates = _phases_of(below) + _phases_of(above)
    # Phases the two sides share (the one present on both sides of T*) come
    # twice; every choice of three distinct ones is tried.
    distinct = []
    for row, root in candidates:
        if not any(root == r and float(np.abs(np.log(row) - np.log(other)).max()) < MULTI_MERGE
                   for other, r in distinct):
            distinct.append((row, root))
    if len(distinct) < kernel.size + 1:
        return None
    for chosen in itertools.combinations(distinct, kernel.size + 1):
        found = invariant_point(kernel, pressure, temperature, [row for row, _ in chosen], tuple(root for _, root in chosen))
        if found is None:
            continue
        stream = _three_phase_stream(model, kernel, pressure, z_full, za, active, where, found, closing, accept)
        if stream is not None:
            return stream
    return None


def _three_phase_stream(model, kernel, pressure, z_full, za, active, where, found: CoexistingPhases, closing,
                        accept) -> StreamState | None:
    """The verified stream of the N + 1 phases ``found`` whose amounts meet
    the component balances and the equation ``closing`` gives; None where
    no such state passes (see ``_invariant_state``)."""
    t, rows = found.temperature, found.compositions
    logs = np.log(rows)
    for k, l in itertools.combinations(range(len(rows)), 2):
        if found.roots[k] == found.roots[l] and float(np.abs(logs[k] - logs[l]).max()) < MULTI_MERGE:
            return None  # two of the phases have become one: no such state
    state = kernel.at(t, pressure)
    closed = closing(state, found)
    if closed is None:
        return None
    coefficients, rhs = closed
    # Component balances (which also give sum of amounts = 1) and the closing equation.
    matrix = np.vstack([rows.T, coefficients])
    try:
        amounts = np.linalg.solve(matrix, np.append(za, rhs))
    except np.linalg.LinAlgError:
        return None
    if not (np.all(np.isfinite(amounts)) and np.all(amounts >= 0.0) and np.all(amounts <= 1.0)):
        return None
    keep = amounts > 0.0
    # Fresh fugacities on each phase's own lowest-Gibbs root, for the verification.
    ln_f = np.array([np.log(row) + state.ln_phi(row)[0] for row in rows])
    error = float(np.max(ln_f.max(axis=0) - ln_f.min(axis=0)))
    multi = MultiSplit(amounts[keep], rows[keep], error, 0)
    try:
        eq = _from_multi(state, za, multi, where)
    except FlashError:
        return None
    k_wilson = wilson_k(kernel.tc, kernel.pc, kernel.omega, t, pressure)
    try:
        tests = [stability_test(state, row, k_wilson) for row in rows]
        tests.append(stability_test(state, rows[0], k_wilson, seed=za))
    except StabilityError:
        return None
    if not all(test.stable for test in tests):
        return None
    stream = _stream(model, t, pressure, z_full, active, eq)
    return stream if accept(stream) else None


def _two_phase_at_target(kernel, state, za, kind, target, tolerance, k_start, where):
    """(T, equilibrium) where a two-phase split of za meets the H or S
    target, by ``split_at_target`` from substitution on K at the state's T
    and P started from ``k_start``. Kept only if it passes the split's
    verification and lowers the Gibbs energy below the one-phase feed's;
    None otherwise (the temperature search then decides)."""
    start = substitution(state, za, k_start)
    if start is None:
        return None
    found = split_at_target(kernel, state.pressure, za, kind, target, tolerance, state.temperature, start[0], start[1])
    if found is None:
        return None
    state, result = found
    if not _lowers_gibbs(state, za, state.ln_phi(za)[0], result):
        return None
    try:
        return state.temperature, _from_split(state, za, result, where)
    except FlashError:
        return None


def _equilibrium_evaluator(kernel, pressure, za, kind, where, known, multiphase: bool,
                           start_multi: MultiSplit | None = None):
    """evaluate(T) -> (H or S, its temperature derivative, equilibrium) at
    the equilibrium state. Two-phase splits start from the last one carried
    along d ln K/dT and give an analytic derivative; multiphase splits (when
    ``multiphase``) start from the last one and give a forward difference
    (the implicit derivative of a multiphase split is not worked out)."""
    last = [None]  # (T, split, d ln K/dT, d beta/dT) of the latest two-phase split
    last_multi = [start_multi]
    step = 1e-4  # K

    def two_phase(t):
        eq = known.pop(t, None)
        if eq is None:
            start = None
            if last[0] is not None:
                t_last, previous, dlnk_dt, dbeta_dt = last[0]
                shift = t - t_last
                start = (previous.ln_k + dlnk_dt * shift,
                         min(max(previous.beta + dbeta_dt * shift, 1e-6), 1.0 - 1e-6))
            eq = _equilibrium(kernel, t, pressure, za, where, start)
        return eq

    def evaluate(t):
        eq = two_phase(t)
        if multiphase:
            eq = _third_phase(kernel, eq, where, last_multi[0])
        if eq.multi is not None:
            last_multi[0] = eq.multi
            value = _multi_value(eq, kind)
            upper = _third_phase(kernel, _equilibrium(kernel, t + step, pressure, za, where), where, eq.multi,
                                 test_warm=False)
            upper_value = _multi_value(upper, kind) if upper.multi is not None else _equilibrium_value(upper, kind)[0]
            return value, (upper_value - value) / step, eq
        value, slope, dlnk_dt, dbeta_dt = _equilibrium_value(eq, kind)
        if eq.split is not None:
            last[0] = (t, eq.split, dlnk_dt, dbeta_dt)
        return value, slope, eq

    return evaluate


def _multi_value(eq: _Equilibrium, kind: str) -> float:
    """H (J/mol) or S (J/(mol K)) per mole of feed of a multiphase split."""
    state = eq.state
    h_ideal, s_ideal = state.ideal_enthalpies(), state.ideal_entropies()
    total = 0.0
    for amount, row in zip(eq.multi.amounts, eq.multi.compositions):
        h_res, s_res, _, _ = state.thermal(row)
        if kind == "H":
            total += amount * (float(row @ h_ideal) + h_res)
        else:
            total += amount * (float(row @ s_ideal) - R * float(row @ np.log(row)) + s_res)
    return total


# --- flashes at a given vapor fraction; bubble and dew points ---------------------
def _check_fraction(vapor_fraction: float) -> None:
    if not (isinstance(vapor_fraction, (int, float)) and 0.0 <= vapor_fraction <= 1.0):
        raise StateInputError(f"vapor fraction {vapor_fraction!r} must lie between 0 and 1")


@_guarded("phase-envelope point", ("x", "vapor_fraction"), x_index=0)
def envelope(model, x: np.ndarray, vapor_fraction: float, temperature: float | None = None,
             pressure: float | None = None) -> EnvelopePoint:
    """The point of the phase envelope of feed x with the given vapor
    fraction (0 bubble, 1 dew) at a fixed temperature (K; the pressure is
    found) or fixed pressure (Pa; the temperature is found). Compositions in
    the result are over the whole mixture."""
    _check_fraction(vapor_fraction)
    if (temperature is None) == (pressure is None):
        raise TypeError("give exactly one of temperature and pressure")
    fixed = "T" if temperature is not None else "P"
    value = temperature if temperature is not None else pressure
    z, active = _prepare(model, temperature or 300.0, pressure or 1e5, x)
    spec = {"T": value} if fixed == "T" else {"P": value}
    where = lazy_description(f"vapor fraction {vapor_fraction:g} point of ", model, z, **spec)
    if not _is_cubic(model):
        raise FlashError(
            f"{where}: the {model.name} model describes vapor only (it has no liquid root), "
            "so it has no bubble or dew points; its streams are single-phase vapor"
        )
    size = model.mixture.size
    if len(active) == 1:
        if fixed == "T":
            point = saturation_point(model, value, active[0])
        else:
            point = saturation_temperature_point(model, value, active[0])
        return EnvelopePoint(point.temperature, point.pressure, float(vapor_fraction), z.copy(), z.copy(),
                             np.zeros(size), point.fugacity_error)
    kernel = kernel_for(model, active)
    za = z[list(active)]
    try:
        found = envelope_point(kernel, za, float(vapor_fraction), fixed, value, where)
    except FlashError as direct:
        # Newton's method from Wilson's estimate can fall onto the trivial
        # solution or wander; bracket the point with equilibrium flashes instead.
        found = _envelope_by_bracket(kernel, za, float(vapor_fraction), fixed, value, where, direct)
    _check_envelope_stability(kernel, found, where)
    return EnvelopePoint(found.temperature, found.pressure, found.vapor_fraction, _embed(found.x, active, size),
                         _embed(found.y, active, size), _embed(found.ln_k, active, size), found.fugacity_error)


ENVELOPE_GRID = 40  # temperatures or pressures scanned by the bracketing route


def _envelope_by_bracket(kernel: CubicKernel, z: np.ndarray, beta: float, fixed: str, value: float, where,
                         direct: FlashError) -> EnvelopePoint:
    """The envelope point found by scanning the equilibrium vapor fraction
    over temperature (pressure fixed) or pressure (temperature fixed),
    bisecting the first interval that crosses ``beta``, and finishing with
    Newton's method from the split found there."""
    if fixed == "P":
        grid = np.geomspace(max(20.0, 0.25 * float(kernel.tc.min())), min(3000.0, 3.0 * float(kernel.tc.max())),
                            ENVELOPE_GRID)

        def state_at(u):
            return u, value
    else:
        grid = np.geomspace(5e8, 1e2, ENVELOPE_GRID)  # falling pressure: the vapor fraction rises along it

        def state_at(u):
            return value, u

    def signed(u):
        """(vapor fraction minus beta with ties broken toward the ends, split or None)."""
        t, p = state_at(u)
        eq = _equilibrium(kernel, t, p, z, where)
        fraction = _vapor_amount(eq)
        if beta == 0.0:
            return (fraction if fraction > 0.0 else -1.0), eq.split
        if beta == 1.0:
            return (1.0 if fraction >= 1.0 else fraction - 1.0), eq.split
        return fraction - beta, eq.split

    previous = None
    for u in grid:
        g, result = signed(float(u))
        if previous is not None and previous[1] < 0.0 <= g:
            low, high = previous[0], float(u)
            low_split, high_split = previous[2], result
            break
        previous = (float(u), g, result)
    else:
        raise FlashError(f"{where}: no point found ({direct}); no equilibrium flash between "
                         f"{grid[0]:.4g} and {grid[-1]:.4g} {'K' if fixed == 'P' else 'Pa'} crosses it either")
    for _ in range(60):
        middle = math.sqrt(low * high)
        g, result = signed(middle)
        if g < 0.0:
            low, low_split = middle, result
        else:
            high, high_split = middle, result
        if abs(high - low) <= 1e-9 * high:
            break
    # Newton's finish from the two-phase end of the bracket.
    end, split_end = (high, high_split) if high_split is not None else (low, low_split)
    if split_end is None:
        raise FlashError(f"{where}: no point found ({direct}); the bracket holds no two-phase state")
    return envelope_point(kernel, z, beta, fixed, value, where, start=(split_end.ln_k, end))


def _vapor_amount(eq: _Equilibrium) -> float:
    """Moles of vapor per mole of feed in an equilibrium: the lighter phase
    of a split unless both are liquids; a lone phase counts as vapor unless
    its root is liquid-like."""
    state = eq.state
    if eq.split is not None:
        result = eq.split
        if LIQUID_LIQUID in eq.notes:
            return 0.0
        return result.beta if result.props_y.molar_volume >= result.props_x.molar_volume else 1.0 - result.beta
    if eq.multi is not None:
        volumes = []
        for row in eq.multi.compositions:
            big_a = float(row @ state.big_a @ row)
            big_b = float(state.big_b @ row)
            z, _, liquid = state._choose(big_a, big_b, "auto")
            volumes.append((z, liquid))
        lightest = int(np.argmax([v[0] for v in volumes]))
        return 0.0 if volumes[lightest][1] else float(eq.multi.amounts[lightest])
    return 0.0 if state.ln_phi(eq.z)[2] else 1.0


def _check_envelope_stability(kernel: CubicKernel, point: EnvelopePoint, where) -> None:
    """Refuse an envelope point whose liquid is itself unstable: another
    phase (a second liquid, as water with hydrocarbons) would have formed
    first, and the two-phase envelope point is not the equilibrium."""
    state = kernel.at(point.temperature, point.pressure)
    k_wilson = wilson_k(kernel.tc, kernel.pc, kernel.omega, point.temperature, point.pressure)
    try:
        # The liquid and the feed share the tangent plane only where a liquid exists;
        # test the liquid (at a dew point, the incipient drop).
        stability = stability_test(state, point.x, k_wilson, vapor_trial=False)
    except StabilityError:
        return
    if not stability.stable:
        raise SecondLiquidError(
            f"{where}: at the point found (T = {point.temperature:.6g} K, P = {point.pressure:.6g} Pa) "
            "another liquid would form (as water beside hydrocarbons), so this two-phase bubble or dew "
            "point is not the equilibrium; a vapor-fraction flash finds the state with both liquids, "
            "or use a TP, PH or PS flash there",
            point,
        )


class SecondLiquidError(FlashError):
    """A two-phase envelope point whose liquid is unstable: another liquid
    forms first. ``point`` is the (non-equilibrium) two-phase point found."""

    def __init__(self, message: str, point: EnvelopePoint):
        super().__init__(message)
        self.point = point


FRACTION_TOLERANCE = 1e-10  # |vapor fraction - target| of a vapor-fraction flash with three phases
FRACTION_SCAN_STEP = 1.02  # ratio between the temperatures (or pressures) of the outward scan
FRACTION_SCAN_STEPS = 120


class _FractionJump(FlashError):
    """The vapor fraction of the full equilibrium jumps across the target at
    ``value`` (K at fixed P, Pa at fixed T); the equilibria either side of
    the jump (``lower`` and ``upper`` in the free variable) travel along."""

    def __init__(self, message: str, value: float, lower: _Equilibrium, upper: _Equilibrium):
        super().__init__(message)
        self.value = value
        self.lower = lower
        self.upper = upper


def _multiphase_at_fraction(model, kernel: CubicKernel, za: np.ndarray, beta: float, fixed: str, value: float,
                            start: float, where) -> tuple[float, float, _Equilibrium]:
    """(T K, P Pa, equilibrium) where the equilibrium of feed za, with all
    the phases it forms (two liquids and a vapor included), has vapor
    fraction ``beta``, at fixed temperature (``fixed`` "T", ``value`` K) or
    pressure ("P", Pa). The free variable is scanned outward from ``start``
    (the two-phase point that proved not to be the equilibrium) until the
    vapor fraction crosses ``beta``, then found by regula falsi (Illinois
    variant) inside that bracket. Raises FlashError where the vapor fraction
    jumps across ``beta`` (three phases at a single temperature, as a binary
    has) or no crossing is found."""
    rising = fixed == "P"  # the vapor fraction rises with T at fixed P, falls with P at fixed T
    warm = [None]

    def signed(u: float):
        t, p = (u, value) if fixed == "P" else (value, u)
        eq = _third_phase(kernel, _equilibrium(kernel, t, p, za, where), where, warm[0])
        if eq.multi is not None:
            warm[0] = eq.multi
        fraction = _vapor_amount(eq)
        if beta == 0.0:  # the first bubble: no vapor below, some above
            g = fraction if fraction > 0.0 else -1.0
        elif beta == 1.0:  # the first drop
            g = 1.0 if fraction >= 1.0 else fraction - 1.0
        else:
            g = fraction - beta
        return (g if rising else -g), eq

    name, unit = ("temperature", "K") if fixed == "P" else ("pressure", "Pa")
    if start is None:
        # No two-phase point to start from: the grid of the envelope's own bracketing route.
        if fixed == "P":
            grid = np.geomspace(max(20.0, 0.25 * float(kernel.tc.min())), min(3000.0, 3.0 * float(kernel.tc.max())),
                                ENVELOPE_GRID)
        else:
            grid = np.geomspace(1e2, 5e8, ENVELOPE_GRID)
        previous = None
        for u in grid:
            g, eq = signed(float(u))
            if previous is not None and previous[1] < 0.0 <= g:
                (u1, g1, eq1), (u2, g2, eq2) = previous, (float(u), g, eq)
                break
            previous = (float(u), g, eq)
        else:
            raise FlashError(f"{where}: with every phase the feed can form taken into account, no {name} between "
                             f"{grid[0]:.4g} and {grid[-1]:.4g} {unit} gives this vapor fraction")
    else:
        low_limit, high_limit = (T_SEARCH_LOW, T_SEARCH_HIGH) if fixed == "P" else (1e2, 5e8)
        u0 = min(max(start, low_limit), high_limit)
        g0, eq0 = signed(u0)
        if g0 == 0.0:
            return (u0, value, eq0) if fixed == "P" else (value, u0, eq0)
        # g rises with u: step up while below the target, down while above
        factor = FRACTION_SCAN_STEP if g0 < 0.0 else 1.0 / FRACTION_SCAN_STEP
        u1, g1, eq1 = u0, g0, eq0
        for _ in range(FRACTION_SCAN_STEPS):
            u2 = min(max(u1 * factor, low_limit), high_limit)
            g2, eq2 = signed(u2)
            if (g2 >= 0.0) != (g1 >= 0.0):
                break
            if u2 in (low_limit, high_limit):
                raise FlashError(f"{where}: with the second liquid taken into account, no {name} between "
                                 f"{u0:.6g} and {u2:.6g} {unit} gives this vapor fraction")
            u1, g1, eq1 = u2, g2, eq2
        else:
            raise FlashError(f"{where}: with the second liquid taken into account, the vapor fraction did not "
                             f"cross the target within {FRACTION_SCAN_STEPS} scan steps")
    (a, ga, eqa), (b, gb, eqb) = sorted(((u1, g1, eq1), (u2, g2, eq2)), key=lambda item: item[0])
    side = 0
    for _ in range(200):
        if beta in (0.0, 1.0):
            middle = 0.5 * (a + b)  # the ends are ties, not smooth crossings: bisect
        else:
            middle = (a * gb - b * ga) / (gb - ga)
            if not a < middle < b:
                middle = 0.5 * (a + b)
        gm, eqm = signed(middle)
        if beta in (0.0, 1.0):
            if b - a <= 1e-9 * b:  # the end point to within a microkelvin or so
                break
        elif abs(gm) <= FRACTION_TOLERANCE or b - a <= 1e-13 * b:
            break
        if gm < 0.0:
            a, ga, eqa = middle, gm, eqm
            if side == -1 and beta not in (0.0, 1.0):
                gb *= 0.5  # Illinois: keep the stale end from holding the secant back
            side = -1
        else:
            b, gb, eqb = middle, gm, eqm
            if side == 1 and beta not in (0.0, 1.0):
                ga *= 0.5
            side = 1
    if beta in (0.0, 1.0):
        # The end of the bracket where the vapor fraction is exactly beta: the
        # liquids with no vapor yet (beta 0), the vapor with no liquid yet (beta 1).
        middle, eqm = (a, eqa) if (beta == 0.0) == rising else (b, eqb)
        gm = 0.0
    if abs(gm) > FRACTION_TOLERANCE and beta not in (0.0, 1.0):
        low_fraction = _vapor_amount(eqa if rising else eqb)
        high_fraction = _vapor_amount(eqb if rising else eqa)
        raise _FractionJump(
            f"{where}: the vapor fraction jumps from {low_fraction:.4g} to {high_fraction:.4g} at "
            f"{name} {middle:.8g} {unit}, where a vapor and two liquids coexist at "
            f"a single {name}; a vapor fraction in between fixes no state there. Specify the "
            "enthalpy instead (a heater's duty, or a feed's temperature and pressure)",
            middle, eqa, eqb,
        )
    return (middle, value, eqm) if fixed == "P" else (value, middle, eqm)


def _two_liquids_possible(model, active) -> bool:
    return _is_cubic(model) and len(active) >= 2 and second_liquid_possible(kernel_for(model, active))


def _fraction_by_multiphase(model, z: np.ndarray, active, beta: float, fixed: str, value: float,
                            refused: SecondLiquidError | None) -> StreamState:
    """The vapor-fraction flash where the two-phase point proved unstable
    (``refused``), or was not found for a feed that can form two liquids
    (``refused`` None: the search starts from a grid)."""
    kernel = kernel_for(model, active)
    za = z[list(active)]
    where = lazy_description(f"vapor fraction {beta:g} flash of ", model, z, **{fixed: value})
    if refused is None:
        start = None
    else:
        start = refused.point.temperature if fixed == "P" else refused.point.pressure
    try:
        t, p, eq = _multiphase_at_fraction(model, kernel, za, beta, fixed, value, start, where)
    except _FractionJump as jump:
        # A binary's vapor fraction jumps at the one temperature T* (at this
        # pressure) where it has three phases: a fraction inside the jump is
        # met there by the phase amounts.
        stream = _binary_three_phase_at_fraction(model, kernel, value, beta, z, za, active, where,
                                                 jump) if fixed == "P" and kernel.size == 2 else None
        if stream is None:
            raise
        return stream
    stream = _stream(model, t, p, z, active, eq)
    if not abs(stream.vapor_fraction - beta) <= 1e-8:
        raise FlashError(f"{where}: the state found has vapor fraction {stream.vapor_fraction:.10g}, not {beta:g}")
    return stream


def _binary_three_phase_at_fraction(model, kernel, pressure, beta, z_full, za, active, where,
                                    jump: _FractionJump) -> StreamState | None:
    """The state of a binary at its three-phase temperature T* (at pressure,
    Pa) with vapor fraction ``beta``, where the vapor fraction jumps across
    it at T*: the amounts from the component balances and the vapor's
    amount (``_invariant_state``), the same T* and phases the PH
    and PS flashes reach inside their jump; None where no such state passes."""

    def closing(state: CubicAtTP, found: CoexistingPhases):
        if found.roots.count("vapor") != 1:
            return None  # no one vapor among the three: the fraction cannot be placed
        return [1.0 if root == "vapor" else 0.0 for root in found.roots], beta

    def accept(stream: StreamState) -> bool:
        return abs(stream.vapor_fraction - beta) <= FRACTION_TOLERANCE

    return _invariant_state(model, kernel, pressure, z_full, za, active, where, jump.value,
                                     jump.lower, jump.upper, closing, accept)


def bubble_pressure(model, temperature: float, x: np.ndarray) -> float:
    """Bubble-point pressure, Pa, of liquid of mole fractions x at T (K)."""
    return envelope(model, x, 0.0, temperature=temperature).pressure


def bubble_temperature(model, pressure: float, x: np.ndarray) -> float:
    """Bubble-point temperature, K, of liquid of mole fractions x at P (Pa)."""
    return envelope(model, x, 0.0, pressure=pressure).temperature


def dew_pressure(model, temperature: float, x: np.ndarray) -> float:
    """Dew-point pressure, Pa, of vapor of mole fractions x at T (K)."""
    return envelope(model, x, 1.0, temperature=temperature).pressure


def dew_temperature(model, pressure: float, x: np.ndarray) -> float:
    """Dew-point temperature, K, of vapor of mole fractions x at P (Pa)."""
    return envelope(model, x, 1.0, pressure=pressure).temperature


def _stream_at_fraction(model, point: EnvelopePoint, z: np.ndarray, active) -> StreamState:
    t, p, beta = point.temperature, point.pressure, point.vapor_fraction
    notes = ()
    if len(active) == 1:
        if near_critical_pure(float(model.mixture.critical_temperature[active[0]]),
                              float(model.mixture.critical_pressure[active[0]]), t, p):
            notes = (NEAR_CRITICAL,)
    elif near_critical_split(point.ln_k[list(active)]):
        notes = (NEAR_CRITICAL,)
    full = kernel_for(model).at(t, p)
    phases = []
    if beta > 0.0:
        y = point.y if beta < 1.0 else z
        phases.append(phase_state(model, t, p, y, VAPOR, beta, full.residual(y, "vapor" if len(active) == 1 else "auto")))
    if beta < 1.0:
        x = point.x if beta > 0.0 else z
        phases.append(phase_state(model, t, p, x, LIQUID, 1.0 - beta, full.residual(x, "liquid" if len(active) == 1 else "auto")))
    return combine_phases(model, t, p, z, tuple(phases), notes)


@_guarded("vapor-fraction flash", ("P", "vapor_fraction"))
def flash_pv(model, pressure: float, vapor_fraction: float, x: np.ndarray) -> StreamState:
    """Equilibrium state at pressure (Pa) with the given vapor fraction
    (mol vapor per mol stream, 0 = saturated liquid, 1 = saturated vapor):
    the temperature is found. Heaters with a vapor-fraction outlet use it.
    With two liquids the vapor fraction counts the vapor alone, and 0 is
    the liquids at the temperature where vapor first appears."""
    _check_fraction(vapor_fraction)
    z, active = _prepare(model, 300.0, pressure, x)
    return _at_fraction(model, z, active, float(vapor_fraction), "P", pressure)


@_guarded("vapor-fraction flash", ("T", "vapor_fraction"))
def flash_tv(model, temperature: float, vapor_fraction: float, x: np.ndarray) -> StreamState:
    """Equilibrium state at temperature (K) with the given vapor fraction:
    the pressure is found."""
    _check_fraction(vapor_fraction)
    z, active = _prepare(model, temperature, 1e5, x)
    return _at_fraction(model, z, active, float(vapor_fraction), "T", temperature)


def _at_fraction(model, z, active, vapor_fraction: float, fixed: str, value: float) -> StreamState:
    """The state with ``vapor_fraction`` at the fixed T (K) or P (Pa): the
    two-phase envelope point, or the multiphase search where a second liquid
    forms or the two-phase search fails where one can."""
    fixed_state = {"pressure": value} if fixed == "P" else {"temperature": value}
    try:
        point = envelope(model, z, vapor_fraction, **fixed_state)
    except SecondLiquidError as refused:
        return _fraction_by_multiphase(model, z, active, vapor_fraction, fixed, value, refused)
    except FlashError:
        if not _two_liquids_possible(model, active):
            raise
        return _fraction_by_multiphase(model, z, active, vapor_fraction, fixed, value, None)
    return _stream_at_fraction(model, point, z, active)
