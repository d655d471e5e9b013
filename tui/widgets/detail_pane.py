"""The detail pane: the selected stream, unit or the sheet's settings, each
field with its entered text (in brackets) and its computed value; then the
three-step path breakdown and the cautions with their messages."""

from __future__ import annotations

from typing import Mapping

from rich.console import Group
from rich.table import Table
from rich.text import Text
from textual.app import ComposeResult
from textual.binding import Binding
from textual.containers import Vertical, VerticalScroll
from textual.message import Message
from textual.widgets import Static

from thermo.path import STEP_NAMES
from thermo.quantities import display_units

from .cells import flag_line, flags_by_place, number
from .field_editor import FieldEditor
from .fitted_table import Column, FittedTable
from .row_table import RowTable
from .fields import Field, marked, sheet_fields, stream_fields, unit_fields

STEP_WORDS = {
    "real-to-ideal": "real \u2192 ideal gas",
    "ideal-gas-change": "ideal gas T,P change",
    "ideal-to-real": "ideal gas \u2192 real",
}


FIELD_COLUMNS = (
    Column("field", "field", shrink=3, min_width=10),
    Column("entered", "entered", shrink=2, min_width=10),
    Column("computed", "computed", shrink=4, min_width=10),
    Column("note", "", shrink=1, min_width=0),
)


class FieldList(FittedTable):
    """The fields of the selection; enter or e edits (the screen's keys, so
    that the editor has the focus before the next key is read), x clears a
    written one."""

    BINDINGS = [
        Binding("x,delete", "clear_field", "Clear", show=True),
    ]

    class EditWanted(Message):
        def __init__(self, field: Field) -> None:
            self.field = field
            super().__init__()

    class ClearWanted(Message):
        def __init__(self, field: Field) -> None:
            self.field = field
            super().__init__()

    def __init__(self, **options) -> None:
        super().__init__(one_line_header=True, **options)
        self.fields: list[Field] = []

    def show(self, fields: list[Field]) -> None:
        keep, before = self.cursor_row, self.current_key
        self.fields = fields
        rows = []
        for index, field in enumerate(fields):
            entered = Text(marked(field.entered) if (field.entered is not None or field.editable) else "",
                           style="bold" if field.entered is not None else "dim")
            label = Text(field.label, style="" if field.editable else "dim")
            rows.append((f"{index}:{field.label}", [label, entered, Text(field.computed or ""),
                                                     Text(field.note, style="dim italic")]))
        self.fill(FIELD_COLUMNS, rows)
        if fields and before not in {key for key, _ in rows}:
            # Another selection: the cursor stays on the same line where it can.
            self.move_cursor(row=min(keep or 0, len(fields) - 1), animate=False)

    @property
    def current(self) -> Field | None:
        if not self.fields or self.cursor_row is None or not 0 <= self.cursor_row < len(self.fields):
            return None
        return self.fields[self.cursor_row]

    def action_edit_field(self) -> None:
        field = self.current
        if field is None:
            return
        pane = self.parent
        if field.editable and field.key_path and field.kind != "model" and isinstance(pane, DetailPane):
            # Opened here, at once, so that what is typed next goes into the box.
            from .fields import key_path_text

            pane.editor.start(field.key_path, key_path_text(field.key_path), field.kind, field.entered or "")
            return
        self.post_message(self.EditWanted(field))

    def action_clear_field(self) -> None:
        field = self.current
        if field is not None:
            self.post_message(self.ClearWanted(field))

    def on_row_table_selected(self, event: RowTable.Selected) -> None:
        event.stop()  # enter is the screen's key (it opens the editor at once); a click lands here
        self.action_edit_field()


class DetailPane(Vertical):
    """Shows one selection: ``("stream", name)``, ``("unit", name)`` or
    ``("sheet", None)``. Posts ``FieldEditor.Submitted`` (from its editor) and
    ``FieldList.ClearWanted`` for the screen to make the edit."""

    def __init__(self, **options) -> None:
        super().__init__(**options)
        self.selection: tuple[str, str | None] = ("sheet", None)
        self._shown: tuple | None = None
        self._title_shown = ""
        self.body_behind = False

    def compose(self) -> ComposeResult:
        yield Static("", id="detail-title", classes="pane-title")
        yield FieldList(id="fields")
        editor = FieldEditor(id="editor")
        editor.display = False
        yield editor
        with VerticalScroll(id="detail-extra"):
            yield Static("", id="detail-notes")

    @property
    def editor(self) -> FieldEditor:
        return self.query_one(FieldEditor)

    @property
    def field_list(self) -> FieldList:
        return self.query_one(FieldList)

    @property
    def editing(self) -> bool:
        return self.editor.display

    def show(self, selection, result, document: Mapping, system: str, stale: bool, *, folded: bool = False) -> None:
        """Show ``selection``; ``folded``: only the title line is on screen,
        so the fields and notes wait (``body_behind``) until it is opened."""
        self.selection = selection
        self._title(selection, result, document, stale)
        if folded:
            self.body_behind = True
            return
        self.body_behind = False
        shown = (selection, system, stale, result, document)
        last = self._shown
        if last is not None and shown[:3] == last[:3] and result is last[3] and document is last[4]:
            return  # the same selection of the same result and text: nothing to redraw
        self._shown = shown
        kind, name = selection
        places = flags_by_place(result)
        parts: list = []
        if kind == "stream":
            stream = result.streams.get(name) if result is not None else None
            fields = stream_fields(document, name, stream, system)
            parts.extend(self._flags(places.get(name, [])))  # first: on a short terminal the rest may be cut
            parts.extend(self._stream_path(stream, result, system))
            parts.extend(self._stream_phases(stream, result))
            if stream is not None and stream.state.notes:
                parts.append(Text("notes", style="bold underline"))
                parts.extend(Text(f"\u00b7 {note}") for note in stream.state.notes)
        elif kind == "unit":
            unit = result.units.get(name) if result is not None else None
            fields = unit_fields(document, name, unit, system)
            parts.extend(self._flags(places.get(name, [])))
            parts.extend(self._unit_path(unit, system))
            if unit is not None and unit.notes:
                parts.append(Text("notes", style="bold underline"))
                parts.extend(Text(f"\u00b7 {note}") for note in unit.notes)
        else:
            fields = sheet_fields(document, result, system)
            parts.extend(self._flags(places.get("flowsheet", [])))
            if result is not None and result.errors:
                parts.append(Text("errors", style="bold underline"))
                for error in result.errors:
                    parts.append(Text(f"\u2716 {error.code}: {error.message}" + (f" ({error.where})" if error.where else ""),
                                      style="bold red"))
        self.field_list.show(fields)
        self.query_one("#detail-notes", Static).update(Group(*parts) if parts else Text(""))

    def _title(self, selection, result, document: Mapping, stale: bool) -> None:
        kind, name = selection
        stale_word = "  \u2026 computed values are from the last solve" if stale else ""
        if kind == "stream":
            stream = result.streams.get(name) if result is not None else None
            origin = ""
            if stream is not None:
                origin = "feed" if stream.is_feed else f"made by {stream.source_unit}"
            elif isinstance(document.get("streams"), Mapping) and name in document["streams"]:
                origin = "feed"
            title = Text.assemble(("\u25b8 stream ", "dim"), (name or "", "bold"), f"  {origin}",
                                  (stale_word, "yellow"))
        elif kind == "unit":
            unit = result.units.get(name) if result is not None else None
            title = Text.assemble(("\u25b8 unit ", "dim"), (name or "", "bold"),
                                  f"  {unit.type if unit else ''}", (stale_word, "yellow"))
        else:
            title = Text.assemble(("\u25b8 ", "dim"), ("sheet settings", "bold"), (stale_word, "yellow"))
        if title.markup != self._title_shown:
            self._title_shown = title.markup
            self.query_one("#detail-title", Static).update(title)

    def _flags(self, flags: list) -> list:
        if not flags:
            return [Text("\u2714 ok: no violations or cautions", style="green")]
        return [Text("violations and cautions", style="bold underline")] + [flag_line(flag) for flag in flags]

    def _steps_table(self, heading: str, h_unit: str, s_unit: str, rows: list[tuple[str, str, str]]) -> Table:
        table = Table(title=heading, title_justify="left", box=None, pad_edge=False, show_edge=False,
                      title_style="bold underline")
        table.add_column("step")
        table.add_column(f"\u0394H {h_unit}", justify="right")
        table.add_column(f"\u0394S {s_unit}", justify="right")
        for row in rows:
            table.add_row(*row)
        return table

    def _stream_phases(self, stream, result) -> list:
        """A stream of several phases: each phase's share and make-up, a
        column per phase (what goes to the vapor and to each liquid)."""
        if stream is None or len(stream.state.phases) < 2:
            return []
        phases = stream.state.phases
        table = Table(title="phases, mole fractions", title_justify="left", box=None, pad_edge=False,
                      show_edge=False, title_style="bold underline")
        table.add_column("")
        liquids = sum(phase.label == "liquid" for phase in phases)
        seen = 0
        for phase in phases:
            label = phase.label
            if phase.label == "liquid" and liquids > 1:
                seen += 1
                label = f"liquid {seen}"
            table.add_column(label, justify="right")
        def fraction(value: float) -> str:
            return f"{value:.4f}" if value >= 1e-3 else f"{value:.2e}"

        table.add_row("share of stream", *(fraction(phase.amount) for phase in phases))
        feed = stream.state.composition
        for index, name in enumerate(result.component_names):
            if feed[index] > 0.0:
                table.add_row(name, *(fraction(float(phase.composition[index])) for phase in phases))
        return [table]

    def _unit_path(self, unit, system: str) -> list:
        if unit is None or unit.path is None:
            return [Text("three-step path: not available", style="dim")]
        rows = [
            (STEP_WORDS.get(step, step), number(h, "power", system), number(s, "entropy_rate", system))
            for step, h, s in zip(STEP_NAMES, unit.path.enthalpy_W, unit.path.entropy_W_K)
        ]
        rows.append(("total (out \u2212 in)", number(sum(unit.path.enthalpy_W), "power", system),
                     number(sum(unit.path.entropy_W_K), "entropy_rate", system)))
        return [self._steps_table("three-step path, all streams", display_units("power", system),
                                  display_units("entropy_rate", system), rows)]

    def _stream_path(self, stream, result, system: str) -> list:
        if stream is None:
            return []
        h_unit, s_unit = display_units("molar_energy", system), display_units("molar_entropy", system)
        producer = result.units.get(stream.source_unit) if stream.source_unit else None
        change = producer.path.per_stream.get(stream.name) if producer and producer.path else None
        if change is not None:
            rows = [(STEP_WORDS.get(step.name, step.name), number(step.enthalpy, "molar_energy", system),
                     number(step.entropy, "molar_entropy", system)) for step in change.steps]
            rows.append(("total", number(change.enthalpy, "molar_energy", system),
                         number(change.entropy, "molar_entropy", system)))
            return [self._steps_table(f"three-step path through {producer.name}, per mole", h_unit, s_unit, rows)]
        state = stream.state
        rows = [
            ("ideal gas at T, P", number(state.ideal_gas_enthalpy, "molar_energy", system),
             number(state.ideal_gas_entropy, "molar_entropy", system)),
            ("departure (real \u2212 ideal)", number(state.residual_enthalpy, "molar_energy", system),
             number(state.residual_entropy, "molar_entropy", system)),
            ("real state", number(state.enthalpy, "molar_energy", system),
             number(state.entropy, "molar_entropy", system)),
        ]
        return [self._steps_table("from the reference ideal gas, per mole", h_unit, s_unit, rows)]
