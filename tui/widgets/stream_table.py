"""The live table of streams: one row per stream, its state in display units."""

from __future__ import annotations

from typing import Mapping

from rich.text import Text
from textual.message import Message
from textual.widgets import DataTable

from thermo.quantities import display_units

from .cells import cell, entered_quantities, flag_summary, flags_by_place, number

PHASE_WORDS = {"vapor": "vapor", "liquid": "liquid", "two-phase": "2-phase", "supercritical": "supercrit"}


class StreamTable(DataTable):
    """Streams of the solved sheet. Posts ``Picked`` when the cursor lands on
    a stream and ``Opened`` when one is chosen with enter."""

    class Picked(Message):
        def __init__(self, name: str) -> None:
            self.name = name
            super().__init__()

    class Opened(Message):
        def __init__(self, name: str) -> None:
            self.name = name
            super().__init__()

    def __init__(self, **options) -> None:
        super().__init__(cursor_type="row", zebra_stripes=False, **options)
        self.fixed_columns = 1
        self._names: list[str] = []

    def show(self, result, document: Mapping, system: str) -> None:
        """Fill the table from ``result`` (a SheetResult or None) keeping the
        cursor on the same stream where it still exists."""
        current = self.current_name
        self.clear(columns=True)
        self.add_column("stream", key="name")
        self.add_column(Text(f"T {display_units('temperature', system)}", justify="right"), key="T")
        self.add_column(Text(f"P {display_units('pressure', system)}", justify="right"), key="P")
        self.add_column(Text(f"flow {display_units('molar_flow', system)}", justify="right"), key="flow")
        self.add_column("vap.frac phase", key="phase")
        self.add_column(Text(f"H {display_units('molar_energy', system)}", justify="right"), key="H")
        self.add_column(Text(f"S {display_units('molar_entropy', system)}", justify="right"), key="S")
        self.add_column("flags", key="flags")
        self._names = []
        if result is None:
            return
        pinned = entered_quantities(document)
        places = flags_by_place(result)
        for name, stream in result.streams.items():
            state = stream.state
            fixed = pinned.get(name, set())
            phase = PHASE_WORDS.get(state.phase, state.phase)
            fraction = f"{state.vapor_fraction:.3f}"
            fraction_cell = f"[{fraction}]" if "vapor_fraction" in fixed else f" {fraction} "
            self.add_row(
                Text(name, style="bold" if stream.is_feed else ""),
                cell(number(state.temperature, "temperature", system), "temperature" in fixed),
                cell(number(state.pressure, "pressure", system), "pressure" in fixed),
                cell(number(stream.molar_flow, "molar_flow", system), "flow" in fixed),
                Text(f"{fraction_cell} {phase}"),
                cell(number(state.enthalpy, "molar_energy", system, 6), False),
                cell(number(state.entropy, "molar_entropy", system), False),
                flag_summary(places.get(name, []), short=True),
                key=name,
            )
            self._names.append(name)
        if current in self._names:
            self.move_cursor(row=self._names.index(current), animate=False)

    @property
    def current_name(self) -> str | None:
        if not self._names or self.cursor_row is None or not 0 <= self.cursor_row < len(self._names):
            return None
        return self._names[self.cursor_row]

    def select_name(self, name: str) -> None:
        if name in self._names:
            self.move_cursor(row=self._names.index(name), animate=False)

    def on_data_table_row_highlighted(self, event: DataTable.RowHighlighted) -> None:
        event.stop()
        if event.row_key is not None and event.row_key.value is not None:
            self.post_message(self.Picked(event.row_key.value))

    def on_data_table_row_selected(self, event: DataTable.RowSelected) -> None:
        event.stop()
        if event.row_key is not None and event.row_key.value is not None:
            self.post_message(self.Opened(event.row_key.value))
