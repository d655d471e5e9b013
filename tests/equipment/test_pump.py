"""Pumps: real-fluid h2 = h1 + (h2s - h1)/eta, checked by hand with the engine."""

from __future__ import annotations

import numpy as np
import pytest

from thermo import flash
from thermo.equipment import pump
from thermo.mixture import make_mixture
from thermo.models import make_model
from thermo.spec import UnitSpec

from unit_helpers import AMBIENT, assert_balanced, flow_at


@pytest.fixture(scope="module")
def liquid_butane():
    model = make_model("peng-robinson", make_mixture(["n-butane"]))
    return model, np.array([1.0])


def test_pump_matches_the_real_fluid_hand_calculation(liquid_butane):
    model, x = liquid_butane
    inlet = flow_at(model, 290.0, 5e5, x, molar_flow=50.0)
    assert inlet.state.phase == "liquid"
    spec = UnitSpec("feed-pump", "pump", {"inlet": "a", "outlet": "b"}, {"pressure_rise": 45e5})
    result = pump.solve(spec, (inlet,), model, AMBIENT)
    ideal = flash.flash_ps(model, 50e5, inlet.state.entropy, x, 290.0)
    h2 = inlet.state.enthalpy + (ideal.enthalpy - inlet.state.enthalpy) / 0.70
    out = result.outlets[0].state
    assert result.details["efficiency"] == 0.70
    assert out.pressure == pytest.approx(50e5, rel=1e-15)
    assert out.enthalpy == pytest.approx(h2, rel=1e-9, abs=1e-6)
    assert result.power == pytest.approx(50.0 * (out.enthalpy - inlet.state.enthalpy), rel=1e-12)
    assert result.balance.entropy_generation > 0.0
    assert_balanced(result)


def test_pump_work_is_close_to_v_dp_over_eta_for_a_liquid(liquid_butane):
    # For a nearly incompressible liquid the isentropic work is v dP to within
    # the liquid's compressibility over the rise: a few per cent at most here.
    model, x = liquid_butane
    inlet = flow_at(model, 290.0, 5e5, x, molar_flow=50.0)
    result = pump.pump(model, inlet, ambient_temperature=AMBIENT, outlet_pressure=50e5, efficiency=0.7)
    assert result.details["isentropic_power_W"] == pytest.approx(result.details["hydraulic_power_W"], rel=0.03)
