"""A fixed set of components with their data packed into numpy arrays.

A flowsheet builds one Mixture over every component it uses; each stream's
composition is then a mole-fraction vector over that set (zeros allowed).
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np

from .components import Component, get_component


_TERMS_CACHE_SIZE = 4096


@dataclass(frozen=True)
class CompositionTerms:
    """Composition-only quantities of one mole-fraction vector: Cp
    coefficients (J/(mol K) per power of T), entropy of mixing -R sum x ln x
    (J/(mol K)), pseudo-critical temperature (K) and pressure (Pa)."""

    cp_coefficients: tuple[float, ...]
    mixing_entropy: float
    pseudo_critical_temperature: float
    pseudo_critical_pressure: float


@dataclass(frozen=True, eq=False)
class Mixture:
    """Components and their binary interaction parameters, SI arrays.

    ``kij`` is the symmetric matrix of cubic-model interaction parameters.
    """

    components: tuple[Component, ...]
    kij: np.ndarray
    names: tuple[str, ...] = field(init=False)
    molar_mass: np.ndarray = field(init=False)  # kg/mol
    critical_temperature: np.ndarray = field(init=False)  # K
    critical_pressure: np.ndarray = field(init=False)  # Pa
    acentric_factor: np.ndarray = field(init=False)
    critical_compressibility: np.ndarray = field(init=False)
    critical_volume: np.ndarray = field(init=False)  # m3/mol
    cp_coefficients: np.ndarray = field(init=False)  # (n, 5), J/(mol K) per power of T
    cp_low: np.ndarray = field(init=False)  # K
    cp_high: np.ndarray = field(init=False)  # K
    _terms_cache: dict = field(init=False, repr=False, compare=False)

    def __post_init__(self) -> None:
        from .components import R

        comps = self.components
        put = lambda name, value: object.__setattr__(self, name, value)  # noqa: E731
        put("names", tuple(c.name for c in comps))
        put("molar_mass", np.array([c.molar_mass for c in comps]))
        tc = np.array([c.critical_temperature for c in comps])
        pc = np.array([c.critical_pressure for c in comps])
        omega = np.array([c.acentric_factor for c in comps])
        put("critical_temperature", tc)
        put("critical_pressure", pc)
        put("acentric_factor", omega)
        # Pitzer's estimate Zc = 0.291 - 0.080 omega where a record lacks Zc and Vc.
        zc = np.array(
            [
                c.critical_compressibility
                if c.critical_compressibility is not None
                else (
                    c.critical_pressure * c.critical_volume / (R * c.critical_temperature)
                    if c.critical_volume is not None
                    else 0.291 - 0.080 * c.acentric_factor
                )
                for c in comps
            ]
        )
        vc = np.array(
            [
                c.critical_volume if c.critical_volume is not None else z * R * c.critical_temperature / c.critical_pressure
                for c, z in zip(comps, zc)
            ]
        )
        put("critical_compressibility", zc)
        put("critical_volume", vc)
        cp = np.zeros((len(comps), 5))
        for i, c in enumerate(comps):
            cp[i, : len(c.ideal_gas_cp)] = c.ideal_gas_cp
        put("cp_coefficients", cp)
        put("cp_low", np.array([c.cp_range[0] for c in comps]))
        put("cp_high", np.array([c.cp_range[1] for c in comps]))
        kij = np.asarray(self.kij, dtype=float)
        if kij.shape != (len(comps), len(comps)):
            raise ValueError("kij must be a square matrix over the mixture's components")
        put("kij", kij)
        put("_critical_pair", np.column_stack((tc, pc)))
        put("_terms_cache", {})

    def terms(self, x: np.ndarray) -> "CompositionTerms":
        """What depends on composition alone, computed once per distinct
        mole-fraction vector ``x`` (the solver meets the same ones again and
        again): the mixture's Cp coefficients, entropy of mixing and
        Kay's-rule pseudo-critical point."""
        key = x.tobytes()
        found = self._terms_cache.get(key)
        if found is None:
            from .components import R

            positive = x[x > 0.0]
            mixing = 0.0 if len(x) == 1 else float(-R * (positive @ np.log(positive)))
            tc, pc = (x @ self._critical_pair).tolist()
            found = CompositionTerms(tuple((x @ self.cp_coefficients).tolist()), mixing, tc, pc)
            if len(self._terms_cache) >= _TERMS_CACHE_SIZE:
                self._terms_cache.clear()
            self._terms_cache[key] = found
        return found

    @property
    def size(self) -> int:
        return len(self.components)

    def index(self, name: str) -> int:
        return self.names.index(name)

    def composition(self, fractions: dict[str, float]) -> np.ndarray:
        """Mole-fraction vector over this mixture from a name -> fraction mapping."""
        x = np.zeros(self.size)
        for name, value in fractions.items():
            x[self.index(name)] = value
        return x


def make_mixture(
    components: list[Component | str] | tuple[Component | str, ...],
    interaction: dict[tuple[str, str], float] | None = None,
) -> Mixture:
    """A Mixture of library components (given by name) or Component records,
    with interaction parameters keyed by pairs of component names (order free)."""
    comps = tuple(c if isinstance(c, Component) else get_component(c) for c in components)
    names = [c.name for c in comps]
    kij = np.zeros((len(comps), len(comps)))
    for (a, b), value in (interaction or {}).items():
        if a in names and b in names:
            i, j = names.index(a), names.index(b)
            kij[i, j] = kij[j, i] = value
    return Mixture(comps, kij)
