"""The help screen: keys, the entered-value marking and the flag symbols."""

from __future__ import annotations

from rich.table import Table
from rich.text import Text
from rich.console import Group
from textual.app import ComposeResult
from textual.binding import Binding
from textual.containers import VerticalScroll
from textual.screen import ModalScreen
from textual.widgets import Footer, Static

from tui.render import level_label

KEYS = (
    ("Moving", (
        ("tab / shift+tab", "next / previous pane (on a small terminal only the current pane is open)"),
        ("1  2  3", "streams, units, detail pane"),
        ("\u2191 \u2193", "move in a table"),
        ("enter", "open the row in the detail pane; in the detail pane, edit the field"),
        ("escape", "back to the list, or cancel an edit"),
        ("g", "sheet settings (title, dead state, site limits) in the detail pane"),
    )),
    ("Editing", (
        ("e  or  enter", "edit the field under the cursor: type the value with its unit (45 barg, 120 degF); "
                         "the text written before starts selected, so typing replaces it (\u2190 \u2192 to change it "
                         "instead); enter accepts, escape cancels. On a stream made by a unit, the temperature "
                         "or pressure typed goes to that unit's outlet key (a heater's outlet_temperature)"),
        ("x  or  delete", "in the detail pane: clear that field; elsewhere: remove the stream or unit"),
        ("a", "add a stream or a unit"),
        ("n", "rename the selected stream or unit (every reference follows)"),
        ("m", "choose the equation of state"),
        ("u", "switch display units: SI, metric engineering, US customary"),
        ("z  or  ctrl+z", "undo"),
        ("y  or  ctrl+y", "redo"),
    )),
    ("File", (
        ("ctrl+s  or  w", "save (comments and untouched lines are kept; the write is atomic)"),
        ("r", "reload from disk (the text being edited stays one undo away)"),
        ("d", "show what differs between the file on disk and the sheet being edited"),
        ("o", "open another sheet or start a new one"),
        ("ctrl+q", "quit (asks first when there are unsaved edits)"),
    )),
    ("Views", (
        ("c", "chart: pressure-enthalpy; press t there for temperature-entropy. Streams are tags, unit "
              "paths solid lines; dotted: a pure fluid's saturation dome, or a mixture's bubble and dew "
              "lines of its feed composition (drawn a moment after the chart opens)"),
        ("ctrl+p", "command palette: every action by name"),
        ("?  or  f1", "this help"),
    )),
)


def help_text() -> Group:
    parts: list = []
    for heading, rows in KEYS:
        table = Table(title=heading, title_justify="left", title_style="bold underline", box=None,
                      show_header=False, pad_edge=False)
        table.add_column("key", style="bold", no_wrap=True)
        table.add_column("does")
        for key, does in rows:
            table.add_row(key, does)
        parts.extend([table, Text("")])
    parts.append(Text("Entered and computed values", style="bold underline"))
    parts.append(Text.assemble(
        "A value in square brackets, such as ", ("[35.00]", "bold"), " or ", ("[68 barg]", "bold"),
        ", is one you entered: it is written in the file. A value without brackets was computed "
        "by statepath. In the detail pane the 'entered' column shows the file's own text and the "
        "'computed' column the solved value in the display units. A dash in brackets-place means "
        "the file does not set that field; 'or' marks another way to give the same specification "
        "(setting it replaces the one written)."))
    parts.append(Text(""))
    parts.append(Text("The stream table", style="bold underline"))
    parts.append(Text(
        "The phase column gives the phase, and the vapor fraction where it says something: "
        "'two-phase 0.437' (on a narrow terminal '2\u03c6 0.437') is two-phase with vapor fraction 0.437; "
        "'liquid-liquid' is two liquids and no vapor (water beside hydrocarbons); 'three-phase 0.166' "
        "('3\u03c6') is a vapor beside two liquids, with vapor fraction 0.166; "
        "'supercrit.' is supercritical; 'liquid [0.00]' is a vapor fraction the sheet fixes. "
        "A name too long for the terminal's width ends in \u2026 (the detail pane has it whole). "
        "The row under the cursor starts with \u25b8."))
    parts.append(Text(""))
    parts.append(Text("Flags", style="bold underline"))
    flags = Table(box=None, show_header=False, pad_edge=False)
    flags.add_column("flag", no_wrap=True)
    flags.add_column("means")
    for level, means in (
        ("violation", "the specification breaks the second law or the unit's nature: the result is not physical"),
        ("danger", "a hazard to look at now (e.g. metal colder than it is rated for)"),
        ("warning", "a result near a limit or outside a model's good range"),
        ("notice", "worth knowing; nothing wrong"),
    ):
        flags.add_row(level_label(level), means)
    flags.add_row("\u2714 ok", "no flags")
    parts.append(flags)
    parts.append(Text(""))
    parts.append(Text(
        "Cautions are prompts to look closer; local codes and licensed engineering practice decide "
        "what is acceptable.", style="italic"))
    parts.append(Text(""))
    parts.append(Text("Status line: \u2714 solved, \u2026 stale (a solve is running after an edit), "
                      "\u2716 failed with the reason. Banner: \u270e unsaved when the sheet differs "
                      "from the file; unsaved edits are also kept in a recovery file beside the sheet "
                      "and offered the next time it is opened."))
    return Group(*parts)


class HelpScreen(ModalScreen[None]):
    """Keys and markings; escape or ? closes it."""

    BINDINGS = [Binding("escape,question_mark,f1,q", "close", "Close help")]

    def compose(self) -> ComposeResult:
        with VerticalScroll(id="help-body"):
            yield Static(Text("statepath help", style="bold"))
            yield Static(help_text())
        yield Footer()

    def on_mount(self) -> None:
        self.set_focus(self.query_one("#help-body"))

    def action_close(self) -> None:
        self.dismiss(None)
