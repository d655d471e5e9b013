"""Two-stream counter-current heat exchangers.

Specified by the hot outlet temperature, the cold outlet temperature or the
duty (heat passed from the hot side to the cold side, W), with optional
pressure drops on each side. The unit as a whole is adiabatic: its energy
balance has no outside heat, and its reported duty is the heat passed.

The temperature profile is checked, not only the ends: the duty is cut into
``PROFILE_SLICES`` equal slices and both sides are PH-flashed at each slice
boundary (pressure taken linear in duty along each side), so a temperature
cross inside the exchanger, as when one side condenses or boils, is caught
even when both ends look fine.
"""

from __future__ import annotations

import dataclasses

import numpy as np

from .. import flash
from .common import Flow, UnitError, UnitOutcome, check_flow, outcome, positive_pressure

PROFILE_SLICES = 20


def temperature_profile(model, hot_in, hot_out, cold_in, cold_out, duty: float,
                        hot_flow: float, cold_flow: float, slices: int = PROFILE_SLICES):
    """Temperatures (K) of both sides at ``slices + 1`` points of cumulative
    duty (W) from the cold end (hot outlet, cold inlet) to the hot end.

    Returns arrays (duty_W, hot_K, cold_K); interior points by PH flashes.
    """
    fractions = np.linspace(0.0, 1.0, slices + 1)
    hot = np.empty(slices + 1)
    cold = np.empty(slices + 1)
    hot[0], hot[-1] = hot_out.temperature, hot_in.temperature
    cold[0], cold[-1] = cold_in.temperature, cold_out.temperature
    for k in range(1, slices):
        f = float(fractions[k])
        if duty == 0.0:
            hot[k] = hot_out.temperature + f * (hot_in.temperature - hot_out.temperature)
            cold[k] = cold_in.temperature + f * (cold_out.temperature - cold_in.temperature)
            continue
        hot_state = flash.flash_ph(
            model,
            hot_out.pressure + f * (hot_in.pressure - hot_out.pressure),
            hot_out.enthalpy + f * duty / hot_flow,
            hot_in.composition,
            hot[k - 1] if k > 1 else hot_out.temperature + f * (hot_in.temperature - hot_out.temperature),
        )
        cold_state = flash.flash_ph(
            model,
            cold_in.pressure + f * (cold_out.pressure - cold_in.pressure),
            cold_in.enthalpy + f * duty / cold_flow,
            cold_in.composition,
            cold[k - 1] if k > 1 else cold_in.temperature + f * (cold_out.temperature - cold_in.temperature),
        )
        hot[k] = hot_state.temperature
        cold[k] = cold_state.temperature
    return fractions * duty, hot, cold


def _side_outlet(model, side: Flow, pressure: float, heat_in: float, role: str, guess: float):
    """Outlet state of one side that takes ``heat_in`` (W) at ``pressure`` (Pa)."""
    if heat_in != 0.0:
        check_flow(side, role, "it cannot take up or give off the exchanger's duty")
    enthalpy = side.state.enthalpy + (heat_in / side.molar_flow if heat_in != 0.0 else 0.0)
    return flash.flash_ph(model, pressure, enthalpy, side.state.composition,
                          guess if heat_in != 0.0 else side.state.temperature)


def exchange(
    model,
    hot: Flow,
    cold: Flow,
    *,
    ambient_temperature: float,
    hot_outlet_temperature: float | None = None,
    cold_outlet_temperature: float | None = None,
    duty: float | None = None,
    hot_pressure_drop: float = 0.0,
    cold_pressure_drop: float = 0.0,
    slices: int = PROFILE_SLICES,
) -> UnitOutcome:
    """Pass heat from ``hot`` to ``cold`` counter-currently; exactly one of
    ``hot_outlet_temperature`` (K), ``cold_outlet_temperature`` (K) or
    ``duty`` (W, hot to cold). Pressure drops in Pa.

    Outlets: (hot outlet, cold outlet). details: min approach temperature
    (K) and where it falls (fraction of the duty from the cold end), the
    approaches at both ends (K), and the profile (duty W, hot K, cold K).
    """
    given = [k for k, v in (("hot_outlet_temperature", hot_outlet_temperature),
                            ("cold_outlet_temperature", cold_outlet_temperature), ("duty", duty)) if v is not None]
    if len(given) != 1:
        raise UnitError(
            "an exchanger takes exactly one of hot_outlet_temperature, cold_outlet_temperature, duty"
            + (f" (given: {', '.join(given)})" if given else " (none given)"),
            key=given[1] if len(given) > 1 else None,
            fix="keep one of them",
        )
    hot_in, cold_in = hot.state, cold.state
    hot_p = positive_pressure(hot_in.pressure - hot_pressure_drop, "hot_pressure_drop", hot_in.pressure)
    cold_p = positive_pressure(cold_in.pressure - cold_pressure_drop, "cold_pressure_drop", cold_in.pressure)
    if hot_outlet_temperature is not None:
        hot_out = flash.flash_tp(model, hot_outlet_temperature, hot_p, hot_in.composition)
        q = hot.molar_flow * (hot_in.enthalpy - hot_out.enthalpy)
        cold_out = _side_outlet(model, cold, cold_p, q, "cold_inlet", hot_in.temperature)
    elif cold_outlet_temperature is not None:
        cold_out = flash.flash_tp(model, cold_outlet_temperature, cold_p, cold_in.composition)
        q = cold.molar_flow * (cold_out.enthalpy - cold_in.enthalpy)
        hot_out = _side_outlet(model, hot, hot_p, -q, "hot_inlet", cold_in.temperature)
    else:
        q = duty
        hot_out = _side_outlet(model, hot, hot_p, -q, "hot_inlet", cold_in.temperature)
        cold_out = _side_outlet(model, cold, cold_p, q, "cold_inlet", hot_in.temperature)
    duties, hot_t, cold_t = temperature_profile(model, hot_in, hot_out, cold_in, cold_out, q,
                                                hot.molar_flow, cold.molar_flow, slices)
    approach = hot_t - cold_t
    k = int(np.argmin(approach))
    result = outcome(
        (hot, cold),
        (Flow(hot_out, hot.molar_flow), Flow(cold_out, cold.molar_flow)),
        duty=None,
        power=None,
        ambient_temperature=ambient_temperature,
        pairs=((0, 0), (1, 1)),
        details={
            "heat_passed_W": q,
            "min_approach_K": float(approach[k]),
            "min_approach_at_duty_fraction": k / slices,
            "hot_end_approach_K": float(hot_in.temperature - cold_out.temperature),
            "cold_end_approach_K": float(hot_out.temperature - cold_in.temperature),
            "profile_slices": slices,
            "profile_duty_W": duties.tolist(),
            "profile_hot_temperature_K": hot_t.tolist(),
            "profile_cold_temperature_K": cold_t.tolist(),
        },
    )
    return dataclasses.replace(result, duty=q)


def solve(spec, inlets: tuple[Flow, ...], model, ambient_temperature: float) -> UnitOutcome:
    """An exchanger from its ``thermo.spec.UnitSpec``: inlets are (hot, cold)."""
    hot, cold = inlets
    return exchange(
        model,
        hot,
        cold,
        ambient_temperature=ambient_temperature,
        hot_outlet_temperature=spec.value("hot_outlet_temperature"),
        cold_outlet_temperature=spec.value("cold_outlet_temperature"),
        duty=spec.value("duty"),
        hot_pressure_drop=spec.value("hot_pressure_drop") or 0.0,
        cold_pressure_drop=spec.value("cold_pressure_drop") or 0.0,
    )
