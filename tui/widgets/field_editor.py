"""The in-place editor of one field: an Input pre-filled with the file's text
and, beside it, why the last entry was refused."""

from __future__ import annotations

import asyncio

from textual import events
from textual.app import ComposeResult
from textual.binding import Binding
from textual.containers import Vertical
from textual.message import Message
from textual.widgets import Input, Static

KIND_HINTS = {
    "temperature": "a temperature with its unit: 120 degF, 35 degC, 300 K",
    "pressure": "a pressure with its unit: 45 barg, 600 psia, 2 MPa",
    "pressure_difference": "a pressure difference: 0.5 bar, 20 kPa",
    "power": "a duty or power: 1.2 MW, 350 kW, 2e6 Btu/h",
    "flow": "a molar or mass flow: 2400 kmol/h, 12 t/h",
    "vapor_fraction": "a number from 0 to 1",
    "efficiency": "a number above 0, at most 1: 0.78",
    "ratio": "a number above 0: 2.5",
    "fractions": "numbers summing to 1, in the order of the outlets: 0.6, 0.4",
    "composition": "name=fraction, ...: methane=0.9, ethane=0.1",
    "name": "a stream name",
    "names": "stream names separated by commas",
    "model": "peng-robinson, soave-redlich-kwong, virial or ideal-gas",
    "text": "free text",
}


async def caught_up(widget, timeout: float = 0.5) -> None:
    """Wait until ``widget`` has handled the messages (keys) already sent to
    it: a key bound first (priority) that reads a box calls this, so that the
    characters typed before it are in the box."""
    done = asyncio.Event()
    widget.call_later(done.set)
    try:
        await asyncio.wait_for(done.wait(), timeout)
    except asyncio.TimeoutError:
        pass


def _editing_keys() -> dict[str, str]:
    keys = {}
    for binding in Input.BINDINGS:
        if isinstance(binding, Binding) and binding.action != "submit":
            for key in binding.key.split(","):
                keys[key.strip()] = binding.action
    return keys


class EntryBox(Input):
    """The editor's text box. Its editing keys (backspace, the arrows,
    ctrl+u ...) act as each key arrives, like the typed characters, instead
    of after the key has gone round the app's bindings: a burst of keys (tmux
    send-keys, a fast typist on a slow SSH link) is applied in the order it
    was typed. Enter is the screen's (it submits once the box has caught up)."""

    EDITING_KEYS = _editing_keys()

    async def _on_key(self, event: events.Key) -> None:
        action = self.EDITING_KEYS.get(event.key)
        if action is None:
            await super()._on_key(event)
            return
        event.stop()
        event.prevent_default()
        await self.run_action(action)


class FieldEditor(Vertical):
    """Shown under the field list while a field is being edited. Its text
    starts selected: typing replaces it, an arrow key keeps it to change.
    Enter and escape are the screen's keys (``MainScreen``)."""

    class Submitted(Message):
        def __init__(self, key_path: tuple, kind: str, text: str) -> None:
            self.key_path = key_path
            self.kind = kind
            self.text = text
            super().__init__()

    def __init__(self, **options) -> None:
        super().__init__(**options)
        self.key_path: tuple = ()
        self.kind = "text"

    def compose(self) -> ComposeResult:
        yield Static("", id="editor-label")
        yield EntryBox(id="editor-input", select_on_focus=True)
        yield Static("", id="editor-error")

    def start(self, key_path: tuple, label: str, kind: str, text: str) -> None:
        """Open for ``key_path`` with ``text`` in the box, cursor at its end."""
        self.key_path = key_path
        self.kind = kind
        self.query_one("#editor-label", Static).update(f"\u270e {label}: {KIND_HINTS.get(kind, '')}")
        box = self.query_one("#editor-input", Input)
        box.value = text
        box.cursor_position = len(text)
        self.show_error("")
        self.display = True
        # Focus now, not after the queue: keys typed straight after the edit
        # key (a fast typist, a paste over SSH) must land in the box.
        self.screen.set_focus(box)

    def show_error(self, message: str) -> None:
        error = self.query_one("#editor-error", Static)
        error.update(f"\u2716 refused: {message}" if message else "")
        error.set_class(bool(message), "-shown")

    @property
    def value(self) -> str:
        return self.query_one("#editor-input", Input).value

    def on_input_submitted(self, event: Input.Submitted) -> None:
        event.stop()
        self.post_message(self.Submitted(self.key_path, self.kind, event.value))

    def close(self, focus_after=None) -> None:
        """Hide, handing the focus straight to ``focus_after``."""
        self.display = False
        if focus_after is not None:
            self.screen.set_focus(focus_after)
