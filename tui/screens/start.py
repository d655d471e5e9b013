"""The start screen, when statepath is run without a file: start a new sheet
from the template (asks for a file name) or open a recent or named file."""

from __future__ import annotations

import os

from rich.text import Text
from textual.app import ComposeResult
from textual.binding import Binding
from textual.containers import Vertical
from textual.message import Message
from textual.screen import Screen
from textual import events
from textual.widgets import Input, OptionList, Static
from textual.widgets.option_list import Option

from tui.screens.key_order import KeysFirst
from tui.widgets.key_footer import KeyFooter


class StartScreen(KeysFirst, Screen[None]):
    """Posts ``NewWanted(path)`` or ``OpenWanted(path)`` for the app. The
    new sheet's name box has the focus first, as its heading says "type a
    file name": a name typed at once must not fall on the recent list (where
    enter would open a recent sheet instead). Down leaves a box for the next."""

    BINDINGS = [
        Binding("ctrl+n", "focus_new", "New sheet"),
        Binding("ctrl+o", "focus_open", "Open a path"),
    ]

    class NewWanted(Message):
        def __init__(self, path: str) -> None:
            self.path = path
            super().__init__()

    class OpenWanted(Message):
        def __init__(self, path: str) -> None:
            self.path = path
            super().__init__()

    def __init__(self, recent: list[str], message: str = "") -> None:
        super().__init__()
        self.recent = recent
        self.message = message

    def compose(self) -> ComposeResult:
        with Vertical(id="start"):
            yield Static(Text.assemble((" statepath ", "bold reverse"),
                                       "  real-gas energy and entropy balances of process streams"))
            yield Static("Start a new sheet from the template: type a file name and press enter",
                         classes="start-heading")
            yield Input(placeholder="new-sheet.toml", id="new-name")
            yield Static("Or open a sheet: type its path, or pick a recent one below",
                         classes="start-heading")
            yield Input(placeholder="path/to/sheet.toml", id="open-path")
            if self.recent:
                yield OptionList(*[Option(path, id=str(i)) for i, path in enumerate(self.recent)], id="recent")
            else:
                yield Static("(no recent sheets yet)", classes="start-note")
            yield Static(self.message, id="start-message")
        yield KeyFooter()

    def on_mount(self) -> None:
        self.set_focus(self.query_one("#new-name", Input))

    def on_key(self, event: events.Key) -> None:
        if event.key == "down" and isinstance(self.focused, Input):
            event.stop()
            self.focus_next()

    def say(self, message: str) -> None:
        self.query_one("#start-message", Static).update(Text(message, style="bold"))

    def on_input_submitted(self, event: Input.Submitted) -> None:
        event.stop()
        value = os.path.expanduser(event.value.strip())
        if not value:
            self.say("type a file name first")
            return
        if event.input.id == "new-name":
            if not value.endswith(".toml"):
                value += ".toml"
            self.post_message(self.NewWanted(value))
        else:
            self.post_message(self.OpenWanted(value))

    def on_option_list_option_selected(self, event: OptionList.OptionSelected) -> None:
        event.stop()
        self.post_message(self.OpenWanted(self.recent[int(event.option.id)]))

    def action_focus_new(self) -> None:
        self.set_focus(self.query_one("#new-name", Input))

    def action_focus_open(self) -> None:
        self.set_focus(self.query_one("#open-path", Input))
