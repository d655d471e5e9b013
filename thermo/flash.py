"""Phase equilibrium (single-phase first version: lowest-Gibbs root, no split).

Being extended to the full stability test and two-phase flashes.
"""

from __future__ import annotations

import numpy as np
from scipy.optimize import brentq

from .properties import single_phase_state
from .state import StreamState


class FlashError(RuntimeError):
    """A flash that did not converge to a verified answer."""


def flash_tp(model, temperature: float, pressure: float, x: np.ndarray) -> StreamState:
    """Equilibrium state at T (K), P (Pa), composition x."""
    return single_phase_state(model, temperature, pressure, x)


def _solve_temperature(model, pressure, x, target, prop, guess):
    def miss(t):
        return getattr(flash_tp(model, t, pressure, x), prop) - target

    low, high = guess * 0.8, guess * 1.25
    for _ in range(60):
        if miss(low) < 0.0 < miss(high):
            break
        low, high = max(low * 0.8, 20.0), high * 1.25
    else:
        raise FlashError(f"no temperature at P = {pressure:.6g} Pa gives {prop} = {target:.6g}")
    t = brentq(miss, low, high, xtol=1e-10, rtol=1e-13)
    return flash_tp(model, t, pressure, x)


def flash_ph(model, pressure: float, enthalpy: float, x: np.ndarray, guess: float = 300.0) -> StreamState:
    """State at P (Pa) with molar enthalpy ``enthalpy`` (J/mol)."""
    return _solve_temperature(model, pressure, x, enthalpy, "enthalpy", guess)


def flash_ps(model, pressure: float, entropy: float, x: np.ndarray, guess: float = 300.0) -> StreamState:
    """State at P (Pa) with molar entropy ``entropy`` (J/(mol K))."""
    return _solve_temperature(model, pressure, x, entropy, "entropy", guess)
