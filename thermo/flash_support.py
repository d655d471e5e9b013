"""What the flash modules share: the error they raise, the words that
describe a state in it, the notes they attach, and Wilson's K-values."""

from __future__ import annotations

import functools

import numpy as np

NEAR_CRITICAL = "near-critical"
LIQUID_LIQUID = "liquid-liquid"
THREE_PHASE = "three-phase"

# A pure component within this fraction of its critical temperature, at a
# pressure within PR_NEAR of its critical pressure, is flagged near-critical.
TR_NEAR = 0.02
PR_NEAR = 0.10
# A two-phase split whose ln K-values all lie within this band of 0 is flagged.
LN_K_NEAR = 0.2


class FlashError(RuntimeError):
    """A flash or saturation calculation that did not reach a verified answer.

    The message names the state (model, T, P or the specification, and the
    composition) and what failed.
    """


def describe_composition(names: tuple[str, ...], x: np.ndarray) -> str:
    """'methane 0.85, ethane 0.15': the nonzero mole fractions by name."""
    parts = [f"{name} {value:.6g}" for name, value in zip(names, x) if value > 0.0]
    return ", ".join(parts) if parts else "(empty)"


class Described:
    """A description built only when an error message formats it."""

    __slots__ = ("_build", "_text")

    def __init__(self, build):
        self._build = build
        self._text = None

    def __str__(self) -> str:
        if self._text is None:
            self._text = self._build()
        return self._text

    def __format__(self, spec: str) -> str:
        return format(str(self), spec)

    def __add__(self, other: str) -> str:
        return str(self) + other

    def __radd__(self, other: str) -> str:
        return other + str(self)


def lazy_description(prefix: str, model, x: np.ndarray, **spec: float) -> Described:
    """``prefix + describe_state(model, x, **spec)``, built on first use."""
    return Described(lambda: prefix + describe_state(model, x, **spec))


def describe_state(model, x: np.ndarray, **spec: float) -> str:
    """A one-line description of a flash request for error messages, e.g.
    'peng-robinson at T = 250 K, P = 5e+06 Pa, composition methane 0.85, ...'."""
    units = {"T": "K", "P": "Pa", "H": "J/mol", "S": "J/(mol K)", "vapor_fraction": ""}
    words = []
    for key, value in spec.items():
        unit = units.get(key, "")
        words.append(f"{key} = {value:.8g}{' ' + unit if unit else ''}")
    return f"{model.name} at {', '.join(words)}, composition {describe_composition(model.mixture.names, x)}"


def wilson_k(tc: np.ndarray, pc: np.ndarray, omega: np.ndarray, temperature: float, pressure: float) -> np.ndarray:
    """Wilson's estimate of K = y/x at T (K) and P (Pa):
    K_i = (Pc_i / P) exp(5.373 (1 + omega_i)(1 - Tc_i / T))
    (Wilson, 1968, as given by Michelsen and Mollerup, 2007, ch. 9)."""
    return pc / pressure * np.exp(5.373 * (1.0 + omega) * (1.0 - tc / temperature))


def near_critical_pure(tc: float, pc: float, temperature: float, pressure: float) -> bool:
    """Whether a pure component at T (K), P (Pa) is close enough to its
    critical point that a cubic model is markedly less reliable."""
    return abs(temperature / tc - 1.0) < TR_NEAR and abs(pressure / pc - 1.0) < PR_NEAR


def near_critical_split(ln_k: np.ndarray) -> bool:
    """Whether a two-phase split's K-values are all near 1 (phases alike)."""
    return float(np.max(np.abs(ln_k))) < LN_K_NEAR


@functools.cache
def _lapack_dgesv():
    # Imported on first use: scipy.linalg costs about 150 ms to import, which
    # the app would otherwise pay at start for sheets that never split.
    from scipy.linalg.lapack import dgesv

    return dgesv


def solve(matrix: np.ndarray, rhs: np.ndarray) -> np.ndarray:
    """x with matrix @ x = rhs for the small dense systems of the flash,
    through LAPACK's dgesv directly (numpy's solve costs several times more
    per call at these sizes); raises numpy.linalg.LinAlgError if singular."""
    _, _, x, info = _lapack_dgesv()(matrix, rhs)
    if info != 0:
        raise np.linalg.LinAlgError(f"singular matrix (LAPACK dgesv info {info})")
    return x
