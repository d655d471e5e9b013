"""Shared fixtures for the engine tests: library mixtures and the models over them.

Other test modules may add fixtures here; keep each one small and documented.
"""

from __future__ import annotations

import os

import numpy as np
import pytest
from hypothesis import settings

# CI runs the same hypothesis examples every time (a red CI must be
# reproducible); a developer's run explores new ones.
settings.register_profile("ci", derandomize=True, print_blob=True)
if os.environ.get("CI"):
    settings.load_profile("ci")

from thermo.mixture import Mixture, make_mixture
from thermo.models import make_model

# A lean natural gas, the composition the benchmark also uses (mole fractions).
NATURAL_GAS = {"methane": 0.85, "ethane": 0.07, "propane": 0.04, "n-butane": 0.02, "nitrogen": 0.02}

# Interaction parameters chosen for the tests only: nonzero and of the size
# cubic-model k_ij take for such pairs, so that every mixing term is exercised.
# They are not fitted data and nothing outside the tests relies on them.
TEST_KIJ = {
    ("methane", "ethane"): 0.003,
    ("methane", "n-butane"): 0.012,
    ("methane", "nitrogen"): 0.031,
    ("ethane", "nitrogen"): 0.045,
    ("propane", "nitrogen"): 0.085,
    ("n-butane", "nitrogen"): 0.08,
    ("methane", "carbon-dioxide"): 0.092,
    ("ethane", "propane"): 0.001,
    ("propane", "n-butane"): 0.003,
    ("ethane", "n-butane"): 0.01,
    ("carbon-dioxide", "nitrogen"): -0.017,
}


class Fluid:
    """A mixture over some library components and one composition of it."""

    def __init__(self, fractions: dict[str, float], kij: dict | None = None):
        self.mixture: Mixture = make_mixture(list(fractions), TEST_KIJ if kij is None else kij)
        x = np.array([fractions[name] for name in fractions], dtype=float)
        self.x = x / x.sum()

    def model(self, name: str):
        """The equation of state ``name`` (as the flowsheet file spells it) over this mixture."""
        return make_model(name, self.mixture)


@pytest.fixture(scope="session")
def fluid():
    """Factory: ``fluid({"methane": 0.9, "ethane": 0.1})`` -> Fluid with the test k_ij."""
    return Fluid


@pytest.fixture(scope="session")
def natural_gas() -> Fluid:
    """The five-component lean natural gas with the test k_ij."""
    return Fluid(NATURAL_GAS)


@pytest.fixture(scope="session")
def methane() -> Fluid:
    """Pure methane."""
    return Fluid({"methane": 1.0})
