"""Shown when a sheet cannot be opened: every problem with its place and fix."""

from __future__ import annotations

from rich.text import Text
from textual.app import ComposeResult
from textual.binding import Binding
from textual.containers import VerticalScroll
from textual.screen import Screen
from textual.widgets import Footer, Static


class ProblemsScreen(Screen[str | None]):
    """Returns "retry" (fixed in an editor, read again) or "open" (another file)."""

    BINDINGS = [
        Binding("r", "retry", "Read it again"),
        Binding("o", "open_other", "Open another"),
    ]

    def __init__(self, path: str, problems: list[str]) -> None:
        super().__init__()
        self.path = path
        self.problems = problems

    def compose(self) -> ComposeResult:
        with VerticalScroll(id="problems"):
            yield Static(Text.assemble(("\u2716 cannot open ", "bold red"), (self.path, "bold")))
            yield Static("Fix these in your editor, then press r to read the file again:")
            for line in self.problems:
                yield Static(Text("\u2022 " + line), classes="problem")
        yield Footer()

    def action_retry(self) -> None:
        self.dismiss("retry")

    def action_open_other(self) -> None:
        self.dismiss("open")
