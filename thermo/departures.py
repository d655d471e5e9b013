"""Departure functions, derived once per family of equation of state.

Residual properties are differences from the ideal gas at the same T and P,
per mole of mixture:

pressure-explicit (from F = A_res / (R T) at T, V):
    Z = P V / (R T)
    H_res = R T (-T dF/dT + Z - 1)
    S_res = R (-T dF/dT - F + ln Z)
    G_res = R T (F + Z - 1 - ln Z)
    ln phi_i = dF/dn_i - ln Z

volume-explicit (from g = G_res / (R T) at T, P):
    Z = 1 + P dg/dP
    H_res = -R T^2 dg/dT
    S_res = -R (T dg/dT + g)
    ln phi_i = d(n g)/dn_i

Where a pressure-explicit model has several volume roots, the one of lowest
Gibbs energy is chosen (or the one asked for), and labelled liquid-like or
vapor-like.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from .components import R
from .models.base import IDEAL, PRESSURE_EXPLICIT, VOLUME_EXPLICIT

VAPOR_LIKE = "vapor-like"
LIQUID_LIKE = "liquid-like"
ROOT_CHOICES = ("auto", "vapor", "liquid")


class StateInputError(ValueError):
    """A temperature, pressure or composition that no state can have."""


@dataclass(frozen=True)
class Residual:
    """Residual (departure) properties at one T (K), P (Pa) and composition.

    enthalpy J/mol, entropy J/(mol K), gibbs J/mol, molar_volume m3/mol.
    """

    temperature: float
    pressure: float
    compressibility: float
    molar_volume: float
    enthalpy: float
    entropy: float
    gibbs: float
    ln_phi: np.ndarray
    root: str


def check_state(temperature: float, pressure: float, x: np.ndarray) -> None:
    """Refuse a temperature (K), pressure (Pa) or mole-fraction vector that
    cannot describe a state, with a message naming the value."""
    if not (math.isfinite(temperature) and temperature > 0.0):
        raise StateInputError(f"temperature {temperature!r} K is not above absolute zero")
    if not (math.isfinite(pressure) and pressure > 0.0):
        raise StateInputError(f"pressure {pressure!r} Pa is not a positive absolute pressure")
    values = x.tolist()  # a few floats: plain Python sums them faster than numpy
    total = math.fsum(values) if values else 0.0
    if not abs(total - 1.0) <= 1e-6 or min(values, default=-1.0) < 0.0:
        raise StateInputError(
            f"mole fractions {np.round(x, 8).tolist()} must be non-negative and sum to 1 (they sum to {total:.8g})"
        )


def residual(model, temperature: float, pressure: float, x: np.ndarray, root: str = "auto") -> Residual:
    """Departure functions of ``model`` at ``temperature`` (K), ``pressure``
    (Pa) and mole fractions ``x``.

    ``root``: "auto" takes the volume root of lowest Gibbs energy; "vapor" or
    "liquid" force the largest or smallest (used by flash trial phases).
    """
    check_state(temperature, pressure, x)
    if len(x) != len(model.mixture.names):
        raise StateInputError(
            f"mole fractions {np.round(x, 8).tolist()} have {len(x)} entries for the "
            f"{len(model.mixture.names)} components {', '.join(model.mixture.names)}"
        )
    family = model.family
    if family == PRESSURE_EXPLICIT:
        return _from_helmholtz(model, temperature, pressure, x, root)
    if family == VOLUME_EXPLICIT:
        return _from_gibbs(model, temperature, pressure, x)
    if family == IDEAL:
        volume = R * temperature / pressure
        return Residual(temperature, pressure, 1.0, volume, 0.0, 0.0, 0.0, np.zeros(len(x)), VAPOR_LIKE)
    raise TypeError(f"model {model!r} has no known family")


def _from_helmholtz(model, temperature, pressure, x, root) -> Residual:
    isotherm = model.at(temperature, x)
    volumes = isotherm.volume_roots(pressure)
    if not volumes:
        raise StateInputError(
            f"{model.name} has no volume root at T = {temperature:.6g} K, P = {pressure:.6g} Pa"
        )
    if root == "vapor" or len(volumes) == 1:
        candidates = [volumes[-1]]
    elif root == "liquid":
        candidates = [volumes[0]]
    else:
        candidates = [volumes[0], volumes[-1]]
    rt = R * temperature
    best = None
    for volume in candidates:
        terms = isotherm.helmholtz(volume)
        z = pressure * volume / rt
        ln_z = math.log(z)
        g_res = rt * (terms.F + z - 1.0 - ln_z)
        if best is None or g_res < best[0]:
            best = (g_res, volume, z, ln_z, terms)
    g_res, volume, z, ln_z, terms = best
    if len(volumes) > 1:
        label = LIQUID_LIKE if volume == volumes[0] else VAPOR_LIKE
    else:
        label = LIQUID_LIKE if isotherm.liquid_like(volume) else VAPOR_LIKE
    minus_t_ft = -temperature * terms.F_T
    return Residual(
        temperature=temperature,
        pressure=pressure,
        compressibility=z,
        molar_volume=volume,
        enthalpy=rt * (minus_t_ft + z - 1.0),
        entropy=R * (minus_t_ft - terms.F + ln_z),
        gibbs=g_res,
        ln_phi=terms.F_n - ln_z,
        root=label,
    )


def _from_gibbs(model, temperature, pressure, x) -> Residual:
    terms = model.gibbs(temperature, pressure, x)
    z = 1.0 + pressure * terms.g_P
    if z <= 0.0:
        raise StateInputError(
            f"{model.name} gives a non-positive volume at T = {temperature:.6g} K, P = {pressure:.6g} Pa: "
            "the truncated virial equation does not serve at this density"
        )
    rt = R * temperature
    h_res = -rt * temperature * terms.g_T
    return Residual(
        temperature=temperature,
        pressure=pressure,
        compressibility=z,
        molar_volume=z * rt / pressure,
        enthalpy=h_res,
        entropy=-R * (temperature * terms.g_T + terms.g),
        gibbs=rt * terms.g,
        ln_phi=np.asarray(terms.g_n, dtype=float),
        root=VAPOR_LIKE,
    )


@dataclass(frozen=True)
class BatchResidual:
    """Arrays of residual enthalpy (J/mol), entropy (J/(mol K)), Z, and a mask
    of states whose chosen root is liquid-like."""

    enthalpy: np.ndarray
    entropy: np.ndarray
    compressibility: np.ndarray
    liquid_like: np.ndarray


_BATCH_CHUNK = 16384  # states per pass: keeps the working arrays in cache


def residual_batch(model, temperatures, pressures, x: np.ndarray) -> BatchResidual:
    """Departure functions for arrays of T (K) and P (Pa) at one composition,
    lowest-Gibbs root at each state."""
    t = np.asarray(temperatures, dtype=float)
    p = np.asarray(pressures, dtype=float)
    t, p = np.broadcast_arrays(t, p)
    shape = t.shape
    t, p = t.ravel(), p.ravel()
    if not (np.all(t > 0) and np.all(p > 0) and np.all(np.isfinite(t)) and np.all(np.isfinite(p))):
        raise StateInputError("every temperature and pressure in a batch must be finite and positive")
    out = [np.empty(t.size) for _ in range(3)] + [np.empty(t.size, dtype=bool)]
    for start in range(0, t.size, _BATCH_CHUNK):
        part = slice(start, start + _BATCH_CHUNK)
        for target, values in zip(out, _residual_chunk(model, t[part], p[part], x)):
            target[part] = values
    if model.family == VOLUME_EXPLICIT and np.any(out[2] <= 0.0):
        bad = int(np.count_nonzero(out[2] <= 0.0))
        raise StateInputError(
            f"{model.name} gives a non-positive volume at {bad} of the states: "
            "the truncated virial equation does not serve at those densities"
        )
    return BatchResidual(*(a.reshape(shape) for a in out))


def _residual_chunk(model, t, p, x):
    rt = R * t
    if model.family == IDEAL:
        return np.zeros_like(t), np.zeros_like(t), np.ones_like(t), np.zeros(t.shape, bool)
    if model.family == VOLUME_EXPLICIT:
        g, g_t, g_p = model.batch_gibbs(t, p, x)
        return -rt * t * g_t, -R * (t * g_t + g), 1.0 + p * g_p, np.zeros(t.shape, bool)
    v_small, v_large = model.batch_roots(t, p, x)
    results = []
    for volume in (v_small, v_large):
        f, f_t = model.batch_helmholtz(t, volume, x)
        z = p * volume / rt
        ln_z = np.log(z)
        minus_t_ft = -t * f_t
        results.append((f + z - 1.0 - ln_z, rt * (minus_t_ft + z - 1.0), R * (minus_t_ft - f + ln_z), z))
    small_wins = results[0][0] < results[1][0]
    pick = lambda k: np.where(small_wins, results[0][k], results[1][k])  # noqa: E731
    distinct = v_small < v_large * (1.0 - 1e-12)
    # a lone root is labelled as the one-state path labels it: by the model's own critical density
    lone_dense = model.at(float(t[0]), x).liquid_like(v_large)
    return pick(1), pick(2), pick(3), np.where(distinct, small_wins, lone_dense)
