"""Balance bookkeeping shared by every kind of unit.

A unit takes inlet ``Flow`` objects (a state and a molar flow) and returns a
``UnitOutcome``: its outlets, the heat and work it exchanges, and the
``Balance`` worked out here once for all kinds: entropy generation, lost work,
energy-balance residual and the three-step path breakdown.

Signs: ``duty`` (W) and ``power`` (W) are positive when energy enters the
process stream(s), negative when it leaves; None where they do not apply.
Everything is SI: K, Pa, mol/s, J/mol, J/(mol K), W, W/K.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field
from typing import Sequence

import numpy as np

from ..components import R
from ..path import PathChange, path_between
from ..state import StreamState


class UnitError(ValueError):
    """A unit that cannot be solved as specified.

    ``key`` is the specification key (or connection role) at fault, so the
    solver can name ``units.NAME.KEY``; ``fix`` says how to put it right.
    """

    def __init__(self, message: str, *, key: str | None = None, fix: str = ""):
        self.key = key
        self.fix = fix
        super().__init__(message)


@dataclass(frozen=True)
class Flow:
    """A material stream inside the solver: ``state`` and ``molar_flow`` (mol/s)."""

    state: StreamState
    molar_flow: float

    @property
    def enthalpy_flow(self) -> float:
        """n h, W."""
        return self.molar_flow * self.state.enthalpy

    @property
    def entropy_flow(self) -> float:
        """n s, W/K."""
        return self.molar_flow * self.state.entropy

    def component_flows(self) -> np.ndarray:
        """Molar flow of each component, mol/s."""
        return self.molar_flow * self.state.composition


@dataclass(frozen=True)
class Balance:
    """The first- and second-law account of a unit, SI.

    ``entropy_generation`` (W/K) is sum(n s) out - in, minus Q/T_medium when
    the heat has a medium temperature; ``second_law_complete`` is False when
    heat crosses the boundary without one (then the figure is only the
    streams' entropy change and cannot be judged).
    ``residual`` (W) is sum(n h) out - in - Q - W; ``scale`` (W) is the size
    of the enthalpy flows, so residual / scale is the relative residual.
    ``path_enthalpy`` (W) and ``path_entropy`` (W/K): the three steps
    (real -> ideal gas, ideal-gas change, ideal gas -> real), outlets minus inlets.
    """

    entropy_generation: float
    lost_work: float
    residual: float
    scale: float
    entropy_scale: float
    second_law_complete: bool
    path_enthalpy: tuple[float, float, float]
    path_entropy: tuple[float, float, float]

    @property
    def relative_residual(self) -> float:
        """|residual| / scale, dimensionless."""
        return abs(self.residual) / self.scale


@dataclass(frozen=True)
class UnitOutcome:
    """What a unit computes: outlets in the order of its outlet roles, heat
    and work (W, signed: into the process positive), the balance, and
    unit-specific ``details`` (SI) and plain-language ``notes``.

    ``same_composition_pairs`` lists (inlet index, outlet index) pairs that
    share one composition, whose per-mole three-step path is ``paths``.
    ``medium_temperature`` (K) is the heating or cooling medium's, if given.
    """

    outlets: tuple[Flow, ...]
    duty: float | None
    power: float | None
    balance: Balance
    paths: tuple[tuple[int, PathChange], ...] = ()
    medium_temperature: float | None = None
    details: dict = field(default_factory=dict)
    notes: tuple[str, ...] = ()


def account(
    inlets: Sequence[Flow],
    outlets: Sequence[Flow],
    *,
    duty: float | None,
    power: float | None,
    ambient_temperature: float,
    medium_temperature: float | None = None,
) -> Balance:
    """The balance of a unit with these inlets and outlets (mol/s, J/mol),
    heat ``duty`` (W) and work ``power`` (W), both positive into the process.

    Lost work is ``ambient_temperature`` (K) times the entropy generation (W).
    """
    q = duty or 0.0
    w = power or 0.0
    h_in = sum(f.enthalpy_flow for f in inlets)
    h_out = sum(f.enthalpy_flow for f in outlets)
    s_in = sum(f.entropy_flow for f in inlets)
    s_out = sum(f.entropy_flow for f in outlets)
    heat_entropy = 0.0
    complete = True
    if q != 0.0:
        if medium_temperature is None:
            complete = False
        else:
            heat_entropy = q / medium_temperature
    generation = s_out - s_in - heat_entropy

    streams = (*inlets, *outlets)
    scale = sum(f.molar_flow * (abs(f.state.enthalpy) + R * f.state.temperature) for f in streams)
    scale = max(scale + abs(q) + abs(w), 1e-300)
    entropy_scale = sum(f.molar_flow * (abs(f.state.entropy) + R) for f in streams) + abs(heat_entropy)
    entropy_scale = max(entropy_scale, 1e-300)

    real_to_ideal_h = -sum(f.molar_flow * f.state.residual_enthalpy for f in inlets)
    real_to_ideal_s = -sum(f.molar_flow * f.state.residual_entropy for f in inlets)
    ideal_h = sum(f.molar_flow * f.state.ideal_gas_enthalpy for f in outlets) - sum(
        f.molar_flow * f.state.ideal_gas_enthalpy for f in inlets
    )
    ideal_s = sum(f.molar_flow * f.state.ideal_gas_entropy for f in outlets) - sum(
        f.molar_flow * f.state.ideal_gas_entropy for f in inlets
    )
    ideal_to_real_h = sum(f.molar_flow * f.state.residual_enthalpy for f in outlets)
    ideal_to_real_s = sum(f.molar_flow * f.state.residual_entropy for f in outlets)

    return Balance(
        entropy_generation=generation,
        lost_work=ambient_temperature * generation,
        residual=h_out - h_in - q - w,
        scale=scale,
        entropy_scale=entropy_scale,
        second_law_complete=complete,
        path_enthalpy=(real_to_ideal_h, ideal_h, ideal_to_real_h),
        path_entropy=(real_to_ideal_s, ideal_s, ideal_to_real_s),
    )


def outcome(
    inlets: Sequence[Flow],
    outlets: Sequence[Flow],
    *,
    duty: float | None,
    power: float | None,
    ambient_temperature: float,
    medium_temperature: float | None = None,
    pairs: Sequence[tuple[int, int]] = (),
    details: dict | None = None,
    notes: Sequence[str] = (),
) -> UnitOutcome:
    """A UnitOutcome with its balance worked out (see ``account``) and the
    per-mole three-step path of each (inlet, outlet) pair in ``pairs``.

    Adds the note that a heat's second-law check needs a medium temperature
    when heat crosses the boundary without one.
    """
    balance = account(
        inlets,
        outlets,
        duty=duty,
        power=power,
        ambient_temperature=ambient_temperature,
        medium_temperature=medium_temperature,
    )
    notes = list(notes)
    if not balance.second_law_complete:
        notes.append(
            "no medium_temperature is given, so entropy_generation_W_K (and lost_work_W with it) "
            "is only the stream's entropy change: the second-law check of this heat needs a "
            "medium_temperature (the temperature of the heating or cooling medium)"
        )
    paths = tuple((o, path_between(inlets[i].state, outlets[o].state)) for i, o in pairs)
    return UnitOutcome(
        outlets=tuple(outlets),
        duty=duty,
        power=power,
        balance=balance,
        paths=paths,
        medium_temperature=medium_temperature,
        details=details or {},
        notes=tuple(notes),
    )


def positive_pressure(pressure: float, key: str, inlet_pressure: float) -> float:
    """``pressure`` (Pa) if it is a usable absolute pressure, else a UnitError on ``key``."""
    if not (math.isfinite(pressure) and pressure > 0.0):
        raise UnitError(
            f"the outlet pressure would be {pressure / 1e5:.6g} bar abs (inlet {inlet_pressure / 1e5:.6g} bar abs), "
            "which is not a positive absolute pressure",
            key=key,
            fix="give an outlet pressure above zero absolute, or a smaller pressure drop",
        )
    return pressure


def check_efficiency(value: float, key: str) -> float:
    """``value`` if it is an efficiency in (0, 1], else a UnitError on ``key``."""
    if not (math.isfinite(value) and 0.0 < value <= 1.0):
        raise UnitError(
            f"{key} = {value!r} is not an efficiency between 0 (exclusive) and 1",
            key=key,
            fix=f"write {key} as a plain number such as 0.78",
        )
    return value


def check_flow(flow: Flow, role: str, why: str) -> None:
    """A UnitError on ``role`` when ``flow`` has no molar flow but the unit needs one."""
    if not flow.molar_flow > 0.0:
        raise UnitError(
            f"the {role} stream has no flow ({flow.molar_flow:.6g} mol/s), so {why}",
            key=role,
            fix="give the feed a positive flow, or check the splitter fractions upstream",
        )
