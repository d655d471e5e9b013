"""Compressors and expanders against hand calculations with the engine.

The polytropic method is checked two ways: against the closed form for an
ideal gas of constant Cp (argon, Cp = 5/2 R), T2/T1 = (P2/P1)^(R/(Cp eta_p)),
and for a real gas against an independent integration of the polytropic
path dh/dP = v/eta_p with scipy's adaptive Runge-Kutta (each v from a PH
flash), a different numerical route to the same limit.
"""

from __future__ import annotations

import numpy as np
import pytest
from scipy.integrate import solve_ivp

from thermo import flash
from thermo.components import R
from thermo.equipment import compressor
from thermo.equipment.common import UnitError
from thermo.mixture import make_mixture
from thermo.models import make_model
from thermo.spec import UnitSpec

from unit_helpers import AMBIENT, assert_balanced, flow_at


def test_isentropic_compression_matches_a_hand_calculation(gas):
    model, x = gas
    inlet = flow_at(model, 300.0, 20e5, x)
    result = compressor.compress(model, inlet, ambient_temperature=AMBIENT, outlet_pressure=60e5,
                                 isentropic_efficiency=0.78)
    ideal = flash.flash_ps(model, 60e5, inlet.state.entropy, x, 380.0)
    h2 = inlet.state.enthalpy + (ideal.enthalpy - inlet.state.enthalpy) / 0.78
    out = result.outlets[0].state
    assert out.enthalpy == pytest.approx(h2, rel=1e-9)
    assert out.pressure == 60e5
    assert result.power == pytest.approx(100.0 * (out.enthalpy - inlet.state.enthalpy), rel=1e-12)
    assert result.power > 0.0 and result.duty is None
    assert result.details["isentropic_outlet_temperature_K"] == pytest.approx(ideal.temperature, abs=1e-7)
    assert result.balance.entropy_generation > 0.0
    assert_balanced(result)


def test_default_efficiency_from_the_spec_is_0_75(gas):
    model, x = gas
    inlet = flow_at(model, 300.0, 20e5, x)
    spec = UnitSpec("booster", "compressor", {"inlet": "a", "outlet": "b"}, {"pressure_ratio": 2.0})
    result = compressor.solve(spec, (inlet,), model, AMBIENT)
    assert result.details["isentropic_efficiency"] == 0.75
    assert result.outlets[0].state.pressure == pytest.approx(40e5, rel=1e-15)
    direct = compressor.compress(model, inlet, ambient_temperature=AMBIENT, outlet_pressure=40e5,
                                 isentropic_efficiency=0.75)
    assert result.power == pytest.approx(direct.power, rel=1e-12)


def test_polytropic_compression_of_a_constant_cp_ideal_gas_follows_the_closed_form():
    mixture = make_mixture(["argon"])
    model = make_model("ideal-gas", mixture)
    x = np.array([1.0])
    cp = mixture.components[0].cp(300.0)
    inlet = flow_at(model, 300.0, 1e5, x)
    result = compressor.compress(model, inlet, ambient_temperature=AMBIENT, outlet_pressure=4e5,
                                 polytropic_efficiency=0.8)
    closed_form = 300.0 * 4.0 ** (R / (cp * 0.8))
    assert result.outlets[0].state.temperature == pytest.approx(closed_form, rel=1e-6)
    # polytropic 0.8 over a ratio of 4 is a lower isentropic efficiency (the reheat effect)
    assert result.details["equivalent_isentropic_efficiency"] < 0.8
    assert_balanced(result)


def test_polytropic_compression_of_a_real_gas_agrees_with_an_independent_path_integration(gas):
    model, x = gas
    inlet = flow_at(model, 300.0, 20e5, x)
    eta = 0.8
    result = compressor.compress(model, inlet, ambient_temperature=AMBIENT, outlet_pressure=70e5,
                                 polytropic_efficiency=eta)
    guess = [300.0]

    def slope(pressure, h):
        state = flash.flash_ph(model, pressure, float(h[0]), x, guess[0])
        guess[0] = state.temperature
        return [state.molar_volume / eta]

    path = solve_ivp(slope, (20e5, 70e5), [inlet.state.enthalpy], rtol=1e-9, atol=1e-6)
    h_reference = path.y[0, -1]
    rise = h_reference - inlet.state.enthalpy
    # both routes converge to the same limit; 1e-5 of the enthalpy rise is far
    # below the step-count tolerance of either method and far above round-off
    assert result.outlets[0].state.enthalpy == pytest.approx(h_reference, abs=1e-5 * rise)
    assert "Runge-Kutta" in result.details["polytropic_method"]
    assert_balanced(result)


def test_polytropic_compression_is_the_limit_of_small_isentropic_steps(gas):
    # The definition behind the number: many small steps, each isentropic
    # with efficiency eta_p (dh = dh_s / eta_p), first order in the step, so
    # two step counts extrapolate to the limit.
    model, x = gas
    inlet = flow_at(model, 300.0, 20e5, x)
    eta = 0.8
    result = compressor.compress(model, inlet, ambient_temperature=AMBIENT, outlet_pressure=70e5,
                                 polytropic_efficiency=eta)

    def small_steps(count):
        state = inlet.state
        for k in range(1, count + 1):
            pressure = 20e5 * (70e5 / 20e5) ** (k / count)
            ideal = flash.flash_ps(model, pressure, state.entropy, x, state.temperature)
            h = state.enthalpy + (ideal.enthalpy - state.enthalpy) / eta
            state = flash.flash_ph(model, pressure, h, x, ideal.temperature)
        return state.enthalpy

    coarse, fine = small_steps(32), small_steps(64)
    limit = 2.0 * fine - coarse
    rise = limit - inlet.state.enthalpy
    assert result.outlets[0].state.enthalpy == pytest.approx(limit, abs=2e-5 * rise)


def test_expander_takes_work_out_with_the_default_efficiency(gas):
    model, x = gas
    inlet = flow_at(model, 320.0, 60e5, x)
    spec = UnitSpec("turbo", "expander", {"inlet": "a", "outlet": "b"}, {"outlet_pressure": 20e5})
    result = compressor.solve(spec, (inlet,), model, AMBIENT)
    ideal = flash.flash_ps(model, 20e5, inlet.state.entropy, x, 260.0)
    h2 = inlet.state.enthalpy - 0.80 * (inlet.state.enthalpy - ideal.enthalpy)
    out = result.outlets[0].state
    assert out.enthalpy == pytest.approx(h2, rel=1e-9, abs=1e-6)
    assert result.power == pytest.approx(100.0 * (out.enthalpy - inlet.state.enthalpy), rel=1e-12)
    assert result.power < 0.0
    assert result.balance.entropy_generation > 0.0
    assert_balanced(result)


def test_an_expander_cools_more_than_a_valve_over_the_same_drop(gas):
    from thermo.equipment import valve

    model, x = gas
    inlet = flow_at(model, 320.0, 60e5, x)
    expanded = compressor.expand(model, inlet, ambient_temperature=AMBIENT, outlet_pressure=20e5)
    throttled = valve.throttle(model, inlet, ambient_temperature=AMBIENT, outlet_pressure=20e5)
    assert expanded.outlets[0].state.temperature < throttled.outlets[0].state.temperature - 10.0
    assert expanded.balance.entropy_generation < throttled.balance.entropy_generation


def test_an_efficiency_above_one_is_refused(gas):
    model, x = gas
    inlet = flow_at(model, 300.0, 20e5, x)
    with pytest.raises(UnitError) as caught:
        compressor.compress(model, inlet, ambient_temperature=AMBIENT, pressure_ratio=2.0,
                            isentropic_efficiency=1.2)
    assert caught.value.key == "isentropic_efficiency"
