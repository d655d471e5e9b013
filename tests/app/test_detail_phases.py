"""The detail pane of a stream of several phases lists each phase's share
and make-up: what goes to the vapor and to each liquid."""

from __future__ import annotations

from pathlib import Path

from rich.console import Console

from .conftest import open_app, run
from tui.widgets.stream_table import StreamTable

SHEET = Path(__file__).parent / "sheets" / "flash-pot.toml"  # invented hexane-water let-down


def _detail_text(app) -> str:
    console = Console(width=60, record=True)
    console.print(app.main_screen.query_one("#detail-notes").content)
    return console.export_text()


def test_a_three_phase_stream_lists_its_phases(tmp_path, environ):
    path = tmp_path / "pot.toml"
    path.write_text(SHEET.read_text())

    async def scenario():
        async with open_app(path, environ) as (app, pilot):
            await pilot.press("1")
            app.main_screen.query_one(StreamTable).select_name("flash-pot")
            await pilot.press("enter")
            await pilot.pause()
            text = _detail_text(app)
            assert "phases, mole fractions" in text
            assert "vapor" in text and "liquid 1" in text and "liquid 2" in text
            shares = next(line for line in text.splitlines() if line.startswith("share of stream")).split()[3:]
            state = app.result.streams["flash-pot"].state
            assert [float(v) for v in shares] == [round(p.amount, 4) for p in state.phases]
            await pilot.press("1")
            app.main_screen.query_one(StreamTable).select_name("drum-liquid")
            await pilot.press("enter")
            await pilot.pause()
            assert "liquid 2" in _detail_text(app) and "vapor " not in _detail_text(app)

    run(scenario())
