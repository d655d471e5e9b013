"""Reference checks of the pure-component library, thermo/data/components.toml,
and of the interaction-parameter table, thermo/data/interaction.toml.

The outside reference is CoolProp HEOS (Bell, Wronski, Quoilin and Lemmon,
Ind. Eng. Chem. Res. 53 (2014) 2498), which evaluates the reference
multiparameter equation of state of each fluid and reports its critical point,
acentric factor and ideal-gas heat capacity. The library's numbers were recalled
from published compilations (each record's ``source``); CoolProp only checks
them and is never a source.

Bands, and why:
- Tc and Pc within 0.5 %: the spread of good critical-point measurements of
  these fluids is a few tenths of a percent. Where the compilation and the
  critical point adopted by CoolProp's equation differ by more, the component is
  listed in CRITICAL_PRESSURE_DIFFERENCES with a wider band and the reason.
- acentric factor within 0.02 absolute: the acentric factor is defined from the
  vapor pressure at 0.7 Tc and moves by about 0.01 with the choice of Tc, Pc and
  vapor-pressure data.
- ideal-gas Cp within 1.5 %: the textbook polynomials are four- or five-term
  fits over several hundred kelvin; in mid-range they follow the reference
  equations' ideal-gas parts to about 1 %, and near the ends of their published
  ranges they can be worse, which is why some records carry a narrowed
  cp_range (their ``source`` says so). Checked at 20 temperatures spanning each
  record's cp_range, clipped to the range of validity CoolProp gives for the
  fluid's equation of state (outside it, CoolProp's ideal-gas part is not a
  reference).
- normal boiling point within 0.5 K and critical volume within 5 %: the
  tabulated boiling points are rounded to 0.01-0.1 K; critical volumes are the
  least certain critical constants (measured near the divergence of the
  compressibility), with uncertainties of a few percent.
"""

from __future__ import annotations

import math
import re
import tomllib
from functools import lru_cache
from pathlib import Path

import CoolProp.CoolProp as CP
import numpy as np
import pytest

from coolprop_names import CAS_NUMBERS, LIBRARY_TO_COOLPROP, NOT_IN_COOLPROP

DATA = Path(__file__).resolve().parents[2] / "thermo" / "data"
R = 8.314462618  # J/(mol K), CODATA 2018

SCHEMA = (
    "formula",
    "aliases",
    "molar_mass",
    "critical_temperature",
    "critical_pressure",
    "acentric_factor",
    "critical_compressibility",
    "critical_volume",
    "normal_boiling_point",
    "ideal_gas_cp",
    "cp_range",
    "source",
)
NAME_FORM = re.compile(r"^[a-z0-9]+(-[a-z0-9]+)*$")
T_REF = 298.15  # K, the enthalpy and entropy zero of flowsheet-format.md: every cp_range must hold it

# IUPAC standard atomic weights, conventional/abridged values (CIAAW; Meija et
# al., Pure Appl. Chem. 88 (2016) 265), g/mol  # from memory
ATOMIC_WEIGHTS = {
    "H": 1.008, "He": 4.0026, "C": 12.011, "N": 14.007, "O": 15.999, "F": 18.998,
    "Ne": 20.180, "S": 32.06, "Cl": 35.45, "Ar": 39.948, "Kr": 83.798, "Xe": 131.29,
}

# Components whose tabulated critical pressure differs from the critical point of
# the equation of state CoolProp implements by more than 0.5 %. Both are
# published; the band stays tight enough to catch a transcription slip.
CRITICAL_PRESSURE_DIFFERENCES = {
    "n-hexane": (0.02, "Poling's 30.25 bar against the critical point of the newer reference equation in CoolProp, about 0.6 % apart"),
    "n-heptane": (0.02, "Poling's 27.40 bar against CoolProp's n-heptane critical point, about 1.2 % apart"),
    "cyclopentane": (0.02, "Poling's 45.10 bar against the critical point of CoolProp's cyclopentane equation, about 1.6 % apart"),
    "propylene": (0.02, "Poling's 46.00 bar against the critical point of CoolProp's propylene equation, about 1 % apart"),
    "methanol": (0.02, "Poling's 80.97 bar against the critical point CoolProp reports for its methanol equation, about 1.5 % apart"),
    "neon": (0.01, "the measured 26.786 bar (Katti et al. 1986) against the critical point of CoolProp's newer neon equation, about 0.6 % apart"),
}

# Boiling points CoolProp cannot give as a saturation temperature at 1 atm.
NO_BOILING_POINT_CHECK = {
    "carbon-dioxide": "its normal_boiling_point is the sublimation point at 1 atm, below the triple point, where no liquid exists",
}


def _load(file_name: str) -> dict:
    with open(DATA / file_name, "rb") as handle:
        return tomllib.load(handle)


RECORDS: dict[str, dict] = _load("components.toml")
CHECKED = sorted(LIBRARY_TO_COOLPROP)


def _cp(record: dict, temperature: float) -> float:
    """Ideal-gas Cp of a raw record, J/(mol K), at ``temperature`` in K."""
    return float(np.polyval(record["ideal_gas_cp"][::-1], temperature))


@lru_cache(maxsize=None)
def _heos(name: str) -> CP.AbstractState:
    return CP.AbstractState("HEOS", LIBRARY_TO_COOLPROP[name])


def _equation(name: str) -> str:
    return CP.get_fluid_param_string(LIBRARY_TO_COOLPROP[name], "BibTeX-EOS")


# ---------------------------------------------------------------- the file itself


def test_library_has_at_least_40_components():
    assert len(RECORDS) >= 40, f"only {len(RECORDS)} components in components.toml"


@pytest.mark.parametrize("name", sorted(RECORDS))
def test_record_has_every_key_in_schema_order(name):
    assert tuple(RECORDS[name]) == SCHEMA, f"{name}: keys {tuple(RECORDS[name])}, expected {SCHEMA}"


@pytest.mark.parametrize("name", sorted(RECORDS))
def test_record_values_are_sane(name):
    record = RECORDS[name]
    assert NAME_FORM.match(name), f"{name!r} is not lower-case words joined by hyphens"
    assert isinstance(record["formula"], str) and record["formula"]
    assert all(isinstance(alias, str) and alias for alias in record["aliases"])
    for key in ("molar_mass", "critical_temperature", "critical_pressure",
                "critical_compressibility", "critical_volume", "normal_boiling_point"):
        assert isinstance(record[key], float) and record[key] > 0, f"{name}.{key} = {record[key]!r}"
    # The acentric factor is negative for the quantum gases and argon; it is
    # bounded, not positive.
    assert -0.5 < record["acentric_factor"] < 1.5
    assert record["normal_boiling_point"] < record["critical_temperature"]
    assert 0.2 < record["critical_compressibility"] < 0.32
    coefficients = record["ideal_gas_cp"]
    assert 2 <= len(coefficients) <= 5 and all(isinstance(c, float) for c in coefficients)
    low, high = record["cp_range"]
    assert 0 < low < T_REF < high, f"{name}: cp_range {record['cp_range']} must hold {T_REF} K"
    assert isinstance(record["source"], str) and record["source"].strip()
    assert "from memory" in record["source"], f"{name}: recalled values must say so in source"


@pytest.mark.parametrize("name", sorted(RECORDS))
def test_ideal_gas_cp_is_at_least_that_of_a_monatomic_gas(name):
    """Translation alone gives Cp = 5/2 R; a polynomial dipping below it over
    its own range is mis-transcribed."""
    low, high = RECORDS[name]["cp_range"]
    for temperature in np.linspace(low, high, 60):
        assert _cp(RECORDS[name], temperature) >= 2.5 * R * (1 - 1e-6), f"{name} at {temperature:.0f} K"


@pytest.mark.parametrize("name", sorted(RECORDS))
def test_molar_mass_matches_formula(name):
    """Molar mass = sum of IUPAC standard atomic weights over the formula."""
    formula = RECORDS[name]["formula"]
    atoms = re.findall(r"([A-Z][a-z]?)(\d*)", formula)
    assert "".join(symbol + count for symbol, count in atoms) == formula, f"{name}: cannot read formula {formula!r}"
    expected = sum(ATOMIC_WEIGHTS[symbol] * int(count or 1) for symbol, count in atoms)
    assert RECORDS[name]["molar_mass"] == pytest.approx(expected, abs=0.01)


@pytest.mark.parametrize("name", sorted(RECORDS))
def test_critical_compressibility_is_consistent(name):
    """Zc = Pc Vc / (R Tc) (bar -> Pa, cm3/mol -> m3/mol)."""
    record = RECORDS[name]
    zc = record["critical_pressure"] * 1e5 * record["critical_volume"] * 1e-6 / (R * record["critical_temperature"])
    assert record["critical_compressibility"] == pytest.approx(zc, abs=0.002)


def test_names_and_aliases_are_unambiguous():
    """No name or alias (case-insensitive) belongs to two components, and no
    alias is another component's formula."""
    owner: dict[str, str] = {}
    for name, record in RECORDS.items():
        for label in {name.lower(), *(alias.lower() for alias in record["aliases"])}:
            assert label not in owner, f"{label!r} is used by both {owner.get(label)} and {name}"
            owner[label] = name
    for name, record in RECORDS.items():
        formula = record["formula"].lower()
        assert owner.get(formula, name) == name, f"{record['formula']} of {name} is an alias of {owner[formula]}"


def test_loader_reads_every_record():
    """The loader (thermo/components.py) turns each record into SI units and
    resolves each alias to its own component."""
    components = pytest.importorskip("thermo.components")
    library = components.library()
    assert set(library) == set(RECORDS)
    for name, record in RECORDS.items():
        component = library[name]
        assert component.critical_pressure == pytest.approx(record["critical_pressure"] * 1e5)
        assert component.molar_mass == pytest.approx(record["molar_mass"] * 1e-3)
        assert component.cp(T_REF) == pytest.approx(_cp(record, T_REF), rel=1e-12)
        for alias in record["aliases"]:
            assert components.resolve_name(alias) == name, f"alias {alias!r}"
            assert components.resolve_name(alias.upper()) == name, f"alias {alias.upper()!r}"


# --------------------------------------------------- the CoolProp name mapping


def test_every_component_is_checked_or_its_absence_explained():
    assert set(CAS_NUMBERS) == set(RECORDS)
    assert set(LIBRARY_TO_COOLPROP) | set(NOT_IN_COOLPROP) == set(RECORDS)
    assert not set(LIBRARY_TO_COOLPROP) & set(NOT_IN_COOLPROP)


@pytest.mark.parametrize("name", CHECKED)
def test_coolprop_name_is_the_same_substance(name):
    """CoolProp's fluid has the component's CAS number."""
    assert CP.get_fluid_param_string(LIBRARY_TO_COOLPROP[name], "CAS") == CAS_NUMBERS[name]


def test_unchecked_components_are_not_in_coolprop():
    fluids = CP.get_global_param_string("FluidsList").split(",")
    known = {CP.get_fluid_param_string(fluid, "CAS") for fluid in fluids}
    for name in NOT_IN_COOLPROP:
        assert CAS_NUMBERS[name] not in known, f"CoolProp knows {name}: add it to LIBRARY_TO_COOLPROP"


# ------------------------------------------------ against CoolProp HEOS (Bell et al. 2014)


@pytest.mark.parametrize("name", CHECKED)
def test_critical_temperature(name):
    """Tc within 0.5 % of CoolProp HEOS, Bell et al., Ind. Eng. Chem. Res. 53 (2014) 2498.
    Hydrogen: both the library and CoolProp's Hydrogen are normal hydrogen
    (Leachman et al. 2009), not parahydrogen."""
    reference = _heos(name).T_critical()
    assert RECORDS[name]["critical_temperature"] == pytest.approx(reference, rel=0.005), _equation(name)


@pytest.mark.parametrize("name", CHECKED)
def test_critical_pressure(name):
    """Pc within 0.5 % of CoolProp HEOS, Bell et al., Ind. Eng. Chem. Res. 53 (2014) 2498,
    or within the band and for the reason in CRITICAL_PRESSURE_DIFFERENCES."""
    band, reason = CRITICAL_PRESSURE_DIFFERENCES.get(name, (0.005, ""))
    reference = _heos(name).p_critical() / 1e5
    assert RECORDS[name]["critical_pressure"] == pytest.approx(reference, rel=band), f"{_equation(name)}; {reason}"


@pytest.mark.parametrize("name", CHECKED)
def test_acentric_factor(name):
    """Acentric factor within 0.02 of CoolProp HEOS, Bell et al., Ind. Eng. Chem. Res. 53 (2014) 2498."""
    reference = _heos(name).acentric_factor()
    assert RECORDS[name]["acentric_factor"] == pytest.approx(reference, abs=0.02), _equation(name)


@pytest.mark.parametrize("name", CHECKED)
def test_ideal_gas_cp(name):
    """Ideal-gas Cp within 1.5 % of CoolProp HEOS, Bell et al., Ind. Eng. Chem.
    Res. 53 (2014) 2498, at 20 temperatures over cp_range clipped to the
    equation's range of validity. CoolProp's ideal-gas Cp is evaluated at a
    vanishing density (1e-10 mol/m3)."""
    state = _heos(name)
    low, high = RECORDS[name]["cp_range"]
    low, high = max(low, state.Tmin()), min(high, state.Tmax())
    assert high - low > 50, f"{name}: less than 50 K of cp_range can be checked"
    failures = []
    for temperature in np.linspace(low, high, 20):
        state.update(CP.DmolarT_INPUTS, 1e-10, temperature)
        reference = state.cp0molar()
        mine = _cp(RECORDS[name], temperature)
        if abs(mine / reference - 1) > 0.015:
            failures.append(f"{temperature:.0f} K: {mine:.2f} vs {reference:.2f} J/(mol K)")
    assert not failures, f"{name}: " + "; ".join(failures)


@pytest.mark.parametrize("name", sorted(set(CHECKED) - set(NO_BOILING_POINT_CHECK)))
def test_normal_boiling_point(name):
    """Saturation temperature at 101.325 kPa within 0.5 K of CoolProp HEOS,
    Bell et al., Ind. Eng. Chem. Res. 53 (2014) 2498."""
    state = _heos(name)
    state.update(CP.PQ_INPUTS, 101325.0, 0.0)
    assert RECORDS[name]["normal_boiling_point"] == pytest.approx(state.T(), abs=0.5), _equation(name)


@pytest.mark.parametrize("name", CHECKED)
def test_critical_volume(name):
    """Vc within 5 % of 1/rho_c of CoolProp HEOS, Bell et al., Ind. Eng. Chem. Res. 53 (2014) 2498."""
    reference = 1e6 / _heos(name).rhomolar_critical()  # cm3/mol
    assert RECORDS[name]["critical_volume"] == pytest.approx(reference, rel=0.05), _equation(name)


# ------------------------------------------------------- interaction parameters

INTERACTIONS: dict[str, dict] = _load("interaction.toml")


def test_interaction_tables_are_for_known_models():
    assert set(INTERACTIONS) <= {"peng-robinson", "soave-redlich-kwong"}
    assert len(INTERACTIONS.get("peng-robinson", {})) >= 12


@pytest.mark.parametrize("model", sorted(INTERACTIONS))
def test_interaction_pairs_are_library_pairs(model):
    seen: set[frozenset[str]] = set()
    for key, entry in INTERACTIONS[model].items():
        first, _, second = key.partition("/")
        assert first in RECORDS and second in RECORDS, f"{model}: {key!r} names a component not in the library"
        assert first != second, f"{model}: {key!r} pairs a component with itself"
        pair = frozenset((first, second))
        assert pair not in seen, f"{model}: {key!r} is listed twice (k_ij is symmetric)"
        seen.add(pair)
        assert set(entry) == {"kij", "source"}, f"{model}: {key!r} has keys {sorted(entry)}"
        # Cubic-model k_ij of nonpolar and weakly polar pairs lie well inside
        # (-0.2, 0.3)  # common practice, no published source
        assert isinstance(entry["kij"], float) and -0.2 < entry["kij"] < 0.3 and math.isfinite(entry["kij"])
        assert entry["source"].strip(), f"{model}: {key!r} has no source"
