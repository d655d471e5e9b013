"""PH and PS flashes of a binary whose H (or S) target falls in the jump at its
three-phase temperature.

By the phase rule a binary at fixed pressure has a vapor and two liquids at
one temperature T* only, so H(T) jumps there as a pure component's does at
its boiling point; a target inside the jump is the three-phase state at T*,
its phase amounts carrying the enthalpy. The first five cases are valve
outlets that a random sweep of library mixtures once left with "the enthalpy
jumps across it" (compositions rounded to three places).
"""

from __future__ import annotations

import numpy as np
import pytest

from thermo.departures import residual
from thermo.flash import flash_ph, flash_ps, flash_pv, flash_tp
from thermo.mixture import make_mixture
from thermo.models import make_model

MODELS = {"SRK": "soave-redlich-kwong", "PR": "peng-robinson"}
# (components, feed, model, outlet pressure Pa, enthalpy target J/mol)
JUMPS = [
    (["water", "propane"], [0.376, 0.624], "SRK", 275269.08, -31077.498),
    (["water", "neopentane"], [0.316, 0.684], "PR", 249214.48, -26970.971),
    (["n-hexane", "water"], [0.555, 0.445], "SRK", 2161750.8, -4969.4827),
    (["water", "carbon-dioxide"], [0.34, 0.66], "PR", 1456704.2, -25936.15),
    (["n-octane", "water"], [0.111, 0.889], "PR", 1613657.7, -23748.807),
]


def ln_fugacity_mismatch(model, state):
    """max |ln f_i(phase k) - ln f_i(phase l)| over all pairs of phases, from
    the engine's departure functions (not the flash's kernel), each phase at
    the volume root the state reports."""
    ln_f = []
    for phase in state.phases:
        root = "liquid" if phase.residual.root == "liquid-like" else "vapor"
        res = residual(model, state.temperature, state.pressure, phase.composition, root)
        ln_f.append(np.log(phase.composition) + res.ln_phi)
    ln_f = np.array(ln_f)
    return float(np.max(ln_f.max(axis=0) - ln_f.min(axis=0)))


def lowest_tangent_plane_distance(model, state):
    """The least tangent-plane distance (Michelsen 1982) from the state's
    tangent plane over a grid of binary compositions, each on both volume
    roots: below zero a phase of that composition would lower the Gibbs
    energy. The grid runs to 1e-10 of either end in even steps of log
    odds, so nearly pure phases (water with 1e-8 propane) are reached."""
    phase = state.phases[0]
    root = "liquid" if phase.residual.root == "liquid-like" else "vapor"
    ref = residual(model, state.temperature, state.pressure, phase.composition, root)
    d = np.log(phase.composition) + ref.ln_phi
    lowest = np.inf
    for log_odds in np.linspace(-23.0, 23.0, 1500):
        w = np.array([1.0 / (1.0 + np.exp(-log_odds)), 1.0 / (1.0 + np.exp(log_odds))])
        for trial_root in ("liquid", "vapor"):
            res = residual(model, state.temperature, state.pressure, w, trial_root)
            lowest = min(lowest, float(w @ (np.log(w) + res.ln_phi - d)))
    return lowest


def check_identities(model, state, z):
    assert len(state.phases) == 3 and "three-phase" in state.notes
    assert sorted(p.label for p in state.phases) == ["liquid", "liquid", "vapor"]
    assert all(0.0 <= p.amount <= 1.0 for p in state.phases)
    assert ln_fugacity_mismatch(model, state) < 1e-8
    balance = sum(p.amount * p.composition for p in state.phases) - z
    assert np.max(np.abs(balance)) < 1e-10
    # the phases' compositions differ: three phases, not two counted twice
    rows = np.log([p.composition for p in state.phases])
    for k in range(3):
        for l in range(k + 1, 3):
            assert np.abs(rows[k] - rows[l]).max() > 0.1


@pytest.mark.parametrize("names, fractions, model_name, pressure, target", JUMPS)
def test_enthalpy_inside_the_jump_is_the_three_phase_state(names, fractions, model_name, pressure, target):
    model = make_model(MODELS[model_name], make_mixture(names))
    z = np.array(fractions)
    state = flash_ph(model, pressure, target, z)
    check_identities(model, state, z)
    assert state.pressure == pressure
    assert state.enthalpy == pytest.approx(target, abs=1e-5)
    t_star = state.temperature
    # H(T) at fixed P from TP flashes: just below and just above T* the states
    # bracket the target, so the jump is at T* and the target lies inside it.
    below = flash_tp(model, t_star - 0.01, pressure, z)
    above = flash_tp(model, t_star + 0.01, pressure, z)
    assert below.enthalpy < target < above.enthalpy
    assert len(below.phases) == 2 and len(above.phases) == 2
    # no fourth phase (nor any other) lowers the Gibbs energy: Gibbs's tangent-plane criterion
    assert lowest_tangent_plane_distance(model, state) > -1e-9
    # PS at the state's entropy is the same state (its amounts carry S the same way)
    by_s = flash_ps(model, pressure, state.entropy, z)
    assert by_s.temperature == pytest.approx(t_star, rel=1e-10)
    assert len(by_s.phases) == 3
    for p, q in zip(sorted(state.phases, key=lambda p: p.composition[0]),
                    sorted(by_s.phases, key=lambda p: p.composition[0])):
        assert q.amount == pytest.approx(p.amount, abs=1e-6)


@pytest.mark.parametrize("names, fractions, model_name, pressure, target", JUMPS)
def test_enthalpy_just_outside_the_jump_is_two_phase_next_to_it(names, fractions, model_name, pressure, target):
    model = make_model(MODELS[model_name], make_mixture(names))
    z = np.array(fractions)
    t_star = flash_ph(model, pressure, target, z).temperature
    for shift in (-0.01, 0.01):
        reference = flash_tp(model, t_star + shift, pressure, z)
        state = flash_ph(model, pressure, reference.enthalpy, z)
        assert len(state.phases) == 2
        assert state.temperature == pytest.approx(t_star + shift, abs=1e-6)
        assert ln_fugacity_mismatch(model, state) < 1e-8


def test_water_and_hexane_boil_together_near_the_published_heteroazeotrope():
    # Water with n-hexane at 1 atm: the heteroazeotrope boils at 61.6 C with
    # 5.6 % water by mass in the vapor (water mole fraction 0.221), as the
    # azeotrope tables of the CRC Handbook and Lange's Handbook give it  # from memory.
    # PR without k_ij puts T* at 62.8 C (its hexane-rich liquid holds
    # about 12 % water, which real hexane does not): bands 1.5 K and 0.03.
    model = make_model("peng-robinson", make_mixture(["water", "n-hexane"]))
    z = np.array([0.5, 0.5])
    pressure = 101325.0
    first_vapor = flash_pv(model, pressure, 0.0, z)  # the liquids where vapor first appears: T*
    t_star = first_vapor.temperature
    below = flash_tp(model, t_star - 0.01, pressure, z)
    above = flash_tp(model, t_star + 0.01, pressure, z)
    assert below.vapor_fraction == 0.0 and above.vapor_fraction > 0.3
    target = 0.5 * (below.enthalpy + above.enthalpy)
    state = flash_ph(model, pressure, target, z)
    check_identities(model, state, z)
    assert state.temperature == pytest.approx(t_star, abs=1e-6)
    assert state.temperature - 273.15 == pytest.approx(61.6, abs=1.5)
    vapor = next(p for p in state.phases if p.label == "vapor")
    assert vapor.composition[0] == pytest.approx(0.221, abs=0.03)
    # a heteroazeotrope: the vapor's make-up lies between the two liquids'
    liquids = sorted(p.composition[0] for p in state.phases if p.label == "liquid")
    assert liquids[0] < vapor.composition[0] < liquids[1]


def test_a_ternary_once_seen_jumping_meets_its_target():
    # A ternary has no jump (its three phases span a range of T), so the
    # three-phase route is the binary's only; this ternary valve outlet once
    # "jumped" at 415.7 K in a sweep, where two liquids carried on from a
    # neighbouring temperature outlasted their range untested.
    model = make_model("peng-robinson", make_mixture(["n-octane", "water", "ethanol"]))
    z = np.array([0.468604, 0.505183, 0.0262133])
    z = z / z.sum()
    state = flash_ph(model, 384997.15, -7935.179, z)
    assert state.enthalpy == pytest.approx(-7935.179, abs=1e-5)
    if len(state.phases) > 1:
        assert ln_fugacity_mismatch(model, state) < 1e-8


# (components, feed, model, pressure Pa): binaries whose vapor fraction jumps at T*
FRACTION_JUMPS = [
    (["water", "n-hexane"], [0.5, 0.5], "PR", 101325.0),
    (["water", "carbon-dioxide"], [0.34, 0.66], "PR", 1456704.2),
    # the scan for this one once met two liquids carried on 7 K past T*, where
    # the feed is all vapor, and refused ("the multiphase split did not converge")
    (["water", "n-octane"], [0.6, 0.4], "PR", 101325.0),
]


@pytest.mark.parametrize("names, fractions, model_name, pressure", FRACTION_JUMPS)
@pytest.mark.parametrize("vapor_fraction", [0.05, 0.3])
def test_vapor_fraction_inside_the_jump_is_the_three_phase_state(names, fractions, model_name, pressure,
                                                                 vapor_fraction):
    # At fixed P a binary's vapor fraction jumps at T* from 0 (two liquids) to
    # that of the vapor beside one liquid; a fraction in between is the three
    # phases at T*, the same state the PH flash reaches inside its H jump, with
    # the vapor's amount equal to the fraction asked.
    model = make_model(MODELS[model_name], make_mixture(names))
    z = np.array(fractions)
    state = flash_pv(model, pressure, vapor_fraction, z)
    check_identities(model, state, z)
    assert state.pressure == pressure
    assert state.vapor_fraction == pytest.approx(vapor_fraction, abs=1e-10)
    vapor = next(p for p in state.phases if p.label == "vapor")
    assert vapor.amount == pytest.approx(vapor_fraction, abs=1e-10)
    # T* of the PH route: a target midway in the jump seen by TP flashes either side
    below = flash_tp(model, state.temperature - 0.01, pressure, z)
    above = flash_tp(model, state.temperature + 0.01, pressure, z)
    assert below.vapor_fraction == 0.0 and above.vapor_fraction > vapor_fraction
    by_h = flash_ph(model, pressure, 0.5 * (below.enthalpy + above.enthalpy), z)
    assert len(by_h.phases) == 3
    assert state.temperature == pytest.approx(by_h.temperature, rel=1e-12)
    assert lowest_tangent_plane_distance(model, state) > -1e-9
    # the PH flash at this state's own enthalpy returns it (same T*, same amounts)
    again = flash_ph(model, pressure, state.enthalpy, z)
    assert again.temperature == pytest.approx(state.temperature, rel=1e-12)
    assert again.vapor_fraction == pytest.approx(vapor_fraction, abs=1e-8)
