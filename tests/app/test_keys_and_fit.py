"""Keys that arrive in one burst (tmux send-keys, a paste or a fast typist
over SSH) are applied in the order typed; at 80x24 the tables show every
column and the footer its main keys."""

from __future__ import annotations

from textual import events
from textual.widgets import Footer

from .conftest import settle
from tui.widgets.detail_pane import DetailPane, FieldList
from tui.widgets.stream_table import StreamTable, phase_cell
from tui.widgets.unit_table import UnitTable

CHARACTERS = {"space": " ", "minus": "-"}


def burst(app, *keys: str) -> None:
    """Post every key to the app at once, with no pause between them, as a
    terminal does when several keys come in one read."""
    for key in keys:
        character = CHARACTERS.get(key, key if len(key) == 1 else None)
        app.post_message(events.Key(key, character))


def typed(text: str) -> list[str]:
    return [{" ": "space", "-": "minus"}.get(c, c) for c in text]


async def _caught_up(app, pilot) -> None:
    for _ in range(6):
        await pilot.pause()
    await settle(app, pilot)


def test_keys_typed_straight_after_e_land_in_the_box(run_solved):
    async def scenario(app, pilot):
        # detail pane, down to pressure, edit, type, submit; then up to temperature and again
        burst(app, "3", "down", "e", *typed("45 barg"), "enter", "up", "e", *typed("120 degF"), "enter")
        await _caught_up(app, pilot)
        feed = app.document["streams"]["well-gas"]
        assert feed["pressure"] == "45 barg" and feed["temperature"] == "120 degF"
        assert isinstance(app.focused, FieldList)
        assert not app.main_screen.query_one(DetailPane).editing

    run_solved(scenario, size=(80, 24))


def test_editing_keys_in_a_burst_keep_their_order(run_solved):
    async def scenario(app, pilot):
        # enter opens the field too; backspace and left act where they were typed
        burst(app, "3", "down", "enter", *typed("45"), "backspace", *typed("6 barg"),
              "left", "left", "left", "left", "left", "0", "enter")
        await _caught_up(app, pilot)
        assert app.document["streams"]["well-gas"]["pressure"] == "460 barg"

    run_solved(scenario, size=(80, 24))


def test_digits_and_letters_typed_in_the_box_do_not_switch_panes(run_solved):
    async def scenario(app, pilot):
        burst(app, "3", "e", *typed("12 degC"), "escape", "escape")
        await _caught_up(app, pilot)
        screen = app.main_screen
        assert screen.active == "streams"  # the second escape went back to the list
        assert not screen.query_one(DetailPane).editing
        assert app.document["streams"]["well-gas"]["temperature"] == "35 degC"  # escape cancels

    run_solved(scenario, size=(80, 24))


def _row_text(table, key: str) -> str:
    return "".join(cell.plain for cell in table.get_row(key))


def test_stream_table_fits_80_columns_with_every_column(run_solved):
    async def scenario(app, pilot):
        table = app.main_screen.query_one(StreamTable)
        assert table.column_keys == ("name", "T", "P", "flow", "phase", "H", "S", "flags")
        assert table.virtual_size.width <= table.scrollable_content_region.width <= 80
        for name in app.result.streams:
            row = _row_text(table, name)
            assert name in row and "\u2714 ok" in row
        units = app.main_screen.query_one(UnitTable)
        await pilot.press("2")
        await pilot.pause()
        assert units.virtual_size.width <= units.scrollable_content_region.width

    run_solved(scenario, size=(80, 24))


def test_long_names_are_cut_with_an_ellipsis_only_when_needed(sheet_path, run_solved):
    sheet_path.write_text(sheet_path.read_text().replace("well-gas", "well-gas-from-the-north-cluster"))

    for size, cut in (((80, 24), True), ((140, 40), False)):
        async def scenario(app, pilot, cut=cut):
            table = app.main_screen.query_one(StreamTable)
            row = _row_text(table, "well-gas-from-the-north-cluster")
            assert ("\u2026" in row) is cut and table.truncated is cut
            assert ("well-gas-from-the-north-cluster" in row) is not cut
            assert table.virtual_size.width <= table.scrollable_content_region.width

        run_solved(scenario, size=size)


def test_phase_cell_words_and_vapor_fraction():
    full, short = phase_cell("two-phase", 0.4283, False)
    assert full.plain == "two-phase 0.428" and short.plain == "2\u03c6 0.428"
    full, short = phase_cell("supercritical", 1.0, False)
    assert full.plain == "supercritical" and short.plain == "supercrit."
    full, short = phase_cell("liquid", 0.0, True)  # fixed by a spec: the fraction in brackets
    assert full.plain == "liquid [0.00]" and short.plain == "liq [0.00]"


def test_footer_keeps_help_save_quit_and_palette_at_80_columns(run_solved):
    async def scenario(app, pilot):
        for keys in ((), ("3",), ("3", "e")):
            await pilot.press(*keys)
            await pilot.pause()
            footer = app.main_screen.query_one(Footer)
            shown = [(key.key, key.region.right) for key in footer.children if key.region.width]
            right_edges = {key: right for key, right in shown}
            assert right_edges.get("ctrl+p", 99) <= 80, shown
            for key in ("question_mark", "ctrl+s", "ctrl+q"):
                found = [k for k in right_edges if key in k.split(",")]
                if key == "question_mark" and "e" in keys:
                    found = [k for k in right_edges if "f1" in k.split(",")]  # the box takes ?
                assert found and right_edges[found[0]] <= 68, (key, shown)

    run_solved(scenario, size=(80, 24))


def test_a_burst_in_the_add_form_fills_each_field_in_order(run_solved):
    async def scenario(app, pilot):
        # a: add a feed; each field's text starts selected, so typing replaces it
        burst(app, "1", "a", *typed("spare-feed"), "enter", *typed("40 degC"), "enter", *typed("12 barg"),
              "enter", *typed("90 kmol/h"), "enter", "enter")
        await _caught_up(app, pilot)
        assert app.document["streams"]["spare-feed"] == {
            "temperature": "40 degC", "pressure": "12 barg", "flow": "90 kmol/h",
            "composition": app.document["streams"]["well-gas"]["composition"]}

    run_solved(scenario, size=(80, 24))


def test_a_burst_in_the_rename_prompt(run_solved):
    async def scenario(app, pilot):
        burst(app, "2", "n", *typed("pressure-cux"), "backspace", *typed("tter"), "enter")
        await _caught_up(app, pilot)
        assert "pressure-cutter" in app.document["units"]

    run_solved(scenario, size=(80, 24))


def test_a_click_on_a_row_opens_it(run_solved):
    async def scenario(app, pilot):
        table = app.main_screen.query_one(UnitTable)
        row = table.keys.index("booster")
        await pilot.click(UnitTable, offset=(3, table.header_height + row))
        await pilot.pause()
        assert app.main_screen.selection == ("unit", "booster")
        assert app.main_screen.active == "detail" and isinstance(app.focused, FieldList)

    run_solved(scenario, size=(120, 40))
