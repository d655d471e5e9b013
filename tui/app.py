"""statepath's terminal app: a live, editable flowsheet.

``run_app(path)`` is what ``statepath open FILE``, ``statepath FILE`` and a
bare ``statepath`` call. The App here holds the editing session
(``tui.session``), the display unit system and the latest solved result;
solving runs in a worker thread, and a newer edit makes an older solve's
result stale, to be dropped when it arrives.
"""

from __future__ import annotations

import os
from functools import partial
from importlib import resources
from pathlib import Path
from typing import Iterable, Mapping

from textual import work
from textual.app import App, SystemCommand
from textual.binding import Binding
from textual.screen import Screen
from textual.worker import get_current_worker

from thermo.errors import FileChangedOnDisk, QuantityError, SaveError, SheetEditError, SheetError, format_key_path
from thermo.quantities import UNIT_SYSTEMS
from thermo.spec import LIST_ROLES, MODELS, SPEC_KEY_KINDS, UNIT_TYPES
from tui.session import Recovery, RecentFiles, Session, config_dir, find_recovery
from tui.widgets.field_editor import caught_up
from tui.widgets.status_line import FAILED, SOLVED, STALE, StatusLine

MODEL_LABELS = {
    "peng-robinson": "Peng-Robinson (cubic; gas and liquid)",
    "soave-redlich-kwong": "Soave-Redlich-Kwong (cubic; gas and liquid)",
    "virial": "truncated virial (gas only, moderate pressure)",
    "ideal-gas": "ideal gas (no departures; for comparison)",
}
SYSTEM_LABELS = {"SI": "SI", "metric": "metric engineering", "US": "US customary"}

# (action, title in the command palette, what it does, target: "app" or "main")
COMMANDS = (
    ("save", "Save", "Write the sheet to its file (atomic; keeps comments and untouched lines)", "app"),
    ("undo", "Undo", "Take back the last edit", "app"),
    ("redo", "Redo", "Make the last undone edit again", "app"),
    ("choose_model", "Equation of state", "Choose Peng-Robinson, Soave-Redlich-Kwong, virial or ideal gas", "app"),
    ("cycle_units", "Display units", "Switch between SI, metric engineering and US customary", "app"),
    ("add_item", "Add stream or unit", "Add a feed stream or a unit", "main"),
    ("remove_item", "Remove", "Remove the selected stream or unit", "main"),
    ("rename_item", "Rename", "Rename the selected stream or unit; every reference follows", "main"),
    ("sheet_settings", "Sheet settings", "Title, dead state, atmospheric pressure, site limits", "main"),
    ("reload", "Reload from disk", "Read the file again; the sheet being edited stays one undo away", "app"),
    ("diff", "Diff with disk", "Show what differs between the file on disk and the sheet", "app"),
    ("chart", "Chart", "Pressure-enthalpy / temperature-entropy chart of the states", "app"),
    ("open_other", "Open or new", "Open another sheet or start a new one from the template", "app"),
    ("help", "Help", "Keys, the entered-value marking and the flag symbols", "app"),
    ("pane('streams')", "Streams pane", "Go to the stream table", "main"),
    ("pane('units')", "Units pane", "Go to the unit list", "main"),
    ("pane('detail')", "Detail pane", "Go to the detail pane", "main"),
)
SHEET_ACTIONS = {"save", "undo", "redo", "choose_model", "cycle_units", "reload", "diff", "chart", "open_other"}
REDRAW_WAIT_S = 0.15  # after an edit, how long the screen waits for the solve before redrawing


def describe_sheet_error(error: SheetError) -> str:
    """The problems of a refused edit in a few words each: key, what, fix."""
    parts = []
    for problem in error.problems[:3]:
        text = (format_key_path(problem.key_path) + ": " if problem.key_path else "") + problem.message.rstrip(".")
        if problem.fix:
            text += f" (fix: {problem.fix.rstrip('.')})"
        parts.append(text)
    if len(error.problems) > 3:
        parts.append(f"and {len(error.problems) - 3} more")
    return "; ".join(parts)


def _template_text() -> str:
    return resources.files("tui").joinpath("templates/new-sheet.toml").read_text("utf-8")


def _free_name(base: str, taken: Iterable[str]) -> str:
    taken = set(taken)
    if base not in taken:
        return base
    number = 2
    while f"{base}-{number}" in taken:
        number += 1
    return f"{base}-{number}"


class StatepathApp(App[int]):
    """The app. ``path``: the sheet to open (None: the start screen)."""

    CSS_PATH = "app.tcss"
    TITLE = "statepath"
    # Letter keys are taken first (priority, through ``typed``) so that what
    # they open has the focus before the next key is read; they stand aside
    # when a text box has the focus (check_action), so they can be typed.
    BINDINGS = [
        Binding("question_mark", "typed('help')", "Help", key_display="?", priority=True),
        Binding("f1", "help", "Help"),
        Binding("ctrl+s", "save", "Save", key_display="^s"),
        Binding("w", "typed('save')", "Save", show=False, priority=True),
        Binding("z", "typed('undo')", "Undo", priority=True),
        Binding("ctrl+z", "undo", "Undo", show=False),
        Binding("y", "typed('redo')", "Redo", priority=True),
        Binding("ctrl+y", "redo", "Redo", show=False),
        Binding("m", "typed('choose_model')", "EOS", priority=True),
        Binding("u", "typed('cycle_units')", "Units", priority=True),
        Binding("c", "typed('chart')", "Chart", priority=True),
        Binding("ctrl+q", "quit", "Quit", priority=True),
        Binding("r", "typed('reload')", "Reload", show=False, priority=True),
        Binding("d", "typed('diff')", "Diff", show=False, priority=True),
        Binding("o", "typed('open_other')", "Open", show=False, priority=True),
    ]

    def __init__(self, path: str | os.PathLike | None = None, *, system: str = "metric",
                 environ: Mapping | None = None) -> None:
        super().__init__()
        self.start_path = None if path is None else str(path)
        self.system = system if system in UNIT_SYSTEMS else "metric"
        self.environ = dict(os.environ if environ is None else environ)
        self.recent = RecentFiles(config_dir(self.environ))
        self.session: Session | None = None
        self.result = None
        self.solve_running = False
        self.solve_generation = 0
        self.solves_finished = 0
        self._document_cache: tuple[str, dict] | None = None
        self._dome_cache: dict = {}
        self._dome_running = False
        self.main_screen = None
        self._redraw_timer = None
        self._history_shown = (False, False)

    # -------------------------------------------------------------- start

    async def on_mount(self) -> None:
        from tui.screens.main import MainScreen

        self.main_screen = MainScreen()
        await self.push_screen(self.main_screen)
        if self.start_path is not None:
            self.open_path(self.start_path)
        else:
            self.show_start()

    def show_start(self, message: str = "") -> None:
        from tui.screens.start import StartScreen

        if isinstance(self.screen, StartScreen):
            self.screen.say(message)
            return
        self.push_screen(StartScreen(self.recent.existing(), message))

    def _leave_start(self) -> None:
        while type(self.screen).__name__ in ("StartScreen", "ProblemsScreen"):
            self.pop_screen()

    def open_path(self, path: str) -> None:
        """Open the sheet at ``path``; its problems, if any, on a screen of their own."""
        try:
            session = Session.open(path, environ=self.environ)
        except SheetError as error:
            self._show_problems(path, [problem.describe(path) for problem in error.problems])
            return
        except OSError as error:
            self.show_start(f"cannot open {path}: {error.strerror or error}")
            return
        self._leave_start()
        session.recovery_writer = partial(self._write_recovery, session)
        self.session = session
        self.result = None
        self._document_cache = None
        self.recent.add(path)
        self.main_screen.selection = ("sheet", None)
        self.main_screen.refresh_all()
        self.say(f"opened {session.name}")
        self.start_solve()
        recovery = find_recovery(path, session.text, self.environ)
        if recovery is not None:
            self._offer_recovery(recovery)

    def _show_problems(self, path: str, problems: list[str]) -> None:
        from tui.screens.problems import ProblemsScreen

        def answered(answer: str | None) -> None:
            if answer == "retry":
                self.open_path(path)
            else:
                self.show_start()

        self._leave_start()
        self.push_screen(ProblemsScreen(path, problems), answered)

    def _offer_recovery(self, recovery: Recovery) -> None:
        from tui.screens.dialogs import ChoiceScreen, DiffScreen

        changed = (" The file has changed since they were made." if recovery.disk_changed_since else "")
        question = f"Unsaved edits to {recovery.sheet_path.name} were kept from an earlier session.{changed}"
        answers = [("restore", "Restore the edits"), ("discard", "Throw them away"), ("diff", "View diff")]

        def answered(answer: str | None) -> None:
            if answer == "restore":
                try:
                    self.session.restore(recovery)
                except SheetError as error:
                    self.say(f"the kept edits do not make a valid sheet ({describe_sheet_error(error)}); "
                             f"they stay in {recovery.path}")
                    return
                self._changed("restored unsaved edits")
            elif answer == "discard":
                self.session.discard_recovery()
                self.say("threw away the kept edits")
            elif answer == "diff":
                self.push_screen(DiffScreen("kept edits compared with the file", recovery.diff_against(self.session.text),
                                            answers=answers[:2]), answered)
            else:
                self.say(f"kept edits left in {recovery.path}; they are offered again next time")

        self.push_screen(ChoiceScreen(question, answers), answered)

    def on_start_screen_new_wanted(self, message) -> None:
        path = Path(message.path)
        if path.exists():
            self.show_start(f"{path} already exists: open it with the second box, or choose another name")
            return
        try:
            from thermo.sheetfile import save_atomic

            save_atomic(str(path), _template_text())
        except (OSError, SaveError) as error:
            self.show_start(f"cannot create {path}: {error}")
            return
        self.open_path(str(path))

    def on_start_screen_open_wanted(self, message) -> None:
        self.open_path(message.path)

    @work(thread=True, group="recovery", exit_on_error=False)
    def _write_recovery(self, session: Session) -> None:
        try:
            session.write_recovery()
        except OSError as error:
            self.call_from_thread(self.say, f"\u25b3 unsaved edits could not be kept in a recovery file: {error}")

    # -------------------------------------------------------------- state for widgets

    @property
    def document(self) -> dict:
        """The current text as plain Python values (for showing)."""
        if self.session is None:
            return {}
        text = self.session.text
        if self._document_cache is None or self._document_cache[0] != text:
            self._document_cache = (text, self.session.loaded.document.unwrap())
        return self._document_cache[1]

    @property
    def sheet_name(self) -> str:
        return self.session.name if self.session else "no sheet"

    def say(self, message: str) -> None:
        """Show ``message`` in the status line (no timed pop-ups: they would
        vanish before an engineer on a slow link reads them)."""
        if type(self.screen).__name__ == "StartScreen":
            self.screen.say(message)
        if self.main_screen is not None and self.main_screen.is_mounted:
            self.main_screen.query_one(StatusLine).say(message)

    def _status(self, state: str, reason: str = "") -> None:
        if self.main_screen is not None and self.main_screen.is_mounted:
            self.main_screen.query_one(StatusLine).set_state(state, reason)

    # -------------------------------------------------------------- solving

    def start_solve(self) -> None:
        """Solve the current text in a worker thread; any older solve still
        running is cancelled and its result will be dropped."""
        if self.session is None:
            return
        self.solve_generation += 1
        self.solve_running = True
        self._status(STALE, "solving")
        self._solve(self.solve_generation, self.session.loaded.sheet)

    @work(thread=True, exclusive=True, group="solve", exit_on_error=False)
    def _solve(self, generation: int, sheet) -> None:
        from thermo.flowsheet import solve_sheet

        worker = get_current_worker()
        try:
            result, failure = solve_sheet(sheet), None
        except Exception as error:  # noqa: BLE001 - shown in the status line, never a traceback
            result, failure = None, f"{type(error).__name__}: {error}"
        if worker.is_cancelled:
            return
        self.call_from_thread(self._solved, generation, result, failure)

    def _solved(self, generation: int, result, failure: str | None) -> None:
        if generation != self.solve_generation:
            return  # an edit came after the one this solve was for
        self.solve_running = False
        if self._redraw_timer is not None:
            self._redraw_timer.stop()
            self._redraw_timer = None
        self.solves_finished += 1
        if failure is not None:
            self._status(FAILED, failure)
        else:
            self.result = result
            if result.status == "error":
                first = result.errors[0] if result.errors else None
                reason = (f"{first.message}" + (f" ({first.where})" if first and first.where else "")) if first else ""
                self._status(FAILED, reason + (f"; {len(result.errors) - 1} more: see g" if len(result.errors) > 1 else ""))
            else:
                from tui.render import count_flags

                violations, cautions = count_flags(result)
                from tui.render import plural

                words = [plural(len(result.streams), "stream"), plural(len(result.units), "unit")]
                if violations:
                    words.append(f"\u2716 {violations} violation{'s' if violations != 1 else ''}")
                if cautions:
                    words.append(f"{cautions} caution{'s' if cautions != 1 else ''}")
                self._status(SOLVED, ", ".join(words))
        if self.main_screen is not None and self.main_screen.is_mounted:
            self.main_screen.refresh_all()
        self._redraw_chart()

    # -------------------------------------------------------------- editing

    def _changed(self, message: str) -> None:
        """After an accepted edit: say so, mark the sheet unsaved and solve.
        The tables and the detail pane are redrawn once, when the solve comes
        back; a solve that takes longer than REDRAW_WAIT_S gets them redrawn
        with the new entries (and the last computed values) in the meantime."""
        history = (self.session.can_undo, self.session.can_redo)
        if history != self._history_shown:  # undo / redo come and go in the footer
            self._history_shown = history
            self.refresh_bindings()
        self.say(message)
        if self.main_screen is not None:
            self.main_screen.refresh_banner()
        self.start_solve()
        if self._redraw_timer is not None:
            self._redraw_timer.stop()
        self._redraw_timer = self.set_timer(REDRAW_WAIT_S, self._redraw_while_solving)

    def _redraw_while_solving(self) -> None:
        self._redraw_timer = None
        if self.solve_running and self.main_screen is not None:
            self.main_screen.refresh_all()

    def try_edit(self, label: str, edit) -> str | None:
        """Make ``edit`` through the session; the message of a refusal, else None."""
        if self.session is None:
            return "no sheet is open"
        try:
            changed = self.session.apply(label, edit)
        except SheetError as error:
            return describe_sheet_error(error)
        except (SheetEditError, QuantityError, ValueError, KeyError) as error:
            return str(error)
        if not changed:
            self.say(f"{label}: no change")
            return None
        self._changed(label)
        return None

    def edit_field(self, key_path: tuple, kind: str, text: str) -> str | None:
        """Set ``key_path`` from the typed ``text``; a refusal's message or None."""
        from thermo import sheetfile
        from tui.widgets.fields import group_rivals, key_path_text, parse_entry

        try:
            value = parse_entry(kind, text, self.document)
        except (QuantityError, ValueError) as error:
            return str(error)
        rivals = group_rivals(self.document, key_path)

        def edit(document):
            for rival in rivals:
                document = sheetfile.remove_value(document, rival)
            return sheetfile.set_value(document, key_path, value)

        label = f"set {key_path_text(key_path)} = {text.strip()}"
        if rivals:
            label += f" (instead of {', '.join(r[-1] for r in rivals)})"
        return self.try_edit(label, edit)

    def clear_field(self, key_path: tuple) -> None:
        from thermo import sheetfile
        from tui.widgets.fields import key_path_text

        error = self.try_edit(f"cleared {key_path_text(key_path)}",
                              lambda document: sheetfile.remove_value(document, key_path))
        if error:
            self.say(f"\u2716 refused: {error}")

    def ask_add(self, target) -> None:
        from tui.screens.dialogs import ChoiceScreen

        def answered(answer: str | None) -> None:
            if answer == "stream":
                self.add_stream(target)
            elif answer == "unit":
                self.add_unit(target)

        self.push_screen(ChoiceScreen("Add what?", [("stream", "Stream (a feed)"), ("unit", "Unit"),
                                                    ("cancel", "Cancel")]), answered)

    def add_stream(self, target) -> None:
        """Ask for a new feed, pre-filled from the selected (or first) feed."""
        from thermo import sheetfile
        from tui.screens.dialogs import FormScreen
        from tui.widgets.fields import parse_entry, shown

        if self.session is None:
            return
        feeds = self.document.get("streams") or {}
        kind, name = target
        model = feeds.get(name) if kind == "stream" and name in feeds else next(iter(feeds.values()), {})
        taken = set(feeds) | set(self.result.streams if self.result else ())
        fields = [
            ("name", "name", _free_name("new-feed", taken)),
            ("temperature", "temperature", shown(model.get("temperature", "25 degC"))),
            ("pressure", "pressure", shown(model.get("pressure", "10 barg"))),
            ("flow", "flow", shown(model.get("flow", "100 kmol/h"))),
            ("composition", "composition", shown(model.get("composition", {"methane": 1.0}))),
        ]

        def check(values: dict) -> str | None:
            table: dict = {}
            try:
                for key in ("temperature", "pressure", "flow", "composition"):
                    if values[key]:
                        table[key] = parse_entry(key, values[key], self.document)
            except (QuantityError, ValueError) as error:
                return str(error)
            new = values["name"]
            error = self.try_edit(f"added stream {new}", lambda document: sheetfile.add_stream(document, new, table))
            if error is None:
                self.main_screen.selection = ("stream", new)
                self.main_screen.refresh_all()
            return error

        self.push_screen(FormScreen("Add a feed stream", fields, check,
                                    hint="values with units; enter moves down, enter on the last field adds it"))

    def add_unit(self, target) -> None:
        """Ask for the type, then the connections and specification of a new unit."""
        from tui.screens.dialogs import PickScreen
        from tui.screens.main import unit_type_choices

        if self.session is None:
            return

        def picked(type_name: str | None) -> None:
            if type_name:
                self._add_unit_form(type_name, target)

        self.push_screen(PickScreen("Type of the new unit", unit_type_choices()), picked)

    def _add_unit_form(self, type_name: str, target) -> None:
        from thermo import sheetfile
        from tui.screens.dialogs import FormScreen
        from tui.widgets.fields import parse_entry

        unit_type = UNIT_TYPES[type_name]
        units = self.document.get("units") or {}
        streams = list(self.result.streams) if self.result else list(self.document.get("streams") or {})
        consumed = {n for table in units.values() if isinstance(table, dict)
                    for role in ("inlet", "inlets", "hot_inlet", "cold_inlet")
                    for n in ([table.get(role)] if isinstance(table.get(role), str) else table.get(role) or [])}
        kind, name = target
        free = [s for s in streams if s not in consumed]
        inlet = name if kind == "stream" and name in free else (free[-1] if free else "")
        unit_name = _free_name(type_name, units)
        defaults = {"inlet": inlet, "hot_inlet": inlet, "inlets": inlet, "cold_inlet": "",
                    "outlet": f"{unit_name}-out", "hot_outlet": f"{unit_name}-hot-out",
                    "cold_outlet": f"{unit_name}-cold-out", "outlets": f"{unit_name}-a, {unit_name}-b"}
        fields = [("name", "name", unit_name)]
        fields += [(role, role, defaults.get(role, "")) for role in unit_type.connections]
        examples = {"valve": "outlet_pressure = 10 barg", "heater": "outlet_temperature = 40 degC",
                    "cooler": "outlet_temperature = 30 degC", "compressor": "outlet_pressure = 60 barg",
                    "expander": "outlet_pressure = 10 barg", "pump": "outlet_pressure = 20 barg",
                    "mixer": "", "splitter": "fractions = 0.5, 0.5",
                    "exchanger": "cold_outlet_temperature = 40 degC"}
        fields.append(("spec", "specification", examples.get(type_name, "")))
        keys = ", ".join(unit_type.spec_keys) or "none needed"

        def check(values: dict) -> str | None:
            table: dict = {"type": type_name}
            for role in unit_type.connections:
                text = values[role]
                if not text:
                    return f"give the {role} stream"
                table[role] = parse_entry("names" if role in LIST_ROLES else "name", text, self.document)
            for part in [p for p in values["spec"].split(";") if p.strip()]:
                key, sep, text = part.partition("=")
                key = key.strip()
                if not sep or key not in unit_type.spec_keys:
                    return f"write the specification as key = value; keys of a {type_name}: {keys}"
                try:
                    table[key] = parse_entry(SPEC_KEY_KINDS.get(key, "text"), text, self.document)
                except (QuantityError, ValueError) as error:
                    return str(error)
            new = values["name"]
            error = self.try_edit(f"added unit {new}", lambda document: sheetfile.add_unit(document, new, table))
            if error is None:
                self.main_screen.selection = ("unit", new)
                self.main_screen.refresh_all()
            return error

        self.push_screen(FormScreen(f"Add a {type_name}", fields, check,
                                    hint=f"specification keys: {keys} (several: separate with ;)"))

    def remove_item(self, kind: str, name: str) -> None:
        from thermo import sheetfile
        from tui.screens.dialogs import ChoiceScreen

        if kind == "stream" and name not in (self.document.get("streams") or {}):
            producer = self.result.streams[name].source_unit if self.result and name in self.result.streams else None
            self.say(f"{name} is made by unit {producer or '?'}: remove or change that unit instead")
            return

        def answered(answer: str | None) -> None:
            if answer != "remove":
                return
            edit = (partial(sheetfile.remove_stream, name=name) if kind == "stream"
                    else partial(sheetfile.remove_unit, name=name))
            error = self.try_edit(f"removed {kind} {name}", lambda document: edit(document))
            if error:
                self.say(f"\u2716 refused: {error}")

        self.push_screen(ChoiceScreen(f"Remove {kind} {name}? (undo brings it back)",
                                      [("remove", "Remove"), ("cancel", "Cancel")]), answered)

    def rename_item(self, kind: str, name: str) -> None:
        from thermo import sheetfile
        from tui.screens.dialogs import PromptScreen

        rename = sheetfile.rename_stream if kind == "stream" else sheetfile.rename_unit

        def check(new: str) -> str | None:
            if new == name:
                return None
            error = self.try_edit(f"renamed {kind} {name} to {new}", lambda document: rename(document, name, new))
            if error is None:
                self.main_screen.follow_rename(kind, name, new)
                self.main_screen.refresh_all()
            return error

        self.push_screen(PromptScreen(f"New name for {kind} {name}", name, check,
                                      hint="lower-case words joined by hyphens; every reference is renamed too"))

    # -------------------------------------------------------------- actions

    async def action_typed(self, action: str) -> None:
        """A letter key's action, then a wait until the screen it may have
        opened is up and has its focus, so that the keys typed next go there."""
        await self.run_action(action)
        await caught_up(self.screen)

    def check_action(self, action: str, parameters: tuple) -> bool | None:
        if action == "typed":
            from textual.widgets import Input

            if isinstance(self.focused, Input):
                return False  # the letter is typed into the box
            action, parameters = parameters[0], ()
        # Screens say which of the sheet's actions they offer (``SHEET_ACTIONS``
        # of MainScreen: all; of ChartScreen: the units), so that asking does
        # not import them.
        offered = getattr(self.screen, "SHEET_ACTIONS", None)
        if action in SHEET_ACTIONS:
            if self.session is None or offered is None:
                return False
            if action not in offered:
                return False
            # Hidden from the footer (and idle) when there is nothing to do.
            if action == "undo" and not self.session.can_undo:
                return False
            if action == "redo" and not self.session.can_redo:
                return False
        if action == "help" and offered is None:
            return type(self.screen).__name__ == "StartScreen"
        return True

    def action_help(self) -> None:
        from tui.screens.help import HelpScreen

        self.push_screen(HelpScreen())

    def action_save(self, then=None) -> None:
        if self.session is None:
            return
        try:
            self.session.save()
        except FileChangedOnDisk:
            self._resolve_conflict(then)
            return
        except (SaveError, OSError) as error:
            self.say(f"\u2716 not saved: {error}")
            return
        self.say(f"saved {self.session.name}")
        self.main_screen.refresh_all()
        if then is not None:
            then()

    def _resolve_conflict(self, then=None) -> None:
        from tui.screens.dialogs import ChoiceScreen, DiffScreen

        question = (f"{self.session.name} changed on disk since it was read (another editor, git?). "
                    "Nothing was written.")
        detail = ("Diff: see what differs. Overwrite: write the sheet over the changed file. "
                  "Reload: read the file again (the edits stay one undo away).")
        answers = [("diff", "Diff"), ("overwrite", "Overwrite"), ("reload", "Reload"), ("cancel", "Cancel")]

        def answered(answer: str | None) -> None:
            if answer == "diff":
                self.push_screen(DiffScreen("file on disk (-) against the sheet in statepath (+)",
                                            self.session.diff_with_disk(), answers=answers[1:3]), answered)
            elif answer == "overwrite":
                try:
                    self.session.save(overwrite=True)
                except (SaveError, OSError) as error:
                    self.say(f"\u2716 not saved: {error}")
                    return
                self.say(f"saved {self.session.name} over the changed file")
                self.main_screen.refresh_all()
                if then is not None:
                    then()
            elif answer == "reload":
                self._reload()
            else:
                self.say("not saved: the file on disk changed; save again to choose")

        self.push_screen(ChoiceScreen(question, answers, detail=detail), answered)

    def action_undo(self) -> None:
        if self.session is None:
            return
        label = self.session.undo()
        if label is None:
            self.say("nothing to undo")
            return
        self._document_cache = None
        self._changed(f"undid: {label}")

    def action_redo(self) -> None:
        if self.session is None:
            return
        label = self.session.redo()
        if label is None:
            self.say("nothing to redo")
            return
        self._changed(f"redid: {label}")

    def action_choose_model(self) -> None:
        from thermo import sheetfile
        from tui.screens.dialogs import PickScreen

        if self.session is None:
            return
        current = self.document.get("model", "peng-robinson")

        def picked(name: str | None) -> None:
            if name and name != current:
                error = self.try_edit(f"equation of state: {name}", lambda document: sheetfile.set_model(document, name))
                if error:
                    self.say(f"\u2716 refused: {error}")

        self.push_screen(PickScreen("Equation of state", [(m, MODEL_LABELS.get(m, m)) for m in MODELS], current),
                         picked)

    def action_cycle_units(self) -> None:
        self.system = UNIT_SYSTEMS[(UNIT_SYSTEMS.index(self.system) + 1) % len(UNIT_SYSTEMS)]
        self.main_screen.refresh_all()
        self._redraw_chart()
        self.say(f"display units: {SYSTEM_LABELS[self.system]}")

    def action_reload(self) -> None:
        from tui.screens.dialogs import ChoiceScreen

        if self.session is None:
            return
        if not self.session.dirty:
            self._reload()
            return

        def answered(answer: str | None) -> None:
            if answer == "reload":
                self._reload()

        self.push_screen(ChoiceScreen(f"Reload {self.session.name} from disk? The sheet being edited stays "
                                      "one undo away.", [("reload", "Reload"), ("cancel", "Cancel")]), answered)

    def _reload(self) -> None:
        try:
            changed = self.session.reload()
        except SheetError as error:
            self.say(f"\u2716 not reloaded: the file on disk is not a valid sheet: {describe_sheet_error(error)}")
            return
        except OSError as error:
            self.say(f"\u2716 not reloaded: {error.strerror or error}")
            return
        if changed:
            self._changed("reloaded from disk (undo goes back to the sheet as it was)")
        else:
            self.say("the file on disk is the same as the sheet")
            self.main_screen.refresh_all()

    def action_diff(self) -> None:
        from tui.screens.dialogs import DiffScreen

        if self.session is None:
            return
        self.push_screen(DiffScreen("file on disk (-) against the sheet in statepath (+)", self.session.diff_with_disk()))

    def action_open_other(self) -> None:
        self._ask_unsaved("open another sheet", lambda: self.show_start())

    def action_chart(self) -> None:
        from tui.screens.chart import ChartScreen

        if self.session is None:
            return
        self.push_screen(ChartScreen())
        self._ensure_dome()

    async def action_quit(self) -> None:
        self._ask_unsaved("quit", lambda: self.exit(0))

    def _ask_unsaved(self, what: str, then) -> None:
        from tui.screens.dialogs import ChoiceScreen

        if self.session is None or not self.session.dirty:
            then()
            return

        def answered(answer: str | None) -> None:
            if answer == "save":
                self.action_save(then=then)
            elif answer == "discard":
                self.session.discard_recovery()
                then()

        self.push_screen(ChoiceScreen(f"{self.session.name} has unsaved edits. Save before you {what}?",
                                      [("save", f"Save and {what}"), ("discard", f"Discard edits and {what}"),
                                       ("cancel", "Cancel")]), answered)

    # -------------------------------------------------------------- chart

    def _connections(self) -> dict:
        sheet = self.session.loaded.sheet if self.session else None
        if sheet is None:
            return {}
        return {name: (unit.inlet_streams, unit.outlet_streams) for name, unit in sheet.units.items()}

    def _dome_key(self):
        from tui.envelope import envelope_feed

        sheet = self.session.loaded.sheet
        key = (sheet.model, repr(sheet.components), repr(sorted(sheet.interaction.items())),
               tuple(self.result.component_names) if self.result else ())
        feed = envelope_feed(self.result, self._connections()) if self.result else None
        if feed is None or int((feed[0] > 1e-12).sum()) < 2:
            return key
        # A mixture's envelope follows its feed and the pressures it is drawn over.
        pressures = [s.state.pressure for s in self.result.streams.values()]
        return key + (feed[1], tuple(float(v) for v in feed[0]), min(pressures), max(pressures))

    def chart_data_for(self, kind: str):
        from tui.chart import chart_data, pure_component_index

        if self.result is None or not self.result.streams:
            return None
        cached = self._dome_cache.get(self._dome_key())
        if cached:
            dome, envelope, note = cached
        else:
            dome = envelope = None
            what = "saturation dome" if pure_component_index(self.result) is not None else "phase envelope"
            note = f"{what}: computing\u2026" if self._dome_running else None
        return chart_data(self.result, kind, self.system, dome=dome, envelope=envelope,
                          connections=self._connections(), notes=[note] if note else [])

    def _ensure_dome(self) -> None:
        if self.result is None or self._dome_key() in self._dome_cache or self._dome_running:
            return
        self._dome_running = True
        self._compute_dome(self._dome_key(), self.session.loaded.sheet, self.result, self._connections())

    @work(thread=True, exclusive=True, group="dome", exit_on_error=False)
    def _compute_dome(self, key, sheet, result, connections) -> None:
        """The dome of a pure fluid or the phase envelope of a mixture, off the
        UI thread: the chart's first frame shows the streams without them."""
        from tui.chart import dome_for_result, pure_component_index
        from tui.envelope import envelope_for_result

        def builder():
            from thermo.flowsheet import build_mixture
            from thermo.models import make_model

            return make_model(sheet.model, build_mixture(sheet))

        if pure_component_index(result) is not None:
            try:
                dome, note = dome_for_result(result, builder)
            except Exception as error:  # noqa: BLE001 - the chart shows the note instead of the dome
                dome, note = None, f"saturation dome skipped: {error}"
            outcome = (dome, None, note)
        else:
            try:
                envelope, note = envelope_for_result(result, builder, connections)
            except Exception as error:  # noqa: BLE001 - the chart shows the note instead of the envelope
                envelope, note = None, f"phase envelope skipped: {error}"
            outcome = (None, envelope, note)
        self.call_from_thread(self._dome_done, key, outcome)

    def _dome_done(self, key, outcome) -> None:
        self._dome_running = False
        self._dome_cache[key] = outcome
        self._redraw_chart()

    def _redraw_chart(self) -> None:
        # Looked up by name: no chart open, nothing of the chart imported.
        for screen in self.screen_stack:
            if type(screen).__name__ == "ChartScreen":
                self._ensure_dome()
                screen.redraw()

    # -------------------------------------------------------------- command palette

    def get_system_commands(self, screen: Screen) -> Iterable[SystemCommand]:
        yield from super().get_system_commands(screen)
        if self.session is None:
            return
        for action, title, help_text, target in COMMANDS:
            if target == "main":
                callback = partial(self.run_action, action, self.main_screen)
            else:
                callback = partial(self.run_action, action)
            yield SystemCommand(title, help_text, callback)


def run_app(path: str | None) -> int:
    """Run the app on ``path`` (None: the start screen); the exit code."""
    app = StatepathApp(path)
    code = app.run()
    return int(code or 0)
