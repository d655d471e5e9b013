"""Valves: isenthalpic throttling checked against the engine."""

from __future__ import annotations

import pytest

from thermo.equipment import valve
from thermo.equipment.common import UnitError

from unit_helpers import AMBIENT, assert_balanced, flow_at


def test_outlet_enthalpy_equals_inlet_enthalpy(gas):
    model, x = gas
    inlet = flow_at(model, 300.0, 70e5, x)
    result = valve.throttle(model, inlet, ambient_temperature=AMBIENT, outlet_pressure=20e5)
    out = result.outlets[0].state
    assert out.pressure == 20e5
    assert out.enthalpy == pytest.approx(inlet.state.enthalpy, rel=1e-9, abs=1e-9 * 8.314 * 300.0)
    assert out.temperature < inlet.state.temperature  # natural gas cools on throttling near ambient
    assert result.duty is None and result.power is None
    assert_balanced(result)


def test_throttling_generates_entropy_equal_to_the_stream_entropy_rise(gas):
    model, x = gas
    inlet = flow_at(model, 300.0, 70e5, x)
    result = valve.throttle(model, inlet, ambient_temperature=AMBIENT, outlet_pressure=20e5)
    hand = 100.0 * (result.outlets[0].state.entropy - inlet.state.entropy)
    assert result.balance.entropy_generation == pytest.approx(hand, rel=1e-12)
    assert result.balance.entropy_generation > 0.0
    assert result.balance.lost_work == pytest.approx(AMBIENT * hand, rel=1e-12)


def test_pressure_drop_and_outlet_pressure_agree(gas):
    model, x = gas
    inlet = flow_at(model, 300.0, 70e5, x)
    by_drop = valve.throttle(model, inlet, ambient_temperature=AMBIENT, pressure_drop=50e5)
    by_outlet = valve.throttle(model, inlet, ambient_temperature=AMBIENT, outlet_pressure=20e5)
    assert by_drop.outlets[0].state.temperature == pytest.approx(by_outlet.outlets[0].state.temperature, abs=1e-9)
    assert by_drop.details["temperature_drop_per_bar_K_bar"] == pytest.approx(
        (300.0 - by_drop.outlets[0].state.temperature) / 50.0, rel=1e-12)


def test_a_drop_below_vacuum_is_refused_with_the_key(gas):
    model, x = gas
    inlet = flow_at(model, 300.0, 5e5, x)
    with pytest.raises(UnitError) as caught:
        valve.throttle(model, inlet, ambient_temperature=AMBIENT, pressure_drop=5e5)
    assert caught.value.key == "pressure_drop"
    assert caught.value.fix
