"""Values with units at the edges of statepath: reading them from text into SI,
and showing SI values in the engineer's unit system.

Reading accepts exactly the units of the flowsheet contract (plus a few
spellings of them), forgiving about spacing and letter case where that cannot
be ambiguous:

* ``"45barg"``, ``"45 barg"``, ``"45 bar g"``, ``"45 bar(g)"`` and ``"45 BARG"``
  are the same; so are ``"2400 kmol/h"``, ``"2400 kmol / h"`` and ``"2400 kmol/hr"``.
* ``"120 degC"``, ``"120 °C"``, ``"120°C"``, ``"120 deg C"`` and ``"120 C"`` are
  the same (a bare ``C`` or ``F`` is read as Celsius or Fahrenheit only where a
  temperature is expected, so it cannot be mistaken for coulomb or farad).
  A bare ``R`` is not accepted for Rankine: write ``degR``.
* Letter case is ignored because the accepted units stay distinct without it
  (``mpa`` can only mean MPa: millipascal is not an accepted unit).
* Numbers use a decimal point and no thousands separator; a Unicode minus
  sign is read as ``-``.

``Btu`` is the International Table Btu (1055.05585 J) and ``hp`` the
mechanical horsepower (745.70 W); ``lbmol`` is 453.59237 mol.

Display unit systems (``display_units``, ``format_quantity``):

============  ======  =======  =========  =======  ========
system        T       P        molar flow  mass     power
============  ======  =======  =========  =======  ========
``"SI"``      K       kPa      mol/s      kg/s     kW
``"metric"``  degC    bara     kmol/h     kg/h     kW
``"US"``      degF    psia     lbmol/h    lb/h     Btu/h
============  ======  =======  =========  =======  ========

"SI" stays with SI units but picks the multiples (kPa, kW) that keep process
numbers readable. Displayed pressures are always absolute, written so that a
displayed value reads back unchanged through ``parse_quantity``.

Conversion factors are worked out once with pint and cached, so parsing and
formatting a table cell is a dictionary look-up and one multiply-add.
"""

from __future__ import annotations

import difflib
import math
import re
from dataclasses import dataclass
from functools import lru_cache

from thermo.errors import QuantityError

__all__ = [
    "QuantityError",
    "parse_quantity",
    "parse_flow",
    "format_quantity",
    "format_number",
    "to_display",
    "from_display",
    "display_units",
    "accepted_units",
    "example_of",
    "KINDS",
    "DISPLAY_KINDS",
    "UNIT_SYSTEMS",
    "STANDARD_ATMOSPHERE_PA",
]

STANDARD_ATMOSPHERE_PA = 101325.0
UNIT_SYSTEMS = ("SI", "metric", "US")


@lru_cache(maxsize=1)
def unit_registry():
    """The one pint registry of statepath, built on first use (it takes a
    noticeable fraction of a second) and shared afterwards."""
    from importlib import resources

    import pint

    registry = pint.UnitRegistry(None)
    definitions = resources.files("thermo").joinpath("data/units.txt").read_text("utf-8")
    for line in definitions.splitlines():
        if line.strip() and not line.lstrip().startswith("#"):
            registry.define(line)
    return registry


@dataclass(frozen=True)
class _Unit:
    """An accepted unit: ``SI = value * scale + offset`` (plus the atmosphere
    for gauge pressures)."""

    symbol: str  # canonical spelling, as shown in messages
    kind: str
    pint_expression: str
    gauge: bool = False


# kind -> accepted units with their canonical spelling and pint expression.
_ACCEPTED: dict[str, tuple[_Unit, ...]] = {
    "temperature": (
        _Unit("K", "temperature", "kelvin"),
        _Unit("degC", "temperature", "degC"),
        _Unit("degF", "temperature", "degF"),
        _Unit("degR", "temperature", "degR"),
    ),
    "pressure": (
        _Unit("Pa", "pressure", "Pa"),
        _Unit("kPa", "pressure", "kPa"),
        _Unit("MPa", "pressure", "MPa"),
        _Unit("bar", "pressure", "bar"),
        _Unit("psi", "pressure", "psi"),
        _Unit("atm", "pressure", "atm"),
        _Unit("bara", "pressure", "bar"),
        _Unit("psia", "pressure", "psi"),
        _Unit("barg", "pressure", "bar", gauge=True),
        _Unit("kPag", "pressure", "kPa", gauge=True),
        _Unit("psig", "pressure", "psi", gauge=True),
        _Unit("MPag", "pressure", "MPa", gauge=True),
    ),
    "pressure_difference": (
        _Unit("Pa", "pressure_difference", "Pa"),
        _Unit("kPa", "pressure_difference", "kPa"),
        _Unit("MPa", "pressure_difference", "MPa"),
        _Unit("bar", "pressure_difference", "bar"),
        _Unit("psi", "pressure_difference", "psi"),
        _Unit("atm", "pressure_difference", "atm"),
    ),
    "molar_flow": (
        _Unit("mol/s", "molar_flow", "mol/s"),
        _Unit("kmol/h", "molar_flow", "kmol/hour"),
        _Unit("lbmol/h", "molar_flow", "lbmol/hour"),
    ),
    "mass_flow": (
        _Unit("kg/s", "mass_flow", "kg/s"),
        _Unit("kg/h", "mass_flow", "kg/hour"),
        _Unit("t/h", "mass_flow", "metric_ton/hour"),
        _Unit("lb/h", "mass_flow", "lb/hour"),
    ),
    "power": (
        _Unit("W", "power", "W"),
        _Unit("kW", "power", "kW"),
        _Unit("MW", "power", "MW"),
        _Unit("Btu/h", "power", "Btu_it/hour"),
        _Unit("hp", "power", "hp"),
    ),
    "molar_mass": (
        _Unit("g/mol", "molar_mass", "g/mol"),
        _Unit("kg/kmol", "molar_mass", "kg/kmol"),
        _Unit("kg/mol", "molar_mass", "kg/mol"),
        _Unit("lb/lbmol", "molar_mass", "lb/lbmol"),
    ),
    "molar_volume": (
        _Unit("m3/mol", "molar_volume", "m**3/mol"),
        _Unit("m3/kmol", "molar_volume", "m**3/kmol"),
        _Unit("cm3/mol", "molar_volume", "cm**3/mol"),
        _Unit("L/mol", "molar_volume", "L/mol"),
        _Unit("ft3/lbmol", "molar_volume", "ft**3/lbmol"),
    ),
    "molar_energy": (
        _Unit("J/mol", "molar_energy", "J/mol"),
        _Unit("kJ/mol", "molar_energy", "kJ/mol"),
        _Unit("kJ/kmol", "molar_energy", "kJ/kmol"),
        _Unit("Btu/lbmol", "molar_energy", "Btu_it/lbmol"),
    ),
}

#: Kinds that ``parse_quantity`` reads.
KINDS = tuple(_ACCEPTED)

#: Extra spellings, after spaces are removed and letters lowered.
_ALIASES = {
    "°c": "degC", "ºc": "degC", "℃": "degC",
    "°f": "degF", "ºf": "degF", "℉": "degF",
    "°r": "degR", "ºr": "degR",
    "°k": "K", "kelvin": "K",
}
_TEMPERATURE_ONLY_ALIASES = {"c": "degC", "f": "degF"}

# What each kind is called in messages, and a right value to show.
_KIND_NAMES = {
    "temperature": "a temperature",
    "pressure": "a pressure",
    "pressure_difference": "a pressure difference",
    "molar_flow": "a molar flow",
    "mass_flow": "a mass flow",
    "flow": "a flow (molar or mass)",
    "power": "a power or duty",
    "molar_mass": "a molar mass",
    "molar_volume": "a molar volume",
    "molar_energy": "an energy per mole",
}
_EXAMPLES = {
    "temperature": "35 degC",
    "pressure": "68 barg",
    "pressure_difference": "0.5 bar",
    "molar_flow": "2400 kmol/h",
    "mass_flow": "12 t/h",
    "flow": "2400 kmol/h",
    "power": "1.2 MW",
    "molar_mass": "18.9 g/mol",
    "molar_volume": "99 cm3/mol",
    "molar_energy": "-74.9 kJ/mol",
}
# Unit to show beside a bare number the user wrote, for "write it as ..." hints.
_HINT_UNITS = {
    "temperature": ("degC",),
    "pressure": ("bara", "barg"),
    "pressure_difference": ("bar",),
    "molar_flow": ("kmol/h",),
    "mass_flow": ("kg/h",),
    "flow": ("kmol/h", "kg/h"),
    "power": ("kW",),
    "molar_mass": ("g/mol",),
    "molar_volume": ("cm3/mol",),
    "molar_energy": ("kJ/mol",),
}

# Values beyond these are refused as typing slips, not physics (absolute SI).
_ABSURD_ABOVE = {
    "temperature": 1e4,  # K
    "pressure": 1e10,  # Pa
    "pressure_difference": 1e10,  # Pa
    "molar_flow": 1e11,  # mol/s, about 1e9 kg/s of a light gas
    "mass_flow": 1e9,  # kg/s
    "power": 1e12,  # W
    "molar_mass": 10.0,  # kg/mol
    "molar_volume": 1.0,  # m3/mol
    "molar_energy": 1e8,  # J/mol
}

_SI_UNITS = {
    "temperature": "K", "pressure": "Pa", "pressure_difference": "Pa", "molar_flow": "mol/s",
    "mass_flow": "kg/s", "power": "W", "molar_mass": "kg/mol", "molar_volume": "m3/mol",
    "molar_energy": "J/mol",
}

_NUMBER = re.compile(
    r"""\s*(?P<number>[+-]?(?:\d[\d,_]*(?:\.\d*)?|\.\d+)(?:[eE][+-]?\d+)?)\s*(?P<unit>.*?)\s*\Z""",
    re.DOTALL,
)


@lru_cache(maxsize=None)
def _factors(kind: str) -> dict[str, tuple[float, float, bool, str]]:
    """lower-cased spelling -> (scale, offset, gauge, canonical symbol)."""
    registry = unit_registry()
    table: dict[str, tuple[float, float, bool, str]] = {}
    for unit in _ACCEPTED[kind]:
        scale, offset = _linear_map(registry, unit.pint_expression)
        table[unit.symbol.lower()] = (scale, offset, unit.gauge, unit.symbol)
    spellings = dict(table)
    for alias, symbol in list(_ALIASES.items()) + (
        list(_TEMPERATURE_ONLY_ALIASES.items()) if kind == "temperature" else []
    ):
        if symbol.lower() in table:
            spellings[alias] = table[symbol.lower()]
    for spelling, entry in list(spellings.items()):
        if spelling.endswith("/h"):
            spellings[spelling + "r"] = entry  # kmol/hr, lb/hr, Btu/hr
    return spellings


def _linear_map(registry, expression: str) -> tuple[float, float]:
    """(scale, offset) with ``SI = value * scale + offset`` for a pint unit;
    the scale of offset units (degC, degF) comes from their delta unit, which
    is exact, rather than from a difference of two conversions."""
    offset = registry.Quantity(0.0, expression).to_base_units().magnitude
    delta = {"degC": "delta_degree_Celsius", "degF": "delta_degree_Fahrenheit"}.get(expression, expression)
    scale = registry.Quantity(1.0, delta).to_base_units().magnitude
    return scale, offset


def _normalise_unit(unit: str) -> str:
    unit = "".join(unit.split()).lower()
    unit = re.sub(r"\(([ag])\)\Z", r"\1", unit)  # bar(g) -> barg
    return unit.replace("³", "3").replace("^3", "3").replace("**3", "3")


def accepted_units(kind: str) -> tuple[str, ...]:
    """The canonical spellings ``parse_quantity`` accepts for ``kind``
    (``"flow"`` gives the molar and mass flow units)."""
    if kind == "flow":
        return accepted_units("molar_flow") + accepted_units("mass_flow")
    _check_kind(kind)
    return tuple(unit.symbol for unit in _ACCEPTED[kind])


def example_of(kind: str) -> str:
    """A right value of ``kind``, for messages: ``example_of("pressure") == "68 barg"``."""
    return _EXAMPLES[kind]


def _check_kind(kind: str) -> None:
    if kind not in _ACCEPTED:
        raise ValueError(f"unknown quantity kind {kind!r}; known: {', '.join(KINDS)}")


def _kind_of_unit(normalised: str) -> str | None:
    for kind in _ACCEPTED:
        if normalised in _factors(kind):
            return kind
    return None


def _pint_dimension_of(unit: str) -> str | None:
    """The kind pint thinks ``unit`` belongs to, for a better message; None if
    pint does not know it or it is none of our kinds."""
    registry = unit_registry()
    try:
        quantity = registry.Quantity(1.0, unit.replace("°", "deg"))
    except Exception:  # pint raises many kinds of errors for junk; all mean "unknown"
        return None
    for kind, units in _ACCEPTED.items():
        try:
            if quantity.dimensionality == registry.Quantity(1.0, units[0].pint_expression).dimensionality:
                return kind
        except Exception:
            return None
    return None


def _split(text: object, kind: str) -> tuple[float, str, str]:
    """(number, unit as written, unit normalised), or QuantityError."""
    example = _EXAMPLES[kind]
    if isinstance(text, bool) or not isinstance(text, (str, int, float)):
        raise QuantityError(
            f"expected {_KIND_NAMES[kind]} written as a string with its unit, "
            f"got {type(text).__name__} {text!r}",
            text=text, kind=kind, example=example,
        )
    if not isinstance(text, str):
        suggestions = [f"{_plain(text)} {unit}" for unit in _HINT_UNITS[kind]]
        raise QuantityError(
            f"{_plain(text)} is a bare number, but {_KIND_NAMES[kind]} needs a unit: "
            f"write it as a string such as {' or '.join(repr_quoted(s) for s in suggestions)}",
            text=text, kind=kind, example=example, suggestions=suggestions,
        )
    cleaned = text.replace("\u2212", "-").replace("\u00a0", " ")
    match = _NUMBER.match(cleaned)
    if not match:
        if not cleaned.strip():
            raise QuantityError(f"empty value where {_KIND_NAMES[kind]} is needed",
                                text=text, kind=kind, example=example)
        raise QuantityError(
            f"{text!r} does not start with a number; {_KIND_NAMES[kind]} is a number then a unit",
            text=text, kind=kind, example=example,
        )
    number_text = match.group("number")
    if "," in number_text or "_" in number_text:
        raise QuantityError(
            f"{text!r}: write the number with a decimal point and no thousands "
            "separators (commas or underscores)",
            text=text, kind=kind, example=example,
        )
    number = float(number_text)
    unit = match.group("unit")
    if not unit:
        suggestions = [f"{number_text} {u}" for u in _HINT_UNITS[kind]]
        raise QuantityError(
            f"{text!r} has no unit; {_KIND_NAMES[kind]} needs one, such as "
            f"{' or '.join(repr_quoted(s) for s in suggestions)}",
            text=text, kind=kind, example=example, suggestions=suggestions,
        )
    return number, unit, _normalise_unit(unit)


def repr_quoted(text: str) -> str:
    """``text`` in double quotes, as it would be written in the file."""
    return f'"{text}"'


def _plain(number: float | int) -> str:
    return repr(number) if isinstance(number, float) else str(number)


def _wrong_unit(text: str, unit: str, normalised: str, kinds: tuple[str, ...], wanted: str) -> QuantityError:
    example = _EXAMPLES[wanted]
    accepted = [u for kind in kinds for u in accepted_units(kind)]
    other_kind = _kind_of_unit(normalised)
    if other_kind is None and normalised in _TEMPERATURE_ONLY_ALIASES:
        other_kind = "temperature"
    if other_kind is None:
        other_kind = _pint_dimension_of(unit)
        if other_kind in kinds:
            return QuantityError(
                f"{text!r}: {unit!r} is {_KIND_NAMES[other_kind]} unit statepath does not "
                f"accept; use one of {', '.join(accepted)}",
                text=text, kind=wanted, example=example,
            )
    if other_kind is not None and other_kind not in kinds:
        if wanted == "pressure_difference" and other_kind == "pressure":
            return QuantityError(
                f"{text!r}: a pressure difference has no gauge or absolute reference; "
                f"drop the trailing 'g' or 'a' of {unit!r}",
                text=text, kind=wanted, example=example,
            )
        return QuantityError(
            f"{text!r}: {unit!r} is {_KIND_NAMES[other_kind]} unit, but "
            f"{_KIND_NAMES[wanted]} is needed here (units: {', '.join(accepted)})",
            text=text, kind=wanted, example=example,
        )
    spellings = {u.lower(): u for u in accepted}
    close = difflib.get_close_matches(normalised, list(spellings), n=2, cutoff=0.6)
    hint = f" Did you mean {' or '.join(repr(spellings[c]) for c in close)}?" if close else ""
    return QuantityError(
        f"{text!r}: unknown unit {unit!r} for {_KIND_NAMES[wanted]} "
        f"(units: {', '.join(accepted)}).{hint}",
        text=text, kind=wanted, example=example,
    )


def _check_physical(value: float, kind: str, text: str, gauge: bool, atmospheric: float) -> float:
    example = _EXAMPLES[kind]
    if not math.isfinite(value):
        raise QuantityError(f"{text!r} is not a finite number", text=text, kind=kind, example=example)
    if kind == "temperature" and value <= 0.0:
        raise QuantityError(
            f"{text!r} is {value:.6g} K, at or below absolute zero (0 K = -273.15 degC = -459.67 degF)",
            text=text, kind=kind, example=example,
        )
    if kind == "pressure" and value <= 0.0:
        reference = (
            f" (gauge, with atmospheric pressure {atmospheric / 1e5:.5g} bar)" if gauge else ""
        )
        raise QuantityError(
            f"{text!r} is {value / 1e5:.6g} bar absolute{reference}: an absolute pressure "
            "must be above zero",
            text=text, kind=kind, example=example,
        )
    if kind in ("molar_mass", "molar_volume") and value <= 0.0:
        raise QuantityError(f"{text!r} must be above zero", text=text, kind=kind, example=example)
    limit = _ABSURD_ABOVE[kind]
    if abs(value) > limit:
        raise QuantityError(
            f"{text!r} is {value:.4g} {_SI_UNITS[kind]}, beyond any process value "
            f"(statepath refuses more than {limit:.0e} {_SI_UNITS[kind]}); check the number and its unit",
            text=text, kind=kind, example=example,
        )
    return value


def parse_quantity(text: str, kind: str, *, atmospheric_pressure_Pa: float = STANDARD_ATMOSPHERE_PA) -> float:
    """Read ``text`` (a number and a unit, e.g. ``"68 barg"``) as ``kind`` and
    return it in SI: K, Pa absolute, mol/s, kg/s, W, kg/mol, m3/mol, J/mol;
    a ``pressure_difference`` in Pa.

    Gauge pressures (barg, kPag, psig, MPag) add ``atmospheric_pressure_Pa``
    (Pa). A bare number, a missing or wrong unit, a temperature at or below
    0 K, an absolute pressure at or below 0 and absurd magnitudes raise
    ``QuantityError`` with an example of a right value. ``kind`` must be one
    of ``KINDS`` (a ``ValueError`` otherwise, a programming error).
    """
    _check_kind(kind)
    number, unit, normalised = _split(text, kind)
    entry = _factors(kind).get(normalised)
    if entry is None:
        raise _wrong_unit(text, unit, normalised, (kind,), kind)
    scale, offset, gauge, _ = entry
    value = number * scale + offset
    if gauge:
        value += atmospheric_pressure_Pa
    return _check_physical(value, kind, text, gauge, atmospheric_pressure_Pa)


def parse_flow(text: str) -> tuple[str, float]:
    """Read a flow whose unit decides whether it is molar or mass:
    ``parse_flow("2400 kmol/h") == ("molar_flow", 666.67)`` (mol/s),
    ``parse_flow("12 t/h") == ("mass_flow", 3.333)`` (kg/s).
    Raises ``QuantityError`` like ``parse_quantity``."""
    number, unit, normalised = _split(text, "flow")
    for kind in ("molar_flow", "mass_flow"):
        entry = _factors(kind).get(normalised)
        if entry is not None:
            scale, offset, _, _ = entry
            return kind, _check_physical(number * scale + offset, kind, text, False, 0.0)
    raise _wrong_unit(text, unit, normalised, ("molar_flow", "mass_flow"), "flow")


# ---------------------------------------------------------------- display

# (kind, system) -> (unit symbol, pint expression, most decimals shown)
_DISPLAY: dict[str, dict[str, tuple[str, str, int]]] = {
    "temperature": {"SI": ("K", "kelvin", 2), "metric": ("degC", "degC", 2), "US": ("degF", "degF", 2)},
    "pressure": {"SI": ("kPa", "kPa", 2), "metric": ("bara", "bar", 4), "US": ("psia", "psi", 3)},
    "pressure_difference": {"SI": ("kPa", "kPa", 2), "metric": ("bar", "bar", 4), "US": ("psi", "psi", 3)},
    "molar_flow": {"SI": ("mol/s", "mol/s", 4), "metric": ("kmol/h", "kmol/hour", 3), "US": ("lbmol/h", "lbmol/hour", 3)},
    "mass_flow": {"SI": ("kg/s", "kg/s", 4), "metric": ("kg/h", "kg/hour", 2), "US": ("lb/h", "lb/hour", 2)},
    "power": {"SI": ("kW", "kW", 3), "metric": ("kW", "kW", 3), "US": ("Btu/h", "Btu_it/hour", 0)},
    "molar_mass": {"SI": ("g/mol", "g/mol", 4), "metric": ("g/mol", "g/mol", 4), "US": ("lb/lbmol", "lb/lbmol", 4)},
    "molar_volume": {"SI": ("m3/kmol", "m**3/kmol", 5), "metric": ("m3/kmol", "m**3/kmol", 5), "US": ("ft3/lbmol", "ft**3/lbmol", 4)},
    "molar_energy": {"SI": ("J/mol", "J/mol", 2), "metric": ("kJ/kmol", "kJ/kmol", 2), "US": ("Btu/lbmol", "Btu_it/lbmol", 2)},
    "molar_entropy": {
        "SI": ("J/(mol K)", "J/mol/K", 4),
        "metric": ("kJ/(kmol K)", "kJ/kmol/K", 4),
        "US": ("Btu/(lbmol degR)", "Btu_it/lbmol/degR", 4),
    },
    "entropy_rate": {
        "SI": ("W/K", "W/K", 3),
        "metric": ("kW/K", "kW/K", 5),
        "US": ("Btu/(h degR)", "Btu_it/hour/degR", 2),
    },
}

#: Kinds that ``format_quantity`` shows (``KINDS`` plus entropies).
DISPLAY_KINDS = tuple(_DISPLAY)


@lru_cache(maxsize=None)
def _display_entry(kind: str, system: str) -> tuple[float, float, str, int]:
    """(scale, offset, symbol, decimals) with ``shown = (SI - offset) / scale``."""
    if kind not in _DISPLAY:
        raise ValueError(f"unknown quantity kind {kind!r}; known: {', '.join(DISPLAY_KINDS)}")
    if system not in UNIT_SYSTEMS:
        raise ValueError(f"unknown unit system {system!r}; known: {', '.join(UNIT_SYSTEMS)}")
    symbol, expression, decimals = _DISPLAY[kind][system]
    scale, offset = _linear_map(unit_registry(), expression)
    return scale, offset, symbol, decimals


def display_units(kind: str, system: str) -> str:
    """The unit ``format_quantity`` shows ``kind`` in for ``system``
    ("SI", "metric" or "US"), e.g. ``display_units("pressure", "US") == "psia"``."""
    return _display_entry(kind, system)[2]


def to_display(value_SI: float, kind: str, system: str) -> float:
    """``value_SI`` (K, Pa, mol/s, ...) as a number in ``display_units(kind, system)``."""
    scale, offset, _, _ = _display_entry(kind, system)
    return (value_SI - offset) / scale


def from_display(value: float, kind: str, system: str) -> float:
    """The inverse of ``to_display``: a number in ``display_units(kind, system)`` to SI."""
    scale, offset, _, _ = _display_entry(kind, system)
    return value * scale + offset


def format_number(value: float, *, significant: int = 5, max_decimals: int = 6) -> str:
    """``value`` with about ``significant`` significant figures but never more
    than ``max_decimals`` decimals; scientific notation outside 1e-4..1e9."""
    if value is None or not math.isfinite(value):
        raise ValueError(f"cannot show {value!r}: not a finite number")
    if value == 0.0:
        return "0" if max_decimals == 0 else "0." + "0" * min(max_decimals, significant - 1)
    magnitude = abs(value)
    if magnitude >= 1e9 or magnitude < 1e-4:
        return f"{value:.{significant - 1}e}"
    decimals = max(0, min(max_decimals, significant - 1 - math.floor(math.log10(magnitude))))
    text = f"{value:.{decimals}f}"
    if text.startswith("-") and not text.strip("-0."):
        text = text[1:]  # "-0.00" is just zero
    return text


def format_quantity(value_SI: float, kind: str, system: str = "metric", *, significant: int = 5) -> str:
    """``value_SI`` (SI: K, Pa absolute, mol/s, kg/s, W, ...) shown with its
    unit in ``system``: ``format_quantity(308.15, "temperature", "metric") == "35.00 degC"``.

    ``None`` shows as an em dash; a NaN or infinity raises ``ValueError``
    (statepath never hands one on, so seeing one is a bug to report).
    """
    if value_SI is None:
        return "\u2014"
    scale, offset, symbol, decimals = _display_entry(kind, system)
    return f"{format_number((value_SI - offset) / scale, significant=significant, max_decimals=decimals)} {symbol}"
