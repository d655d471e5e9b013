"""One line saying whether the sheet is solved, stale (solving) or failed and
why, then the last thing that happened (saved, undone, refused ...)."""

from __future__ import annotations

from rich.text import Text
from textual.widgets import Static

SOLVED = "solved"
STALE = "stale"
FAILED = "failed"
EMPTY = "empty"

_MARKS = {
    SOLVED: ("\u2714", "solved", "green"),
    STALE: ("\u2026", "stale, solving", "yellow"),
    FAILED: ("\u2716", "failed", "bold red"),
    EMPTY: ("\u00b7", "no sheet", ""),
}


class StatusLine(Static):
    """The state of the solve and the latest message."""

    def __init__(self, **options) -> None:
        super().__init__("", **options)
        self.state = EMPTY
        self.reason = ""
        self.message = ""

    def set_state(self, state: str, reason: str = "") -> None:
        self.state = state
        self.reason = reason
        self._redraw()

    def say(self, message: str) -> None:
        self.message = message
        self._redraw()

    def _redraw(self) -> None:
        symbol, word, style = _MARKS[self.state]
        text = Text(overflow="ellipsis")
        text.append(f"{symbol} {word}", style=style)
        if self.reason:
            text.append(f": {self.reason}")
        if self.message:
            text.append("  \u2502 ", style="dim")
            text.append(self.message)
        self.update(text)
