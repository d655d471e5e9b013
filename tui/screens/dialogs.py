"""Small modal dialogs: a choice among buttons, a one-line prompt that is
checked before it closes, a form of several fields, and a diff viewer."""

from __future__ import annotations

from typing import Callable, Sequence

from rich.syntax import Syntax
from rich.text import Text
from textual.app import ComposeResult
from textual.binding import Binding
from textual.containers import Horizontal, Vertical, VerticalScroll
from textual.screen import ModalScreen
from textual.widgets import Button, Input, Label, OptionList, Static
from textual.widgets.option_list import Option

from tui.widgets.field_editor import EntryBox, caught_up


class ChoiceScreen(ModalScreen[str | None]):
    """A question with a few answers; returns the chosen key, None on escape.
    Each answer is (key, label); the label's first letter is its shortcut."""

    BINDINGS = [Binding("escape", "dismiss_none", "Cancel")]

    def __init__(self, question: str, answers: Sequence[tuple[str, str]], *, detail: str = "",
                 id: str | None = None) -> None:
        super().__init__(id=id)
        self.question = question
        self.answers = list(answers)
        self.detail = detail

    def compose(self) -> ComposeResult:
        with Vertical(classes="dialog"):
            yield Static(self.question, classes="dialog-question")
            if self.detail:
                yield Static(self.detail, classes="dialog-detail")
            with Horizontal(classes="dialog-buttons"):
                for key, label in self.answers:
                    # The first letter is the answer's key: underlined, so it shows.
                    yield Button(Text.assemble((label[:1], "underline"), label[1:]), id=f"answer-{key}")

    def on_mount(self) -> None:
        self.set_focus(self.query(Button).first())

    def on_button_pressed(self, event: Button.Pressed) -> None:
        event.stop()
        self.dismiss(event.button.id.removeprefix("answer-"))

    def on_key(self, event) -> None:
        for key, label in self.answers:
            if event.character and label[:1].lower() == event.character.lower():
                event.stop()
                self.dismiss(key)
                return

    def action_dismiss_none(self) -> None:
        self.dismiss(None)


class PickScreen(ModalScreen[str | None]):
    """Pick one of a list (equation of state, unit type ...)."""

    BINDINGS = [Binding("escape", "dismiss_none", "Cancel")]

    def __init__(self, question: str, options: Sequence[tuple[str, str]], current: str | None = None) -> None:
        super().__init__()
        self.question = question
        self.options = list(options)
        self.current = current

    def compose(self) -> ComposeResult:
        with Vertical(classes="dialog"):
            yield Static(self.question, classes="dialog-question")
            yield OptionList(*[Option(("\u25cf " if key == self.current else "  ") + label, id=key)
                               for key, label in self.options], id="pick")

    def on_mount(self) -> None:
        listing = self.query_one(OptionList)
        keys = [key for key, _ in self.options]
        if self.current in keys:
            listing.highlighted = keys.index(self.current)
        self.set_focus(listing)

    def on_option_list_option_selected(self, event: OptionList.OptionSelected) -> None:
        event.stop()
        self.dismiss(event.option.id)

    def action_dismiss_none(self) -> None:
        self.dismiss(None)


Checker = Callable[[str], str | None]  # the entry -> an error message, or None when it is accepted


class PromptScreen(ModalScreen[str | None]):
    """One line of text; ``check`` runs on enter and a message it returns is
    shown beside the box instead of closing. Enter is taken first and waits
    for the box, so a burst of keys (tmux, a slow link) is read in order."""

    BINDINGS = [Binding("escape", "dismiss_none", "Cancel"), Binding("enter", "accept", "Accept", priority=True)]

    def __init__(self, question: str, value: str = "", check: Checker | None = None, hint: str = "") -> None:
        super().__init__()
        self.question = question
        self.value = value
        self.check = check
        self.hint = hint

    def compose(self) -> ComposeResult:
        with Vertical(classes="dialog"):
            yield Static(self.question, classes="dialog-question")
            if self.hint:
                yield Static(self.hint, classes="dialog-detail")
            yield EntryBox(self.value, id="prompt-input")
            yield Static("", id="prompt-error", classes="dialog-error")

    def on_mount(self) -> None:
        self.set_focus(self.query_one(Input))

    async def action_accept(self) -> None:
        box = self.query_one(Input)
        await caught_up(box)
        self._accept(box.value)

    def on_input_submitted(self, event: Input.Submitted) -> None:
        event.stop()
        self._accept(event.value)

    def _accept(self, value: str) -> None:
        value = value.strip()
        if self.check is not None:
            error = self.check(value)
            if error:
                self.query_one("#prompt-error", Static).update(f"\u2716 {error}")
                return
        self.dismiss(value)

    def action_dismiss_none(self) -> None:
        self.dismiss(None)


class FormScreen(ModalScreen[dict | None]):
    """Several labelled fields; ``check`` gets them all on enter in the last
    field (or ctrl+s) and returns an error message or None to accept."""

    BINDINGS = [Binding("escape", "dismiss_none", "Cancel"), Binding("ctrl+s", "submit", "Accept"),
                Binding("enter", "next_field", "Next", show=False, priority=True)]

    def __init__(self, title: str, fields: Sequence[tuple[str, str, str]],
                 check: Callable[[dict], str | None] | None = None, hint: str = "") -> None:
        super().__init__()
        self.form_title = title
        self.fields = list(fields)  # (key, label, value)
        self.check = check
        self.hint = hint

    def compose(self) -> ComposeResult:
        with Vertical(classes="dialog dialog-form"):
            yield Static(self.form_title, classes="dialog-question")
            if self.hint:
                yield Static(self.hint, classes="dialog-detail")
            with VerticalScroll(classes="form-fields"):
                for key, label, value in self.fields:
                    with Horizontal(classes="form-row"):
                        yield Label(label, classes="form-label")
                        yield EntryBox(value, id=f"form-{key}", classes="form-input")
            yield Static("", id="form-error", classes="dialog-error")

    def on_mount(self) -> None:
        self.set_focus(self.query(Input).first())

    def values(self) -> dict:
        return {key: self.query_one(f"#form-{key}", Input).value.strip() for key, _, _ in self.fields}

    async def action_next_field(self) -> None:
        """Enter: the next field, or accept on the last one (once the box
        has the keys typed before enter)."""
        if isinstance(self.focused, Input):
            await caught_up(self.focused)
            self._next_after(self.focused)

    def on_input_submitted(self, event: Input.Submitted) -> None:
        event.stop()
        self._next_after(event.input)

    def _next_after(self, box: Input) -> None:
        inputs = list(self.query(Input))
        position = inputs.index(box)
        if position < len(inputs) - 1:
            self.set_focus(inputs[position + 1])
            return
        self.action_submit()

    def action_submit(self) -> None:
        values = self.values()
        if self.check is not None:
            error = self.check(values)
            if error:
                self.query_one("#form-error", Static).update(f"\u2716 {error}")
                return
        self.dismiss(values)

    def action_dismiss_none(self) -> None:
        self.dismiss(None)


class DiffScreen(ModalScreen[str | None]):
    """A unified diff, with the answers of the question that led here."""

    BINDINGS = [Binding("escape", "dismiss_none", "Close")]

    def __init__(self, title: str, diff: str, answers: Sequence[tuple[str, str]] = ()) -> None:
        super().__init__()
        self.diff_title = title
        self.diff = diff
        self.answers = list(answers)

    def compose(self) -> ComposeResult:
        with Vertical(classes="dialog dialog-diff"):
            yield Static(self.diff_title, classes="dialog-question")
            with VerticalScroll(id="diff-body"):
                if self.diff:
                    yield Static(Syntax(self.diff, "diff", theme="ansi_dark", word_wrap=True))
                else:
                    yield Static(Text("no differences", style="italic"))
            with Horizontal(classes="dialog-buttons"):
                for key, label in self.answers:
                    # The first letter is the answer's key: underlined, so it shows.
                    yield Button(Text.assemble((label[:1], "underline"), label[1:]), id=f"answer-{key}")
                yield Button("Close", id="answer-close")

    def on_mount(self) -> None:
        self.set_focus(self.query_one("#diff-body"))

    def on_button_pressed(self, event: Button.Pressed) -> None:
        event.stop()
        key = event.button.id.removeprefix("answer-")
        self.dismiss(None if key == "close" else key)

    def on_key(self, event) -> None:
        for key, label in self.answers:  # the underlined first letter answers, as in ChoiceScreen
            if event.character and label[:1].lower() == event.character.lower():
                event.stop()
                self.dismiss(key)
                return

    def action_dismiss_none(self) -> None:
        self.dismiss(None)
