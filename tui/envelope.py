"""The phase envelope of a mixture sheet for the chart: bubble-point and
dew-point curves of one feed composition, with the enthalpy and entropy of
the feed on them.

The curves are traced in pressure: the first point of each is found by
``thermo.flash.envelope`` (Wilson's start, with its bracketing fallback and
stability check), the rest by ``thermo.bubble_dew.envelope_point`` started
from the neighbouring point's K-values, which keeps a curve on its own
branch and costs a few Newton steps a point. A curve stops where a point no
longer converges even after the step is halved a few times: at the
cricondenbar for the dew curve, at the critical point for the bubble curve.
Everything thermodynamic is ``thermo``'s; this module only walks the
pressures and converts.

SI units: K, Pa, J/mol, J/(mol K).
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import Callable, Mapping, Sequence

import numpy as np

BUBBLE = 0.0
DEW = 1.0
POINTS_PER_CURVE = 30
HALVINGS = 4  # step halvings tried where a point fails, to come close to the curve's end
SAME_COMPOSITION = 1e-9
IDEAL_GAS = "ideal-gas"


@dataclass(frozen=True)
class EnvelopeState:
    """The feed at a bubble point (all liquid, first bubble forming) or a
    dew point (all vapor, first drop forming): K, Pa, J/mol, J/(mol K)."""

    temperature: float
    pressure: float
    enthalpy: float
    entropy: float


@dataclass(frozen=True)
class PhaseEnvelope:
    """Bubble and dew curves of ``composition`` (mole fractions over the
    sheet's components), by rising pressure. ``source`` says whose
    composition it is; ``cut`` is true when a curve stopped because its
    points no longer converged (near the cricondenbar or critical point)."""

    source: str
    composition: tuple[float, ...]
    bubble: tuple[EnvelopeState, ...]
    dew: tuple[EnvelopeState, ...]
    cut: bool


def envelope_feed(result, connections: Mapping[str, tuple[Sequence[str], Sequence[str]]] | None = None
                  ) -> tuple[np.ndarray, str] | None:
    """The composition the chart's envelope is drawn for and a phrase saying
    whose it is: the sheet's one composition when every stream has it; else
    the one most streams carry (a blend and the streams after its mixer),
    when one does; else the inlet of the first unit (in the sheet's order).
    None without streams."""
    streams = result.streams
    if not streams:
        return None
    compositions = [np.asarray(s.state.composition, dtype=float) for s in streams.values()]
    first = compositions[0]
    if all(c.shape == first.shape and float(np.abs(c - first).max()) < SAME_COMPOSITION for c in compositions):
        return first, "the sheet's composition"
    groups: list[tuple[np.ndarray, list[str]]] = []
    for name, composition in zip(streams, compositions):
        for shared, names in groups:
            if shared.shape == composition.shape and float(np.abs(shared - composition).max()) < SAME_COMPOSITION:
                names.append(name)
                break
        else:
            groups.append((composition, [name]))
    sizes = sorted((len(names) for _, names in groups), reverse=True)
    if sizes[0] > 1 and (len(sizes) == 1 or sizes[0] > sizes[1]):
        composition, names = next(group for group in groups if len(group[1]) == sizes[0])
        return composition, f"{names[0]} (and {len(names) - 1} more of that composition)"
    for unit_name in result.units:
        inlets = (connections or {}).get(unit_name, ((), ()))[0]
        for inlet in inlets:
            if inlet in streams:
                return np.asarray(streams[inlet].state.composition, dtype=float), f"{inlet} (inlet of {unit_name})"
    name = next(iter(streams))
    return first, name


def _feed_state(model, point, z: np.ndarray, beta: float) -> EnvelopeState:
    from thermo.properties import single_phase_state

    root = "liquid" if beta == BUBBLE else "vapor"
    state = single_phase_state(model, point.temperature, point.pressure, z, root=root)
    return EnvelopeState(point.temperature, point.pressure, state.enthalpy, state.entropy)


def _on_its_side(ln_k: np.ndarray, lightest: int) -> bool:
    """The lightest component must favour the vapor (K > 1) at a true bubble
    or dew point; a point past the critical point has the roles swapped."""
    return float(ln_k[lightest]) > 0.0


def trace_curve(model, z: np.ndarray, beta: float, pressures: Sequence[float]) -> tuple[list, bool]:
    """Envelope points (``thermo.bubble_dew.EnvelopePoint``, over the active
    components) of feed ``z`` at vapor fraction ``beta`` (0 bubble, 1 dew)
    at the rising ``pressures`` (Pa), and whether the curve was cut short
    by a point that did not converge."""
    from thermo.bubble_dew import envelope_point
    from thermo.flash import envelope
    from thermo.fugacity import kernel_for

    active = tuple(int(i) for i in np.flatnonzero(z > 0.0))
    za = z[list(active)] / z[list(active)].sum()
    kernel = kernel_for(model, active)
    lightest = int(np.argmin(kernel.tc))
    points: list = []
    known: list[tuple[float, float, np.ndarray]] = []  # (ln P, T, ln K over the active components)

    def active_ln_k(found) -> np.ndarray:
        # thermo.flash.envelope gives ln K over the whole mixture, envelope_point over the active part.
        ln_k = np.asarray(found.ln_k, dtype=float)
        return ln_k[list(active)] if len(ln_k) != len(active) else ln_k

    def fresh(pressure: float):
        """A point from Wilson's estimate (thermo.flash.envelope), or None."""
        try:
            found = envelope(model, z, beta, pressure=pressure)
        except Exception:  # noqa: BLE001 - no point here
            return None
        return found if _on_its_side(active_ln_k(found), lightest) else None

    def continued(ln_p: float, fresh_too: bool):
        """The point at ln P from the known ones, or None where none converges;
        ``fresh_too`` also tries Wilson's start (dearer: it may scan flashes)."""
        (ln_p1, t1, k1) = known[-1]
        if len(known) > 1:  # a straight-line guess in ln P from the last two points
            (ln_p0, t0, k0) = known[-2]
            share = (ln_p - ln_p1) / (ln_p1 - ln_p0)
            t_guess, k_guess = t1 + share * (t1 - t0), k1 + share * (k1 - k0)
        else:
            t_guess, k_guess = t1, k1
        try:
            found = envelope_point(kernel, za, beta, "P", math.exp(ln_p), "chart envelope point",
                                   start=(k_guess, t_guess))
            if _on_its_side(found.ln_k, lightest):
                return found
        except Exception:  # noqa: BLE001 - fall back on a fresh start below
            pass
        if not fresh_too:
            return None
        # Newton's method from the neighbour can cycle; a fresh start counts only
        # when it lands beside the guess, not on another branch of the curve.
        found = fresh(math.exp(ln_p))
        if found is not None and abs(found.temperature - t_guess) <= max(2.0, 3.0 * abs(t_guess - t1)):
            return found
        return None

    for pressure in pressures:
        target = math.log(float(pressure))
        if not known:
            found = fresh(float(pressure))
            if found is not None:
                points.append(found)
                known.append((target, found.temperature, active_ln_k(found)))
            continue
        halvings, struggled = 0, False
        while True:
            ln_p = known[-1][0] + (target - known[-1][0]) / 2 ** halvings
            found = continued(ln_p, fresh_too=not struggled)
            if found is not None:
                points.append(found)
                known.append((ln_p, found.temperature, active_ln_k(found)))
                if halvings == 0:
                    break
                halvings -= 1  # came closer; aim again at the grid pressure
                continue
            if halvings >= HALVINGS:
                return points, True
            halvings, struggled = halvings + 1, True
    return points, False


def phase_envelope(model, z: np.ndarray, source: str, low_pressure: float, high_pressure: float,
                   points: int = POINTS_PER_CURVE) -> PhaseEnvelope:
    """Bubble and dew curves of feed ``z`` from ``low_pressure`` toward
    ``high_pressure`` (Pa, about ``points`` pressures a curve, evenly spaced
    in log pressure), each stopping where its points stop converging."""
    z = np.asarray(z, dtype=float)
    z = z / z.sum()
    grid = np.geomspace(low_pressure, high_pressure, points)
    curves, cut = [], False
    for beta in (BUBBLE, DEW):
        found, stopped = trace_curve(model, z, beta, grid)
        cut = cut or stopped
        curves.append(tuple(_feed_state(model, point, z, beta) for point in found))
    return PhaseEnvelope(source, tuple(float(v) for v in z), curves[0], curves[1], cut)


def envelope_for_result(result, model_builder: Callable[[], object] | None, connections=None
                        ) -> tuple[PhaseEnvelope | None, str | None]:
    """The phase envelope for a solved mixture sheet: (envelope, None), else
    (None, a note saying why there is none). The pressures run from half the
    lowest stream pressure up to where the curves end (at most ten times the
    highest stream pressure)."""
    if result.model == IDEAL_GAS:
        return None, "no phase envelope: the ideal gas never condenses"
    feed = envelope_feed(result, connections)
    if feed is None:
        return None, None
    if model_builder is None:
        return None, "no phase envelope: the equation of state is not at hand"
    pressures = [s.state.pressure for s in result.streams.values()]
    try:
        model = model_builder()
        envelope = phase_envelope(model, feed[0], feed[1], 0.5 * min(pressures), 10.0 * max(pressures))
    except Exception as error:  # noqa: BLE001 - the chart goes on without the envelope, saying why
        return None, f"phase envelope skipped: {error}"
    if len(envelope.bubble) < 2 and len(envelope.dew) < 2:
        return None, "phase envelope skipped: no bubble or dew point converged in the sheet's pressure range"
    return envelope, None
