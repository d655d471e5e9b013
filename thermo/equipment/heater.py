"""Heaters and coolers: one stream, heat in or out, an optional pressure drop.

Specified by one of outlet temperature (TP flash at the outlet pressure),
duty (PH flash at h_in + Q/n) or outlet vapor fraction (PV flash). The file
writes a heater's duty as the heat it adds and a cooler's as the heat it
removes, both positive; here ``duty`` is signed, positive into the stream.

The second-law account charges the heat with Q / T_medium when the medium's
temperature is given; without it only the stream's entropy change is known.
"""

from __future__ import annotations

from .. import flash
from .common import Flow, UnitError, UnitOutcome, check_flow, outcome, positive_pressure


def vapor_fraction_state(model, pressure: float, vapor_fraction: float, x, key: str):
    """The state at ``pressure`` (Pa) with molar ``vapor_fraction`` (0..1), by
    ``thermo.flash.flash_pv``; a UnitError on ``key`` if that flash is not there."""
    flash_pv = getattr(flash, "flash_pv", None)
    if flash_pv is None:
        raise UnitError(
            "this version of the flash cannot fix a vapor fraction yet",
            key=key,
            fix="specify outlet_temperature or duty instead",
        )
    return flash_pv(model, pressure, vapor_fraction, x)


def heat_stream(
    model,
    inlet: Flow,
    *,
    ambient_temperature: float,
    outlet_temperature: float | None = None,
    duty: float | None = None,
    outlet_vapor_fraction: float | None = None,
    pressure_drop: float = 0.0,
    medium_temperature: float | None = None,
) -> UnitOutcome:
    """Heat (duty > 0) or cool (duty < 0) ``inlet``; exactly one of
    ``outlet_temperature`` (K), ``duty`` (W, signed into the stream) or
    ``outlet_vapor_fraction``. ``pressure_drop`` in Pa, temperatures in K.

    details: outlet pressure (Pa), temperature change (K).
    """
    given = [k for k, v in (("outlet_temperature", outlet_temperature), ("duty", duty),
                            ("outlet_vapor_fraction", outlet_vapor_fraction)) if v is not None]
    if len(given) != 1:
        raise UnitError(
            "a heater or cooler takes exactly one of outlet_temperature, duty, outlet_vapor_fraction"
            + (f" (given: {', '.join(given)})" if given else " (none given)"),
            key=given[1] if len(given) > 1 else None,
            fix="keep one of them",
        )
    state_in = inlet.state
    x = state_in.composition
    pressure = positive_pressure(state_in.pressure - pressure_drop, "pressure_drop", state_in.pressure)
    if outlet_temperature is not None:
        state_out = flash.flash_tp(model, outlet_temperature, pressure, x)
        q = inlet.molar_flow * (state_out.enthalpy - state_in.enthalpy)
    elif duty is not None:
        check_flow(inlet, "inlet", "a duty cannot set its outlet state")
        state_out = flash.flash_ph(model, pressure, state_in.enthalpy + duty / inlet.molar_flow, x,
                                   state_in.temperature)
        q = duty
    else:
        state_out = vapor_fraction_state(model, pressure, outlet_vapor_fraction, x, "outlet_vapor_fraction")
        q = inlet.molar_flow * (state_out.enthalpy - state_in.enthalpy)
    outlet = Flow(state_out, inlet.molar_flow)
    return outcome(
        (inlet,),
        (outlet,),
        duty=q,
        power=None,
        ambient_temperature=ambient_temperature,
        medium_temperature=medium_temperature,
        pairs=((0, 0),),
        details={
            "outlet_pressure_Pa": pressure,
            "temperature_change_K": state_out.temperature - state_in.temperature,
        },
    )


def solve(spec, inlets: tuple[Flow, ...], model, ambient_temperature: float) -> UnitOutcome:
    """A heater or cooler from its ``thermo.spec.UnitSpec``: the file's
    positive duty becomes +Q for a heater, -Q for a cooler."""
    (inlet,) = inlets
    duty = spec.value("duty")
    if duty is not None and spec.type == "cooler":
        duty = -duty
    return heat_stream(
        model,
        inlet,
        ambient_temperature=ambient_temperature,
        outlet_temperature=spec.value("outlet_temperature"),
        duty=duty,
        outlet_vapor_fraction=spec.value("outlet_vapor_fraction"),
        pressure_drop=spec.value("pressure_drop") or 0.0,
        medium_temperature=spec.value("medium_temperature"),
    )
