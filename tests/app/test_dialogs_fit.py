"""At 80x24 every answer of a dialog is on the screen: a button cut off at
the right edge is an answer the engineer cannot see (the changed-on-disk
dialog once lost its Cancel and half of Close)."""

from __future__ import annotations

from textual.widgets import Button

from tui.screens.dialogs import ChoiceScreen, DiffScreen

SMALL = (80, 24)


def _cut_buttons(screen) -> list[str]:
    width = screen.app.size.width
    return [str(button.label) for button in screen.query(Button)
            if button.region.width == 0 or button.region.right > width]


def test_changed_on_disk_and_its_diff_show_every_answer(sheet_path, run_solved):
    async def scenario(app, pilot):
        sheet_path.write_text(sheet_path.read_text() + "\n# changed by another editor\n")
        app.edit_field(("units", "choke", "outlet_pressure"), "pressure", "21 barg")
        await pilot.pause()
        await pilot.press("ctrl+s")
        await pilot.pause()
        assert isinstance(app.screen, ChoiceScreen)
        assert len(app.screen.query(Button)) == 4 and _cut_buttons(app.screen) == []
        await pilot.press("d")
        await pilot.pause()
        assert isinstance(app.screen, DiffScreen)
        assert len(app.screen.query(Button)) == 3 and _cut_buttons(app.screen) == []

    run_solved(scenario, size=SMALL)


def test_quit_with_unsaved_edits_shows_every_answer(run_solved):
    async def scenario(app, pilot):
        app.edit_field(("units", "choke", "outlet_pressure"), "pressure", "21 barg")
        await pilot.pause()
        await pilot.press("ctrl+q")
        await pilot.pause()
        assert isinstance(app.screen, ChoiceScreen)
        assert len(app.screen.query(Button)) == 3 and _cut_buttons(app.screen) == []
        await pilot.press("c")

    run_solved(scenario, size=SMALL)
