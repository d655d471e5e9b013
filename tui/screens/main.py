"""The main screen: streams on top, units and the detail pane below; on a
small terminal only the current pane is open and the others fold to their
title line (tab moves between them)."""

from __future__ import annotations

from typing import Mapping

from rich.text import Text
from textual import events
from textual.app import ComposeResult
from textual.binding import Binding
from textual.containers import Horizontal, Vertical
from textual.screen import Screen
from textual.widgets import Static

from thermo.spec import UNIT_TYPES
from tui.screens.key_order import KeysFirst
from tui.widgets.key_footer import KeyFooter
from tui.widgets.banner import Banner
from tui.widgets.detail_pane import DetailPane, FieldList
from tui.widgets.field_editor import FieldEditor, caught_up
from tui.widgets.row_table import RowTable
from tui.widgets.status_line import StatusLine
from tui.widgets.stream_table import StreamTable
from tui.widgets.unit_table import UnitTable

PANES = ("streams", "units", "detail")
# Keys that move a table's cursor -> the table's action that does it.
TABLE_MOVES = {"up": "cursor_up", "down": "cursor_down", "pageup": "page_up", "pagedown": "page_down",
               "home": "scroll_top", "end": "scroll_bottom", "ctrl+home": "scroll_top", "ctrl+end": "scroll_bottom"}
NARROW_WIDTH = 100  # columns below which one pane is open at a time
SHORT_HEIGHT = 30  # rows below which, likewise


class MainScreen(KeysFirst, Screen[None]):
    """The sheet at work. Edits go to the app (``try_edit``); the app calls
    ``refresh_all`` when the document or the result changes."""

    # Every key that moves the cursor or the focus is taken by the screen
    # first (priority), as the key is read: the keys typed after it (a fast
    # typist, a paste over SSH, tmux send-keys) then go where it sent them,
    # in the order typed. Each is enabled only where it applies (check_action);
    # elsewhere, in the editor's box above all, the key goes on to the focus.
    BINDINGS = [
        Binding("tab", "next_pane", "Next pane", show=False, priority=True),
        Binding("shift+tab", "previous_pane", "Previous pane", show=False, priority=True),
        Binding("1", "pane('streams')", "Streams", show=False, priority=True),
        Binding("2", "pane('units')", "Units", show=False, priority=True),
        Binding("3", "pane('detail')", "Detail", show=False, priority=True),
        Binding("g", "sheet_settings", "Sheet", show=False, priority=True),
        Binding("enter", "open", "Open", show=False, priority=True),
        Binding("e", "edit_field", "Edit", priority=True),
        Binding("escape", "cancel_edit", "Cancel edit", priority=True),
        Binding("escape", "back", "Back", show=False, priority=True),
        *[Binding(key, f"move('{key}')", show=False, priority=True) for key in TABLE_MOVES],
        Binding("a", "add_item", "Add", priority=True),
        Binding("x,delete", "remove_item", "Del", priority=True),
        Binding("n", "rename_item", "Name", priority=True),
    ]

    SHEET_ACTIONS = frozenset({"save", "undo", "redo", "choose_model", "cycle_units", "reload", "diff", "chart",
                               "open_other"})

    def __init__(self) -> None:
        super().__init__(id="main")
        self.selection: tuple[str, str | None] = ("sheet", None)
        self.active = "streams"
        self._titles_shown: dict[str, str] = {}

    def compose(self) -> ComposeResult:
        yield Banner("", id="banner")
        with Vertical(id="body"):
            with Vertical(id="streams-pane", classes="pane"):
                yield Static("", id="streams-title", classes="pane-title")
                yield StreamTable(id="streams", classes="pane-body")
            with Horizontal(id="lower"):
                with Vertical(id="units-pane", classes="pane"):
                    yield Static("", id="units-title", classes="pane-title")
                    yield UnitTable(id="units", classes="pane-body")
                yield DetailPane(id="detail-pane", classes="pane")
        yield StatusLine(id="status")
        yield KeyFooter()

    def on_mount(self) -> None:
        self._apply_layout(self.app.size.width, self.app.size.height)
        self.set_focus(self.query_one(StreamTable))
        if self.app.session is not None:
            self.refresh_all()

    def on_resize(self, event: events.Resize) -> None:
        self._apply_layout(event.size.width, event.size.height)

    # -------------------------------------------------------------- layout

    @property
    def narrow(self) -> bool:
        return self.has_class("-narrow")

    def _apply_layout(self, width: int, height: int) -> None:
        self.set_class(width < NARROW_WIDTH or height < SHORT_HEIGHT, "-narrow")
        self._fold()

    def _fold(self) -> None:
        for pane in PANES:
            widget = self.query_one(f"#{pane}-pane")
            widget.set_class(pane == self.active, "-active")
            widget.set_class(self.narrow and pane != self.active, "-collapsed")
        self._titles()
        if self.is_mounted and self.query_one(DetailPane).body_behind and (not self.narrow or self.active == "detail"):
            self.refresh_detail()

    def _titles(self) -> None:
        app = self.app
        result = app.result
        streams = len(result.streams) if result is not None else 0
        units = len(result.units) if result is not None else 0
        for pane, text in (
            ("streams", f"Streams \u00b7 {streams}"),
            ("units", f"Units \u00b7 {units}"),
        ):
            mark = "\u25be" if pane == self.active else "\u25b8"
            title = Text.assemble((f"{mark} {PANES.index(pane) + 1} ", "bold"), (text, "bold"))
            if pane == "streams":
                title.append("   [..] entered in the file, plain = computed", style="dim")
            if self._titles_shown.get(pane) != title.markup:
                self._titles_shown[pane] = title.markup
                self.query_one(f"#{pane}-title", Static).update(title)

    def _focus_pane(self, pane: str) -> None:
        self.active = pane
        self._fold()
        target = {"streams": StreamTable, "units": UnitTable, "detail": FieldList}[pane]
        self.set_focus(self.query_one(target))  # at once: the next key typed goes there

    def on_descendant_focus(self, event: events.DescendantFocus) -> None:
        if event.widget is not self.focused:
            return  # a focus already moved on (keys typed faster than the screen redraws)
        if isinstance(event.widget, (StreamTable, UnitTable)) and event.widget.current_name:
            self.select("stream" if isinstance(event.widget, StreamTable) else "unit", event.widget.current_name)
        for pane in PANES:
            node = event.widget
            while node is not None:
                if node.id == f"{pane}-pane":
                    if self.active != pane:
                        self.active = pane
                        self._fold()
                    return
                node = node.parent

    def action_next_pane(self) -> None:
        # While a field is edited, tab stays in its box (the key is taken, so
        # the focus does not wander off an open editor).
        if self.query_one(DetailPane).editing:
            return
        self._focus_pane(PANES[(PANES.index(self.active) + 1) % len(PANES)])

    def action_previous_pane(self) -> None:
        if self.query_one(DetailPane).editing:
            return
        self._focus_pane(PANES[(PANES.index(self.active) - 1) % len(PANES)])

    def action_pane(self, pane: str) -> None:
        self._focus_pane(pane)

    def check_action(self, action: str, parameters: tuple) -> bool | None:
        if action in ("move", "edit_field"):
            table = self.focused
            return isinstance(table, FieldList) if action == "edit_field" else isinstance(table, RowTable)
        if action == "remove_item" and isinstance(self.focused, FieldList):
            return False  # there x clears the field (FieldList's key)
        if action in ("pane", "sheet_settings", "add_item", "remove_item", "rename_item"):
            return not (self.is_mounted and self.query_one(DetailPane).editing)
        if action == "cancel_edit":
            return self.is_mounted and self.query_one(DetailPane).editing
        if action == "back":
            return self.is_mounted and not self.query_one(DetailPane).editing and self.active == "detail"
        return True

    def action_move(self, key: str) -> None:
        if isinstance(self.focused, RowTable):
            getattr(self.focused, f"action_{TABLE_MOVES[key]}")()

    def action_edit_field(self) -> None:
        if isinstance(self.focused, FieldList):
            self.focused.action_edit_field()

    def action_cancel_edit(self) -> None:
        detail = self.query_one(DetailPane)
        detail.editor.close(focus_after=detail.field_list)

    def action_back(self) -> None:
        self._focus_pane("units" if self.selection[0] == "unit" else "streams")

    async def action_open(self) -> None:
        focused = self.focused
        if isinstance(focused, (StreamTable, UnitTable)):
            name = focused.current_name
            if name is not None:
                self.select("stream" if isinstance(focused, StreamTable) else "unit", name)
                self._focus_pane("detail")
        elif isinstance(focused, FieldList):
            focused.action_edit_field()
        elif self.query_one(DetailPane).editing:
            box = self.query_one("#editor-input")
            await caught_up(box)  # the keys typed before enter are in the box
            self._submit_edit()

    def _submit_edit(self) -> None:
        """Make the edit typed in the editor, at once (keys typed after enter
        go to the field list again, or stay in the box with the refusal)."""
        detail = self.query_one(DetailPane)
        editor = detail.editor
        error = self.app.edit_field(editor.key_path, editor.kind, editor.value)
        if error:
            editor.show_error(error)
            return
        editor.close(focus_after=detail.field_list)

    def action_sheet_settings(self) -> None:
        self.selection = ("sheet", None)
        self.refresh_detail()
        self._focus_pane("detail")

    # -------------------------------------------------------------- showing

    @property
    def document(self) -> Mapping:
        return self.app.document

    def refresh_banner(self) -> None:
        """The top line only: file, unsaved mark, equation of state, units."""
        app = self.app
        if app.session is None:
            self.query_one(Banner).show("no sheet", "", False, "", app.system)
            return
        self.query_one(Banner).show(app.session.name, str(self.document.get("title", "")), app.session.dirty,
                                    str(self.document.get("model", "peng-robinson")), app.system)

    def refresh_all(self) -> None:
        """Redraw everything from the app's session and latest result (each
        widget redraws only what changed)."""
        app = self.app
        self.refresh_banner()
        if app.session is None:
            return
        self.query_one(StreamTable).show(app.result, self.document, app.system)
        self.query_one(UnitTable).show(app.result, self.document, app.system)
        self._keep_selection()
        self.refresh_detail()
        self._titles()

    def _keep_selection(self) -> None:
        kind, name = self.selection
        result = self.app.result
        streams = set(result.streams) if result is not None else set()
        units = set(self.document.get("units", {}) or {})
        streams |= set(self.document.get("streams", {}) or {})
        if kind == "stream" and name not in streams or kind == "unit" and name not in units:
            self.selection = ("sheet", None)
        if self.selection == ("sheet", None) and self.active != "detail":
            table = self.query_one(StreamTable) if self.active == "streams" else self.query_one(UnitTable)
            current = table.current_name
            if current is not None:
                self.selection = ("stream" if self.active == "streams" else "unit", current)
        if self.selection[0] == "stream":
            self.query_one(StreamTable).select_name(self.selection[1])
        elif self.selection[0] == "unit":
            self.query_one(UnitTable).select_name(self.selection[1])

    def refresh_detail(self) -> None:
        app = self.app
        if app.session is None:
            return
        detail = self.query_one(DetailPane)
        folded = self.narrow and self.active != "detail" and not detail.editing
        detail.show(self.selection, app.result, self.document, app.system, app.solve_running, folded=folded)

    def select(self, kind: str, name: str | None) -> None:
        if (kind, name) != self.selection:
            self.selection = (kind, name)
            self.refresh_detail()

    def on_stream_table_picked(self, message: StreamTable.Picked) -> None:
        if self.query_one(StreamTable).has_focus:  # not when a refill moves a cursor
            self.select("stream", message.name)

    def on_unit_table_picked(self, message: UnitTable.Picked) -> None:
        if self.query_one(UnitTable).has_focus:
            self.select("unit", message.name)

    def on_stream_table_opened(self, message: StreamTable.Opened) -> None:
        self.select("stream", message.name)
        self._focus_pane("detail")

    def on_unit_table_opened(self, message: UnitTable.Opened) -> None:
        self.select("unit", message.name)
        self._focus_pane("detail")

    # -------------------------------------------------------------- editing fields

    def on_field_list_edit_wanted(self, message: FieldList.EditWanted) -> None:
        field = message.field
        detail = self.query_one(DetailPane)
        if not field.editable or not field.key_path:
            what = "computed by statepath" if field.kind == "computed" else "not something to type"
            if field.key_path and field.key_path[-1] == "type":
                self.app.say("a unit's type cannot be changed in place: add a new unit and remove this one")
            elif field.key_path and field.key_path[0] == "streams":
                self._edit_through_unit(field)
            else:
                self.app.say(f"{field.label} is {what}")
            return
        if field.kind == "model":
            self.app.action_choose_model()
            return
        from tui.widgets.fields import key_path_text

        detail.editor.start(field.key_path, key_path_text(field.key_path), field.kind, field.entered or "")

    def _edit_through_unit(self, field) -> None:
        """A stream made by a unit is set through that unit: its outlet
        temperature or pressure, typed here, goes to the unit's key."""
        from tui.widgets.fields import key_path_text, setting_unit_key, unit_key_kind

        stream, key = field.key_path[1], field.key_path[-1]
        unit_key = setting_unit_key(self.app.document, stream, key)
        if unit_key is None:
            self.app.say(f"{stream}'s {key} follows from the unit that makes it: "
                         f"change that unit's specification")
            return
        written = self.app.document["units"][unit_key[1]].get(unit_key[2])
        entered = "" if written is None else str(written)
        self.app.say(f"{stream} is made by {unit_key[1]}: this sets {key_path_text(unit_key)}")
        kind = unit_key_kind(unit_key[2])
        self.query_one(DetailPane).editor.start(unit_key, key_path_text(unit_key), kind, entered)

    def on_field_editor_submitted(self, message: FieldEditor.Submitted) -> None:
        if self.query_one(DetailPane).editing:
            self._submit_edit()

    def on_field_list_clear_wanted(self, message: FieldList.ClearWanted) -> None:
        field = message.field
        if field.entered is None or not field.editable or not field.key_path:
            self.app.say(f"{field.label}: nothing written in the file to clear")
            return
        self.app.clear_field(field.key_path)

    # -------------------------------------------------------------- streams and units

    def _target(self) -> tuple[str, str | None]:
        """What add/remove/rename act on: the selection, or the active table's row."""
        if self.active == "streams":
            name = self.query_one(StreamTable).current_name
            return ("stream", name) if name else self.selection
        if self.active == "units":
            name = self.query_one(UnitTable).current_name
            return ("unit", name) if name else self.selection
        return self.selection

    async def action_add_item(self) -> None:
        kind = {"streams": "stream", "units": "unit"}.get(self.active)
        if kind is None:
            self.app.ask_add(self._target())
        elif kind == "stream":
            self.app.add_stream(self._target())
        else:
            self.app.add_unit(self._target())
        await caught_up(self.app.screen)  # the dialog has the focus before the next key

    async def action_remove_item(self) -> None:
        kind, name = self._target()
        if kind == "sheet" or name is None:
            self.app.say("select a stream or a unit to remove")
            return
        self.app.remove_item(kind, name)
        await caught_up(self.app.screen)

    async def action_rename_item(self) -> None:
        kind, name = self._target()
        if kind == "sheet" or name is None:
            self.app.say("select a stream or a unit to rename")
            return
        self.app.rename_item(kind, name)
        await caught_up(self.app.screen)

    def follow_rename(self, kind: str, old: str, new: str) -> None:
        if self.selection == (kind, old):
            self.selection = (kind, new)


def unit_type_choices() -> list[tuple[str, str]]:
    return [(name, f"{name}: {unit_type.description}") for name, unit_type in UNIT_TYPES.items()]
