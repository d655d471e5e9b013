"""Editing a stream made by a unit: the engineer types the state wanted at
the outlet, and the unit's own key takes it (the stream itself has no keys)."""

from __future__ import annotations

from textual.widgets import Input

from .conftest import settle
from tui.widgets.detail_pane import DetailPane, FieldList
from tui.widgets.fields import setting_unit_key
from tui.widgets.status_line import StatusLine
from tui.widgets.stream_table import StreamTable


def _document():
    return {"units": {
        "choke": {"type": "valve", "inlet": "a", "outlet": "b", "outlet_pressure": "22 barg"},
        "line-heater": {"type": "heater", "inlet": "b", "outlet": "c", "outlet_temperature": "25 degC"},
        "ex": {"type": "exchanger", "hot_inlet": "h1", "hot_outlet": "h2", "cold_inlet": "c1",
               "cold_outlet": "c2", "duty": "1 MW"},
    }}


def test_each_outlet_key_is_found_on_the_unit_that_makes_the_stream():
    document = _document()
    assert setting_unit_key(document, "c", "temperature") == ("units", "line-heater", "outlet_temperature")
    assert setting_unit_key(document, "c", "vapor_fraction") == ("units", "line-heater", "outlet_vapor_fraction")
    assert setting_unit_key(document, "b", "pressure") == ("units", "choke", "outlet_pressure")
    assert setting_unit_key(document, "h2", "temperature") == ("units", "ex", "hot_outlet_temperature")
    assert setting_unit_key(document, "c2", "temperature") == ("units", "ex", "cold_outlet_temperature")


def test_a_state_that_follows_from_the_balance_has_no_key():
    document = _document()
    assert setting_unit_key(document, "b", "temperature") is None  # a valve's outlet T is computed
    assert setting_unit_key(document, "c", "pressure") is None  # a heater takes a pressure drop, not an outlet P
    assert setting_unit_key(document, "a", "temperature") is None  # a feed: no unit makes it


async def _edit_stream_field(app, pilot, stream: str, key: str) -> None:
    screen = app.main_screen
    await pilot.press("1")
    screen.query_one(StreamTable).select_name(stream)
    await pilot.press("enter")
    fields = screen.query_one(FieldList)
    fields.move_cursor(row=next(i for i, f in enumerate(fields.fields) if f.key_path[-1:] == (key,)))
    await pilot.press("e")


def test_typing_the_outlet_temperature_of_a_heated_stream_sets_the_heater(run_solved):
    async def scenario(app, pilot):
        await _edit_stream_field(app, pilot, "warm-gas", "temperature")
        box = app.main_screen.query_one("#editor-input", Input)
        assert box.has_focus and box.value == "25 degC"
        assert "made by line-heater" in str(app.main_screen.query_one(StatusLine).render())
        box.value = "30 degC"
        await pilot.press("enter")
        await settle(app, pilot)
        assert not app.main_screen.query_one(DetailPane).editing
        assert app.document["units"]["line-heater"]["outlet_temperature"] == "30 degC"
        assert abs(app.result.streams["warm-gas"].state.temperature - 303.15) < 1e-6

    run_solved(scenario)


def test_a_valve_outlet_temperature_is_refused_with_the_reason(run_solved):
    async def scenario(app, pilot):
        await _edit_stream_field(app, pilot, "lp-gas", "temperature")
        assert not app.main_screen.query_one(DetailPane).editing
        assert "follows from the unit" in str(app.main_screen.query_one(StatusLine).render())

    run_solved(scenario)
