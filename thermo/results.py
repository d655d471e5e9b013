"""What a solved flowsheet returns: plain dataclasses, SI units.

The command line and the app only read these; ``thermo.report`` turns them
into the contract's JSON.
"""

from __future__ import annotations

from dataclasses import dataclass, field

from .path import PathChange
from .state import StreamState

STATUS_OK = "ok"
STATUS_VIOLATIONS = "violations"
STATUS_ERROR = "error"

# Severities of cautions, mildest first.
SEVERITIES = ("notice", "warning", "danger")


@dataclass(frozen=True)
class Caution:
    """A hazard or a doubt about a result. ``code`` is statepath's own
    (e.g. "cold-metal"); ``where`` names the unit or stream it concerns."""

    code: str
    severity: str
    message: str
    where: str = ""


@dataclass(frozen=True)
class Violation:
    """A specification that breaks the second law or the unit's nature."""

    code: str
    message: str
    where: str = ""


@dataclass(frozen=True)
class SolveError:
    """Why a sheet (or part of it) could not be solved; ``where`` is a key path."""

    code: str
    message: str
    where: str = ""
    line: int | None = None  # 1-based line in the file, where known
    file: str | None = None


@dataclass(frozen=True)
class StreamResult:
    """A solved stream: its state and its flows (mol/s, kg/s)."""

    name: str
    state: StreamState
    molar_flow: float  # mol/s
    mass_flow: float  # kg/s
    is_feed: bool
    source_unit: str | None = None  # unit that writes it, None for a feed
    loop_estimate: bool = False  # written with loop_estimate = true: a loop's tear, given a starting state


@dataclass(frozen=True)
class UnitPath:
    """The three-step breakdown for a unit, summed over its streams with their
    flows: W for enthalpy and W/K for entropy (outlets minus inlets)."""

    enthalpy_W: tuple[float, float, float]
    entropy_W_K: tuple[float, float, float]
    per_stream: dict[str, PathChange] = field(default_factory=dict)  # per mole, where one composition


@dataclass(frozen=True)
class UnitResult:
    """A solved unit. duty_W and power_W are signed: positive when energy
    enters the process stream; None where they do not apply."""

    name: str
    type: str
    duty_W: float | None
    power_W: float | None
    entropy_generation_W_K: float
    lost_work_W: float
    energy_balance_residual_W: float
    path: UnitPath | None
    cautions: tuple[Caution, ...] = ()
    violations: tuple[Violation, ...] = ()
    notes: tuple[str, ...] = ()  # plain remarks, e.g. that a heat's second-law check needs a medium temperature
    details: dict[str, float | str | list] = field(default_factory=dict)  # unit-specific extras, SI


@dataclass(frozen=True)
class SheetResult:
    """The whole solved flowsheet."""

    status: str
    model: str
    component_names: tuple[str, ...]
    streams: dict[str, StreamResult]
    units: dict[str, UnitResult]
    cautions: tuple[Caution, ...] = ()
    errors: tuple[SolveError, ...] = ()
    solve_order: tuple[str, ...] = ()
    recycle_iterations: int = 0
    tear_streams: tuple[str, ...] = ()  # streams torn to solve recycle loops
