"""The editing session behind the app: one flowsheet's text, its undo and redo
history, whether it differs from the file, and the recovery file that keeps
unsaved edits through a crash or a lost SSH connection.

Pure logic, no terminal: the app drives a ``Session`` and shows what it says.

The text of the file is the one source of truth. An edit is a function that
changes a fresh tomlkit document of that text (``thermo.sheetfile`` does the
comment-keeping work); the new text is accepted only when it reads back as a
valid flowsheet, so an invalid entry never changes the document. Undo and
redo step between accepted texts.

Also here: the small recent-files list kept in the user's config directory.
"""

from __future__ import annotations

import difflib
import hashlib
import json
import os
import tempfile
import threading
from dataclasses import dataclass
from pathlib import Path
from typing import Any, Callable

RECOVERY_SUFFIX = ".statepath-recovery"
RECOVERY_FORMAT = "statepath-recovery-1"
RECENT_LIMIT = 8

Loader = Callable[[str, str | None], Any]  # (text, path) -> LoadedSheet, or raises SheetError
Edit = Callable[[Any], Any]  # changes a tomlkit document in place, or returns the new one


def _default_loader(text: str, path: str | None):
    from thermo.sheetfile import parse_sheet_text

    return parse_sheet_text(text, path)


def _default_fingerprint(path: Path):
    from thermo.sheetfile import fingerprint

    return fingerprint(str(path))


def _default_save(path: Path, text: str, expected):
    from thermo.sheetfile import save_atomic

    return save_atomic(str(path), text, expected_fingerprint=expected)


def _sha256(text: str) -> str:
    return hashlib.sha256(text.encode("utf-8")).hexdigest()


def _document_text(document) -> str:
    as_string = getattr(document, "as_string", None)
    if callable(as_string):
        return as_string()
    if isinstance(document, str):
        return document
    import tomlkit

    return tomlkit.dumps(document)


def _write_atomic(path: Path, text: str) -> None:
    """Write a file of our own (recovery, recent list) so that a crash leaves
    either the old file or the new one, never half of one."""
    path.parent.mkdir(parents=True, exist_ok=True)
    handle, temporary = tempfile.mkstemp(prefix="." + path.name + ".", suffix=".tmp", dir=path.parent)
    try:
        with os.fdopen(handle, "w", encoding="utf-8", newline="") as out:
            out.write(text)
            out.flush()
            os.fsync(out.fileno())
        os.replace(temporary, path)
    except BaseException:
        try:
            os.unlink(temporary)
        except OSError:
            pass
        raise


# ------------------------------------------------------------------ directories


def config_dir(environ: dict | None = None) -> Path:
    """``$XDG_CONFIG_HOME/statepath``, else ``~/.config/statepath``."""
    env = os.environ if environ is None else environ
    base = env.get("XDG_CONFIG_HOME") or os.path.join(os.path.expanduser("~"), ".config")
    return Path(base) / "statepath"


def state_dir(environ: dict | None = None) -> Path:
    """``$XDG_STATE_HOME/statepath``, else ``~/.local/state/statepath``."""
    env = os.environ if environ is None else environ
    base = env.get("XDG_STATE_HOME") or os.path.join(os.path.expanduser("~"), ".local", "state")
    return Path(base) / "statepath"


# ------------------------------------------------------------------ recovery


def recovery_path_beside(sheet_path: Path) -> Path:
    """``dir/.NAME.statepath-recovery`` for ``dir/NAME``."""
    return sheet_path.with_name("." + sheet_path.name + RECOVERY_SUFFIX)


def recovery_path_in_state_dir(sheet_path: Path, environ: dict | None = None) -> Path:
    """Where the recovery goes when the sheet's folder cannot be written."""
    digest = hashlib.sha256(str(sheet_path.resolve()).encode("utf-8")).hexdigest()[:16]
    return state_dir(environ) / "recovery" / f"{sheet_path.name}-{digest}{RECOVERY_SUFFIX}"


@dataclass(frozen=True)
class Recovery:
    """Unsaved edits found from an earlier run: the text they give, the file
    they belong to, and whether that file changed since they were made."""

    path: Path  # the recovery file itself
    sheet_path: Path
    text: str
    disk_changed_since: bool

    def diff_against(self, disk_text: str) -> str:
        """A unified diff from the file on disk to the recovered text."""
        return unified_diff(disk_text, self.text, str(self.sheet_path), "unsaved edits")


def _read_recovery(path: Path, sheet_path: Path, disk_text: str) -> Recovery | None:
    try:
        data = json.loads(path.read_text("utf-8"))
    except (OSError, ValueError):
        return None
    if not isinstance(data, dict) or data.get("format") != RECOVERY_FORMAT:
        return None
    text = data.get("text")
    if not isinstance(text, str) or text == disk_text:
        return None
    changed = data.get("disk_sha256") != _sha256(disk_text)
    return Recovery(path, sheet_path, text, changed)


def find_recovery(sheet_path: str | os.PathLike, disk_text: str, environ: dict | None = None) -> Recovery | None:
    """Unsaved edits left for ``sheet_path`` by an earlier run, if any differ
    from ``disk_text`` (the file as it is now)."""
    sheet = Path(sheet_path)
    for candidate in (recovery_path_beside(sheet), recovery_path_in_state_dir(sheet, environ)):
        if candidate.exists():
            found = _read_recovery(candidate, sheet, disk_text)
            if found is not None:
                return found
    return None


def unified_diff(before: str, after: str, before_name: str, after_name: str) -> str:
    """``diff -u`` of two texts, as one string ('' when they are equal)."""
    return "".join(
        difflib.unified_diff(
            before.splitlines(keepends=True),
            after.splitlines(keepends=True),
            fromfile=before_name,
            tofile=after_name,
        )
    )


# ------------------------------------------------------------------ session


@dataclass(frozen=True)
class Step:
    """One accepted text in the history, with what made it."""

    label: str
    text: str


class Session:
    """One open flowsheet: the current text, the last saved text, history,
    recovery. ``loaded`` is the ``LoadedSheet`` of the current text.

    Raises from the loader (``SheetError``) propagate out of ``open``,
    ``apply`` and ``replace_text``, leaving the session as it was.
    """

    def __init__(
        self,
        path: str | os.PathLike | None,
        text: str,
        *,
        loader: Loader = _default_loader,
        fingerprint: Callable[[Path], Any] = _default_fingerprint,
        save: Callable[[Path, str, Any], Any] = _default_save,
        environ: dict | None = None,
        history_limit: int = 200,
    ):
        self.path = Path(path) if path is not None else None
        self._loader = loader
        self._fingerprint = fingerprint
        self._save = save
        self._environ = environ
        self._history_limit = history_limit
        self.loaded = loader(text, str(self.path) if self.path else None)
        self.text = text
        self.saved_text = text
        self.disk_fingerprint = self._fingerprint(self.path) if self.path and self.path.exists() else None
        self._undo: list[Step] = []
        self._redo: list[Step] = []
        self._recovery_written: Path | None = None
        # How the recovery file is kept up to date after an edit: None writes
        # it at once; the app hands a function that writes it off its event
        # loop (``write_recovery`` from a thread), so that typing never waits
        # for the disk. The lock and the counters keep a late write from
        # bringing back a recovery that a save or a discard removed.
        self.recovery_writer: Callable[[], Any] | None = None
        self._recovery_lock = threading.Lock()
        self._text_count = 0
        self._discarded_at = -1

    # -------------------------------------------------------------- opening

    @classmethod
    def open(cls, path: str | os.PathLike, **options) -> "Session":
        """Read ``path`` and check it; ``SheetError`` if it is not a valid sheet,
        ``OSError`` if it cannot be read."""
        sheet_path = Path(path)
        text = sheet_path.read_text("utf-8")
        return cls(sheet_path, text, **options)

    # -------------------------------------------------------------- state

    @property
    def dirty(self) -> bool:
        """True when the text differs from the last one read or saved."""
        return self.text != self.saved_text

    @property
    def can_undo(self) -> bool:
        return bool(self._undo)

    @property
    def can_redo(self) -> bool:
        return bool(self._redo)

    @property
    def undo_label(self) -> str | None:
        """What undo would take back, e.g. "set units.choke.outlet_pressure"."""
        return self._undo[-1].label if self._undo else None

    @property
    def redo_label(self) -> str | None:
        return self._redo[-1].label if self._redo else None

    @property
    def name(self) -> str:
        return self.path.name if self.path else "(unsaved sheet)"

    # -------------------------------------------------------------- editing

    def _fresh_document(self):
        # thermo.sheetfile's edits return a new document and never change the
        # one given, so the loaded document is handed out as it is (saving a
        # parse per edit); edits here must keep to that rule. With another
        # loader (tests), a fresh parse.
        document = getattr(self.loaded, "document", None)
        if document is not None and self._loader is _default_loader:
            return document
        import tomlkit

        return tomlkit.parse(self.text)

    def preview(self, edit: Edit) -> str:
        """The text ``edit`` would give, without accepting it."""
        document = self._fresh_document()
        returned = edit(document)
        return _document_text(document if returned is None or returned is True else returned)

    def apply(self, label: str, edit: Edit) -> bool:
        """Make ``edit`` on a fresh document of the current text; accept the
        result if it reads back as a valid sheet. Returns False when the edit
        changed nothing (no history step). Raises what the edit or the loader
        raise (SheetEditError, SheetError, QuantityError), changing nothing."""
        new_text = self.preview(edit)
        return self.replace_text(label, new_text)

    def replace_text(self, label: str, new_text: str) -> bool:
        """Accept ``new_text`` as the next step (checked by the loader first)."""
        if new_text == self.text:
            return False
        loaded = self._loader(new_text, str(self.path) if self.path else None)
        self._undo.append(Step(label, self.text))
        del self._undo[: -self._history_limit]
        self._redo.clear()
        self._set(new_text, loaded)
        return True

    def _set(self, text: str, loaded=None) -> None:
        if loaded is None:
            loaded = self._loader(text, str(self.path) if self.path else None)
        self.text = text
        self.loaded = loaded
        self._text_count += 1
        if self.recovery_writer is None:
            self.write_recovery()
        else:
            self.recovery_writer()

    def undo(self) -> str | None:
        """Step back; returns the label of what was undone, None if nothing."""
        return self._step(self._undo, self._redo)

    def redo(self) -> str | None:
        """Step forward again; returns the label of what was redone."""
        return self._step(self._redo, self._undo)

    def _step(self, taken_from: list, kept_in: list) -> str | None:
        """Go to the last text of ``taken_from``; the present one goes to ``kept_in``."""
        if not taken_from:
            return None
        step = taken_from.pop()
        kept_in.append(Step(step.label, self.text))
        self._set(step.text)
        return step.label

    # -------------------------------------------------------------- the file

    def disk_text(self) -> str | None:
        """The file as it is on disk now (None if it is gone or unreadable)."""
        if self.path is None:
            return None
        try:
            return self.path.read_text("utf-8")
        except OSError:
            return None

    def changed_on_disk(self) -> bool:
        """True when the file is no longer the one read or last saved."""
        if self.path is None:
            return False
        exists = self.path.exists()
        if self.disk_fingerprint is None:
            return exists
        return not exists or self._fingerprint(self.path) != self.disk_fingerprint

    def diff_with_disk(self) -> str:
        """Unified diff from the file on disk to the text being edited."""
        disk = self.disk_text() or ""
        return unified_diff(disk, self.text, f"{self.name} (on disk)", f"{self.name} (in statepath)")

    def save(self, *, overwrite: bool = False, path: str | os.PathLike | None = None) -> None:
        """Write the text atomically. Without ``overwrite``, a file changed on
        disk since it was read raises ``FileChangedOnDisk`` and nothing is
        written. ``path`` saves under another name (and edits it from then on)."""
        if path is not None:
            target = Path(path)
            expected = self._fingerprint(target) if target.exists() else None
            if target.exists() and not overwrite:
                from thermo.errors import FileChangedOnDisk

                raise FileChangedOnDisk(str(target))
        else:
            if self.path is None:
                raise ValueError("this sheet has no file name yet: save it under a name")
            target = self.path
            if overwrite:
                expected = self._fingerprint(target) if target.exists() else None
            else:
                expected = self.disk_fingerprint
        self._save(target, self.text, expected)
        old_recovery = self._recovery_written
        self.path = target
        self.saved_text = self.text
        self.disk_fingerprint = self._fingerprint(target)
        self.discard_recovery()
        if old_recovery is not None and old_recovery.exists():
            old_recovery.unlink(missing_ok=True)

    def reload(self) -> bool:
        """Read the file again. The text being edited stays one undo away, so
        a reload never loses an edit. Returns False when the file reads the
        same as the text. Raises ``SheetError`` if the file on disk is not a
        valid sheet (nothing changes then)."""
        if self.path is None:
            return False
        disk = self.path.read_text("utf-8")
        fingerprint = self._fingerprint(self.path)
        if disk == self.text:
            self.saved_text = disk
            self.disk_fingerprint = fingerprint
            self.discard_recovery()
            return False
        loaded = self._loader(disk, str(self.path))
        self._undo.append(Step("reload from disk", self.text))
        self._redo.clear()
        self.saved_text = disk
        self.disk_fingerprint = fingerprint
        self._set(disk, loaded)
        return True

    # -------------------------------------------------------------- recovery

    def recovery_path(self) -> Path | None:
        """Where this session keeps its unsaved edits."""
        if self.path is None:
            return None
        beside = recovery_path_beside(self.path)
        if os.access(beside.parent, os.W_OK):
            return beside
        return recovery_path_in_state_dir(self.path, self._environ)

    def write_recovery(self) -> Path | None:
        """Keep unsaved edits on disk (removed again once nothing is unsaved).
        Safe to call from a thread: it writes the text as it is then."""
        with self._recovery_lock:
            if self._text_count <= self._discarded_at:
                return None  # thrown away (save, discard) since the edit that asked
            text, saved_text, path = self.text, self.saved_text, self.path
            if text == saved_text:
                self._discard_recovery_locked()
                return None
            target = self.recovery_path()
            if target is None:
                return None
            payload = {
                "format": RECOVERY_FORMAT,
                "sheet": str(path.resolve()),
                "disk_sha256": _sha256(saved_text),
                "text": text,
            }
            try:
                _write_atomic(target, json.dumps(payload, indent=1) + "\n")
            except OSError:
                target = recovery_path_in_state_dir(path, self._environ)
                _write_atomic(target, json.dumps(payload, indent=1) + "\n")
            self._recovery_written = target
            return target

    def discard_recovery(self) -> None:
        """Remove the recovery file of this sheet (both possible places); a
        write asked for by an earlier edit and still pending is dropped."""
        with self._recovery_lock:
            self._discarded_at = self._text_count
            self._discard_recovery_locked()

    def _discard_recovery_locked(self) -> None:
        if self.path is None:
            return
        for candidate in (recovery_path_beside(self.path), recovery_path_in_state_dir(self.path, self._environ)):
            try:
                candidate.unlink(missing_ok=True)
            except OSError:
                pass
        self._recovery_written = None

    def restore(self, recovery: Recovery) -> bool:
        """Take the recovered text as an edit (undo goes back to the file)."""
        return self.replace_text("restore unsaved edits", recovery.text)


# ------------------------------------------------------------------ recent files


class RecentFiles:
    """The few sheets opened last, newest first, in ``recent.json`` of the
    user's config directory."""

    def __init__(self, directory: str | os.PathLike | None = None, limit: int = RECENT_LIMIT):
        self.directory = Path(directory) if directory is not None else config_dir()
        self.limit = limit

    @property
    def file(self) -> Path:
        return self.directory / "recent.json"

    def load(self) -> list[str]:
        """Paths as stored (absolute), newest first; [] if none or unreadable."""
        try:
            data = json.loads(self.file.read_text("utf-8"))
        except (OSError, ValueError):
            return []
        paths = data.get("recent", []) if isinstance(data, dict) else []
        return [p for p in paths if isinstance(p, str)][: self.limit]

    def existing(self) -> list[str]:
        """The stored paths that still exist."""
        return [p for p in self.load() if os.path.isfile(p)]

    def add(self, path: str | os.PathLike) -> list[str]:
        """Put ``path`` first; keeps the list short. Never raises for a config
        directory that cannot be written (the list is a convenience)."""
        absolute = str(Path(path).resolve())
        paths = [absolute] + [p for p in self.load() if p != absolute]
        paths = paths[: self.limit]
        try:
            _write_atomic(self.file, json.dumps({"recent": paths}, indent=1) + "\n")
        except OSError:
            pass
        return paths
