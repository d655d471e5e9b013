"""Typed entries to file values, and the entered-value marking."""

from __future__ import annotations

import pytest

from thermo.errors import QuantityError
from tui.widgets.cells import cell, entered_quantities, flag_summary
from tui.widgets.fields import group_rivals, marked, parse_entry

DOCUMENT = {
    "atmospheric_pressure": "0.94 bar",
    "streams": {"feed": {"temperature": "35 degC", "pressure": "68 barg", "flow": "1 kmol/h"}},
    "units": {"heat": {"type": "heater", "inlet": "feed", "outlet": "hot", "outlet_temperature": "80 degC"}},
}


def test_quantities_keep_the_text_as_typed():
    assert parse_entry("pressure", " 45 barg ", DOCUMENT) == "45 barg"
    assert parse_entry("temperature", "120 degF", DOCUMENT) == "120 degF"
    assert parse_entry("flow", "12 t/h", DOCUMENT) == "12 t/h"


@pytest.mark.parametrize("kind, text", [("pressure", "45"), ("temperature", "45 barg"), ("power", "lots")])
def test_bad_quantities_raise_with_a_message(kind, text):
    with pytest.raises(QuantityError) as caught:
        parse_entry(kind, text, DOCUMENT)
    assert str(caught.value)


def test_numbers_lists_and_tables():
    assert parse_entry("efficiency", "0.78", DOCUMENT) == 0.78
    with pytest.raises(ValueError, match="0.78, not 78"):
        parse_entry("efficiency", "78", DOCUMENT)
    assert parse_entry("fractions", "0.6, 0.4", DOCUMENT) == [0.6, 0.4]
    assert parse_entry("composition", "methane=0.9, ethane=0.1", DOCUMENT) == {"methane": 0.9, "ethane": 0.1}
    assert parse_entry("names", "a, b", DOCUMENT) == ["a", "b"]
    with pytest.raises(ValueError):
        parse_entry("model", "van-der-waals", DOCUMENT)


def test_entered_values_are_bracketed_and_computed_ones_are_not():
    assert marked("68 barg") == "[68 barg]" and marked(None) == "\u2014"
    assert cell("35.00", True).plain == "[35.00]" and cell("11.1", False).plain == "11.1 "
    pinned = entered_quantities(DOCUMENT)
    assert pinned["feed"] == {"temperature", "pressure", "flow"} and pinned["hot"] == {"temperature"}


def test_setting_one_of_a_group_replaces_the_other():
    assert group_rivals(DOCUMENT, ("units", "heat", "duty")) == [("units", "heat", "outlet_temperature")]
    assert group_rivals(DOCUMENT, ("units", "heat", "medium_temperature")) == []


def test_flags_read_without_colour():
    from tui.render import Flag

    assert flag_summary([]).plain == "\u2714 ok"
    text = flag_summary([Flag("danger", "cold-metal", "too cold", "x"), Flag("warning", "w", "m", "x")]).plain
    assert "danger" in text and "warn" in text and "\u25b2" in text
