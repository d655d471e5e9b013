"""The list of units: type, duty or power, entropy generation, lost work, flags."""

from __future__ import annotations

from typing import Mapping

from rich.text import Text
from textual.message import Message
from textual.widgets import DataTable

from thermo.quantities import display_units

from .cells import cell, flag_summary, flags_by_place, number


class UnitTable(DataTable):
    """Units of the solved sheet, in the file's order. Posts ``Picked`` and
    ``Opened`` like ``StreamTable``."""

    class Picked(Message):
        def __init__(self, name: str) -> None:
            self.name = name
            super().__init__()

    class Opened(Message):
        def __init__(self, name: str) -> None:
            self.name = name
            super().__init__()

    def __init__(self, **options) -> None:
        super().__init__(cursor_type="row", **options)
        self.fixed_columns = 1
        self._names: list[str] = []

    def show(self, result, document: Mapping, system: str) -> None:
        """Fill from ``result``; units the file holds but the solve did not
        reach are listed with dashes."""
        current = self.current_name
        self.clear(columns=True)
        power = display_units("power", system)
        self.add_column("unit", key="name")
        self.add_column("type", key="type")
        self.add_column(Text(f"duty/power {power}", justify="right"), key="energy")
        self.add_column(Text(f"S gen {display_units('entropy_rate', system)}", justify="right"), key="sgen")
        self.add_column(Text(f"lost {power}", justify="right"), key="lost")
        self.add_column("flags", key="flags")
        self._names = []
        written = document.get("units") if isinstance(document.get("units"), Mapping) else {}
        places = flags_by_place(result)
        solved = result.units if result is not None else {}
        names = list(written) + [n for n in solved if n not in written]
        for name in names:
            unit = solved.get(name)
            table = written.get(name) if isinstance(written.get(name), Mapping) else {}
            type_name = unit.type if unit is not None else str(table.get("type", "?"))
            if unit is None:
                self.add_row(Text(name), type_name, "\u2014", "\u2014", "\u2014", Text("\u2026 not solved"), key=name)
            else:
                energy = unit.power_W if unit.power_W is not None else unit.duty_W
                entered = "duty" in table and unit.duty_W is not None and unit.power_W is None
                self.add_row(
                    Text(name, style="bold"),
                    type_name,
                    cell(number(energy, "power", system), entered),
                    cell(number(unit.entropy_generation_W_K, "entropy_rate", system), False),
                    cell(number(unit.lost_work_W, "power", system), False),
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
