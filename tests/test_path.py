"""The three-step path state 1 -> ideal gas -> ideal gas at (T2, P2) -> state 2,
and the ideal-gas integrals in its middle leg."""

from __future__ import annotations

import math

import numpy as np
import pytest
from scipy.integrate import quad

from thermo import idealgas
from thermo.components import R
from thermo.departures import residual
from thermo.path import STEP_NAMES, path_between, property_change
from thermo.properties import single_phase_state

GAS_STATES = [(280.0, 70e5), (320.0, 20e5), (400.0, 5e5), (250.0, 40e5)]


def mixture_cp(mixture, x, t: float) -> float:
    """sum x_i Cp_i(T), J/(mol K), from each component record's own polynomial."""
    return sum(xi * c.cp(t) for xi, c in zip(x, mixture.components))


@pytest.mark.parametrize("model_name", ["peng-robinson", "soave-redlich-kwong", "virial"])
def test_legs_are_minus_departure_ideal_change_plus_departure(natural_gas, model_name):
    model, x = natural_gas.model(model_name), natural_gas.x
    (t1, p1), (t2, p2) = GAS_STATES[0], GAS_STATES[2]
    if model_name == "virial":
        p1 = 10e5  # inside the truncated virial equation's range
    start, end = single_phase_state(model, t1, p1, x), single_phase_state(model, t2, p2, x)
    change = path_between(start, end)
    assert tuple(step.name for step in change.steps) == STEP_NAMES
    to_ideal, ideal_change, to_real = change.steps
    r1, r2 = residual(model, t1, p1, x), residual(model, t2, p2, x)
    assert to_ideal.enthalpy == pytest.approx(-r1.enthalpy, rel=1e-9)
    assert to_ideal.entropy == pytest.approx(-r1.entropy, rel=1e-9)
    assert to_real.enthalpy == pytest.approx(r2.enthalpy, rel=1e-9)
    assert to_real.entropy == pytest.approx(r2.entropy, rel=1e-9)
    mix = natural_gas.mixture
    assert ideal_change.enthalpy == pytest.approx(
        idealgas.enthalpy(mix, t2, x) - idealgas.enthalpy(mix, t1, x), rel=1e-11)
    assert ideal_change.entropy == pytest.approx(
        idealgas.entropy(mix, t2, p2, x) - idealgas.entropy(mix, t1, p1, x), rel=1e-11)
    assert change.enthalpy == pytest.approx(end.enthalpy - start.enthalpy, rel=1e-11)
    assert change.entropy == pytest.approx(end.entropy - start.entropy, rel=1e-11)
    legs = change.as_dict()
    assert list(legs) == list(STEP_NAMES)
    assert legs["ideal-to-real"]["enthalpy_J_mol"] == to_real.enthalpy
    assert legs["real-to-ideal"]["entropy_J_molK"] == to_ideal.entropy


@pytest.mark.parametrize("t1, p1, t2, p2", [(250.0, 1e5, 450.0, 30e5), (300.0, 50e5, 300.0, 2e5), (500.0, 1e5, 220.0, 1e5)])
def test_ideal_gas_leg_is_the_integral_of_cp(natural_gas, t1, p1, t2, p2):
    """Delta H_ig = int Cp dT and Delta S_ig = int Cp/T dT - R ln(P2/P1),
    integrated numerically from each record's Cp polynomial."""
    model, x, mix = natural_gas.model("peng-robinson"), natural_gas.x, natural_gas.mixture
    change = path_between(single_phase_state(model, t1, p1, x), single_phase_state(model, t2, p2, x))
    dh, _ = quad(lambda t: mixture_cp(mix, x, t), t1, t2, epsabs=0.0, epsrel=1e-13)
    ds, _ = quad(lambda t: mixture_cp(mix, x, t) / t, t1, t2, epsabs=0.0, epsrel=1e-13)
    ds -= R * math.log(p2 / p1)
    assert change.steps[1].enthalpy == pytest.approx(dh, rel=1e-10, abs=1e-8)
    assert change.steps[1].entropy == pytest.approx(ds, rel=1e-10, abs=1e-11)


def test_ideal_gas_heat_capacity_is_the_temperature_derivative_of_enthalpy(natural_gas):
    mix, x = natural_gas.mixture, natural_gas.x
    for t in (220.0, 300.0, 650.0):
        step = 1e-3
        dh_dt = (idealgas.enthalpy(mix, t + step, x) - idealgas.enthalpy(mix, t - step, x)) / (2 * step)
        ds_dt = (idealgas.entropy(mix, t + step, 1e5, x) - idealgas.entropy(mix, t - step, 1e5, x)) / (2 * step)
        cp = idealgas.heat_capacity(mix, t, x)
        assert cp == pytest.approx(mixture_cp(mix, x, t), rel=1e-12)
        assert dh_dt == pytest.approx(cp, rel=1e-8)
        assert ds_dt == pytest.approx(cp / t, rel=1e-8)


def test_ideal_gas_batch_and_single_state_forms_agree(natural_gas):
    mix, x = natural_gas.mixture, natural_gas.x
    t = np.linspace(200.0, 800.0, 13)
    p = np.geomspace(1e4, 1e7, 13)
    h = idealgas.enthalpy_batch(mix, t, x)
    s = idealgas.entropy_batch(mix, t, p, x)
    for i in range(len(t)):
        assert h[i] == pytest.approx(idealgas.enthalpy(mix, t[i], x), rel=1e-12, abs=1e-9)
        assert s[i] == pytest.approx(idealgas.entropy(mix, t[i], p[i], x), rel=1e-12, abs=1e-12)
        h_one, s_one = idealgas.enthalpy_entropy(mix, float(t[i]), float(p[i]), x)
        assert h_one == pytest.approx(h[i], rel=1e-12, abs=1e-9)
        assert s_one == pytest.approx(s[i], rel=1e-12, abs=1e-12)


def test_path_refuses_two_compositions(fluid):
    here = fluid({"methane": 0.9, "ethane": 0.1})
    model = here.model("peng-robinson")
    start = single_phase_state(model, 300.0, 10e5, np.array([0.9, 0.1]))
    end = single_phase_state(model, 300.0, 10e5, np.array([0.8, 0.2]))
    with pytest.raises(ValueError, match="one composition"):
        path_between(start, end)


@pytest.mark.parametrize("model_name", ["peng-robinson", "soave-redlich-kwong"])
def test_property_change_of_gas_states_equals_single_phase_path(natural_gas, model_name):
    """Far from the phase envelope (warm gas) the flash finds one phase, so
    property_change is the single-phase path."""
    model, x = natural_gas.model(model_name), natural_gas.x
    (t1, p1), (t2, p2) = GAS_STATES[0], GAS_STATES[1]
    change = property_change(model, t1, p1, t2, p2, x)
    expected = path_between(single_phase_state(model, t1, p1, x), single_phase_state(model, t2, p2, x))
    assert change.enthalpy == pytest.approx(expected.enthalpy, rel=1e-9, abs=1e-6)
    assert change.entropy == pytest.approx(expected.entropy, rel=1e-9, abs=1e-9)


def test_reversing_a_path_reverses_every_leg(natural_gas):
    model, x = natural_gas.model("peng-robinson"), natural_gas.x
    a = single_phase_state(model, 280.0, 70e5, x)
    b = single_phase_state(model, 250.0, 40e5, x)
    there, back = path_between(a, b), path_between(b, a)
    assert back.steps[0].enthalpy == pytest.approx(-there.steps[2].enthalpy, rel=1e-14)
    assert back.steps[2].entropy == pytest.approx(-there.steps[0].entropy, rel=1e-14)
    assert back.steps[1].enthalpy == pytest.approx(-there.steps[1].enthalpy, rel=1e-14)
    assert back.enthalpy == pytest.approx(-there.enthalpy, rel=1e-12)
