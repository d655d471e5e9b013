"""The phase of a stream as an engineer reads it, on the screen and in the
command line's tables: the contract's word (vapor, liquid, two-phase,
supercritical), except that a split of two liquids reads "liquid-liquid"
and one of a vapor beside two liquids "three-phase". The JSON keeps the
contract's "two-phase" for both, with the engine's note beside it."""

from __future__ import annotations

from thermo.flash_support import LIQUID_LIQUID, THREE_PHASE

# Words after which the vapor fraction is worth showing.
WITH_FRACTION = ("two-phase", "three-phase")


def phase_word(state) -> str:
    """``state.phase``, or "liquid-liquid" / "three-phase" where the engine's
    notes say so."""
    if state.phase == "two-phase":
        notes = getattr(state, "notes", ()) or ()
        if THREE_PHASE in notes:
            return "three-phase"
        if LIQUID_LIQUID in notes:
            return "liquid-liquid"
    return state.phase
