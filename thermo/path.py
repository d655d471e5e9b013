"""The three-step path between two states of one composition:

    state 1 -> ideal gas at (T1, P1) -> ideal gas at (T2, P2) -> state 2

delta H = -H_res(1) + (H_ig(T2) - H_ig(T1)) + H_res(2), and likewise for S.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from .state import StreamState

STEP_NAMES = ("real-to-ideal", "ideal-gas-change", "ideal-to-real")


@dataclass(frozen=True)
class PathStep:
    """One leg of the path: enthalpy change J/mol, entropy change J/(mol K)."""

    name: str
    enthalpy: float
    entropy: float


@dataclass(frozen=True)
class PathChange:
    """delta H (J/mol) and delta S (J/(mol K)) with the three legs broken out."""

    steps: tuple[PathStep, PathStep, PathStep]

    @property
    def enthalpy(self) -> float:
        """Total change of molar enthalpy, J/mol."""
        return sum(step.enthalpy for step in self.steps)

    @property
    def entropy(self) -> float:
        """Total change of molar entropy, J/(mol K)."""
        return sum(step.entropy for step in self.steps)

    def as_dict(self) -> dict[str, dict[str, float]]:
        """The legs by name, each {"enthalpy_J_mol", "entropy_J_molK"}."""
        return {
            step.name: {"enthalpy_J_mol": step.enthalpy, "entropy_J_molK": step.entropy}
            for step in self.steps
        }


def path_between(start: StreamState, end: StreamState) -> PathChange:
    """The three-step path from ``start`` to ``end`` (one composition)."""
    a, b = start.composition, end.composition
    if a is not b and (a.shape != b.shape or float(np.abs(a - b).max()) > 1e-9):
        raise ValueError("a three-step path joins two states of one composition")
    return PathChange(
        (
            PathStep(STEP_NAMES[0], -start.residual_enthalpy, -start.residual_entropy),
            PathStep(
                STEP_NAMES[1],
                end.ideal_gas_enthalpy - start.ideal_gas_enthalpy,
                end.ideal_gas_entropy - start.ideal_gas_entropy,
            ),
            PathStep(STEP_NAMES[2], end.residual_enthalpy, end.residual_entropy),
        )
    )


def property_change(model, t1: float, p1: float, t2: float, p2: float, x: np.ndarray) -> PathChange:
    """delta H (J/mol) and delta S (J/(mol K)) of composition ``x`` from
    (t1 K, p1 Pa) to (t2 K, p2 Pa), each state at its equilibrium phase(s)."""
    from .flash import flash_tp

    return path_between(flash_tp(model, t1, p1, x), flash_tp(model, t2, p2, x))
