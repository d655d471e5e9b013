"""Values with units: reading into SI, refusing bad values with a helpful
message, and showing SI values in the three unit systems.

Exact conversion factors come from the definitions of the units, as listed in
NIST Special Publication 811 (Thompson and Taylor, 2008), Appendix B:
1 lb = 0.45359237 kg, 1 in = 0.0254 m, standard gravity 9.80665 m/s2,
1 atm = 101325 Pa, 1 bar = 1e5 Pa, 1 Btu_IT = 1055.05585262 J,
1 hp (550 ft lbf/s) = 745.69987158227022 W, T(K) = (T(degF) + 459.67) / 1.8.
"""

from __future__ import annotations

import math
import re

import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from thermo.quantities import (
    DISPLAY_KINDS,
    KINDS,
    UNIT_SYSTEMS,
    QuantityError,
    accepted_units,
    display_units,
    format_number,
    format_quantity,
    from_display,
    parse_flow,
    parse_quantity,
    to_display,
)

LB = 0.45359237  # kg, NIST SP 811 (2008)
PSI = LB * 9.80665 / 0.0254**2  # Pa: lbf per square inch, NIST SP 811 (2008)
BTU_IT = 1055.05585262  # J, NIST SP 811 (2008)
HP = 550 * 0.3048 * LB * 9.80665  # W, 550 ft lbf/s, NIST SP 811 (2008)


@pytest.mark.parametrize(
    "text, kind, expected",
    [
        ("300 K", "temperature", 300.0),
        ("35 degC", "temperature", 308.15),
        ("32 degF", "temperature", 273.15),
        ("212 degF", "temperature", 373.15),
        ("-40 degF", "temperature", 233.15),
        ("491.67 degR", "temperature", 273.15),
        ("101325 Pa", "pressure", 101325.0),
        ("101.325 kPa", "pressure", 101325.0),
        ("6.8 MPa", "pressure", 6.8e6),
        ("68 bar", "pressure", 68e5),
        ("68 bara", "pressure", 68e5),
        ("100 psi", "pressure", 100 * PSI),
        ("100 psia", "pressure", 100 * PSI),
        ("2 atm", "pressure", 2 * 101325.0),
        ("0.5 bar", "pressure_difference", 5e4),
        ("7 psi", "pressure_difference", 7 * PSI),
        ("2400 kmol/h", "molar_flow", 2400e3 / 3600),
        ("10 mol/s", "molar_flow", 10.0),
        ("100 lbmol/h", "molar_flow", 100 * LB * 1000 / 3600),
        ("12 t/h", "mass_flow", 12e3 / 3600),
        ("5 kg/s", "mass_flow", 5.0),
        ("3600 kg/h", "mass_flow", 1.0),
        ("3600 lb/h", "mass_flow", LB),
        ("1.2 MW", "power", 1.2e6),
        ("150 kW", "power", 150e3),
        ("7 W", "power", 7.0),
        ("1 Btu/h", "power", BTU_IT / 3600),
        ("1 hp", "power", HP),
        ("18.9 g/mol", "molar_mass", 0.0189),
        ("99 cm3/mol", "molar_volume", 99e-6),
        ("-74.9 kJ/mol", "molar_energy", -74900.0),
    ],
)
def test_accepted_units_convert_to_si(text, kind, expected):
    assert parse_quantity(text, kind) == pytest.approx(expected, rel=1e-12)


@pytest.mark.parametrize(
    "text, expected",
    [
        ("68 barg", 68e5 + 101325.0),
        ("680 kPag", 680e3 + 101325.0),
        ("6.8 MPag", 6.8e6 + 101325.0),
        ("100 psig", 100 * PSI + 101325.0),
    ],
)
def test_gauge_pressures_add_the_standard_atmosphere_by_default(text, expected):
    assert parse_quantity(text, "pressure") == pytest.approx(expected, rel=1e-12)


def test_gauge_pressures_use_the_given_atmospheric_pressure():
    assert parse_quantity("22 barg", "pressure", atmospheric_pressure_Pa=94000.0) == pytest.approx(22e5 + 94000.0)
    # an absolute value does not depend on the site
    assert parse_quantity("22 bara", "pressure", atmospheric_pressure_Pa=94000.0) == pytest.approx(22e5)


@pytest.mark.parametrize(
    "text",
    ["45barg", "45 barg", "  45   barg  ", "45 bar g", "45 bar(g)", "45 BARG", "45 Barg", "4.5e1 barg", "+45 barg"],
)
def test_spacing_and_case_are_forgiven(text):
    assert parse_quantity(text, "pressure") == pytest.approx(45e5 + 101325.0)


@pytest.mark.parametrize("text", ["120 degC", "120degC", "120 °C", "120°C", "120 deg C", "120 C", "120 ℃", "120 DEGC"])
def test_celsius_spellings(text):
    assert parse_quantity(text, "temperature") == pytest.approx(393.15)


@pytest.mark.parametrize("text", ["2400 kmol/h", "2400 kmol / h", "2400 kmol/hr", "2400 KMOL/H"])
def test_flow_spellings(text):
    assert parse_quantity(text, "molar_flow") == pytest.approx(2400e3 / 3600)


def test_unicode_minus_sign():
    assert parse_quantity("\u221229 degC", "temperature") == pytest.approx(244.15)


def test_parse_flow_decides_molar_or_mass_by_the_unit():
    kind, value = parse_flow("2400 kmol/h")
    assert kind == "molar_flow" and value == pytest.approx(666.6666666667)
    kind, value = parse_flow("12 t/h")
    assert kind == "mass_flow" and value == pytest.approx(3.3333333333)
    with pytest.raises(QuantityError, match="temperature unit"):
        parse_flow("35 degC")


def _error(text, kind):
    with pytest.raises(QuantityError) as caught:
        parse_quantity(text, kind)
    return str(caught.value)


def test_bare_number_names_the_problem_and_shows_the_value_with_a_unit():
    message = _error(35, "temperature")
    assert "bare number" in message and '"35 degC"' in message
    message = _error(22, "pressure")
    assert '"22 bara"' in message and '"22 barg"' in message


def test_number_without_unit_in_a_string():
    message = _error("35", "temperature")
    assert "no unit" in message and '"35 degC"' in message


def test_unit_of_another_kind_is_named():
    message = _error("35 degC", "pressure")
    assert "'degC' is a temperature unit" in message and "pressure" in message
    assert "Example:" in message and "barg" in message


def test_pressure_difference_refuses_gauge_and_absolute_suffixes():
    assert "drop the trailing" in _error("0.5 barg", "pressure_difference")
    assert "drop the trailing" in _error("7 psia", "pressure_difference")


def test_unknown_unit_suggests_the_closest_accepted_one():
    assert "Did you mean 'bar'" in _error("5 bsr", "pressure")


def test_unit_pint_knows_but_statepath_does_not_accept():
    message = _error("5 mbar", "pressure")
    assert "does not accept" in message and "kPa" in message


def test_decimal_comma_and_thousands_separators_are_refused():
    assert "decimal point" in _error("2,400 kmol/h", "molar_flow")
    assert "decimal point" in _error("35,5 degC", "temperature")


@pytest.mark.parametrize("text", ["-300 degC", "0 K", "-1 K", "-500 degF"])
def test_temperatures_at_or_below_absolute_zero_are_refused(text):
    assert "absolute zero" in _error(text, "temperature")


@pytest.mark.parametrize("text", ["-2 barg", "-5 bar", "0 Pa", "-20 psig"])
def test_absolute_pressures_at_or_below_zero_are_refused(text):
    assert "must be above zero" in _error(text, "pressure")


@pytest.mark.parametrize(
    "text, kind",
    [("20000 K", "temperature"), ("2e10 Pa", "pressure"), ("5e12 kg/h", "mass_flow"), ("1e15 kmol/h", "molar_flow"),
     ("1e13 W", "power"), ("1e400 K", "temperature")],
)
def test_absurd_magnitudes_are_refused_with_the_value(text, kind):
    message = _error(text, kind)
    assert text in message


@pytest.mark.parametrize("value", ["", "   ", "hot", "degC", "1.2.3 bar", "nan K", "inf K", None, True, [1, 2]])
def test_junk_raises_quantity_error(value):
    with pytest.raises(QuantityError):
        parse_quantity(value, "temperature")


def test_unknown_kind_is_a_programming_error():
    with pytest.raises(ValueError, match="unknown quantity kind"):
        parse_quantity("1 K", "speed")


def test_accepted_units_are_those_of_the_contract():
    assert set(accepted_units("temperature")) == {"K", "degC", "degF", "degR"}
    assert set(accepted_units("pressure")) == {
        "Pa", "kPa", "MPa", "bar", "psi", "atm", "bara", "psia", "barg", "kPag", "psig", "MPag"}
    assert set(accepted_units("flow")) == {"mol/s", "kmol/h", "lbmol/h", "kg/s", "kg/h", "t/h", "lb/h"}
    assert set(accepted_units("power")) == {"W", "kW", "MW", "Btu/h", "hp"}


def test_every_accepted_unit_reads_back():
    for kind in KINDS:
        for unit in accepted_units(kind):
            value = "0.5" if kind != "temperature" else "300"
            assert math.isfinite(parse_quantity(f"{value} {unit}", kind))


@pytest.mark.parametrize(
    "kind, system, unit",
    [
        ("temperature", "SI", "K"), ("temperature", "metric", "degC"), ("temperature", "US", "degF"),
        ("pressure", "SI", "kPa"), ("pressure", "metric", "bara"), ("pressure", "US", "psia"),
        ("molar_flow", "SI", "mol/s"), ("molar_flow", "metric", "kmol/h"), ("molar_flow", "US", "lbmol/h"),
        ("mass_flow", "metric", "kg/h"), ("mass_flow", "US", "lb/h"),
        ("power", "SI", "kW"), ("power", "metric", "kW"), ("power", "US", "Btu/h"),
    ],
)
def test_display_units(kind, system, unit):
    assert display_units(kind, system) == unit


def test_format_quantity_examples():
    assert format_quantity(308.15, "temperature", "metric") == "35.00 degC"
    assert format_quantity(273.15, "temperature", "US") == "32.00 degF"
    assert format_quantity(68e5 + 101325.0, "pressure", "metric") == "69.013 bara"
    assert format_quantity(2400e3 / 3600, "molar_flow", "metric") == "2400.0 kmol/h"
    assert format_quantity(-1.2e6, "power", "SI") == "-1200.0 kW"
    assert format_quantity(None, "power", "SI") == "\u2014"


def test_format_refuses_non_finite_values():
    with pytest.raises(ValueError):
        format_quantity(float("nan"), "temperature", "SI")


def test_format_number_never_shows_negative_zero():
    assert format_number(-1e-12) == "-1.0000e-12"  # tiny values go to scientific notation
    assert format_number(-0.001, max_decimals=2) == "0.00"


def test_display_conversion_inverts():
    for kind in DISPLAY_KINDS:
        for system in UNIT_SYSTEMS:
            assert from_display(to_display(345.6, kind, system), kind, system) == pytest.approx(345.6, rel=1e-12)


def _shown_resolution(text: str) -> float:
    number = text.split()[0]
    if "e" in number:
        mantissa, exponent = number.split("e")
        decimals = len(mantissa.split(".")[1]) if "." in mantissa else 0
        return 10.0 ** (int(exponent) - decimals)
    return 10.0 ** -(len(number.split(".")[1]) if "." in number else 0)


_PLAUSIBLE = {
    "temperature": (50.0, 2000.0),
    "pressure": (1e3, 5e8),
    "pressure_difference": (0.0, 1e7),
    "molar_flow": (1e-3, 1e5),
    "mass_flow": (1e-3, 1e5),
    "power": (-1e9, 1e9),
    "molar_mass": (1e-3, 1.0),
    "molar_volume": (1e-5, 1e-2),
    "molar_energy": (-1e6, 1e6),
}


@settings(max_examples=60, deadline=None)
@given(st.sampled_from(sorted(_PLAUSIBLE)), st.sampled_from(UNIT_SYSTEMS), st.floats(0.0, 1.0, allow_subnormal=False))
def test_formatted_values_read_back_within_the_shown_resolution(kind, system, position):
    low, high = _PLAUSIBLE[kind]
    value = low + (high - low) * position
    shown = format_quantity(value, kind, system)
    back = parse_quantity(shown, kind)
    scale = abs(from_display(1.0, kind, system) - from_display(0.0, kind, system))
    assert abs(back - value) <= 0.5 * _shown_resolution(shown) * scale * (1 + 1e-9) + 1e-12 * abs(value)


@settings(max_examples=150, deadline=None)
@given(st.text(max_size=30), st.sampled_from(KINDS))
def test_any_text_gives_a_value_or_a_quantity_error(text, kind):
    try:
        value = parse_quantity(text, kind)
    except QuantityError as error:
        assert str(error)
    else:
        assert math.isfinite(value)


@settings(max_examples=100, deadline=None)
@given(
    st.from_regex(re.compile(r"[+-]?\d{1,4}(\.\d{1,3})?(e[+-]?\d)?"), fullmatch=True),
    st.sampled_from(["degC", "K", "barg", "bar", "kmol/h", "kg/h", "kW", "MW", "psig", "xyz", "", "°F"]),
    st.sampled_from(KINDS),
)
def test_number_unit_combinations_give_a_value_or_a_quantity_error(number, unit, kind):
    try:
        value = parse_quantity(f"{number} {unit}", kind)
    except QuantityError as error:
        assert "Example" in str(error) or "e.g." in str(error) or '"' in str(error)
    else:
        assert math.isfinite(value)
