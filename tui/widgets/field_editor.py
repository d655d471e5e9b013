"""The in-place editor of one field: an Input pre-filled with the file's text
and, beside it, why the last entry was refused."""

from __future__ import annotations

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


class FieldEditor(Vertical):
    """Shown under the field list while a field is being edited."""

    BINDINGS = [Binding("escape", "cancel", "Cancel edit", show=True)]

    class Submitted(Message):
        def __init__(self, key_path: tuple, kind: str, text: str) -> None:
            self.key_path = key_path
            self.kind = kind
            self.text = text
            super().__init__()

    class Cancelled(Message):
        pass

    def __init__(self, **options) -> None:
        super().__init__(**options)
        self.key_path: tuple = ()
        self.kind = "text"

    def compose(self) -> ComposeResult:
        yield Static("", id="editor-label")
        yield Input(id="editor-input")
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

    def on_input_submitted(self, event: Input.Submitted) -> None:
        event.stop()
        self.post_message(self.Submitted(self.key_path, self.kind, event.value))

    def close(self, focus_after=None) -> None:
        """Hide, handing the focus straight to ``focus_after``."""
        self.display = False
        if focus_after is not None:
            self.screen.set_focus(focus_after)

    def action_cancel(self) -> None:
        self.close()
        self.post_message(self.Cancelled())
