"""Heaters and coolers against hand calculations with the engine's own flashes."""

from __future__ import annotations

import pytest

from thermo import flash
from thermo.equipment import heater
from thermo.equipment.common import UnitError
from thermo.spec import UnitSpec

from unit_helpers import AMBIENT, assert_balanced, flow_at


def test_outlet_temperature_gives_duty_n_times_enthalpy_rise(gas):
    model, x = gas
    inlet = flow_at(model, 290.0, 40e5, x)
    result = heater.heat_stream(model, inlet, ambient_temperature=AMBIENT, outlet_temperature=330.0,
                                pressure_drop=0.5e5)
    expected_out = flash.flash_tp(model, 330.0, 39.5e5, x)
    assert result.outlets[0].state.pressure == pytest.approx(39.5e5, rel=1e-15)
    assert result.duty == pytest.approx(100.0 * (expected_out.enthalpy - inlet.state.enthalpy), rel=1e-12)
    assert result.duty > 0.0
    assert result.power is None
    assert_balanced(result)


def test_duty_gives_outlet_enthalpy_and_round_trips_to_temperature(gas):
    model, x = gas
    inlet = flow_at(model, 290.0, 40e5, x)
    by_temperature = heater.heat_stream(model, inlet, ambient_temperature=AMBIENT, outlet_temperature=320.0)
    by_duty = heater.heat_stream(model, inlet, ambient_temperature=AMBIENT, duty=by_temperature.duty)
    out = by_duty.outlets[0].state
    assert out.enthalpy == pytest.approx(inlet.state.enthalpy + by_temperature.duty / 100.0, rel=1e-9)
    assert out.temperature == pytest.approx(320.0, abs=1e-6)
    assert_balanced(by_duty)


def test_medium_temperature_charges_the_heat_at_the_medium(gas):
    model, x = gas
    inlet = flow_at(model, 290.0, 40e5, x)
    result = heater.heat_stream(model, inlet, ambient_temperature=AMBIENT, outlet_temperature=330.0,
                                medium_temperature=400.0)
    out = result.outlets[0]
    hand = 100.0 * (out.state.entropy - inlet.state.entropy) - result.duty / 400.0
    assert result.balance.entropy_generation == pytest.approx(hand, rel=1e-12)
    assert result.balance.entropy_generation > 0.0
    assert result.balance.second_law_complete
    assert result.notes == ()


def test_without_medium_the_entropy_figure_is_the_stream_change_and_a_note_says_so(gas):
    model, x = gas
    inlet = flow_at(model, 290.0, 40e5, x)
    result = heater.heat_stream(model, inlet, ambient_temperature=AMBIENT, outlet_temperature=330.0)
    hand = 100.0 * (result.outlets[0].state.entropy - inlet.state.entropy)
    assert result.balance.entropy_generation == pytest.approx(hand, rel=1e-12)
    assert not result.balance.second_law_complete
    assert any("medium_temperature" in note for note in result.notes)


def test_cooler_duty_in_the_file_is_heat_removed_and_comes_out_negative(gas):
    model, x = gas
    inlet = flow_at(model, 350.0, 40e5, x)
    spec = UnitSpec("after-cooler", "cooler", {"inlet": "a", "outlet": "b"},
                    {"duty": 50_000.0, "medium_temperature": 300.0})
    result = heater.solve(spec, (inlet,), model, AMBIENT)
    assert result.duty == -50_000.0
    assert result.outlets[0].state.enthalpy == pytest.approx(inlet.state.enthalpy - 500.0, rel=1e-9)
    assert result.outlets[0].state.temperature < 350.0
    assert result.balance.entropy_generation > 0.0
    assert_balanced(result)


def test_three_step_path_adds_up_to_the_change(gas):
    model, x = gas
    inlet = flow_at(model, 250.0, 60e5, x)
    result = heater.heat_stream(model, inlet, ambient_temperature=AMBIENT, outlet_temperature=300.0)
    out = result.outlets[0]
    assert sum(result.balance.path_enthalpy) == pytest.approx(100.0 * (out.state.enthalpy - inlet.state.enthalpy), rel=1e-10)
    assert sum(result.balance.path_entropy) == pytest.approx(100.0 * (out.state.entropy - inlet.state.entropy), rel=1e-10)
    assert result.balance.path_enthalpy[0] == pytest.approx(-100.0 * inlet.state.residual_enthalpy, rel=1e-12)
    (index, change), = result.paths
    assert index == 0
    assert change.enthalpy == pytest.approx(out.state.enthalpy - inlet.state.enthalpy, rel=1e-10)


def test_outlet_vapor_fraction_is_met_or_refused_clearly(gas):
    model, x = gas
    inlet = flow_at(model, 200.0, 30e5, x)
    if not hasattr(flash, "flash_pv"):
        with pytest.raises(UnitError) as caught:
            heater.heat_stream(model, inlet, ambient_temperature=AMBIENT, outlet_vapor_fraction=1.0)
        assert caught.value.key == "outlet_vapor_fraction"
        return
    result = heater.heat_stream(model, inlet, ambient_temperature=AMBIENT, outlet_vapor_fraction=1.0)
    assert result.outlets[0].state.vapor_fraction == pytest.approx(1.0, abs=1e-9)
    assert_balanced(result)


def test_duty_on_a_stream_without_flow_is_a_clear_error(gas):
    model, x = gas
    inlet = flow_at(model, 290.0, 40e5, x, molar_flow=0.0)
    with pytest.raises(UnitError) as caught:
        heater.heat_stream(model, inlet, ambient_temperature=AMBIENT, duty=1000.0)
    assert "no flow" in str(caught.value)


def test_pressure_drop_beyond_the_inlet_pressure_is_refused(gas):
    model, x = gas
    inlet = flow_at(model, 290.0, 5e5, x)
    with pytest.raises(UnitError) as caught:
        heater.heat_stream(model, inlet, ambient_temperature=AMBIENT, outlet_temperature=300.0, pressure_drop=6e5)
    assert caught.value.key == "pressure_drop"
