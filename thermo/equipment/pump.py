"""Pumps: raise the pressure of a liquid, real-fluid and adiabatic.

h_out = h_in + (h_s - h_in) / eta, with h_s from a PS flash at the outlet
pressure and the inlet entropy (not the incompressible v dP shortcut), then a
PH flash for the real outlet.
"""

from __future__ import annotations

from .. import flash
from .common import Flow, UnitError, UnitOutcome, check_efficiency, positive_pressure
from .compressor import isentropic_state, shaft_work_outcome


def pump(
    model,
    inlet: Flow,
    *,
    ambient_temperature: float,
    outlet_pressure: float | None = None,
    pressure_rise: float | None = None,
    efficiency: float = 0.70,
) -> UnitOutcome:
    """Pump ``inlet`` to ``outlet_pressure`` (Pa) or by ``pressure_rise`` (Pa)
    with ``efficiency`` (default 0.70).

    details: outlet pressure (Pa), pressure rise (Pa), isentropic power (W),
    the efficiency, and the hydraulic power n v_in dP (W) for comparison.
    """
    state_in = inlet.state
    if outlet_pressure is None:
        if pressure_rise is None:
            raise UnitError("neither outlet_pressure nor pressure_rise is given", key="outlet_pressure",
                            fix="give one of outlet_pressure or pressure_rise")
        outlet_pressure, key = state_in.pressure + pressure_rise, "pressure_rise"
    else:
        key = "outlet_pressure"
    pressure = positive_pressure(outlet_pressure, key, state_in.pressure)
    eta = check_efficiency(efficiency, "efficiency")
    ideal = isentropic_state(model, state_in, pressure)
    rise_s = ideal.enthalpy - state_in.enthalpy
    state_out = flash.flash_ph(model, pressure, state_in.enthalpy + rise_s / eta, state_in.composition,
                               ideal.temperature)
    return shaft_work_outcome(
        inlet,
        state_out,
        ambient_temperature=ambient_temperature,
        details={
            "outlet_pressure_Pa": pressure,
            "pressure_rise_Pa": pressure - state_in.pressure,
            "isentropic_power_W": inlet.molar_flow * rise_s,
            "efficiency": eta,
            "hydraulic_power_W": inlet.molar_flow * state_in.molar_volume * (pressure - state_in.pressure),
        },
    )


def solve(spec, inlets: tuple[Flow, ...], model, ambient_temperature: float) -> UnitOutcome:
    """A pump from its ``thermo.spec.UnitSpec``."""
    (inlet,) = inlets
    return pump(
        model,
        inlet,
        ambient_temperature=ambient_temperature,
        outlet_pressure=spec.value("outlet_pressure"),
        pressure_rise=spec.value("pressure_rise"),
        efficiency=spec.value("efficiency"),
    )
