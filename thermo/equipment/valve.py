"""Valves: an adiabatic throttle, h_out = h_in at the outlet pressure (PH flash).

No heat, no work; all the pressure given up is lost as entropy generation.
"""

from __future__ import annotations

from .. import flash
from .common import Flow, UnitError, UnitOutcome, outcome, positive_pressure


def throttle(
    model,
    inlet: Flow,
    *,
    ambient_temperature: float,
    outlet_pressure: float | None = None,
    pressure_drop: float | None = None,
) -> UnitOutcome:
    """Throttle ``inlet`` to ``outlet_pressure`` (Pa) or by ``pressure_drop``
    (Pa) at constant molar enthalpy.

    details: outlet pressure (Pa), pressure drop (Pa), temperature change (K),
    and the mean temperature change per bar of drop (K/bar, the integral
    Joule-Thomson effect; absent for a zero drop).
    """
    state_in = inlet.state
    if outlet_pressure is None and pressure_drop is None:
        raise UnitError("neither outlet_pressure nor pressure_drop is given", key="outlet_pressure",
                        fix="give one of outlet_pressure or pressure_drop")
    if outlet_pressure is None:
        key = "pressure_drop"
        outlet_pressure = state_in.pressure - pressure_drop
    else:
        key = "outlet_pressure"
    pressure = positive_pressure(outlet_pressure, key, state_in.pressure)
    state_out = flash.flash_ph(model, pressure, state_in.enthalpy, state_in.composition, state_in.temperature)
    drop = state_in.pressure - pressure
    details = {
        "outlet_pressure_Pa": pressure,
        "pressure_drop_Pa": drop,
        "temperature_change_K": state_out.temperature - state_in.temperature,
    }
    if drop != 0.0:
        details["temperature_drop_per_bar_K_bar"] = (state_in.temperature - state_out.temperature) / (drop / 1e5)
    return outcome(
        (inlet,),
        (Flow(state_out, inlet.molar_flow),),
        duty=None,
        power=None,
        ambient_temperature=ambient_temperature,
        pairs=((0, 0),),
        details=details,
    )


def solve(spec, inlets: tuple[Flow, ...], model, ambient_temperature: float) -> UnitOutcome:
    """A valve from its ``thermo.spec.UnitSpec``."""
    (inlet,) = inlets
    return throttle(
        model,
        inlet,
        ambient_temperature=ambient_temperature,
        outlet_pressure=spec.value("outlet_pressure"),
        pressure_drop=spec.value("pressure_drop"),
    )
