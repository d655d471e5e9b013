"""The chart screen: the sheet's states on a P-H or T-S chart."""

from __future__ import annotations

from textual.app import ComposeResult
from textual.binding import Binding
from textual.screen import Screen
from textual.widgets import Static

from tui.screens.key_order import KeysFirst
from tui.widgets.key_footer import KeyFooter
from tui.chart import CHART_TITLES, PRESSURE_ENTHALPY, TEMPERATURE_ENTROPY
from tui.widgets.chart_view import ChartView


class ChartScreen(KeysFirst, Screen[None]):
    """Shows the chart the app hands it; t switches P-H and T-S."""

    BINDINGS = [
        Binding("t", "toggle_kind", "P-H / T-S"),
        Binding("escape,c,q", "close", "Back to the sheet"),
    ]

    SHEET_ACTIONS = frozenset({"cycle_units"})

    def __init__(self, kind: str = PRESSURE_ENTHALPY) -> None:
        super().__init__()
        self.kind = kind

    def compose(self) -> ComposeResult:
        yield Static("", id="chart-title", classes="pane-title")
        yield ChartView(id="chart")
        yield KeyFooter()

    def on_mount(self) -> None:
        self.redraw()

    def redraw(self) -> None:
        data = self.app.chart_data_for(self.kind)
        self.query_one("#chart-title", Static).update(
            f" {CHART_TITLES[self.kind]} chart of {self.app.sheet_name}"
            + ("  \u2026 stale: a solve is running" if self.app.solve_running else ""))
        self.query_one(ChartView).show(data)

    def action_toggle_kind(self) -> None:
        self.kind = TEMPERATURE_ENTROPY if self.kind == PRESSURE_ENTHALPY else PRESSURE_ENTHALPY
        self.redraw()

    def action_close(self) -> None:
        self.dismiss(None)
