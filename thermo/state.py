"""States of streams: one or two phases, with the mixture's H and S.

All values SI: K, Pa, J/mol, J/(mol K), m3/mol; compositions are mole-fraction
vectors over the flowsheet's Mixture.
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np

from .departures import Residual

VAPOR = "vapor"
LIQUID = "liquid"
TWO_PHASE = "two-phase"
SUPERCRITICAL = "supercritical"
PHASE_LABELS = (VAPOR, LIQUID, TWO_PHASE, SUPERCRITICAL)


@dataclass(frozen=True)
class PhaseState:
    """One phase of a stream: its share of the moles, composition and properties."""

    label: str  # "vapor" or "liquid"
    amount: float  # moles of this phase per mole of stream
    composition: np.ndarray
    enthalpy: float  # J/mol of this phase
    entropy: float  # J/(mol K) of this phase
    residual: Residual

    @property
    def molar_volume(self) -> float:
        """m3/mol of this phase."""
        return self.residual.molar_volume


@dataclass(frozen=True)
class StreamState:
    """A stream's thermodynamic state at T (K), P (Pa), overall composition.

    ``ideal_gas_enthalpy`` and ``ideal_gas_entropy`` are the same composition
    as an ideal gas at the same T and P: the middle of every three-step path.
    """

    temperature: float
    pressure: float
    composition: np.ndarray
    phase: str
    vapor_fraction: float
    enthalpy: float
    entropy: float
    phases: tuple[PhaseState, ...]
    ideal_gas_enthalpy: float
    ideal_gas_entropy: float
    notes: tuple[str, ...] = field(default=())

    @property
    def residual_enthalpy(self) -> float:
        """H - H_ideal-gas at the same T, P, composition, J/mol."""
        return self.enthalpy - self.ideal_gas_enthalpy

    @property
    def residual_entropy(self) -> float:
        """S - S_ideal-gas at the same T, P, composition, J/(mol K)."""
        return self.entropy - self.ideal_gas_entropy

    @property
    def molar_volume(self) -> float:
        """Molar volume of the stream, m3/mol (phases added)."""
        return sum(p.amount * p.molar_volume for p in self.phases)

    @property
    def compressibility(self) -> float:
        """Z = P V / (R T) of the stream as a whole."""
        from .components import R

        return self.pressure * self.molar_volume / (R * self.temperature)

    def phase_named(self, label: str) -> PhaseState | None:
        """The vapor or liquid phase if present."""
        for p in self.phases:
            if p.label == label:
                return p
        return None
