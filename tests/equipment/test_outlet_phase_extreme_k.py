"""Heater outlets that a random sweep of library mixtures (heaters with a
duty on random inlets, 6000 draws) once left with a FlashError and no
answer: a nearly insoluble gas over a nearly involatile liquid, at the few
tens of kelvin the temperature search passes through on its way to a large
negative duty. There |ln K| reaches 300 to 650 (neon in water at 15 K: ln phi
from -490 to +162), the two-phase substitution (ln K held within +-200) falls
back onto the feed from both starts, and the multiphase method that takes
over once overflowed 1/phi into a singular matrix or lost the water from its
balance; it now scales each component's 1/phi by its largest over the phases
(which leaves its phase amounts and compositions as they were).

Each state is checked as in test_outlet_phase.py: equal fugacities from the
departure functions (not the flash's kernel) to 1e-8 in ln, closed mass
balances, the enthalpy met, and Gibbs's tangent-plane criterion from trial
phases of the test's own at every phase.
"""

from __future__ import annotations

import numpy as np
import pytest

from thermo.departures import residual
from thermo.flash import FlashError, flash_ph, flash_tp
from thermo.mixture import make_mixture
from thermo.models import make_model

from test_outlet_phase import UNSTABLE_TM, _tangent_plane_minimum

# (components, feed, model, outlet pressure Pa, enthalpy target J/mol,
#  a temperature K the search passed through where the split once broke down)
EXTREME = [
    (["neon", "water"], [0.439742, 0.560258], "soave-redlich-kwong", 5087715.0, -40019.081, 15.197333485290107),
    (["hydrogen-chloride", "isobutane", "water"], [0.327364, 0.273953, 0.398683], "peng-robinson",
     1759359.9, -44885.01, 17.209617140979418),
]


def _check_equilibrium(model, state, z):
    t, p = state.temperature, state.pressure
    assert len(state.phases) >= 2
    ln_f = np.array([np.log(ph.composition) + residual(
        model, t, p, ph.composition, "liquid" if ph.residual.root == "liquid-like" else "vapor").ln_phi
        for ph in state.phases])
    assert float(np.max(np.ptp(ln_f, axis=0))) < 1e-8
    assert all(0.0 < ph.amount < 1.0 for ph in state.phases)
    balance = sum(ph.amount * ph.composition for ph in state.phases) - z
    assert float(np.abs(balance).max()) < 1e-10
    for phase in state.phases:
        tm = _tangent_plane_minimum(model, t, p, z, phase.composition, phase.residual.ln_phi)
        assert tm > UNSTABLE_TM, f"a trial phase lies {tm:.3g} below the tangent plane at {t} K"


def _feed(fractions):
    z = np.array(fractions)
    return z / z.sum()


@pytest.mark.parametrize("names, fractions, model_name, pressure, target, broke_at", EXTREME)
def test_split_with_extreme_k_values_at_fixed_t_and_p(names, fractions, model_name, pressure, target, broke_at):
    model = make_model(model_name, make_mixture(names))
    z = _feed(fractions)
    state = flash_tp(model, broke_at, pressure, z)
    _check_equilibrium(model, state, z)
    # the phases really are that far apart: some component's K beyond e^200
    rows = np.log([ph.composition for ph in state.phases])
    assert float(np.ptp(rows, axis=0).max()) > 200.0


@pytest.mark.parametrize("names, fractions, model_name, pressure, target, broke_at", EXTREME)
def test_heater_outlet_with_extreme_k_values(names, fractions, model_name, pressure, target, broke_at):
    model = make_model(model_name, make_mixture(names))
    z = _feed(fractions)
    state = flash_ph(model, pressure, target, z)
    assert state.enthalpy == pytest.approx(target, abs=1e-5)
    _check_equilibrium(model, state, z)


def test_benzene_and_helium_cooled_past_10_k_is_refused_not_broken():
    # Benzene with helium (PR, 81.9 bar): the duty's enthalpy lies below what the
    # equilibrium at 10 K has, so no outlet state exists in the search's range; the
    # split at 10 K itself (benzene's K near e^-408) is a verified equilibrium.
    model = make_model("peng-robinson", make_mixture(["benzene", "helium"]))
    z = _feed([0.0433771, 0.956623])
    pressure, target = 8185167.2, -11642.64
    at_10_k = flash_tp(model, 10.0, pressure, z)
    _check_equilibrium(model, at_10_k, z)
    assert at_10_k.enthalpy > target
    with pytest.raises(FlashError) as caught:
        flash_ph(model, pressure, target, z)
    assert "would take the stream below 10 K" in str(caught.value)
    assert "benzene 0.0433771, helium 0.956623" in str(caught.value)
