"""Equations of state, by name as the flowsheet file spells them."""

from __future__ import annotations

import difflib

from ..mixture import Mixture
from .cubic import CubicModel, peng_robinson, soave_redlich_kwong
from .ideal import IdealGas
from .virial import VirialModel, virial

MODEL_BUILDERS = {
    "peng-robinson": peng_robinson,
    "soave-redlich-kwong": soave_redlich_kwong,
    "virial": virial,
    "ideal-gas": IdealGas,
}
MODEL_NAMES = tuple(MODEL_BUILDERS)


class UnknownModelError(KeyError):
    """A model name the engine does not know."""

    def __init__(self, name: str):
        self.name = name
        self.suggestions = difflib.get_close_matches(name, MODEL_NAMES, n=2, cutoff=0.4)
        super().__init__(name)

    def __str__(self) -> str:
        known = ", ".join(MODEL_NAMES)
        hint = f" Did you mean {' or '.join(repr(s) for s in self.suggestions)}?" if self.suggestions else ""
        return f"unknown model {self.name!r}.{hint} Known models: {known}."


def make_model(name: str, mixture: Mixture):
    """The equation of state called ``name`` over ``mixture``."""
    try:
        builder = MODEL_BUILDERS[name]
    except KeyError:
        raise UnknownModelError(name) from None
    return builder(mixture)


__all__ = [
    "CubicModel",
    "IdealGas",
    "VirialModel",
    "MODEL_NAMES",
    "UnknownModelError",
    "make_model",
    "peng_robinson",
    "soave_redlich_kwong",
    "virial",
]
