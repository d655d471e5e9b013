"""Errors raised when a flowsheet file or a value with a unit cannot be used.

Every error here carries what is wrong, where (file, key path, line when
known) and how to fix it, so the command line and the app can show it
without a traceback.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Sequence

KeyPath = tuple  # tuple[str | int, ...]: table keys, with int indices into arrays


class StatepathError(Exception):
    """Base of the errors statepath reports to the user as a message."""


def format_key_path(key_path: Sequence) -> str:
    """``("units", "split", "fractions", 1)`` -> ``units.split.fractions[1]``.

    Keys that are not bare TOML keys are quoted, as they would be in the file.
    """
    text = ""
    for part in key_path:
        if isinstance(part, int):
            text += f"[{part}]"
            continue
        part = str(part)
        bare = part != "" and all(c.isascii() and (c.isalnum() or c in "-_") for c in part)
        shown = part if bare else '"' + part.replace("\\", "\\\\").replace('"', '\\"') + '"'
        text += ("." if text else "") + shown
    return text


class QuantityError(StatepathError, ValueError):
    """A value with a unit that cannot be read: no number, no unit, a unit of
    the wrong kind, or a value outside what is physically possible.

    ``str()`` names what was wrong and shows an example of a right value;
    ``suggestions`` holds the value as it was probably meant, when that can be
    guessed (a bare ``22`` for a pressure suggests ``"22 bara"``, ``"22 barg"``).
    """

    def __init__(self, message: str, *, text: object = None, kind: str | None = None,
                 example: str | None = None, suggestions: Sequence[str] = ()):
        self.text = text
        self.kind = kind
        self.example = example
        self.suggestions = tuple(suggestions)  # the value as it was probably meant, e.g. "22 barg"
        self.reason = message
        text_out = message.rstrip()
        if example and f'"{example}"' not in text_out:
            if not text_out.endswith((".", "?", "!")):
                text_out += "."
            text_out += f' Example: "{example}".'
        super().__init__(text_out)


@dataclass(frozen=True)
class Problem:
    """One thing wrong in a flowsheet file.

    ``code`` is a stable machine-readable word (for JSON output and tests),
    ``message`` says what is wrong, ``fix`` how to put it right,
    ``key_path`` where in the TOML tree and ``line`` (1-based) where in the file.
    """

    code: str
    message: str
    key_path: KeyPath = ()
    line: int | None = None
    fix: str | None = None
    column: int | None = None

    def describe(self, file: str | None = None) -> str:
        """One line: ``FILE:LINE: key.path: what is wrong. Fix: ...``."""
        location = file or "<flowsheet>"
        if self.line is not None:
            location += f":{self.line}"
            if self.column is not None:
                location += f":{self.column}"
        parts = [location]
        if self.key_path:
            parts.append(format_key_path(self.key_path))
        message = self.message.rstrip()
        if not message.endswith((".", "?", "!")):
            message += "."
        text = ": ".join(parts) + ": " + message
        if self.fix:
            fix = self.fix.rstrip()
            text += " Fix: " + fix + ("" if fix.endswith((".", "?", "!")) else ".")
        return text

    def as_dict(self, file: str | None = None) -> dict:
        """JSON-ready form, for the ``errors`` list of the machine output."""
        return {
            "code": self.code,
            "message": self.message + (f" Fix: {self.fix}" if self.fix else ""),
            "where": {
                "file": file,
                "key": format_key_path(self.key_path) if self.key_path else None,
                "line": self.line,
            },
        }


class SheetError(StatepathError):
    """A flowsheet file that cannot be used; ``problems`` lists everything
    found wrong, in file order."""

    def __init__(self, problems: Sequence[Problem], path: str | None = None):
        self.problems = list(problems)
        self.path = None if path is None else str(path)
        super().__init__(self.__str__())

    def __str__(self) -> str:
        return "\n".join(problem.describe(self.path) for problem in self.problems)

    def as_dicts(self) -> list[dict]:
        """The problems in the JSON form of ``Problem.as_dict``."""
        return [problem.as_dict(self.path) for problem in self.problems]


class SheetEditError(StatepathError):
    """An edit of the flowsheet document that cannot be made (the key does not
    exist, the new name is taken or malformed, ...)."""


class SaveError(StatepathError):
    """The flowsheet file could not be written."""

    def __init__(self, path: str, reason: str):
        self.path = str(path)
        self.reason = reason
        super().__init__(f"{self.path}: could not save: {reason}")


class FileChangedOnDisk(SaveError):
    """The file on disk is no longer the one that was read: someone (an editor,
    git) changed it since. Nothing was written."""

    def __init__(self, path: str):
        super().__init__(
            path,
            "the file changed on disk since it was read (another editor or a git "
            "command?); nothing was written. Reload it, or save under another name.",
        )
