"""Mixers: adiabatic, any compositions and phases.

The outlet has the flow-weighted composition and enthalpy of the inlets, at
the lowest inlet pressure (or the given outlet pressure), found by a PH
flash. The entropy generated includes the entropy of mixing.
"""

from __future__ import annotations

import numpy as np

from .. import flash
from .common import Flow, UnitError, UnitOutcome, outcome, positive_pressure


def mix(model, inlets: tuple[Flow, ...], *, ambient_temperature: float,
        outlet_pressure: float | None = None) -> UnitOutcome:
    """Mix ``inlets`` adiabatically; ``outlet_pressure`` in Pa (default: the
    lowest inlet pressure).

    details: outlet pressure (Pa) and the lowest inlet pressure (Pa).
    """
    if not inlets:
        raise UnitError("a mixer needs at least one inlet", key="inlets", fix="list its inlet streams")
    total = sum(f.molar_flow for f in inlets)
    if not total > 0.0:
        raise UnitError("every inlet of the mixer has zero flow", key="inlets",
                        fix="give at least one inlet a positive flow")
    lowest = min(f.state.pressure for f in inlets)
    if outlet_pressure is None:
        pressure = lowest
    else:
        pressure = positive_pressure(outlet_pressure, "outlet_pressure", lowest)
    component_flows = sum(f.component_flows() for f in inlets)
    x = np.asarray(component_flows / total, dtype=float)
    x = x / x.sum()
    enthalpy = sum(f.enthalpy_flow for f in inlets) / total
    guess = sum(f.molar_flow * f.state.temperature for f in inlets) / total
    state = flash.flash_ph(model, pressure, enthalpy, x, guess)
    pairs = tuple(
        (i, 0) for i, f in enumerate(inlets) if np.allclose(f.state.composition, x, atol=1e-9)
    )
    return outcome(
        inlets,
        (Flow(state, total),),
        duty=None,
        power=None,
        ambient_temperature=ambient_temperature,
        pairs=pairs[:1],
        details={"outlet_pressure_Pa": pressure, "lowest_inlet_pressure_Pa": lowest},
    )


def solve(spec, inlets: tuple[Flow, ...], model, ambient_temperature: float) -> UnitOutcome:
    """A mixer from its ``thermo.spec.UnitSpec``."""
    return mix(model, inlets, ambient_temperature=ambient_temperature,
               outlet_pressure=spec.value("outlet_pressure"))
