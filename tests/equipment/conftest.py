"""Fixtures for the unit tests (helpers live in unit_helpers.py)."""

from __future__ import annotations

import pytest


@pytest.fixture(scope="session")
def gas(natural_gas):
    """(Peng-Robinson model, composition) of the lean natural gas."""
    return natural_gas.model("peng-robinson"), natural_gas.x
