"""Pure-component records: the library shipped in ``thermo/data/components.toml``
and components defined by the user in a flowsheet file.

Everything here is SI: kg/mol, K, Pa, m3/mol, and ideal-gas Cp in J/(mol K)
as a polynomial in T (K).
"""

from __future__ import annotations

import difflib
import tomllib
from dataclasses import dataclass, field
from functools import lru_cache
from importlib import resources

R = 8.314462618  # J/(mol K), CODATA 2018 exact value of N_A * k_B

T_REF = 298.15  # K, reference temperature of the enthalpy and entropy zero
P_REF = 101325.0  # Pa, reference pressure of the entropy zero


class UnknownComponentError(KeyError):
    """A component name that is neither in the library nor defined by the user."""

    def __init__(self, name: str, suggestions: list[str]):
        self.name = name
        self.suggestions = suggestions
        super().__init__(name)

    def __str__(self) -> str:
        hint = (
            f" Did you mean {', '.join(repr(s) for s in self.suggestions)}?"
            if self.suggestions
            else " Define it under [components.NAME] or use a library name (statepath components lists them)."
        )
        return f"unknown component {self.name!r}.{hint}"


@dataclass(frozen=True)
class Component:
    """One pure component, SI units.

    ``ideal_gas_cp`` holds polynomial coefficients: Cp = sum(c_k * T**k),
    J/(mol K) with T in K, valid over ``cp_range`` (K).
    """

    name: str
    molar_mass: float  # kg/mol
    critical_temperature: float  # K
    critical_pressure: float  # Pa
    acentric_factor: float
    ideal_gas_cp: tuple[float, ...]  # J/(mol K), powers of T in K
    cp_range: tuple[float, float]  # K
    critical_compressibility: float | None = None
    critical_volume: float | None = None  # m3/mol
    normal_boiling_point: float | None = None  # K
    formula: str = ""
    aliases: tuple[str, ...] = field(default=())
    source: str = ""

    def cp(self, temperature: float) -> float:
        """Ideal-gas heat capacity, J/(mol K), at ``temperature`` in K."""
        total = 0.0
        for coefficient in reversed(self.ideal_gas_cp):
            total = total * temperature + coefficient
        return total


def _record_to_component(name: str, record: dict) -> Component:
    return Component(
        name=name,
        formula=record.get("formula", ""),
        aliases=tuple(record.get("aliases", ())),
        molar_mass=record["molar_mass"] * 1e-3,
        critical_temperature=float(record["critical_temperature"]),
        critical_pressure=record["critical_pressure"] * 1e5,
        acentric_factor=float(record["acentric_factor"]),
        critical_compressibility=record.get("critical_compressibility"),
        critical_volume=(
            record["critical_volume"] * 1e-6 if "critical_volume" in record else None
        ),
        normal_boiling_point=record.get("normal_boiling_point"),
        ideal_gas_cp=tuple(float(c) for c in record["ideal_gas_cp"]),
        cp_range=(float(record["cp_range"][0]), float(record["cp_range"][1])),
        source=record.get("source", ""),
    )


@lru_cache(maxsize=1)
def library() -> dict[str, Component]:
    """All library components by canonical name (lower-case, hyphenated)."""
    text = resources.files("thermo").joinpath("data/components.toml").read_text("utf-8")
    raw = tomllib.loads(text)
    return {name: _record_to_component(name, record) for name, record in raw.items()}


class AmbiguousComponentError(UnknownComponentError):
    """A formula shared by several library components (isomers)."""

    def __str__(self) -> str:
        return (
            f"component {self.name!r} is ambiguous: it is the formula of "
            f"{', '.join(repr(s) for s in self.suggestions)}. Write the component's name instead."
        )


@lru_cache(maxsize=1)
def _alias_index() -> tuple[dict[str, str], dict[str, list[str]]]:
    names: dict[str, str] = {name.lower(): name for name in library()}
    claims: dict[str, list[str]] = {}
    for name, component in library().items():
        for alias in (component.formula, *component.aliases):
            key = alias.lower()
            if alias and key not in names and name not in claims.setdefault(key, []):
                claims[key].append(name)
    index = dict(names)
    ambiguous: dict[str, list[str]] = {}
    for key, owners in claims.items():
        if len(owners) == 1:
            index[key] = owners[0]
        else:
            ambiguous[key] = owners
    return index, ambiguous


def resolve_name(name: str, user_names: tuple[str, ...] | frozenset[str] = ()) -> str:
    """Canonical component name for ``name`` (a library name, formula or alias,
    any case), or one of ``user_names`` as written.

    Raises UnknownComponentError with the closest names when nothing matches.
    """
    if name in user_names:
        return name
    key = name.strip().lower()
    index, ambiguous = _alias_index()
    if key in index:
        return index[key]
    if key in ambiguous:
        raise AmbiguousComponentError(name, ambiguous[key])
    candidates = sorted(set(index) | {n.lower() for n in user_names})
    close = difflib.get_close_matches(key, candidates, n=3, cutoff=0.6)
    suggestions: list[str] = []
    for candidate in close:
        canonical = index.get(candidate, candidate)
        if canonical not in suggestions:
            suggestions.append(canonical)
    raise UnknownComponentError(name, suggestions)


def get_component(name: str) -> Component:
    """The library record for ``name`` (canonical name, formula or alias)."""
    return library()[resolve_name(name)]
