"""Compressors and expanders: adiabatic machines with shaft work.

Isentropic efficiency (both): the isentropic outlet comes from a PS flash at
the outlet pressure with the inlet entropy; then
    compressor  h_out = h_in + (h_s - h_in) / eta_s
    expander    h_out = h_in - eta_s (h_in - h_s)
and the real outlet from a PH flash. Power = n (h_out - h_in): positive into
a compressor's stream, negative out of an expander's.

Polytropic efficiency (compressor): ``polytropic_outlet_enthalpy``.
"""

from __future__ import annotations

import math

import numpy as np

from .. import flash
from .common import Flow, UnitError, UnitOutcome, check_efficiency, outcome, positive_pressure

# A rough ideal-gas exponent R/Cp, only to start the flash near its answer.
_GUESS_EXPONENT = 0.25

#: Stepwise polytropic integration: the first and the largest step counts,
#: and the tolerance on the extrapolated outlet enthalpy (relative to the rise).
POLYTROPIC_FIRST_STEPS = 2
POLYTROPIC_MAX_STEPS = 256
POLYTROPIC_TOLERANCE = 1e-5


def outlet_pressure_of(inlet_pressure: float, outlet_pressure: float | None, pressure_ratio: float | None) -> tuple[float, str]:
    """Outlet pressure (Pa) from ``outlet_pressure`` (Pa) or ``pressure_ratio``
    (outlet over inlet), with the key that set it."""
    if outlet_pressure is not None:
        return positive_pressure(outlet_pressure, "outlet_pressure", inlet_pressure), "outlet_pressure"
    if pressure_ratio is None:
        raise UnitError("neither outlet_pressure nor pressure_ratio is given", key="outlet_pressure",
                        fix="give one of outlet_pressure or pressure_ratio")
    if not (math.isfinite(pressure_ratio) and pressure_ratio > 0.0):
        raise UnitError(f"pressure_ratio = {pressure_ratio!r} is not a positive number", key="pressure_ratio",
                        fix="write the ratio of outlet to inlet absolute pressure, e.g. 2.5")
    return inlet_pressure * pressure_ratio, "pressure_ratio"


def isentropic_state(model, state, pressure: float):
    """The state at ``pressure`` (Pa) with the entropy of ``state`` (PS flash)."""
    guess = state.temperature * (pressure / state.pressure) ** _GUESS_EXPONENT
    return flash.flash_ps(model, pressure, state.entropy, state.composition, guess)


def shaft_work_outcome(inlet: Flow, state_out, *, ambient_temperature: float, details: dict) -> UnitOutcome:
    """The outcome of an adiabatic machine taking ``inlet`` to ``state_out``:
    power n (h_out - h_in) in W (positive into the stream), no heat."""
    return outcome(
        (inlet,),
        (Flow(state_out, inlet.molar_flow),),
        duty=None,
        power=inlet.molar_flow * (state_out.enthalpy - inlet.state.enthalpy),
        ambient_temperature=ambient_temperature,
        pairs=((0, 0),),
        details=details,
    )


def _stepwise_polytropic(model, state_in, pressure_out: float, efficiency: float, steps: int) -> float:
    """Outlet enthalpy (J/mol) after ``steps`` geometric pressure steps, each
    isentropic-with-efficiency: dh = dh_s / eta_p."""
    x = state_in.composition
    state = state_in
    ratios = (pressure_out / state_in.pressure) ** (np.arange(1, steps + 1) / steps)
    for k, ratio in enumerate(ratios):
        pressure = state_in.pressure * float(ratio)
        ideal = isentropic_state(model, state, pressure)
        enthalpy = state.enthalpy + (ideal.enthalpy - state.enthalpy) / efficiency
        if k == steps - 1:
            return enthalpy
        state = flash.flash_ph(model, pressure, enthalpy, x, ideal.temperature)
    return state_in.enthalpy


def polytropic_outlet_enthalpy(model, state_in, pressure_out: float, efficiency: float) -> tuple[float, int]:
    """Outlet molar enthalpy (J/mol) of a compression with polytropic
    efficiency ``efficiency`` from ``state_in`` to ``pressure_out`` (Pa), and
    the largest step count used.

    Method: stepwise polytropic integration. The pressure ratio is cut into N
    equal geometric steps; each step is isentropic-with-efficiency, dh = dh_s
    / eta_p, with dh_s from a PS flash and the step's end state from a PH
    flash. That scheme is first order in 1/N, so the outlet enthalpies for
    N = 2, 4, 8, ... are extrapolated to infinitely small steps (Richardson,
    error in powers of 1/N) until two successive extrapolations agree within
    1e-5 of the enthalpy rise (at most 256 steps; raises UnitError if not).
    """
    if pressure_out == state_in.pressure:
        return state_in.enthalpy, 0
    table: list[list[float]] = []
    steps = POLYTROPIC_FIRST_STEPS
    while steps <= POLYTROPIC_MAX_STEPS:
        row = [_stepwise_polytropic(model, state_in, pressure_out, efficiency, steps)]
        for level, previous in enumerate(table[-1] if table else [], start=1):
            factor = 2.0**level
            row.append(row[level - 1] + (row[level - 1] - previous) / (factor - 1.0))
        if table:
            rise = abs(row[-1] - state_in.enthalpy)
            if abs(row[-1] - table[-1][-1]) <= POLYTROPIC_TOLERANCE * max(rise, 1.0):
                return row[-1], steps
        table.append(row)
        steps *= 2
    raise UnitError(
        f"the stepwise polytropic integration did not settle within {POLYTROPIC_MAX_STEPS} steps",
        key="polytropic_efficiency",
        fix="check the pressure ratio and the inlet state, or specify isentropic_efficiency instead",
    )


def compress(
    model,
    inlet: Flow,
    *,
    ambient_temperature: float,
    outlet_pressure: float | None = None,
    pressure_ratio: float | None = None,
    isentropic_efficiency: float | None = None,
    polytropic_efficiency: float | None = None,
) -> UnitOutcome:
    """Compress ``inlet`` to ``outlet_pressure`` (Pa) or by ``pressure_ratio``,
    with ``isentropic_efficiency`` (default 0.75) or ``polytropic_efficiency``.

    details: outlet pressure (Pa), pressure ratio, isentropic outlet
    temperature (K), isentropic power (W), the efficiency used (and for a
    polytropic spec the equivalent isentropic efficiency and the step count).
    """
    state_in = inlet.state
    pressure, _ = outlet_pressure_of(state_in.pressure, outlet_pressure, pressure_ratio)
    ideal = isentropic_state(model, state_in, pressure)
    rise_s = ideal.enthalpy - state_in.enthalpy
    details: dict = {
        "outlet_pressure_Pa": pressure,
        "pressure_ratio": pressure / state_in.pressure,
        "isentropic_outlet_temperature_K": ideal.temperature,
        "isentropic_power_W": inlet.molar_flow * rise_s,
    }
    if polytropic_efficiency is not None:
        eta = check_efficiency(polytropic_efficiency, "polytropic_efficiency")
        enthalpy, steps = polytropic_outlet_enthalpy(model, state_in, pressure, eta)
        rise = enthalpy - state_in.enthalpy
        details["polytropic_efficiency"] = eta
        details["polytropic_steps"] = steps
        details["polytropic_method"] = (
            "stepwise polytropic integration: geometric pressure steps, each dh = dh_s/eta_p, "
            f"Richardson-extrapolated over step counts {POLYTROPIC_FIRST_STEPS}..{steps} to {POLYTROPIC_TOLERANCE:g} of the enthalpy rise"
        )
        if rise != 0.0:
            details["equivalent_isentropic_efficiency"] = rise_s / rise
    else:
        eta = check_efficiency(0.75 if isentropic_efficiency is None else isentropic_efficiency,
                               "isentropic_efficiency")
        enthalpy = state_in.enthalpy + rise_s / eta
        details["isentropic_efficiency"] = eta
    state_out = flash.flash_ph(model, pressure, enthalpy, state_in.composition, ideal.temperature)
    return shaft_work_outcome(inlet, state_out, ambient_temperature=ambient_temperature, details=details)


def expand(
    model,
    inlet: Flow,
    *,
    ambient_temperature: float,
    outlet_pressure: float | None = None,
    pressure_ratio: float | None = None,
    isentropic_efficiency: float = 0.80,
) -> UnitOutcome:
    """Expand ``inlet`` to ``outlet_pressure`` (Pa) or by ``pressure_ratio``
    (outlet over inlet, below 1) with ``isentropic_efficiency``; the power
    (W) comes out negative: work leaves the stream.

    details: as for ``compress``.
    """
    state_in = inlet.state
    pressure, _ = outlet_pressure_of(state_in.pressure, outlet_pressure, pressure_ratio)
    eta = check_efficiency(isentropic_efficiency, "isentropic_efficiency")
    ideal = isentropic_state(model, state_in, pressure)
    drop_s = state_in.enthalpy - ideal.enthalpy
    enthalpy = state_in.enthalpy - eta * drop_s
    state_out = flash.flash_ph(model, pressure, enthalpy, state_in.composition, ideal.temperature)
    return shaft_work_outcome(
        inlet,
        state_out,
        ambient_temperature=ambient_temperature,
        details={
            "outlet_pressure_Pa": pressure,
            "pressure_ratio": pressure / state_in.pressure,
            "isentropic_outlet_temperature_K": ideal.temperature,
            "isentropic_power_W": -inlet.molar_flow * drop_s,
            "isentropic_efficiency": eta,
        },
    )


def solve(spec, inlets: tuple[Flow, ...], model, ambient_temperature: float) -> UnitOutcome:
    """A compressor or expander from its ``thermo.spec.UnitSpec``."""
    (inlet,) = inlets
    common = dict(
        ambient_temperature=ambient_temperature,
        outlet_pressure=spec.value("outlet_pressure"),
        pressure_ratio=spec.value("pressure_ratio"),
    )
    if spec.type == "expander":
        return expand(model, inlet, isentropic_efficiency=spec.value("isentropic_efficiency"), **common)
    return compress(
        model,
        inlet,
        isentropic_efficiency=spec.value("isentropic_efficiency"),
        polytropic_efficiency=spec.value("polytropic_efficiency"),
        **common,
    )
