"""The Rachford-Rice equation for the vapor fraction of a two-phase split.

    sum_i z_i (K_i - 1) / (1 + beta (K_i - 1)) = 0

(Rachford and Rice, J. Petrol. Technol. 4 (1952)). The left side falls
monotonically between its asymptotes beta = 1/(1 - K_max) and
beta = 1/(1 - K_min), so the root is bracketed there; when it lies in
[0, 1] it is found by Newton's method with a bisection fallback, and when it
lies outside (a "negative flash"), 0 or 1 is returned: the feed is one phase
at those K-values.
"""

from __future__ import annotations

import numpy as np


class RachfordRiceError(ArithmeticError):
    """K-values that allow no split: all on one side of 1."""


def rachford_rice(z: np.ndarray, k: np.ndarray, guess: float | None = None) -> float:
    """Vapor fraction beta (mol vapor per mol feed) for feed mole fractions z
    and equilibrium ratios K = y/x.

    Raises RachfordRiceError when every K is at or above 1, or at or below 1
    (no root between the asymptotes).
    """
    k_minus_1 = k - 1.0
    k_max = float(k.max())
    k_min = float(k.min())
    if k_max <= 1.0 or k_min >= 1.0:
        raise RachfordRiceError(
            f"no vapor fraction splits the feed: K-values range {k_min:.6g} to {k_max:.6g}, all on one side of 1"
        )
    pole_low = 1.0 / (1.0 - k_max)
    pole_high = 1.0 / (1.0 - k_min)
    low, high = pole_low, pole_high
    # A root outside [0, 1] means one phase at these K-values: say which end.
    f0 = float(z @ k_minus_1)
    f1 = float(z @ (k_minus_1 / k))
    if f0 <= 0.0:
        return 0.0
    if f1 >= 0.0:
        return 1.0
    low, high = 0.0, 1.0
    start = f0 / (f0 - f1)
    beta = guess if guess is not None and low < guess < high else start
    # Newton on (beta - pole_low)(pole_high - beta) f(beta), which is far more
    # nearly linear than f (Leibovici and Neoschil, Fluid Phase Equilib. 74 (1992) 303).
    for _ in range(100):
        denominator = 1.0 + beta * k_minus_1
        ratio = k_minus_1 / denominator
        f = float(z @ ratio)
        df = -float(z @ (ratio * ratio))
        if f > 0.0:
            low = beta
        elif f < 0.0:
            high = beta
        else:
            return beta
        left, right = beta - pole_low, pole_high - beta
        g = left * right * f
        dg = (right - left) * f + left * right * df
        if dg < 0.0:
            step = g / dg
            if abs(step) <= 1e-14 * max(1.0, abs(beta)):
                return min(max(beta - step, low), high)
            candidate = beta - step
        else:
            candidate = 0.5 * (low + high)
        if not (low < candidate < high):
            candidate = 0.5 * (low + high)
        if high - low <= 1e-15:
            return candidate
        beta = candidate
    return beta

