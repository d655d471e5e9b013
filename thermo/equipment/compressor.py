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


from .. import flash
from .common import Flow, UnitError, UnitOutcome, check_efficiency, outcome, positive_pressure

# A rough ideal-gas exponent R/Cp, only to start the flash near its answer.
_GUESS_EXPONENT = 0.25

#: Polytropic path integration: the first and the largest step counts,
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


def _polytropic_rk4(model, state_in, pressure_out: float, efficiency: float, steps: int) -> float:
    """Outlet enthalpy (J/mol) from ``steps`` classical Runge-Kutta steps in
    ln P of the polytropic path dh/d(ln P) = P v(P, h) / eta_p, each slope's
    molar volume from a PH flash."""
    x = state_in.composition
    ln_p = math.log(state_in.pressure)
    width = math.log(pressure_out / state_in.pressure) / steps
    enthalpy = state_in.enthalpy
    state = state_in

    def slope(log_pressure: float, h: float, guess: float):
        pressure = math.exp(log_pressure)
        found = flash.flash_ph(model, pressure, h, x, guess)
        return pressure * found.molar_volume / efficiency, found

    for k in range(steps):
        k1 = state.pressure * state.molar_volume / efficiency
        k2, mid = slope(ln_p + width / 2, enthalpy + width / 2 * k1, state.temperature)
        k3, _ = slope(ln_p + width / 2, enthalpy + width / 2 * k2, mid.temperature)
        k4, end = slope(ln_p + width, enthalpy + width * k3, mid.temperature)
        enthalpy += width / 6.0 * (k1 + 2.0 * k2 + 2.0 * k3 + k4)
        ln_p += width
        if k < steps - 1:
            state = flash.flash_ph(model, math.exp(ln_p), enthalpy, x, end.temperature)
    return enthalpy


def polytropic_outlet_enthalpy(model, state_in, pressure_out: float, efficiency: float) -> tuple[float, int]:
    """Outlet molar enthalpy (J/mol) of a compression with polytropic
    efficiency ``efficiency`` from ``state_in`` to ``pressure_out`` (Pa), and
    the largest step count used.

    Method: integration of the polytropic path. Polytropic efficiency is
    eta_p = v dP / dh along the path (each small step isentropic-with-
    efficiency, dh = dh_s / eta_p with dh_s = v dP), so the outlet enthalpy
    solves dh/d(ln P) = P v(P, h) / eta_p from the inlet state, v from a PH
    flash of the real fluid. Classical fourth-order Runge-Kutta in ln P with
    N = 2, 4, 8, ... steps, extrapolated (Richardson, error in powers of
    1/N^4) until two successive extrapolations agree within 1e-5 of the
    enthalpy rise (at most 256 steps; raises UnitError if not).
    """
    if pressure_out == state_in.pressure:
        return state_in.enthalpy, 0
    previous = None
    extrapolated_before = None
    steps = POLYTROPIC_FIRST_STEPS
    while steps <= POLYTROPIC_MAX_STEPS:
        current = _polytropic_rk4(model, state_in, pressure_out, efficiency, steps)
        if previous is not None:
            extrapolated = current + (current - previous) / 15.0
            rise = abs(extrapolated - state_in.enthalpy)
            settled = POLYTROPIC_TOLERANCE * max(rise, 1.0)
            if abs(current - previous) <= settled or (
                extrapolated_before is not None and abs(extrapolated - extrapolated_before) <= settled
            ):
                return extrapolated, steps
            extrapolated_before = extrapolated
        previous = current
        steps *= 2
    raise UnitError(
        f"the polytropic path integration did not settle within {POLYTROPIC_MAX_STEPS} steps",
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
            "polytropic path integration: dh/d(ln P) = P v / eta_p by fourth-order Runge-Kutta with PH "
            f"flashes, Richardson-extrapolated over step counts {POLYTROPIC_FIRST_STEPS}..{steps} "
            f"to {POLYTROPIC_TOLERANCE:g} of the enthalpy rise"
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
