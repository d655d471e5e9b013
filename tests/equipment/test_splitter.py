"""Splitters: flows by fraction, the inlet's state on every outlet."""

from __future__ import annotations

import pytest

from thermo.equipment import splitter
from thermo.equipment.common import UnitError
from thermo.spec import UnitSpec

from unit_helpers import AMBIENT, assert_balanced, flow_at


def test_outlets_carry_the_fractions_of_the_flow_at_the_inlet_state(gas):
    model, x = gas
    inlet = flow_at(model, 300.0, 30e5, x, molar_flow=80.0)
    result = splitter.split(inlet, [0.25, 0.75], ambient_temperature=AMBIENT)
    assert [f.molar_flow for f in result.outlets] == [pytest.approx(20.0), pytest.approx(60.0)]
    assert all(f.state is inlet.state for f in result.outlets)
    assert result.balance.residual == pytest.approx(0.0, abs=1e-9)
    assert result.balance.entropy_generation == pytest.approx(0.0, abs=1e-9)
    assert_balanced(result)


def test_fractions_that_do_not_sum_to_one_are_refused(gas):
    model, x = gas
    inlet = flow_at(model, 300.0, 30e5, x)
    with pytest.raises(UnitError) as caught:
        splitter.split(inlet, [0.3, 0.6], ambient_temperature=AMBIENT)
    assert "sum to 0.9" in str(caught.value)


def test_one_fraction_per_outlet(gas):
    model, x = gas
    inlet = flow_at(model, 300.0, 30e5, x)
    spec = UnitSpec("tee", "splitter", {"inlet": "a", "outlets": ("b", "c", "d")}, {"fractions": (0.5, 0.5)})
    with pytest.raises(UnitError) as caught:
        splitter.solve(spec, (inlet,), model, AMBIENT)
    assert caught.value.key == "fractions"
