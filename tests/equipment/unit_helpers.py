"""Helpers for the unit tests: a flow at a given state, the balance check."""

from __future__ import annotations

import pytest

from thermo.equipment.common import Flow, UnitOutcome
from thermo.flash import flash_tp

AMBIENT = 288.15  # K, dead state for lost work in these tests
BALANCE_TOLERANCE = 1e-6  # relative energy-balance residual every unit must meet


def flow_at(model, temperature: float, pressure: float, x, molar_flow: float = 100.0) -> Flow:
    """A Flow at T (K), P (Pa) with ``molar_flow`` mol/s, by a TP flash."""
    return Flow(flash_tp(model, temperature, pressure, x), molar_flow)


def assert_balanced(result: UnitOutcome) -> None:
    """The unit's energy balance closes to 1e-6 relative, and lost work is T0 S_gen."""
    assert result.balance.relative_residual < BALANCE_TOLERANCE
    assert result.balance.lost_work == pytest.approx(AMBIENT * result.balance.entropy_generation, rel=1e-12, abs=1e-12)
