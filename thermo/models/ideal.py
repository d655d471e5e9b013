"""The ideal gas: the model whose residual is zero everywhere."""

from __future__ import annotations

import numpy as np

from ..mixture import Mixture
from .base import IDEAL


class IdealGas:
    """Ideal-gas model: Z = 1, no departure functions, ln(phi) = 0."""

    family = IDEAL
    name = "ideal-gas"

    def __init__(self, mixture: Mixture):
        self.mixture = mixture
