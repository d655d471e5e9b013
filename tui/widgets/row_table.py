"""A light table of rows with a row cursor, drawn line by line.

The app's tables hand it rows already laid out (each cell padded to its
column's width, see ``fitted_table``), so drawing a line is joining its cells
once and reusing the result: a redraw after an edit costs next to nothing,
where Textual's DataTable lays out and renders every cell of every line
again. The header stays put while the rows scroll.

Keys: up, down, page up/down, home, end move the cursor; enter chooses the
row. A click moves the cursor there and chooses the row. The cursor row
starts with a triangle besides its colour.
"""

from __future__ import annotations

from typing import Sequence

from rich.segment import Segment
from rich.style import Style
from rich.text import Text
from textual import events
from textual.binding import Binding
from textual.geometry import Size
from textual.message import Message
from textual.scroll_view import ScrollView
from textual.strip import Strip


CURSOR_MARK = "\u25b8"


class _RowMessage(Message):
    """A message about the row ``key`` of ``table``."""

    def __init__(self, table: "RowTable", key: str) -> None:
        self.table = table
        self.key = key
        super().__init__()

    @property
    def control(self) -> "RowTable":
        return self.table


class RowTable(ScrollView, can_focus=True):
    """Rows under a header of ``header_height`` lines. ``set_rows`` gives the
    header lines and the rows as ``(key, [cell Text, ...])``."""

    COMPONENT_CLASSES = {"row-table--header", "row-table--cursor"}

    DEFAULT_CSS = """
    RowTable {
        background: $surface;
        color: $foreground;
        height: auto;
        max-height: 100%;
        overflow-x: auto;
        overflow-y: auto;
        scrollbar-size-vertical: 1;
        & > .row-table--header {
            text-style: bold;
            background: $panel;
            color: $foreground;
        }
        & > .row-table--cursor {
            background: $block-cursor-blurred-background;
            color: $block-cursor-blurred-foreground;
            text-style: $block-cursor-blurred-text-style;
        }
        &:focus {
            background-tint: $foreground 5%;
            & > .row-table--cursor {
                background: $block-cursor-background;
                color: $block-cursor-foreground;
                text-style: $block-cursor-text-style;
            }
        }
    }
    """

    BINDINGS = [
        Binding("up", "cursor_up", "Up", show=False),
        Binding("down", "cursor_down", "Down", show=False),
        Binding("pageup", "page_up", "Page up", show=False),
        Binding("pagedown", "page_down", "Page down", show=False),
        Binding("home,ctrl+home", "scroll_top", "First", show=False),
        Binding("end,ctrl+end", "scroll_bottom", "Last", show=False),
        Binding("enter", "select_cursor", "Choose", show=False),
    ]

    class Highlighted(_RowMessage):
        """The cursor moved onto the row ``key``."""

    class Selected(_RowMessage):
        """The row ``key`` was chosen (enter or a click)."""

    def __init__(self, *, header_height: int = 1, **options) -> None:
        super().__init__(**options)
        self.header_height = header_height
        self._header: list[Text] = []
        self._keys: list[str] = []
        self._cells: dict[str, list[Text]] = {}
        self._width = 0
        self._strips: dict[tuple, Strip] = {}
        self.cursor_row = 0

    # -------------------------------------------------------------- content

    def set_rows(self, header: Sequence[Text], rows: Sequence[tuple[str, list[Text]]], width: int) -> None:
        """Show ``rows`` (cells padded to their columns, ``width`` cells in
        all) under the ``header`` lines; the cursor stays on the same key."""
        current = self.current_key
        self._header = list(header)
        self._keys = [key for key, _ in rows]
        self._cells = {key: list(cells) for key, cells in rows}
        self._width = width
        self._strips.clear()
        self.virtual_size = Size(width, self.header_height + len(self._keys))
        if current in self._cells:
            self.move_cursor(row=self._keys.index(current))
        else:
            self.move_cursor(row=min(self.cursor_row, max(len(self._keys) - 1, 0)), announce=bool(self._keys))
        self.refresh()

    def set_cell(self, key: str, column: int, text: Text) -> None:
        """Change one cell of row ``key`` in place."""
        self._cells[key][column] = text
        for cursor in (False, True):
            self._strips.pop((key, cursor), None)
        self.refresh()

    @property
    def row_count(self) -> int:
        return len(self._keys)

    @property
    def keys(self) -> tuple[str, ...]:
        return tuple(self._keys)

    def get_row(self, key: str) -> list[Text]:
        """The cells of the row ``key``, as shown."""
        return list(self._cells[key])

    def header_lines(self) -> list[str]:
        return [line.plain for line in self._header]

    @property
    def current_key(self) -> str | None:
        """The key of the row under the cursor."""
        if not self._keys or not 0 <= self.cursor_row < len(self._keys):
            return None
        return self._keys[self.cursor_row]

    # -------------------------------------------------------------- the cursor

    def move_cursor(self, *, row: int, animate: bool = False, announce: bool = True) -> None:
        """Put the cursor on ``row`` (kept in range) and into view."""
        if not self._keys:
            self.cursor_row = 0
            return
        row = max(0, min(row, len(self._keys) - 1))
        moved = row != self.cursor_row
        self.cursor_row = row
        self._scroll_to_cursor()
        self.refresh()
        if moved and announce:
            self.post_message(self.Highlighted(self, self._keys[row]))

    def move_to_key(self, key: str) -> None:
        """Put the cursor on the row ``key``, if there is one."""
        if key in self.keys and self.cursor_row != self.keys.index(key):
            self.move_cursor(row=self.keys.index(key))

    def _visible_rows(self) -> int:
        return max(1, self.scrollable_content_region.height - self.header_height)

    def _scroll_to_cursor(self) -> None:
        top = int(self.scroll_offset.y)
        visible = self._visible_rows()
        if self.cursor_row < top:
            self.scroll_to(y=self.cursor_row, animate=False)
        elif self.cursor_row >= top + visible:
            self.scroll_to(y=self.cursor_row - visible + 1, animate=False)

    def action_cursor_up(self) -> None:
        self.move_cursor(row=self.cursor_row - 1)

    def action_cursor_down(self) -> None:
        self.move_cursor(row=self.cursor_row + 1)

    def action_page_up(self) -> None:
        self.move_cursor(row=self.cursor_row - self._visible_rows())

    def action_page_down(self) -> None:
        self.move_cursor(row=self.cursor_row + self._visible_rows())

    def action_scroll_top(self) -> None:
        self.move_cursor(row=0)

    def action_scroll_bottom(self) -> None:
        self.move_cursor(row=len(self._keys) - 1)

    def action_select_cursor(self) -> None:
        if self.current_key is not None:
            self.post_message(self.Selected(self, self.current_key))

    def on_click(self, event: events.Click) -> None:
        row = event.y - self.header_height + int(self.scroll_offset.y)
        if event.y >= self.header_height and 0 <= row < len(self._keys):
            self.move_cursor(row=row)
            self.post_message(self.Selected(self, self._keys[row]))

    def on_focus(self) -> None:
        self._strips.clear()  # the cursor's style follows the focus
        self.refresh()

    def on_blur(self) -> None:
        self._strips.clear()
        self.refresh()

    def on_resize(self, event: events.Resize) -> None:
        self._scroll_to_cursor()

    # -------------------------------------------------------------- drawing

    def notify_style_update(self) -> None:
        super().notify_style_update()
        self._strips.clear()

    def _strip(self, cache_key: tuple, line, style: Style, cursor_style: Style | None = None) -> Strip:
        strip = self._strips.get(cache_key)
        if strip is None:
            text = line()
            segments = Segment.apply_style(text.render(self.app.console), style=style, post_style=cursor_style)
            strip = Strip(list(segments), text.cell_len)
            self._strips[cache_key] = strip
        return strip

    def _header_line(self, y: int) -> Text:
        line = self._header[y].copy()
        line.pad_right(max(0, self._width - line.cell_len))
        return line

    def _row_line(self, key: str, cursor: bool) -> Text:
        line = Text.assemble(*self._cells[key])
        if cursor and line.plain.startswith(" "):
            # The cursor row is marked by a sign too, not by its colour alone
            # (NO_COLOR, a monochrome terminal).
            line = Text.assemble(CURSOR_MARK, line[1:])
        return line

    def render_line(self, y: int) -> Strip:
        width = self.scrollable_content_region.width
        base = self.rich_style
        scroll_x, scroll_y = int(self.scroll_offset.x), int(self.scroll_offset.y)
        if y < self.header_height:
            if y >= len(self._header):
                return Strip.blank(width, base)
            style = base + self.get_component_rich_style("row-table--header")
            strip = self._strip(("header", y), lambda: self._header_line(y), style)
            return strip.crop_extend(scroll_x, scroll_x + width, style)
        index = y - self.header_height + scroll_y
        if not 0 <= index < len(self._keys):
            return Strip.blank(width, base)
        key = self._keys[index]
        cursor = index == self.cursor_row
        cursor_style = self.get_component_rich_style("row-table--cursor") if cursor else None
        strip = self._strip((key, cursor), lambda: self._row_line(key, cursor), base, cursor_style)
        return strip.crop_extend(scroll_x, scroll_x + width, base + cursor_style if cursor_style else base)


class NamedRows:
    """Mixin for a RowTable whose keys are names (streams, units): posts
    ``Picked(name)`` when the cursor lands on a row and ``Opened(name)`` when
    one is chosen (enter, a click).

    Each table declares its own subclasses of the two messages, so that a
    screen's handler says which table spoke (``on_stream_table_picked``):
    Textual names a handler after the class the message is defined in."""

    class Picked(Message):
        def __init__(self, name: str) -> None:
            self.name = name
            super().__init__()

    class Opened(Message):
        def __init__(self, name: str) -> None:
            self.name = name
            super().__init__()

    @property
    def current_name(self) -> str | None:
        return self.current_key

    def select_name(self, name: str) -> None:
        self.move_to_key(name)

    def on_row_table_highlighted(self, event: RowTable.Highlighted) -> None:
        event.stop()
        self.post_message(self.Picked(event.key))

    def on_row_table_selected(self, event: RowTable.Selected) -> None:
        event.stop()
        self.post_message(self.Opened(event.key))
