"""Small modal dialogs: a choice among buttons, a one-line prompt that is
checked before it closes, a form of several fields, and a diff viewer."""

from __future__ import annotations

from typing import Callable, Sequence, TypeVar

from rich.syntax import Syntax
from rich.text import Text
from textual.app import ComposeResult
from textual.binding import Binding
from textual.containers import Horizontal, Vertical, VerticalScroll
from textual.screen import ModalScreen
from textual.widget import Widget
from textual.widgets import Button, Input, Label, OptionList, Static
from textual.widgets.option_list import Option

from tui.widgets.field_editor import EntryBox, caught_up

Answer = TypeVar("Answer")


class Dialog(ModalScreen[Answer]):
    """What every dialog shares: a box (``BOX_CLASSES``) holding the question
    in bold, a muted detail line when there is one, then the dialog's own
    ``body``. Escape closes it with None; ``FOCUS`` (a selector) finds the
    widget that has the focus when it opens.

    ``answers`` are (key, label) pairs shown by ``answer_buttons``: a button
    or the label's first letter (underlined) closes the dialog with the key;
    any other button (Close) with None."""

    BINDINGS = [Binding("escape", "dismiss_none", "Cancel")]
    BOX_CLASSES = "dialog"
    FOCUS: str | type[Widget] = Button

    def __init__(self, question: str, *, detail: str = "", answers: Sequence[tuple[str, str]] = (),
                 id: str | None = None) -> None:
        super().__init__(id=id)
        self.question = question
        self.detail = detail
        self.answers = list(answers)

    def compose(self) -> ComposeResult:
        with Vertical(classes=self.BOX_CLASSES):
            yield Static(self.question, classes="dialog-question")
            if self.detail:
                yield Static(self.detail, classes="dialog-detail")
            yield from self.body()

    def body(self) -> ComposeResult:
        """The widgets under the question."""
        return iter(())

    def answer_buttons(self) -> ComposeResult:
        for key, label in self.answers:
            # The first letter is the answer's key: underlined, so it shows.
            yield Button(Text.assemble((label[:1], "underline"), label[1:]), id=f"answer-{key}")

    def first_focus(self) -> Widget:
        return self.query(self.FOCUS).first()

    def on_mount(self) -> None:
        self.set_focus(self.first_focus())

    def on_button_pressed(self, event: Button.Pressed) -> None:
        event.stop()
        key = event.button.id.removeprefix("answer-")
        self.dismiss(key if key in dict(self.answers) else None)

    def on_key(self, event) -> None:
        for key, label in self.answers:
            if event.character and label[:1].lower() == event.character.lower():
                event.stop()
                self.dismiss(key)
                return

    def dismiss_checked(self, value, check: Callable | None, error_box: str) -> None:
        """Close with ``value`` when ``check`` (value -> an error message or
        None) accepts it; otherwise show the message in ``error_box``."""
        error = check(value) if check is not None else None
        if error:
            self.query_one(error_box, Static).update(f"\u2716 {error}")
            return
        self.dismiss(value)

    def action_dismiss_none(self) -> None:
        self.dismiss(None)


class ChoiceScreen(Dialog[str | None]):
    """A question with a few answers; returns the chosen key, None on escape.
    Each answer is (key, label); the label's first letter is its shortcut."""

    def __init__(self, question: str, answers: Sequence[tuple[str, str]], *, detail: str = "",
                 id: str | None = None) -> None:
        super().__init__(question, detail=detail, answers=answers, id=id)

    def body(self) -> ComposeResult:
        with Horizontal(classes="dialog-buttons"):
            yield from self.answer_buttons()


class PickScreen(Dialog[str | None]):
    """Pick one of a list (equation of state, unit type ...)."""

    def __init__(self, question: str, options: Sequence[tuple[str, str]], current: str | None = None) -> None:
        super().__init__(question)
        self.options = list(options)
        self.current = current

    def body(self) -> ComposeResult:
        yield OptionList(*[Option(("\u25cf " if key == self.current else "  ") + label, id=key)
                           for key, label in self.options], id="pick")

    def first_focus(self) -> Widget:
        listing = self.query_one(OptionList)
        keys = [key for key, _ in self.options]
        if self.current in keys:
            listing.highlighted = keys.index(self.current)
        return listing

    def on_option_list_option_selected(self, event: OptionList.OptionSelected) -> None:
        event.stop()
        self.dismiss(event.option.id)


Checker = Callable[[str], str | None]  # the entry -> an error message, or None when it is accepted


class PromptScreen(Dialog[str | None]):
    """One line of text; ``check`` runs on enter and a message it returns is
    shown beside the box instead of closing. Enter is taken first and waits
    for the box, so a burst of keys (tmux, a slow link) is read in order."""

    BINDINGS = [Binding("enter", "accept", "Accept", priority=True)]
    FOCUS = Input

    def __init__(self, question: str, value: str = "", check: Checker | None = None, hint: str = "") -> None:
        super().__init__(question, detail=hint)
        self.value = value
        self.check = check

    def body(self) -> ComposeResult:
        yield EntryBox(self.value, id="prompt-input")
        yield Static("", id="prompt-error", classes="dialog-error")

    async def action_accept(self) -> None:
        box = self.query_one(Input)
        await caught_up(box)
        self._accept(box.value)

    def on_input_submitted(self, event: Input.Submitted) -> None:
        event.stop()
        self._accept(event.value)

    def _accept(self, value: str) -> None:
        self.dismiss_checked(value.strip(), self.check, "#prompt-error")


class FormScreen(Dialog[dict | None]):
    """Several labelled fields; ``check`` gets them all on enter in the last
    field (or ctrl+s) and returns an error message or None to accept."""

    BINDINGS = [Binding("ctrl+s", "submit", "Accept"), Binding("enter", "next_field", "Next", show=False, priority=True)]
    BOX_CLASSES = "dialog dialog-form"
    FOCUS = Input

    def __init__(self, title: str, fields: Sequence[tuple[str, str, str]],
                 check: Callable[[dict], str | None] | None = None, hint: str = "") -> None:
        super().__init__(title, detail=hint)
        self.fields = list(fields)  # (key, label, value)
        self.check = check

    def body(self) -> ComposeResult:
        with VerticalScroll(classes="form-fields"):
            for key, label, value in self.fields:
                with Horizontal(classes="form-row"):
                    yield Label(label, classes="form-label")
                    yield EntryBox(value, id=f"form-{key}", classes="form-input")
        yield Static("", id="form-error", classes="dialog-error")

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
        self.dismiss_checked(self.values(), self.check, "#form-error")


class DiffScreen(Dialog[str | None]):
    """A unified diff, with the answers of the question that led here."""

    BINDINGS = [Binding("escape", "dismiss_none", "Close")]
    BOX_CLASSES = "dialog dialog-diff"
    FOCUS = "#diff-body"

    def __init__(self, title: str, diff: str, answers: Sequence[tuple[str, str]] = ()) -> None:
        super().__init__(title, answers=answers)
        self.diff = diff

    def body(self) -> ComposeResult:
        with VerticalScroll(id="diff-body"):
            if self.diff:
                yield Static(Syntax(self.diff, "diff", theme="ansi_dark", word_wrap=True))
            else:
                yield Static(Text("no differences", style="italic"))
        with Horizontal(classes="dialog-buttons"):
            yield from self.answer_buttons()
            yield Button("Close", id="answer-close")
