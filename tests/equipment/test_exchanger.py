"""Counter-current exchangers: each specification, the energy balance, and
the sliced temperature profile catching a cross that both ends hide."""

from __future__ import annotations

import numpy as np
import pytest

from thermo import flash
from thermo.equipment import exchanger
from thermo.equipment.common import Flow
from thermo.mixture import make_mixture
from thermo.models import make_model

from unit_helpers import AMBIENT, assert_balanced, flow_at


def test_hot_outlet_temperature_sets_the_duty_and_the_cold_outlet(gas):
    model, x = gas
    hot = flow_at(model, 380.0, 50e5, x, molar_flow=40.0)
    cold = flow_at(model, 290.0, 30e5, x, molar_flow=60.0)
    result = exchanger.exchange(model, hot, cold, ambient_temperature=AMBIENT, hot_outlet_temperature=320.0,
                                hot_pressure_drop=0.5e5, cold_pressure_drop=0.3e5)
    hot_out, cold_out = (f.state for f in result.outlets)
    hand_hot = flash.flash_tp(model, 320.0, 49.5e5, x)
    q = 40.0 * (hot.state.enthalpy - hand_hot.enthalpy)
    assert result.duty == pytest.approx(q, rel=1e-12)
    assert cold_out.enthalpy == pytest.approx(cold.state.enthalpy + q / 60.0, rel=1e-9, abs=1e-6)
    assert cold_out.pressure == pytest.approx(29.7e5, rel=1e-15)
    assert result.balance.entropy_generation > 0.0
    assert_balanced(result)


def test_the_three_specifications_agree(gas):
    model, x = gas
    hot = flow_at(model, 380.0, 50e5, x, molar_flow=40.0)
    cold = flow_at(model, 290.0, 30e5, x, molar_flow=60.0)
    first = exchanger.exchange(model, hot, cold, ambient_temperature=AMBIENT, hot_outlet_temperature=320.0)
    cold_t = first.outlets[1].state.temperature
    by_cold = exchanger.exchange(model, hot, cold, ambient_temperature=AMBIENT, cold_outlet_temperature=cold_t)
    by_duty = exchanger.exchange(model, hot, cold, ambient_temperature=AMBIENT, duty=first.duty)
    for other in (by_cold, by_duty):
        assert other.duty == pytest.approx(first.duty, rel=1e-7)
        assert other.outlets[0].state.temperature == pytest.approx(320.0, abs=1e-5)
        assert other.outlets[1].state.temperature == pytest.approx(cold_t, abs=1e-5)
        assert_balanced(other)


def test_profile_has_at_least_twenty_slices_and_reports_the_min_approach(gas):
    model, x = gas
    hot = flow_at(model, 380.0, 50e5, x, molar_flow=40.0)
    cold = flow_at(model, 290.0, 30e5, x, molar_flow=60.0)
    result = exchanger.exchange(model, hot, cold, ambient_temperature=AMBIENT, hot_outlet_temperature=320.0)
    d = result.details
    assert d["profile_slices"] >= 20
    assert len(d["profile_hot_temperature_K"]) == d["profile_slices"] + 1
    approach = np.subtract(d["profile_hot_temperature_K"], d["profile_cold_temperature_K"])
    assert d["min_approach_K"] == pytest.approx(approach.min(), abs=1e-12)
    assert d["min_approach_K"] <= min(d["hot_end_approach_K"], d["cold_end_approach_K"]) + 1e-9
    assert d["cold_end_approach_K"] == pytest.approx(320.0 - 290.0, abs=1e-9)
    # an interior point is the PH flash it claims to be
    k = 7
    state = flash.flash_ph(model, 50e5, result.outlets[0].state.enthalpy + d["profile_duty_W"][k] / 40.0, x, 330.0)
    assert d["profile_hot_temperature_K"][k] == pytest.approx(state.temperature, abs=1e-7)


@pytest.fixture(scope="module")
def gas_cooler():
    """Supercritical carbon dioxide at 80 bar cooled from 60 to 25 degC by
    water from 20 to 55 degC: 5 K at both ends, but the CO2's heat capacity
    peaks near its pseudo-critical temperature (about 35 degC at 80 bar), so
    its temperature stalls while the water's keeps rising: an internal cross."""
    model = make_model("peng-robinson", make_mixture(["carbon-dioxide", "water"]))
    co2, water = np.array([1.0, 0.0]), np.array([0.0, 1.0])
    hot = flow_at(model, 333.15, 80e5, co2, molar_flow=1.0)
    hot_out = flash.flash_tp(model, 298.15, 80e5, co2)
    cold_in = flash.flash_tp(model, 293.15, 3e5, water)
    cold_out = flash.flash_tp(model, 328.15, 3e5, water)
    water_flow = (hot.state.enthalpy - hot_out.enthalpy) / (cold_out.enthalpy - cold_in.enthalpy)
    return model, hot, Flow(cold_in, water_flow)


def test_an_internal_cross_is_caught_when_both_ends_look_fine(gas_cooler):
    model, hot, cold = gas_cooler
    result = exchanger.exchange(model, hot, cold, ambient_temperature=AMBIENT, hot_outlet_temperature=298.15)
    d = result.details
    assert d["hot_end_approach_K"] == pytest.approx(5.0, abs=1e-6)
    assert d["cold_end_approach_K"] == pytest.approx(5.0, abs=1e-6)
    assert d["min_approach_K"] < -1.0
    assert 0.0 < d["min_approach_at_duty_fraction"] < 1.0
    assert_balanced(result)
