"""Mixers: adiabatic, different compositions, checked against the engine."""

from __future__ import annotations

import numpy as np
import pytest

from thermo import flash
from thermo.equipment import mixer
from thermo.equipment.common import UnitError
from thermo.mixture import make_mixture
from thermo.models import make_model

from unit_helpers import AMBIENT, assert_balanced, flow_at


@pytest.fixture(scope="module")
def pair():
    model = make_model("peng-robinson", make_mixture(["methane", "ethane", "carbon-dioxide"]))
    return model, np.array([1.0, 0.0, 0.0]), np.array([0.0, 0.6, 0.4])


def test_outlet_has_the_flow_weighted_composition_and_enthalpy_at_the_lowest_pressure(pair):
    model, x1, x2 = pair
    a = flow_at(model, 300.0, 30e5, x1, molar_flow=30.0)
    b = flow_at(model, 360.0, 25e5, x2, molar_flow=10.0)
    result = mixer.mix(model, (a, b), ambient_temperature=AMBIENT)
    out = result.outlets[0]
    assert out.molar_flow == pytest.approx(40.0, rel=1e-15)
    assert np.allclose(out.state.composition, (30.0 * x1 + 10.0 * x2) / 40.0, atol=1e-15)
    assert out.state.pressure == 25e5
    hand = (a.enthalpy_flow + b.enthalpy_flow) / 40.0
    assert out.state.enthalpy == pytest.approx(hand, rel=1e-9, abs=1e-6)
    check = flash.flash_ph(model, 25e5, hand, out.state.composition, 320.0)
    assert out.state.temperature == pytest.approx(check.temperature, abs=1e-7)
    assert_balanced(result)


def test_mixing_different_gases_generates_entropy(pair):
    model, x1, x2 = pair
    a = flow_at(model, 300.0, 20e5, x1, molar_flow=30.0)
    b = flow_at(model, 300.0, 20e5, x2, molar_flow=10.0)
    result = mixer.mix(model, (a, b), ambient_temperature=AMBIENT)
    hand = result.outlets[0].entropy_flow - a.entropy_flow - b.entropy_flow
    assert result.balance.entropy_generation == pytest.approx(hand, rel=1e-12)
    # at least half the ideal entropy of mixing, 40 R (-sum y ln y), is generated (the
    # real-gas correction at 20 bar is far smaller than that)
    y = result.outlets[0].state.composition
    ideal_mixing = -40.0 * 8.314462618 * float(np.sum(y[y > 0] * np.log(y[y > 0])))
    assert result.balance.entropy_generation > 0.5 * ideal_mixing


def test_a_given_outlet_pressure_is_used(pair):
    model, x1, x2 = pair
    a = flow_at(model, 300.0, 30e5, x1, molar_flow=30.0)
    b = flow_at(model, 300.0, 25e5, x2, molar_flow=10.0)
    result = mixer.mix(model, (a, b), ambient_temperature=AMBIENT, outlet_pressure=20e5)
    assert result.outlets[0].state.pressure == 20e5
    assert result.details["lowest_inlet_pressure_Pa"] == 25e5
    assert_balanced(result)


def test_mixing_only_empty_streams_is_refused(pair):
    model, x1, x2 = pair
    a = flow_at(model, 300.0, 30e5, x1, molar_flow=0.0)
    with pytest.raises(UnitError):
        mixer.mix(model, (a,), ambient_temperature=AMBIENT)
