"""Points of a mixture's phase envelope: the temperature or pressure at which
a feed splits into a given vapor fraction (0: bubble point, 1: dew point).

Unknowns ln K_i and ln T (or ln P); equations

    E_i = ln K_i + ln phi_i^y(y) - ln phi_i^x(x) = 0,
    E_n = sum_i z_i (K_i - 1) / (1 + beta (K_i - 1)) = 0,

with x_i = z_i / (1 + beta (K_i - 1)) and y_i = K_i x_i. The start is
Wilson's K-values with the free variable solved from E_n, improved by a few
substitution steps, then Newton's method with the analytic Jacobian
(Michelsen and Mollerup, Thermodynamic Models, 2nd ed. (2007), ch. 12).
A solution with all K near 1 is the trivial one (the phases have merged) and
is refused. Where the envelope has two solutions (retrograde region), the one
nearer Wilson's estimate is found.

SI units: K, Pa; compositions are mole-fraction vectors.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from .fugacity import CubicKernel
from .flash_support import FlashError, solve, wilson_k

CONVERGED = 1e-11
VERIFY = 1e-8
NEWTON_STEPS = 60
SUBSTITUTION_STEPS = 6
TRIVIAL_LN_K = 1e-3


@dataclass(frozen=True)
class EnvelopePoint:
    """A point on the phase envelope over the kernel's active components:
    T (K), P (Pa), the vapor fraction, liquid x and vapor y mole fractions,
    ln K, and the fugacity mismatch max |ln f_y - ln f_x| left."""

    temperature: float
    pressure: float
    vapor_fraction: float
    x: np.ndarray
    y: np.ndarray
    ln_k: np.ndarray
    fugacity_error: float


def _compositions(z, k, beta):
    denominator = 1.0 + beta * (k - 1.0)
    x = z / denominator
    return x, k * x, denominator


def _balance(z, k, beta):
    return float(z @ ((k - 1.0) / (1.0 + beta * (k - 1.0))))


def _wilson_free_variable(kernel, z, beta, spec, value, other_guess):
    """Solve E_n = 0 for the free variable with Wilson's K-values."""
    tc, pc, omega = kernel.tc, kernel.pc, kernel.omega
    if spec == "T":
        base = wilson_k(tc, pc, omega, value, 1.0)  # K = base / P
        ln_p = math.log(other_guess) if other_guess else math.log(float(z @ base) if beta == 0.0 else 1.0 / float(z @ (1.0 / base)))
        for _ in range(100):
            k = base / math.exp(ln_p)
            f = _balance(z, k, beta)
            # dE_n/d ln P = -sum z K / D^2
            denominator = 1.0 + beta * (k - 1.0)
            df = -float(z @ (k / denominator**2))
            step = -f / df
            step = max(-2.0, min(2.0, step))
            ln_p += step
            if abs(step) < 1e-12:
                break
        return ln_p
    # spec == "P": free variable ln T
    ln_t = math.log(other_guess) if other_guess else math.log(float(z @ tc) * 0.7)
    slope_base = 5.373 * (1.0 + omega) * tc
    for _ in range(100):
        t = math.exp(ln_t)
        k = wilson_k(tc, pc, omega, t, value)
        f = _balance(z, k, beta)
        denominator = 1.0 + beta * (k - 1.0)
        # d ln K / d ln T = 5.373 (1 + omega) Tc / T
        df = float(z @ (k * slope_base / t / denominator**2))
        step = -f / df if df != 0.0 else 0.1
        step = max(-0.3, min(0.3, step))
        ln_t += step
        if abs(step) < 1e-12:
            break
    return ln_t


def envelope_point(kernel: CubicKernel, z: np.ndarray, beta: float, spec: str, value: float,
                   where: str, other_guess: float | None = None,
                   start: tuple[np.ndarray, float] | None = None) -> EnvelopePoint:
    """The envelope point of feed z (all fractions positive, over the kernel's
    active components) at vapor fraction ``beta`` with temperature
    (``spec`` "T", ``value`` K) or pressure ("P", Pa) fixed; ``where``
    describes the request for error messages. ``start`` = (ln K, the free
    variable in K or Pa) from a nearby split skips Wilson's estimate."""

    def temperature_pressure(ln_free_value):
        if spec == "T":
            return value, math.exp(ln_free_value)
        return math.exp(ln_free_value), value

    if start is not None:
        ln_k, ln_free = np.array(start[0], dtype=float), math.log(start[1])
        t, p = temperature_pressure(ln_free)
        return _newton_point(kernel, z, beta, spec, value, where, ln_k, ln_free, temperature_pressure)
    ln_free = _wilson_free_variable(kernel, z, beta, spec, value, other_guess)
    if not math.isfinite(ln_free):
        raise FlashError(f"{where}: no starting estimate from Wilson's K-values")
    t, p = temperature_pressure(ln_free)
    ln_k = np.log(wilson_k(kernel.tc, kernel.pc, kernel.omega, t, p))
    # Substitution steps: update K from fugacities, then the free variable from E_n
    # assuming K scales with it as Wilson's form does.
    for _ in range(SUBSTITUTION_STEPS):
        state = kernel.at(t, p)
        k = np.exp(ln_k)
        x, y, _ = _compositions(z, k, beta)
        ln_phi_x, _, _ = state.ln_phi(x / x.sum())
        ln_phi_y, _, _ = state.ln_phi(y / y.sum())
        ln_k = ln_phi_x - ln_phi_y
        if float(np.abs(ln_k).max()) < TRIVIAL_LN_K:
            break
        if spec == "T":
            sensitivity = -np.ones_like(ln_k)
        else:
            sensitivity = 5.373 * (1.0 + kernel.omega) * kernel.tc / t
        shift = 0.0
        for _ in range(50):
            k = np.exp(ln_k + sensitivity * shift)
            denominator = 1.0 + beta * (k - 1.0)
            f = _balance(z, k, beta)
            df = float(z @ (k * sensitivity / denominator**2))
            if df == 0.0:
                break
            step = max(-0.5, min(0.5, -f / df))
            shift += step
            if abs(step) < 1e-12:
                break
        ln_k = ln_k + sensitivity * shift
        ln_free += shift
        t, p = temperature_pressure(ln_free)
    return _newton_point(kernel, z, beta, spec, value, where, ln_k, ln_free, temperature_pressure)


def _newton_point(kernel, z, beta, spec, value, where, ln_k, ln_free, temperature_pressure) -> EnvelopePoint:
    """Newton's method on (ln K, ln T or ln P) from the start given."""
    t, p = temperature_pressure(ln_free)
    size = len(z)
    for iteration in range(NEWTON_STEPS):
        state = kernel.at(t, p)
        k = np.exp(ln_k)
        x, y, denominator = _compositions(z, k, beta)
        sum_x, sum_y = float(x.sum()), float(y.sum())
        px = state.derivatives(x / sum_x)
        py = state.derivatives(y / sum_y)
        equations = np.empty(size + 1)
        equations[:size] = ln_k + py.ln_phi - px.ln_phi
        equations[size] = _balance(z, k, beta)
        error = float(np.abs(equations).max())
        if float(np.abs(ln_k).max()) < TRIVIAL_LN_K:
            raise FlashError(
                f"{where}: the phases merged into one (all K-values within {TRIVIAL_LN_K:g} of 1 in ln K): "
                "the state is at or beyond the critical point or outside the phase envelope"
            )
        if error < CONVERGED:
            break
        jacobian = np.empty((size + 1, size + 1))
        dy = y * (1.0 - beta) / denominator / sum_y
        dx = -x * beta * k / denominator / sum_x
        jacobian[:size, :size] = np.eye(size) + py.dlnphi_dn * dy - px.dlnphi_dn * dx
        if spec == "T":
            jacobian[:size, size] = p * (py.dlnphi_dP - px.dlnphi_dP)
            jacobian[size, size] = 0.0
        else:
            jacobian[:size, size] = t * (py.dlnphi_dT - px.dlnphi_dT)
            jacobian[size, size] = 0.0
        jacobian[size, :size] = z * k / denominator**2
        try:
            step = solve(jacobian, -equations)
        except np.linalg.LinAlgError:
            raise FlashError(f"{where}: singular Jacobian (the state is near a critical point)") from None
        largest = float(np.abs(step).max())
        limit = 0.5 if spec == "T" else 0.2
        if abs(step[size]) > limit:
            step *= limit / abs(step[size])
        if largest > 3.0:
            step *= 3.0 / largest
        ln_k = np.clip(ln_k + step[:size], -200.0, 200.0)
        ln_free += float(step[size])
        t, p = temperature_pressure(ln_free)
        if not (math.isfinite(t) and math.isfinite(p)) or t <= 0.0 or p <= 0.0:
            raise FlashError(f"{where}: the iteration left the physical range")
    else:
        raise FlashError(f"{where}: Newton's method did not converge in {NEWTON_STEPS} steps (last error {error:.3g})")
    x_n, y_n = x / sum_x, y / sum_y
    state = kernel.at(t, p)
    check_x, _, _ = state.ln_phi(x_n)
    check_y, _, _ = state.ln_phi(y_n)
    mismatch = float(np.abs(np.log(y_n) + check_y - np.log(x_n) - check_x).max())
    balance = float(np.abs((1.0 - beta) * x_n + beta * y_n - z).max())
    if not (mismatch < VERIFY and balance < 1e-9):
        raise FlashError(
            f"{where}: verification failed (ln-fugacity mismatch {mismatch:.3g}, mass-balance error {balance:.3g})"
        )
    return EnvelopePoint(t, p, beta, x_n, y_n, ln_k, mismatch)
