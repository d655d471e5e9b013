"""A row table that fits its width: every column stays on screen.

The stream, unit and field tables hand over their columns and rows; this
lays them out for the width the widget has. A cell may offer variants,
widest first ("supercritical", "supercrit."): the narrowest set that fits is
chosen. Still too wide, the columns marked ``shrink`` (a name, a note) are
cut with an ellipsis, never below their ``min_width``; only past that does
the table scroll sideways. Wider terminals get the full words and names back.

Refills update the cells that changed in place: the rows are cleared and
added again only when the set of rows or the column widths change.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Sequence, Union

from rich.text import Text
from textual import events

from .row_table import RowTable

CellValue = Union[Text, str, Sequence[Union[Text, str]]]


@dataclass(frozen=True)
class Column:
    """``label`` over ``unit`` in the header; ``right`` aligns numbers;
    ``shrink`` marks a column that is cut (to ``min_width``) when space runs
    out: 1 is cut first, then 2 ...; 0 never. A newline in ``unit`` breaks
    the header there (see ``header_unit``)."""

    key: str
    label: str
    unit: str = ""
    right: bool = False
    shrink: int = 0
    min_width: int = 6


def header_unit(unit: str) -> str:
    """A long unit broken at its space, so that the column stays as narrow
    as its numbers: ``"Btu/(lbmol\\ndegR)"`` (the command line's rule)."""
    return unit.replace(" ", "\n", 1) if len(unit) > 11 and " " in unit else unit


def _variants(value: CellValue) -> tuple[Text, ...]:
    if isinstance(value, (Text, str)):
        value = (value,)
    return tuple(v if isinstance(v, Text) else Text(v) for v in value)


def _signature(text: Text) -> tuple:
    # rich's Text equality ignores the base style; a flag's colour is one.
    return (text.plain, str(text.style), tuple(text.spans))


class FittedTable(RowTable):
    """A RowTable laid out by ``fill(columns, rows)``; rows are
    ``(key, [cell, ...])`` with one cell per column. One blank cell leads
    each column, so a right-aligned column ends flush."""

    def __init__(self, *, one_line_header: bool = False, **options) -> None:
        super().__init__(header_height=1 if one_line_header else 2, **options)
        # Label over unit (a long unit broken at its space, as the command
        # line's tables do), or label and unit on one line.
        self.one_line_header = one_line_header
        self._spec: tuple[Column, ...] = ()
        self._rows: list[tuple[str, tuple[tuple[Text, ...], ...]]] = []
        self._shape: tuple = ()
        self._shown: dict[str, list[tuple]] = {}
        self.truncated = False  # a shrink column was cut to fit

    # -------------------------------------------------------------- filling

    def fill(self, columns: Sequence[Column], rows: Sequence[tuple[str, Sequence[CellValue]]]) -> None:
        """Show ``rows`` under ``columns``, keeping the cursor on the same key."""
        self._spec = tuple(columns)
        self._rows = [(key, tuple(_variants(cell) for cell in cells)) for key, cells in rows]
        self._lay_out()

    def on_resize(self, event: events.Resize) -> None:
        super().on_resize(event)
        if self._spec:
            self._lay_out()

    def watch_show_vertical_scrollbar(self, shown: bool) -> None:
        # The scrollbar takes a column when there are more rows than lines.
        if self._spec:
            self.call_after_refresh(self._lay_out)

    def _available(self) -> int:
        width = self.scrollable_content_region.width
        if width <= 0:  # not laid out yet: the screen's width is the best guess
            width = self.app.size.width - 1
        return max(width, 10)

    def _widths(self, level: int) -> list[int]:
        widths = []
        for index, column in enumerate(self._spec):
            header = max(len(line) for line in self._header_lines(column))
            cells = [row[index][min(level, len(row[index]) - 1)].cell_len for _, row in self._rows]
            widths.append(1 + max([header, *cells]))
        return widths

    def _choose(self) -> tuple[int, list[int]]:
        """The variant level and column widths (each with its one blank) that fit."""
        available = self._available()
        levels = max((len(v) for _, row in self._rows for v in row), default=1)
        for level in range(levels):
            widths = self._widths(level)
            if sum(widths) <= available:
                return level, widths
        level = levels - 1
        widths = self._widths(level)
        cut_order = sorted((c.shrink, i) for i, c in enumerate(self._spec) if c.shrink)
        for _, index in cut_order:
            others = sum(widths) - widths[index]
            widths[index] = max(1 + self._spec[index].min_width, min(widths[index], available - others))
        return level, widths

    def _lay_out(self) -> None:
        level, widths = self._choose()
        self.truncated = widths != self._widths(level)
        keys = tuple(key for key, _ in self._rows)
        shape = (tuple((c.key, c.label, c.unit) for c in self._spec), tuple(widths), keys)
        cells = {key: [self._cell(row[i], level, column, width)
                       for i, (column, width) in enumerate(zip(self._spec, widths))]
                 for key, row in self._rows}
        if shape == self._shape:
            for key, row in cells.items():
                shown = self._shown[key]
                for index, text in enumerate(row):
                    signature = _signature(text)
                    if shown[index] != signature:
                        shown[index] = signature
                        self.set_cell(key, index, text)
            return
        if not self.one_line_header:
            self.header_height = max(2, *(len(self._header_lines(column)) for column in self._spec))
        header = []
        for line in range(self.header_height):
            parts = []
            for column, width in zip(self._spec, widths):
                lines = self._header_lines(column)
                lines = [""] * (self.header_height - len(lines)) + lines  # label and unit sit on the rows
                parts.append(self._pad(Text(lines[line]), width, column.right))
            header.append(Text("").join(parts))
        self.set_rows(header, list(cells.items()), sum(widths))
        self._shown = {key: [_signature(text) for text in row] for key, row in cells.items()}
        self._shape = shape

    @property
    def column_keys(self) -> tuple[str, ...]:
        return tuple(column.key for column in self._spec)

    def column_headers(self) -> list[str]:
        """Each column's header on one line: ``"T degC"``."""
        return [" ".join(f"{column.label} {column.unit}".split()) for column in self._spec]

    def _header_lines(self, column: Column) -> list[str]:
        if self.one_line_header:
            return [" ".join(f"{column.label} {column.unit}".split())]
        return [column.label, *column.unit.split("\n")] if column.unit else [column.label]

    def _cell(self, variants: tuple[Text, ...], level: int, column: Column, width: int) -> Text:
        return self._pad(variants[min(level, len(variants) - 1)], width, column.right)

    @staticmethod
    def _pad(text: Text, width: int, right: bool) -> Text:
        room = width - 1
        if text.cell_len > room:
            text = text.copy()
            text.truncate(room, overflow="ellipsis")
        text = Text.assemble(" ", text) if not right else text.copy()
        if right:
            text.pad_left(width - text.cell_len)
        else:
            text.pad_right(width - text.cell_len)
        return text
