"""Draws a ``tui.chart.ChartData`` to fit the widget's size, with its legend."""

from __future__ import annotations

from rich.console import Group
from rich.text import Text
from textual.widget import Widget

from tui.chart import ChartData, draw_chart, legend_lines


class ChartView(Widget):
    """A P-H or T-S chart of the solved sheet."""

    def __init__(self, **options) -> None:
        super().__init__(**options)
        self.data: ChartData | None = None

    def show(self, data: ChartData | None) -> None:
        self.data = data
        self.refresh()

    def render(self):
        width, height = self.size.width, self.size.height
        if self.data is None:
            return Text("no solved states to draw yet", style="dim")
        legend = legend_lines(self.data, width)
        plot = draw_chart(self.data, width, max(8, height - len(legend)))
        return Group(*plot, *legend)
