"""A spec that breaks the second law shows its flags where the engineer looks:
the unit list, the unit's detail pane, and the status line."""

from __future__ import annotations

import io

from rich.console import Console

from .test_app import _edit_field, _status
from tui.widgets.detail_pane import DetailPane
from tui.widgets.unit_table import UnitTable


def _plain(renderable) -> str:
    console = Console(width=200, record=True, file=io.StringIO())
    console.print(renderable)
    return console.export_text()


def _unit_row_text(app, name: str) -> str:
    table = app.main_screen.query_one(UnitTable)
    row = table.get_row(name)
    return " ".join(str(cell) for cell in row)


def test_a_heater_set_to_cool_shows_its_violations_in_the_list_and_the_detail(run_solved):
    async def scenario(app, pilot):
        assert "ok" in _unit_row_text(app, "line-heater")
        # the heater's outlet below its inlet (the choke leaves the gas near 20 degC)
        await _edit_field(app, pilot, "line-heater", "outlet_temperature", "-5 degC")
        assert app.result.status == "violations"
        codes = {v.code for v in app.result.units["line-heater"].violations}
        assert "heater-removes-heat" in codes
        assert "violation" in _unit_row_text(app, "line-heater") or "viol" in _unit_row_text(app, "line-heater")
        detail = app.main_screen.query_one(DetailPane)
        notes = _plain(detail.query_one("#detail-notes").content)
        assert "heater-removes-heat" in notes and "no violations" not in notes
        assert "violation" in _status(app)

    run_solved(scenario)
