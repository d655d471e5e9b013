"""The validated flowsheet: plain frozen dataclasses, SI units inside.

A ``Sheet`` is what ``thermo.sheetfile`` builds from a TOML file once every
check has passed; the solver and the equipment read it and never see a unit
of measure or a TOML detail. The dictionaries inside are not to be mutated.

``UNIT_TYPES`` is the one description of what each kind of unit connects and
which specification keys it takes (the table of the flowsheet contract), used
by the reader to check files and by the equipment to find defaults.
"""

from __future__ import annotations

from dataclasses import dataclass, field, fields
from typing import Mapping

# ------------------------------------------------------------------ locations


@dataclass(frozen=True)
class Where:
    """A place in a flowsheet file: ``file`` (path or None), ``key_path`` (e.g.
    ``("units", "choke", "outlet_pressure")``) and 1-based ``line`` when known."""

    file: str | None
    key_path: tuple = ()
    line: int | None = None

    def __str__(self) -> str:
        from thermo.errors import format_key_path

        text = self.file or "<flowsheet>"
        if self.line is not None:
            text += f":{self.line}"
        if self.key_path:
            text += f": {format_key_path(self.key_path)}"
        return text


# ------------------------------------------------------------------ unit types

INLET_ROLES = ("inlet", "inlets", "hot_inlet", "cold_inlet")
OUTLET_ROLES = ("outlet", "outlets", "hot_outlet", "cold_outlet")
LIST_ROLES = ("inlets", "outlets")
CONNECTION_ROLES = INLET_ROLES + OUTLET_ROLES


@dataclass(frozen=True)
class SpecGroup:
    """Keys of which a unit takes at most one; ``required`` means exactly one.
    ``default`` is (key, value in SI) used when none of the group is given."""

    keys: tuple[str, ...]
    required: bool = True
    default: tuple[str, float] | None = None


@dataclass(frozen=True)
class UnitType:
    """What a kind of unit connects (``connections``: roles) and specifies."""

    name: str
    connections: tuple[str, ...]
    groups: tuple[SpecGroup, ...] = ()
    optional: tuple[str, ...] = ()
    description: str = ""

    @property
    def spec_keys(self) -> tuple[str, ...]:
        """Every specification key this type accepts, groups first."""
        return tuple(k for g in self.groups for k in g.keys) + self.optional

    @property
    def allowed_keys(self) -> tuple[str, ...]:
        """Every key a ``[units.NAME]`` table of this type may hold."""
        return ("type",) + self.connections + self.spec_keys


_HEATER_GROUPS = (SpecGroup(("outlet_temperature", "duty", "outlet_vapor_fraction")),)
_HEATER_OPTIONAL = ("pressure_drop", "medium_temperature")

UNIT_TYPES: dict[str, UnitType] = {
    "heater": UnitType("heater", ("inlet", "outlet"), _HEATER_GROUPS, _HEATER_OPTIONAL,
                       "adds heat; duty is the heat added (positive)"),
    "cooler": UnitType("cooler", ("inlet", "outlet"), _HEATER_GROUPS, _HEATER_OPTIONAL,
                       "removes heat; duty is the heat removed (positive)"),
    "valve": UnitType("valve", ("inlet", "outlet"),
                      (SpecGroup(("outlet_pressure", "pressure_drop")),), (),
                      "adiabatic throttle"),
    "compressor": UnitType(
        "compressor", ("inlet", "outlet"),
        (SpecGroup(("outlet_pressure", "pressure_ratio")),
         SpecGroup(("isentropic_efficiency", "polytropic_efficiency"), required=False,
                   default=("isentropic_efficiency", 0.75))),
        (), "adiabatic compression"),
    "expander": UnitType(
        "expander", ("inlet", "outlet"),
        (SpecGroup(("outlet_pressure", "pressure_ratio")),
         SpecGroup(("isentropic_efficiency",), required=False, default=("isentropic_efficiency", 0.80))),
        (), "adiabatic expansion with work out"),
    "pump": UnitType(
        "pump", ("inlet", "outlet"),
        (SpecGroup(("outlet_pressure", "pressure_rise")),
         SpecGroup(("efficiency",), required=False, default=("efficiency", 0.70))),
        (), "raises the pressure of a liquid"),
    "mixer": UnitType("mixer", ("inlets", "outlet"), (), ("outlet_pressure",),
                      "adiabatic; outlet at the lowest inlet pressure unless given"),
    "splitter": UnitType("splitter", ("inlet", "outlets"), (SpecGroup(("fractions",)),), (),
                         "divides one stream; fractions in the order of outlets"),
    "exchanger": UnitType(
        "exchanger", ("hot_inlet", "hot_outlet", "cold_inlet", "cold_outlet"),
        (SpecGroup(("hot_outlet_temperature", "cold_outlet_temperature", "duty")),),
        ("hot_pressure_drop", "cold_pressure_drop"),
        "two streams, heat from hot to cold; duty is the heat passed (positive)"),
}

#: How each specification key is written and stored: the quantity kind of
#: ``thermo.quantities`` (stored in SI), or "efficiency" (0 < x <= 1),
#: "vapor_fraction" (0..1), "ratio" (> 0) and "fractions" (list summing to 1):
#: plain numbers.
SPEC_KEY_KINDS: dict[str, str] = {
    "outlet_temperature": "temperature",
    "hot_outlet_temperature": "temperature",
    "cold_outlet_temperature": "temperature",
    "medium_temperature": "temperature",
    "duty": "power",
    "outlet_vapor_fraction": "vapor_fraction",
    "outlet_pressure": "pressure",
    "pressure_drop": "pressure_difference",
    "hot_pressure_drop": "pressure_difference",
    "cold_pressure_drop": "pressure_difference",
    "pressure_rise": "pressure_difference",
    "pressure_ratio": "ratio",
    "isentropic_efficiency": "efficiency",
    "polytropic_efficiency": "efficiency",
    "efficiency": "efficiency",
    "fractions": "fractions",
}

MODELS = ("peng-robinson", "soave-redlich-kwong", "virial", "ideal-gas")
DEFAULT_MODEL = "peng-robinson"

# ------------------------------------------------------------------ the model


@dataclass(frozen=True)
class Limits:
    """Site thresholds for cautions, SI. None: no threshold known, no caution."""

    min_temperature_K: float = 244.15  # -29 degC: common practice, no published source
    max_temperature_K: float | None = None
    max_pressure_Pa: float | None = None
    max_discharge_temperature_K: float = 423.15  # 150 degC: common practice, no published source


@dataclass(frozen=True)
class UserComponent:
    """A component from ``[components.NAME]``, SI: kg/mol, K, Pa, m3/mol,
    ideal-gas Cp coefficients in J/(mol K) for T in K (Cp = sum c_k T**k).

    Field names match ``thermo.components.Component``. When ``overrides`` is
    True the name is a library component and only the fields given (not None,
    see ``given()``) replace the library values; otherwise molar_mass,
    critical_temperature, critical_pressure, acentric_factor and ideal_gas_cp
    are always set.
    """

    name: str
    overrides: bool = False
    molar_mass: float | None = None  # kg/mol
    critical_temperature: float | None = None  # K
    critical_pressure: float | None = None  # Pa
    acentric_factor: float | None = None
    ideal_gas_cp: tuple[float, ...] | None = None  # J/(mol K), powers of T in K
    cp_range: tuple[float, float] | None = None  # K
    normal_boiling_point: float | None = None  # K
    critical_volume: float | None = None  # m3/mol
    critical_compressibility: float | None = None
    source: str | None = None

    def given(self) -> dict[str, object]:
        """The property fields set in the file (name and overrides left out),
        ready for ``dataclasses.replace(library_component, **given())``."""
        return {
            f.name: getattr(self, f.name)
            for f in fields(self)
            if f.name not in ("name", "overrides") and getattr(self, f.name) is not None
        }


@dataclass(frozen=True)
class _StatedStream:
    """A ``[streams.NAME]`` table whose state the file gives, SI: exactly two
    of temperature_K, pressure_Pa (absolute) and vapor_fraction are set, and
    exactly one of molar_flow_mol_s and mass_flow_kg_s. ``composition`` maps
    canonical component names to mole fractions (as written; they sum to 1
    within 1e-6). Shared by ``FeedStream`` and ``LoopEstimate``, which differ
    only in what the solver does with them."""

    name: str
    temperature_K: float | None
    pressure_Pa: float | None
    vapor_fraction: float | None
    molar_flow_mol_s: float | None
    mass_flow_kg_s: float | None
    composition: Mapping[str, float]

    @property
    def components(self) -> tuple[str, ...]:
        """Component names in file order."""
        return tuple(self.composition)


@dataclass(frozen=True)
class FeedStream(_StatedStream):
    """A stream that enters the flowsheet; fields in SI as on ``_StatedStream``
    (two of temperature_K, pressure_Pa and vapor_fraction, one of
    molar_flow_mol_s and mass_flow_kg_s, mole fractions summing to 1)."""


@dataclass(frozen=True)
class LoopEstimate(_StatedStream):
    """A ``[streams.NAME]`` table with ``loop_estimate = true``: a stream that a
    unit inside a recycle loop writes, given a starting state. Fields and units
    as ``FeedStream`` (SI; two of temperature_K, pressure_Pa and vapor_fraction,
    one of molar_flow_mol_s and mass_flow_kg_s).

    It is not a feed: the solver tears the loop at this stream and starts from
    this state. On a closed loop (nothing enters it) its flow and composition
    are the loop's circulating charge and stay as written; its temperature,
    pressure and enthalpy come from the units. On a loop that is also fed from
    outside it is only a starting estimate, and its flow is iterated too."""


@dataclass(frozen=True)
class UnitSpec:
    """One unit: ``connections`` maps each role (inlet, outlet, inlets,
    outlets, hot_inlet, ...) to a stream name, or a tuple of names for
    inlets/outlets; ``params`` maps each specification key written in the file
    to its value in SI (a float, or a tuple of floats for fractions)."""

    name: str
    type: str
    connections: Mapping[str, str | tuple[str, ...]]
    params: Mapping[str, float | tuple[float, ...]]

    def _streams(self, roles: tuple[str, ...]) -> tuple[str, ...]:
        names: list[str] = []
        for role in roles:
            value = self.connections.get(role)
            if value is None:
                continue
            names.extend(value if isinstance(value, tuple) else (value,))
        return tuple(names)

    @property
    def inlet_streams(self) -> tuple[str, ...]:
        """Names of the streams entering, in role order (inlet(s), hot, cold)."""
        return self._streams(INLET_ROLES)

    @property
    def outlet_streams(self) -> tuple[str, ...]:
        """Names of the streams leaving, in role order (outlet(s), hot, cold)."""
        return self._streams(OUTLET_ROLES)

    def value(self, key: str):
        """The value of specification ``key`` in SI: as written, or the contract
        default when its group has nothing written (compressor
        isentropic_efficiency 0.75, expander 0.80, pump efficiency 0.70), else None."""
        if key in self.params:
            return self.params[key]
        unit_type = UNIT_TYPES.get(self.type)
        if unit_type is None:
            return None
        for group in unit_type.groups:
            if group.default and group.default[0] == key and not any(k in self.params for k in group.keys):
                return group.default[1]
        return None


@dataclass(frozen=True)
class Sheet:
    """A whole validated flowsheet, SI. ``units`` keeps file order.
    ``interaction`` maps sorted pairs of canonical component names to k_ij.
    ``locations`` maps key paths to 1-based lines, for messages (see ``where``).
    ``streams`` holds the feeds only; ``loop_estimates`` the streams written
    with ``loop_estimate = true`` (unit outlets inside loops, see LoopEstimate)."""

    format: int
    title: str
    model: str
    ambient_temperature_K: float
    atmospheric_pressure_Pa: float
    limits: Limits
    components: Mapping[str, UserComponent]
    interaction: Mapping[tuple[str, str], float]
    streams: Mapping[str, FeedStream]
    units: Mapping[str, UnitSpec]
    path: str | None = None
    locations: Mapping[tuple, int] = field(default_factory=dict, compare=False, repr=False)
    loop_estimates: Mapping[str, LoopEstimate] = field(default_factory=dict)

    def kij(self, first: str, second: str) -> float:
        """Binary interaction parameter of two canonical component names (0 if not given)."""
        return self.interaction.get(pair_key(first, second), 0.0)

    def where(self, key_path: tuple) -> Where:
        """Where ``key_path`` is written (or its nearest written parent)."""
        return Where(self.path, tuple(key_path), line_for(self.locations, key_path))

    def producer_of(self, stream: str) -> str | None:
        """Name of the unit whose outlet ``stream`` is, or None (a feed)."""
        for unit in self.units.values():
            if stream in unit.outlet_streams:
                return unit.name
        return None

    def consumer_of(self, stream: str) -> str | None:
        """Name of the unit ``stream`` enters, or None (a product)."""
        for unit in self.units.values():
            if stream in unit.inlet_streams:
                return unit.name
        return None

    def stream_names(self) -> tuple[str, ...]:
        """Every stream: feeds in file order, then unit outlets in unit order."""
        names = list(self.streams)
        for unit in self.units.values():
            names.extend(n for n in unit.outlet_streams if n not in names)
        return tuple(names)


def pair_key(first: str, second: str) -> tuple[str, str]:
    """The key of ``Sheet.interaction`` for two component names (sorted)."""
    return (first, second) if first <= second else (second, first)


def line_for(locations: Mapping[tuple, int], key_path: tuple) -> int | None:
    """Line of ``key_path`` in ``locations``, else of its longest written prefix."""
    path = tuple(key_path)
    while path:
        line = locations.get(path)
        if line is not None:
            return line
        path = path[:-1]
    return None
