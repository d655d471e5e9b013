"""Properties of a single-phase state: ideal gas plus departure."""

from __future__ import annotations

import numpy as np

from . import idealgas
from .departures import LIQUID_LIKE, Residual, residual
from .state import LIQUID, SUPERCRITICAL, VAPOR, PhaseState, StreamState


def pseudo_critical(mixture, x: np.ndarray) -> tuple[float, float]:
    """Kay's-rule pseudo-critical temperature (K) and pressure (Pa)."""
    terms = mixture.terms(x)
    return terms.pseudo_critical_temperature, terms.pseudo_critical_pressure


def phase_of_single_phase(model, temperature: float, pressure: float, x: np.ndarray, res: Residual) -> str:
    """Label for a single-phase state: supercritical above the (pseudo-)critical
    temperature and pressure, else liquid or vapor by the chosen root."""
    tc, pc = pseudo_critical(model.mixture, x)
    if temperature > tc and pressure > pc:
        return SUPERCRITICAL
    return LIQUID if res.root == LIQUID_LIKE else VAPOR


def phase_state(model, temperature: float, pressure: float, x: np.ndarray, label: str, amount: float,
                res: Residual | None = None) -> PhaseState:
    """One phase at T (K), P (Pa), composition x; ``res`` if already computed."""
    if res is None:
        res = residual(model, temperature, pressure, x, "liquid" if label == LIQUID else "vapor")
    h_ig, s_ig = idealgas.enthalpy_entropy(model.mixture, temperature, pressure, x)
    return PhaseState(label, amount, x, h_ig + res.enthalpy, s_ig + res.entropy, res)


def single_phase_state(model, temperature: float, pressure: float, x: np.ndarray, root: str = "auto") -> StreamState:
    """The stream state at T (K), P (Pa), composition x, assuming one phase
    (volume root of lowest Gibbs energy unless ``root`` forces one)."""
    res = residual(model, temperature, pressure, x, root)
    h_ig, s_ig = idealgas.enthalpy_entropy(model.mixture, temperature, pressure, x)
    label = phase_of_single_phase(model, temperature, pressure, x, res)
    phase_label = LIQUID if res.root == LIQUID_LIKE else VAPOR
    phase = PhaseState(phase_label, 1.0, x, h_ig + res.enthalpy, s_ig + res.entropy, res)
    return StreamState(
        temperature=temperature,
        pressure=pressure,
        composition=x,
        phase=label,
        vapor_fraction=1.0 if phase_label == VAPOR else 0.0,
        enthalpy=phase.enthalpy,
        entropy=phase.entropy,
        phases=(phase,),
        ideal_gas_enthalpy=h_ig,
        ideal_gas_entropy=s_ig,
    )


def combine_phases(model, temperature: float, pressure: float, x: np.ndarray,
                   phases: tuple[PhaseState, ...], notes: tuple[str, ...] = ()) -> StreamState:
    """A stream state from its phases (amounts per mole of stream)."""
    from .state import TWO_PHASE

    h = sum(p.amount * p.enthalpy for p in phases)
    s = sum(p.amount * p.entropy for p in phases)
    vapor = sum(p.amount for p in phases if p.label == VAPOR)
    if len(phases) == 1:
        label = phase_of_single_phase(model, temperature, pressure, x, phases[0].residual)
    else:
        label = TWO_PHASE
    h_ig, s_ig = idealgas.enthalpy_entropy(model.mixture, temperature, pressure, x)
    return StreamState(
        temperature=temperature,
        pressure=pressure,
        composition=x,
        phase=label,
        vapor_fraction=float(vapor),
        enthalpy=float(h),
        entropy=float(s),
        phases=phases,
        ideal_gas_enthalpy=h_ig,
        ideal_gas_entropy=s_ig,
        notes=notes,
    )
