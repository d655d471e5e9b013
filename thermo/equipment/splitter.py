"""Splitters: one stream divided by fractions of its flow; every outlet has
the inlet's state (no flash: the same state object is shared)."""

from __future__ import annotations

import math

from .common import Flow, UnitError, UnitOutcome, outcome

FRACTION_SUM_TOLERANCE = 1e-6


def split(inlet: Flow, fractions: tuple[float, ...] | list[float], *, ambient_temperature: float) -> UnitOutcome:
    """Divide ``inlet`` into outlets with these fractions of its molar flow
    (each in [0, 1], summing to 1 within 1e-6; rescaled to sum exactly 1).

    details: the fractions used.
    """
    fractions = tuple(float(f) for f in fractions)
    if not fractions:
        raise UnitError("a splitter needs fractions, one per outlet", key="fractions",
                        fix="write fractions = [0.7, 0.3] in the order of outlets")
    if any(not (math.isfinite(f) and 0.0 <= f <= 1.0) for f in fractions):
        raise UnitError(f"fractions {list(fractions)} must each lie between 0 and 1", key="fractions",
                        fix="write each fraction as a plain number between 0 and 1")
    total = sum(fractions)
    if abs(total - 1.0) > FRACTION_SUM_TOLERANCE:
        raise UnitError(f"fractions {list(fractions)} sum to {total:.8g}, not 1", key="fractions",
                        fix="make the fractions add up to 1")
    fractions = tuple(f / total for f in fractions)
    outlets = tuple(Flow(inlet.state, inlet.molar_flow * f) for f in fractions)
    return outcome(
        (inlet,),
        outlets,
        duty=None,
        power=None,
        ambient_temperature=ambient_temperature,
        pairs=tuple((0, k) for k in range(len(outlets))),
        details={"fractions": list(fractions)},
    )


def solve(spec, inlets: tuple[Flow, ...], model, ambient_temperature: float) -> UnitOutcome:
    """A splitter from its ``thermo.spec.UnitSpec``; one fraction per outlet."""
    (inlet,) = inlets
    fractions = spec.value("fractions") or ()
    outlets = spec.outlet_streams
    if len(fractions) != len(outlets):
        raise UnitError(
            f"{len(fractions)} fractions for {len(outlets)} outlets",
            key="fractions",
            fix="give one fraction per outlet, in the order of outlets",
        )
    return split(inlet, fractions, ambient_temperature=ambient_temperature)
