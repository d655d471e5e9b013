"""The app driven through Textual's pilot: every action a user takes."""

from __future__ import annotations

import difflib
import json

from textual.widgets import Input, OptionList

from .conftest import SIZE, run, settle
from tui.app import COMMANDS, StatepathApp
from tui.screens.chart import ChartScreen
from tui.screens.dialogs import ChoiceScreen, DiffScreen, FormScreen, PickScreen, PromptScreen
from tui.screens.help import HelpScreen
from tui.screens.main import MainScreen
from tui.screens.start import StartScreen
from tui.session import recovery_path_beside
from tui.widgets.detail_pane import DetailPane, FieldList
from tui.widgets.status_line import StatusLine
from tui.widgets.stream_table import StreamTable
from tui.widgets.unit_table import UnitTable


def _app(path, environ):
    return StatepathApp(None if path is None else str(path), environ=environ)


def _status(app) -> str:
    return str(app.main_screen.query_one(StatusLine).render())


async def _edit_field(app, pilot, unit: str, key: str, text: str) -> None:
    """Open a unit in the detail pane, put the cursor on ``key``, edit it."""
    screen = app.main_screen
    await pilot.press("2")
    screen.query_one(UnitTable).select_name(unit)
    await pilot.press("enter")
    fields = screen.query_one(FieldList)
    row = next(i for i, f in enumerate(fields.fields) if f.key_path[-1:] == (key,))
    fields.move_cursor(row=row)
    await pilot.press("e")
    box = screen.query_one("#editor-input", Input)
    assert box.has_focus
    box.value = text
    await pilot.press("enter")
    await settle(app, pilot)


def test_open_shows_every_stream_and_unit_solved(sheet_path, run_solved):
    async def scenario(app, pilot):
        assert isinstance(app.screen, MainScreen)
        assert app.result.status == "ok"
        assert app.main_screen.query_one(StreamTable).row_count == 4
        assert app.main_screen.query_one(UnitTable).row_count == 3
        assert "solved" in _status(app)
        recent = json.loads((sheet_path.parents[1] / "config" / "statepath" / "recent.json").read_text())
        assert recent["recent"][0] == str(sheet_path.resolve())

    run_solved(scenario)


def test_edit_in_place_resolves_and_save_changes_only_that_line(sheet_path, run_solved):
    original = sheet_path.read_text()

    async def scenario(app, pilot):
        before = app.result.streams["lp-gas"].state.pressure
        await _edit_field(app, pilot, "choke", "outlet_pressure", "30 barg")
        assert not app.main_screen.query_one(DetailPane).editing
        assert app.result.streams["lp-gas"].state.pressure == 30e5 + 101325.0 != before
        assert app.session.dirty and sheet_path.read_text() == original
        assert recovery_path_beside(sheet_path).exists()
        await pilot.press("ctrl+s")
        await pilot.pause()
        assert not app.session.dirty and "saved" in _status(app)
        assert not recovery_path_beside(sheet_path).exists()

    run_solved(scenario)
    changed = [line for line in difflib.ndiff(original.splitlines(), sheet_path.read_text().splitlines())
               if line[:1] in "+-"]
    assert changed == ['- outlet_pressure = "22 barg"         # downstream set point',
                       '+ outlet_pressure = "30 barg"         # downstream set point']


def test_invalid_entry_is_explained_beside_the_field_and_changes_nothing(run_solved):
    async def scenario(app, pilot):
        text = app.session.text
        await _edit_field(app, pilot, "choke", "outlet_pressure", "22 furlongs")
        detail = app.main_screen.query_one(DetailPane)
        assert detail.editing
        error = str(detail.query_one("#editor-error").render())
        assert "refused" in error and "furlongs" in error
        assert app.session.text == text and not app.session.can_undo
        await pilot.press("escape")
        assert not detail.editing

    run_solved(scenario)


def test_switching_a_specification_in_its_group_replaces_the_old_one(run_solved):
    async def scenario(app, pilot):
        await _edit_field(app, pilot, "line-heater", "duty", "300 kW")
        table = app.document["units"]["line-heater"]
        assert table["duty"] == "300 kW" and "outlet_temperature" not in table
        assert app.result.units["line-heater"].duty_W == 300e3

    run_solved(scenario)


def test_undo_and_redo_keys(run_solved):
    async def scenario(app, pilot):
        original = app.session.text
        await _edit_field(app, pilot, "choke", "outlet_pressure", "30 barg")
        edited = app.session.text
        await pilot.press("escape")
        await pilot.press("z")
        await settle(app, pilot)
        assert app.session.text == original and not app.session.dirty
        assert app.result.streams["lp-gas"].state.pressure == 22e5 + 101325.0
        await pilot.press("y")
        await settle(app, pilot)
        assert app.session.text == edited
        await pilot.press("ctrl+z")
        await settle(app, pilot)
        assert app.session.text == original

    run_solved(scenario)


def test_add_stream_and_unit_then_remove_them(run_solved):
    async def scenario(app, pilot):
        await pilot.press("1", "a")
        assert isinstance(app.screen, FormScreen)
        app.screen.query_one("#form-name", Input).value = "spare-feed"
        app.screen.query_one("#form-flow", Input).value = "100 kmol/h"
        app.screen.action_submit()
        await settle(app, pilot)
        assert isinstance(app.screen, MainScreen)
        assert app.document["streams"]["spare-feed"]["flow"] == "100 kmol/h"
        assert "spare-feed" in app.result.streams
        await pilot.press("2", "a")
        assert isinstance(app.screen, PickScreen)
        listing = app.screen.query_one(OptionList)
        listing.highlighted = [o.id for o in listing._options].index("valve")
        await pilot.press("enter")
        assert isinstance(app.screen, FormScreen)
        app.screen.query_one("#form-name", Input).value = "spare-valve"
        app.screen.query_one("#form-inlet", Input).value = "spare-feed"
        app.screen.query_one("#form-outlet", Input).value = "spare-out"
        app.screen.query_one("#form-spec", Input).value = "outlet_pressure = 20 barg"
        app.screen.action_submit()
        await settle(app, pilot)
        assert isinstance(app.screen, MainScreen)
        assert app.result.streams["spare-out"].state.pressure == 20e5 + 101325.0
        app.main_screen.query_one(UnitTable).select_name("spare-valve")
        await pilot.press("x")
        assert isinstance(app.screen, ChoiceScreen)
        await pilot.press("r")  # Remove
        await settle(app, pilot)
        assert "spare-valve" not in app.document["units"]
        await pilot.press("1")
        app.main_screen.query_one(StreamTable).select_name("spare-feed")
        await pilot.press("x", "r")
        await settle(app, pilot)
        assert "spare-feed" not in app.document["streams"]
        assert "spare-feed" not in app.result.streams

    run_solved(scenario)


def test_refused_removal_says_why(run_solved):
    async def scenario(app, pilot):
        text = app.session.text
        await pilot.press("2")
        app.main_screen.query_one(UnitTable).select_name("choke")
        await pilot.press("x", "r")
        await settle(app, pilot)
        assert app.session.text == text
        assert "refused" in _status(app)
        await pilot.press("1")
        app.main_screen.query_one(StreamTable).select_name("lp-gas")
        await pilot.press("x")
        assert isinstance(app.screen, MainScreen) and "made by unit choke" in _status(app)

    run_solved(scenario)


def test_rename_stream_and_unit_updates_every_reference(run_solved):
    async def scenario(app, pilot):
        await pilot.press("1")
        app.main_screen.query_one(StreamTable).select_name("lp-gas")
        await pilot.press("n")
        assert isinstance(app.screen, PromptScreen)
        box = app.screen.query_one(Input)
        box.value = "Bad Name"
        await pilot.press("enter")
        assert isinstance(app.screen, PromptScreen)
        assert "bad-name" in str(app.screen.query_one("#prompt-error").render())
        box.value = "mid-gas"
        await pilot.press("enter")
        await settle(app, pilot)
        units = app.document["units"]
        assert units["choke"]["outlet"] == "mid-gas" and units["line-heater"]["inlet"] == "mid-gas"
        assert "mid-gas" in app.result.streams and "lp-gas" not in app.result.streams
        await pilot.press("2")
        app.main_screen.query_one(UnitTable).select_name("booster")
        await pilot.press("n")
        app.screen.query_one(Input).value = "export-compressor"
        await pilot.press("enter")
        await settle(app, pilot)
        assert "export-compressor" in app.document["units"] and "booster" not in app.document["units"]
        assert app.main_screen.selection == ("unit", "export-compressor")

    run_solved(scenario)


def test_switch_equation_of_state(run_solved):
    async def scenario(app, pilot):
        real = app.result.streams["lp-gas"].state.temperature
        await pilot.press("m")
        assert isinstance(app.screen, PickScreen)
        listing = app.screen.query_one(OptionList)
        listing.highlighted = [o.id for o in listing._options].index("ideal-gas")
        await pilot.press("enter")
        await settle(app, pilot)
        assert app.document["model"] == "ideal-gas" and app.result.model == "ideal-gas"
        # an ideal gas does not cool on throttling: the outlet stays at the inlet temperature
        assert app.result.streams["lp-gas"].state.temperature == app.result.streams["well-gas"].state.temperature
        assert real < app.result.streams["lp-gas"].state.temperature

    run_solved(scenario)


def test_switch_display_units(run_solved):
    async def scenario(app, pilot):
        table = app.main_screen.query_one(StreamTable)
        headers = table.column_headers
        assert "T degC" in headers()
        await pilot.press("u")
        assert app.system == "US" and "T degF" in headers() and "P psia" in headers()
        assert str(table.get_row("well-gas")[1]).strip() == "[95.00]"  # 35 degC entered
        await pilot.press("u")
        assert app.system == "SI" and "T K" in headers()

    run_solved(scenario)


def test_save_over_a_file_changed_on_disk_asks_and_shows_the_diff(sheet_path, run_solved):
    async def scenario(app, pilot):
        await _edit_field(app, pilot, "choke", "outlet_pressure", "30 barg")
        await pilot.press("escape")
        elsewhere = sheet_path.read_text().replace("Test let-down", "Edited elsewhere")
        sheet_path.write_text(elsewhere)
        await pilot.press("ctrl+s")
        assert isinstance(app.screen, ChoiceScreen) and sheet_path.read_text() == elsewhere
        await pilot.press("d")
        assert isinstance(app.screen, DiffScreen)
        assert "-title = \"Edited elsewhere" in app.screen.diff
        assert '+outlet_pressure = "30 barg"' in app.screen.diff
        await pilot.click("#answer-overwrite")
        await pilot.pause()
        assert isinstance(app.screen, MainScreen)
        assert sheet_path.read_text() == app.session.text and not app.session.dirty

    run_solved(scenario)


def test_reload_from_disk(sheet_path, run_solved):
    async def scenario(app, pilot):
        sheet_path.write_text(sheet_path.read_text().replace('"22 barg"', '"25 barg"'))
        await pilot.press("r")
        await settle(app, pilot)
        assert app.document["units"]["choke"]["outlet_pressure"] == "25 barg"
        assert app.result.streams["lp-gas"].state.pressure == 25e5 + 101325.0
        assert not app.session.dirty and app.session.can_undo

    run_solved(scenario)


def test_recovery_is_offered_on_the_next_open(sheet_path, run_solved):
    async def crash(app, pilot):
        await _edit_field(app, pilot, "choke", "outlet_pressure", "30 barg")
        # the session ends here without saving, as when an SSH link drops

    def reopen(answer: str) -> tuple:
        seen = []

        async def answered(app, pilot):
            assert isinstance(app.screen, ChoiceScreen)
            await pilot.press(answer)
            await settle(app, pilot)
            seen.append((app.document["units"]["choke"]["outlet_pressure"], app.session.dirty))

        run_solved(answered)
        return seen[0]

    run_solved(crash)
    assert recovery_path_beside(sheet_path).exists()
    assert reopen("r") == ("30 barg", True)  # Restore the edits
    assert reopen("t") == ("22 barg", False)  # Throw them away
    assert not recovery_path_beside(sheet_path).exists()


def test_quit_with_unsaved_edits_asks_first(sheet_path, run_solved):
    async def scenario(app, pilot):
        await _edit_field(app, pilot, "choke", "outlet_pressure", "30 barg")
        await pilot.press("ctrl+q")
        assert isinstance(app.screen, ChoiceScreen)
        await pilot.press("c")  # Cancel
        assert isinstance(app.screen, MainScreen) and app.is_running
        await pilot.press("ctrl+q", "d")  # Discard edits and quit
        await pilot.pause()

    app = run_solved(scenario)
    assert app.return_value == 0
    assert '"22 barg"' in sheet_path.read_text()
    assert not recovery_path_beside(sheet_path).exists()


def test_quit_without_edits_does_not_ask(run_solved):
    async def scenario(app, pilot):
        await pilot.press("ctrl+q")
        await pilot.pause()

    assert run_solved(scenario).return_value == 0


def test_start_screen_new_sheet_from_template_and_recent(tmp_path, sheet_path, environ):
    new_path = tmp_path / "fresh.toml"

    async def new_sheet():
        app = _app(None, environ)
        async with app.run_test(size=SIZE) as pilot:
            await pilot.pause()
            assert isinstance(app.screen, StartScreen)
            app.screen.query_one("#new-name", Input).value = str(tmp_path / "fresh")
            app.screen.query_one("#new-name", Input).focus()
            await pilot.press("enter")
            await settle(app, pilot)
            assert isinstance(app.screen, MainScreen) and app.session.path == new_path
            assert app.result is not None and app.result.status in ("ok", "violations")

    async def recent():
        app = _app(None, environ)
        async with app.run_test(size=SIZE) as pilot:
            await pilot.pause()
            assert isinstance(app.screen, StartScreen)
            listing = app.screen.query_one("#recent", OptionList)
            assert listing.get_option_at_index(0).prompt == str(new_path.resolve())
            await pilot.press("down", "down")  # from the name box, past the path box, to the list
            assert listing.has_focus
            await pilot.press("enter")
            await settle(app, pilot)
            assert app.session.path == new_path.resolve()

    async def name_typed_at_once():
        # With a recent sheet listed, a name typed straight away still goes
        # to the new sheet's box, and enter makes that sheet.
        app = _app(None, environ)
        async with app.run_test(size=SIZE) as pilot:
            await pilot.pause()
            await pilot.press(*str(tmp_path / "second"), "enter")
            await settle(app, pilot)
            assert isinstance(app.screen, MainScreen) and app.session.path == tmp_path / "second.toml"

    run(new_sheet())
    assert new_path.exists()
    run(recent())
    run(name_typed_at_once())
    assert (tmp_path / "second.toml").exists()


def test_opening_a_broken_sheet_lists_its_problems(sheet_path, environ):
    sheet_path.write_text(sheet_path.read_text().replace('"68 barg"', '"68"'))

    async def scenario():
        app = _app(sheet_path, environ)
        async with app.run_test(size=SIZE) as pilot:
            await pilot.pause()
            from tui.screens.problems import ProblemsScreen

            assert isinstance(app.screen, ProblemsScreen)
            assert any("pressure" in line for line in app.screen.problems)
            sheet_path.write_text(sheet_path.read_text().replace('"68"', '"68 barg"'))
            await pilot.press("r")
            await settle(app, pilot)
            assert isinstance(app.screen, MainScreen) and app.result.status == "ok"

    run(scenario())


def test_stale_solve_results_are_dropped(run_solved):
    async def scenario(app, pilot):
        kept = app.result
        app.solve_generation += 1  # as if a newer edit had started another solve
        app._solved(app.solve_generation - 1, object(), None)
        assert app.result is kept

    run_solved(scenario)


def test_help_chart_and_command_palette(run_solved):
    async def scenario(app, pilot):
        await pilot.press("question_mark")
        assert isinstance(app.screen, HelpScreen)
        await pilot.press("escape")
        await pilot.press("c")
        await settle(app, pilot)
        assert isinstance(app.screen, ChartScreen)
        view = app.screen.query_one("#chart")
        assert [p.name for p in view.data.points] == ["well-gas", "lp-gas", "warm-gas", "export"]
        assert len(view.data.lines) == 3 and view.data.kind == "ph"
        # The test sheet is a mixture: its bubble and dew lines, drawn once the worker is done.
        assert len(view.data.envelope) == 2 and view.data.envelope_source == "the sheet's composition"
        assert not any("computing" in note for note in view.data.notes)
        await pilot.press("t")
        assert view.data.kind == "ts"
        await pilot.press("escape")
        assert isinstance(app.screen, MainScreen)
        titles = [command.title for command in app.get_system_commands(app.screen)]
        for _, title, _, _ in COMMANDS:
            assert title in titles
        await pilot.press("ctrl+p")
        await pilot.pause()
        from textual.command import CommandPalette

        assert isinstance(app.screen, CommandPalette)

    run_solved(scenario)


def test_command_palette_entry_runs_its_action(run_solved):
    async def scenario(app, pilot):
        command = next(c for c in app.get_system_commands(app.screen) if c.title == "Display units")
        await command.callback()
        assert app.system == "US"
        command = next(c for c in app.get_system_commands(app.screen) if c.title == "Sheet settings")
        await command.callback()
        assert app.main_screen.selection == ("sheet", None) and app.main_screen.active == "detail"

    run_solved(scenario)
