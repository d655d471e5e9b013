"""The Rachford-Rice equation for the vapor fraction of a two-phase split.

    sum_i z_i (K_i - 1) / (1 + beta (K_i - 1)) = 0

(Rachford and Rice, J. Petrol. Technol. 4 (1952)). The left side falls
monotonically between its asymptotes beta = 1/(1 - K_max) and
beta = 1/(1 - K_min), so the root is bracketed there and found by Newton's
method with a bisection fallback; values outside [0, 1] (a "negative flash")
are returned as they are, for the caller to judge.
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
    low = 1.0 / (1.0 - k_max)
    high = 1.0 / (1.0 - k_min)
    # Clamp to [0, 1] first when the root lies there; it nearly always does.
    f0 = float(z @ k_minus_1)
    f1 = float(z @ (k_minus_1 / k))
    if f0 > 0.0 and f1 < 0.0:
        low, high = 0.0, 1.0
    elif f0 <= 0.0:
        high = 0.0
    else:
        low = 1.0
    beta = guess if guess is not None and low < guess < high else 0.5 * (low + high)
    for _ in range(100):
        denominator = 1.0 + beta * k_minus_1
        ratio = k_minus_1 / denominator
        f = float(z @ ratio)
        df = -float(z @ (ratio * ratio))
        if f > 0.0:
            low = beta
        else:
            high = beta
        step = f / df
        candidate = beta - step
        if not (low < candidate < high):
            candidate = 0.5 * (low + high)
        if abs(candidate - beta) <= 1e-15 * max(1.0, abs(beta)) or f == 0.0:
            return candidate
        beta = candidate
        if high - low <= 1e-15 * max(1.0, abs(beta)):
            return beta
    return beta


def split_compositions(z: np.ndarray, k: np.ndarray, beta: float) -> tuple[np.ndarray, np.ndarray]:
    """Liquid x and vapor y mole fractions of a split at vapor fraction beta,
    normalised so each sums to 1."""
    x = z / (1.0 + beta * (k - 1.0))
    y = k * x
    return x / x.sum(), y / y.sum()
