"""Reading a flowsheet file into a validated ``Sheet`` with precise errors, and
editing it while keeping the engineer's comments, key order and untouched
values byte for byte.

Three parts, in this order:

* locating keys: tomlkit items carry no line numbers, so ``locate_keys``
  scans the text and records, for every key path written, its line, the spans
  of its key segments and of its value (used for messages and for renames);
* reading: ``load_sheet`` / ``parse_sheet_text`` check everything they can and
  raise one ``SheetError`` listing every problem;
* writing: edit functions take a tomlkit document and return a new one (the
  input is never changed, so an app can keep old documents for undo), and
  ``save_atomic`` writes a file without ever leaving half of it on disk.
"""

from __future__ import annotations

import bisect
import dataclasses
import difflib
import hashlib
import math
import os
import re
import stat
import tempfile
import tomllib
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any, Iterable, Mapping

import tomlkit
import tomlkit.exceptions
from tomlkit.toml_document import TOMLDocument

from thermo import quantities
from thermo.errors import (
    FileChangedOnDisk,
    Problem,
    QuantityError,
    SaveError,
    SheetEditError,
    SheetError,
    format_key_path,
)
from thermo.spec import (
    CONNECTION_ROLES,
    DEFAULT_MODEL,
    LIST_ROLES,
    MODELS,
    SPEC_KEY_KINDS,
    UNIT_TYPES,
    FeedStream,
    Limits,
    LoopEstimate,
    Sheet,
    UnitSpec,
    UserComponent,
    Where,
    pair_key,
)

FORMAT_VERSION = 1
MAX_FILE_BYTES = 5_000_000
NAME_PATTERN = re.compile(r"[a-z][a-z0-9]*(?:-[a-z0-9]+)*\Z")
TOP_LEVEL_KEYS = (
    "format", "title", "model", "ambient_temperature", "atmospheric_pressure",
    "limits", "components", "interaction", "streams", "units",
)
LIMIT_KEYS = {
    "min_temperature": "temperature",
    "max_temperature": "temperature",
    "max_pressure": "pressure",
    "max_discharge_temperature": "temperature",
}
STREAM_KEYS = ("temperature", "pressure", "vapor_fraction", "flow", "molar_flow", "mass_flow", "composition",
               "loop_estimate")
COMPONENT_KEYS = {
    "molar_mass": "molar_mass",
    "critical_temperature": "temperature",
    "critical_pressure": "pressure",
    "acentric_factor": "number",
    "ideal_gas_cp": "cp",
    "cp_range": "cp_range",
    "normal_boiling_point": "temperature",
    "critical_volume": "molar_volume",
    "critical_compressibility": "number",
    "source": "text",
}
NEW_COMPONENT_REQUIRED = ("molar_mass", "critical_temperature", "critical_pressure", "acentric_factor", "ideal_gas_cp")
COMPOSITION_TOLERANCE = 1e-6

# ============================================================== locating keys


@dataclass(frozen=True)
class KeyLocation:
    """Where one key path is written: 1-based ``line`` and ``column`` of its
    first key segment, and ``value_span`` (start, end) offsets of its value in
    the text (None for a table header)."""

    path: tuple
    line: int
    column: int
    value_span: tuple[int, int] | None = None


@dataclass(frozen=True)
class KeySegment:
    """One written key segment: the key path it names and its (start, end)
    offsets in the text, quotes included."""

    path: tuple
    start: int
    end: int


@dataclass(frozen=True)
class TableHeader:
    """A ``[table]`` or ``[[array]]`` header: its path and the offsets of the
    start of its line and of the start of the next header's line (or the end)."""

    path: tuple
    start: int
    body_end: int
    is_array: bool = False


@dataclass
class KeyIndex:
    """Everything ``locate_keys`` found: the first location of each path, every
    key segment (for renames) and the table headers in file order."""

    text: str
    locations: dict[tuple, KeyLocation] = field(default_factory=dict)
    segments: list[KeySegment] = field(default_factory=list)
    headers: list[TableHeader] = field(default_factory=list)
    _line_starts: list[int] = field(default_factory=list, repr=False)

    def line_of(self, key_path: Iterable) -> int | None:
        """1-based line of ``key_path``, or of its longest written prefix."""
        path = tuple(key_path)
        while path:
            location = self.locations.get(path)
            if location is not None:
                return location.line
            path = path[:-1]
        return None

    def lines(self) -> dict[tuple, int]:
        """key path -> 1-based line, for every path written."""
        return {path: loc.line for path, loc in self.locations.items()}

    def position(self, offset: int) -> tuple[int, int]:
        """(line, column), both 1-based, of a text offset."""
        index = bisect.bisect_right(self._line_starts, offset) - 1
        return index + 1, offset - self._line_starts[index] + 1


_BARE_KEY_CHARS = frozenset("ABCDEFGHIJKLMNOPQRSTUVWXYZabcdefghijklmnopqrstuvwxyz0123456789_-")


class _Scanner:
    """A forgiving reader of TOML structure (not values), for text that a real
    TOML parser has already accepted; on anything unexpected it stops early
    and keeps what it found."""

    def __init__(self, text: str):
        self.text = text
        self.n = len(text)
        self.index = KeyIndex(text)
        starts = [0]
        for match in re.finditer("\n", text):
            starts.append(match.end())
        self.index._line_starts = starts

    # -- low-level helpers
    def skip_blank(self, i: int, newlines: bool = False) -> int:
        text, n = self.text, self.n
        while i < n:
            c = text[i]
            if c in " \t":
                i += 1
            elif newlines and c in "\r\n":
                i += 1
            elif newlines and c == "#":
                i = self.end_of_line(i)
            else:
                break
        return i

    def end_of_line(self, i: int) -> int:
        j = self.text.find("\n", i)
        return self.n if j < 0 else j

    def record(self, path: tuple, offset: int, value_span: tuple[int, int] | None = None) -> None:
        line, column = self.index.position(offset)
        locations = self.index.locations
        for k in range(1, len(path)):
            locations.setdefault(path[:k], KeyLocation(path[:k], line, column))
        if path not in locations or (value_span is not None and locations[path].value_span is None):
            locations[path] = KeyLocation(path, line, column, value_span)

    # -- keys
    def read_key(self, i: int) -> tuple[list[tuple[str, int, int]], int]:
        parts: list[tuple[str, int, int]] = []
        text = self.text
        while True:
            i = self.skip_blank(i)
            if i >= self.n:
                raise ValueError("key expected")
            c = text[i]
            start = i
            if c == '"':
                end = self._end_of_basic_string(i)
                name = tomllib.loads("k = " + text[start:end])["k"] if "\\" in text[start:end] else text[start + 1:end - 1]
                i = end
            elif c == "'":
                end = text.index("'", i + 1) + 1
                name = text[start + 1:end - 1]
                i = end
            else:
                while i < self.n and text[i] in _BARE_KEY_CHARS:
                    i += 1
                if i == start:
                    raise ValueError("key expected")
                name = text[start:i]
            parts.append((name, start, i))
            i = self.skip_blank(i)
            if i < self.n and text[i] == ".":
                i += 1
                continue
            return parts, i

    def _end_of_basic_string(self, i: int) -> int:
        text = self.text
        j = i + 1
        while j < self.n:
            c = text[j]
            if c == "\\":
                j += 2
                continue
            if c == '"':
                return j + 1
            if c == "\n":
                raise ValueError("unterminated string")
            j += 1
        raise ValueError("unterminated string")

    # -- values
    def read_value(self, i: int, path: tuple) -> int:
        text = self.text
        if i >= self.n:
            raise ValueError("value expected")
        if text.startswith('"""', i) or text.startswith("'''", i):
            quote = text[i:i + 3]
            j = i + 3
            while True:
                k = text.find(quote, j)
                if k < 0:
                    raise ValueError("unterminated string")
                if quote == '"""':
                    backslashes = 0
                    m = k - 1
                    while m >= j and text[m] == "\\":
                        backslashes += 1
                        m -= 1
                    if backslashes % 2:
                        j = k + 1
                        continue
                end = k + 3
                while end < self.n and text[end] == quote[0] and end - k < 5:
                    end += 1
                return end
        c = text[i]
        if c == '"':
            return self._end_of_basic_string(i)
        if c == "'":
            return text.index("'", i + 1) + 1
        if c == "[":
            return self._read_array(i, path)
        if c == "{":
            return self._read_inline_table(i, path)
        j = i
        while j < self.n and text[j] not in ",]}#\r\n":
            j += 1
        while j > i and text[j - 1] in " \t":
            j -= 1
        if j == i:
            raise ValueError("value expected")
        return j

    def _read_array(self, i: int, path: tuple) -> int:
        i += 1
        position = 0
        while True:
            i = self.skip_blank(i, newlines=True)
            if i >= self.n:
                raise ValueError("unterminated array")
            if self.text[i] == "]":
                return i + 1
            start = i
            i = self.read_value(i, path + (position,))
            self.record(path + (position,), start, (start, i))
            position += 1
            i = self.skip_blank(i, newlines=True)
            if i < self.n and self.text[i] == ",":
                i += 1

    def _read_inline_table(self, i: int, path: tuple) -> int:
        i += 1
        while True:
            i = self.skip_blank(i, newlines=True)
            if i >= self.n:
                raise ValueError("unterminated inline table")
            if self.text[i] == "}":
                return i + 1
            i = self._read_key_value(i, path)
            i = self.skip_blank(i, newlines=True)
            if i < self.n and self.text[i] == ",":
                i += 1

    def _read_key_value(self, i: int, table: tuple) -> int:
        parts, i = self.read_key(i)
        if i >= self.n or self.text[i] != "=":
            raise ValueError("'=' expected")
        path = table
        for name, start, end in parts:
            path = path + (name,)
            self.index.segments.append(KeySegment(path, start, end))
        i = self.skip_blank(i + 1)
        value_start = i
        i = self.read_value(i, path)
        self.record(path, parts[0][1], (value_start, i))
        return i

    # -- the document
    def scan(self) -> KeyIndex:
        text = self.text
        table: tuple = ()
        i = 0
        array_counts: dict[tuple, int] = {}
        try:
            while i < self.n:
                i = self.skip_blank(i, newlines=True)
                if i >= self.n:
                    break
                if text[i] == "[":
                    line_start = text.rfind("\n", 0, i) + 1
                    is_array = text.startswith("[[", i)
                    parts, j = self.read_key(i + (2 if is_array else 1))
                    path: tuple = ()
                    for position, (name, start, end) in enumerate(parts):
                        path = path + (name,)
                        self.index.segments.append(KeySegment(path, start, end))
                        if path in array_counts and not (is_array and position == len(parts) - 1):
                            path = path + (array_counts[path],)  # a sub-table of the latest element
                    self.record(path, parts[0][1])
                    if is_array:
                        count = array_counts.get(path, -1) + 1
                        array_counts[path] = count
                        path = path + (count,)
                        self.record(path, parts[0][1])
                    if self.index.headers:
                        last = self.index.headers[-1]
                        self.index.headers[-1] = TableHeader(last.path, last.start, line_start, last.is_array)
                    self.index.headers.append(TableHeader(path, line_start, self.n, is_array))
                    table = path
                    i = self.end_of_line(j)
                    continue
                i = self._read_key_value(i, table)
                i = self.skip_blank(i)
                if i < self.n and text[i] == "#":
                    i = self.end_of_line(i)
        except (ValueError, IndexError, KeyError, tomllib.TOMLDecodeError):
            pass
        return self.index


def locate_keys(text: str) -> KeyIndex:
    """Scan TOML ``text`` for the position of every key path, table header and
    array element (array elements get int path parts). Never raises: on text it
    cannot follow it returns what it found up to there."""
    return _Scanner(text).scan()


# ============================================================== reading


@dataclass
class LoadedSheet:
    """A flowsheet as read: the ``text`` (without a byte-order mark, if the file
    had one), the tomlkit ``document`` for editing, the validated ``sheet``, the
    ``fingerprint`` (sha256 hex) of the bytes read, and the key positions."""

    text: str
    document: TOMLDocument
    sheet: Sheet
    path: str | None
    fingerprint: str
    index: KeyIndex
    byte_order_mark: bool = False

    def line_of(self, key_path: Iterable) -> int | None:
        """1-based line of ``key_path`` (or of its nearest written parent)."""
        return self.index.line_of(key_path)

    def where(self, key_path: Iterable) -> Where:
        """A ``Where`` for ``key_path`` in this file."""
        key_path = tuple(key_path)
        return Where(self.path, key_path, self.line_of(key_path))

    def render(self, document: TOMLDocument | None = None) -> str:
        """Text of ``document`` (default: the one read) as the file should be
        written, with the byte-order mark put back if the file had one."""
        text = (document if document is not None else self.document).as_string()
        return ("\ufeff" + text) if self.byte_order_mark else text


def fingerprint_bytes(data: bytes) -> str:
    """sha256 hex digest of ``data``."""
    return hashlib.sha256(data).hexdigest()


def fingerprint(path: str | os.PathLike) -> str | None:
    """sha256 hex digest of the file's bytes now, or None if it does not exist."""
    try:
        return fingerprint_bytes(Path(path).read_bytes())
    except FileNotFoundError:
        return None


def load_sheet(path: str | os.PathLike) -> LoadedSheet:
    """Read and validate the flowsheet file at ``path``; raise ``SheetError``
    listing every problem (also for a missing, unreadable, binary or non-UTF-8 file)."""
    shown = str(path)
    try:
        file_path = Path(path)
        if file_path.is_dir():
            raise SheetError([Problem("cannot-read", "this is a folder, not a flowsheet file",
                                      fix="give the path of a .toml file")], shown)
        size = file_path.stat().st_size
        if size > MAX_FILE_BYTES:
            raise SheetError([Problem(
                "too-large", f"the file is {size} bytes, far beyond any flowsheet",
                fix="check that this is the flowsheet and not a data file")], shown)
        data = file_path.read_bytes()
    except SheetError:
        raise
    except FileNotFoundError:
        raise SheetError([Problem("cannot-read", "no such file",
                                  fix="check the path, or create one with `statepath new FILE`")], shown) from None
    except OSError as error:
        raise SheetError([Problem("cannot-read", f"cannot read the file: {error.strerror or error}",
                                  fix="check the path and its permissions")], shown) from None
    return parse_sheet_bytes(data, path=shown)


def parse_sheet_bytes(data: bytes, path: str | None = None) -> LoadedSheet:
    """Validate a flowsheet given as the bytes of its file (UTF-8)."""
    if b"\x00" in data:
        raise SheetError([Problem(
            "binary-file", "this is a binary file, not a TOML flowsheet (it holds NUL bytes)",
            line=data[:data.index(b"\x00")].count(b"\n") + 1,
            fix="give the path of the flowsheet's .toml file")], path)
    try:
        text = data.decode("utf-8")
    except UnicodeDecodeError as error:
        line = data[:error.start].count(b"\n") + 1
        column = error.start - (data.rfind(b"\n", 0, error.start) + 1) + 1
        raise SheetError([Problem(
            "not-utf8", f"byte 0x{data[error.start]:02x} is not UTF-8 text",
            line=line, column=column,
            fix="save the file as UTF-8 (most editors offer it under 'encoding')")], path) from None
    return _parse(text, path, fingerprint_bytes(data))


def parse_sheet_text(text: str, path: str | None = None) -> LoadedSheet:
    """Validate a flowsheet given as text; ``path`` is only used in messages.
    Raises ``SheetError`` listing every problem found."""
    if not isinstance(text, str):
        raise SheetError([Problem("not-text", f"expected the text of a flowsheet, got {type(text).__name__}")], path)
    return _parse(text, path, fingerprint_bytes(text.encode("utf-8", "surrogatepass")))


_TOMLLIB_POSITION = re.compile(r"\(at line (\d+), column (\d+)\)")


def _syntax_problem(text: str) -> Problem | None:
    """The TOML syntax error in ``text``, if any (tomlkit and tomllib both have
    to accept it: each lets a few invalid documents through)."""
    try:
        tomllib.loads(text)
    except tomllib.TOMLDecodeError as error:
        message = str(error)
        match = _TOMLLIB_POSITION.search(message)
        line = int(match.group(1)) if match else None
        column = int(match.group(2)) if match else None
        reason = _TOMLLIB_POSITION.sub("", message).strip().rstrip(".")
        if line is None and "end of document" in message:
            line = text.count("\n") + 1
        line_text = text.splitlines()[line - 1] if line and line <= len(text.splitlines()) else ""
        return Problem("toml-syntax", f"not valid TOML: {reason}", line=line, column=column,
                       fix=_syntax_fix(reason, line_text))
    except Exception as error:  # tomllib should only raise TOMLDecodeError; be safe
        return Problem("toml-syntax", f"not valid TOML: {error}", fix="check the file's TOML syntax")
    return None


_UNQUOTED_VALUE = re.compile(r"""\s*(?P<key>[A-Za-z0-9_."'-]+)\s*=\s*(?P<value>[^"'\[{#\s][^#]*?)\s*(?:#.*)?\Z""")


def _syntax_fix(reason: str, line_text: str = "") -> str:
    match = _UNQUOTED_VALUE.match(line_text)
    if match:
        key, value = match.group("key"), match.group("value")
        if re.match(r"[-+]?[\d.]+(?:[eE][-+]?\d+)?\s*\S", value):
            return f'values with units are quoted strings: {key} = "{value}"'
        if re.match(r"[A-Za-z]", value) and value not in ("true", "false", "inf", "nan"):
            return f'text is written in quotes: {key} = "{value}"'
    lowered = reason.lower()
    if "invalid value" in lowered or "invalid initial character" in lowered:
        return 'values with units are quoted strings, e.g. temperature = "35 degC"'
    if "cannot overwrite" in lowered or "duplicate" in lowered or "overwrite" in lowered:
        return "each key and each [table] may appear only once; remove or rename the repeated one"
    if "unclosed" in lowered or "expected" in lowered:
        return "close the string, array or table that is left open"
    return "see https://toml.io for the syntax"


def _parse(text: str, path: str | None, digest: str) -> LoadedSheet:
    byte_order_mark = text.startswith("\ufeff")
    if byte_order_mark:
        text = text[1:]
    if not text.strip():
        raise SheetError([Problem(
            "empty-file", "the file is empty",
            fix="start from a template with `statepath new FILE`; a flowsheet needs at least `format = 1`")], path)
    problem = _syntax_problem(text)
    if problem is None:
        try:
            document = tomlkit.parse(text)
            plain = document.unwrap()
        except tomlkit.exceptions.ParseError as error:
            problem = Problem("toml-syntax", f"not valid TOML: {error}", line=getattr(error, "line", None),
                              column=getattr(error, "col", None), fix="check the TOML syntax around this line")
        except Exception as error:  # tomlkit can fail in other ways on odd input
            problem = Problem("toml-syntax", f"not valid TOML: {error}", fix="check the file's TOML syntax")
    if problem is not None:
        raise SheetError([problem], path)
    index = locate_keys(text)
    sheet = _Validator(plain, index, path).build()
    return LoadedSheet(text=text, document=document, sheet=sheet, path=path, fingerprint=digest,
                       index=index, byte_order_mark=byte_order_mark)


def _closest(name: str, candidates: Iterable[str]) -> list[str]:
    return difflib.get_close_matches(str(name), list(candidates), n=3, cutoff=0.6)


def _sentence(text: str) -> str:
    return text[:1].upper() + text[1:]


def _did_you_mean(name: str, candidates: Iterable[str]) -> str:
    close = _closest(name, candidates)
    return f"did you mean {' or '.join(repr(c) for c in close)}?" if close else ""


def suggest_name(name: str) -> str:
    """A lower-case-hyphen form of ``name``: ``"Well Gas_2"`` -> ``"well-gas-2"``."""
    words = re.findall(r"[a-z0-9]+", str(name).lower())
    suggestion = "-".join(words)
    if not suggestion or not suggestion[0].isalpha():
        suggestion = "s-" + suggestion if suggestion else "stream-1"
    return suggestion


class _Validator:
    """Turns the plain dictionary of a TOML document into a ``Sheet``,
    collecting every problem on the way."""

    def __init__(self, data: dict, index: KeyIndex, path: str | None):
        self.data = data
        self.index = index
        self.path = path
        self.problems: list[Problem] = []
        self.atmospheric = quantities.STANDARD_ATMOSPHERE_PA
        self.connections: dict[str, dict[str, str | tuple[str, ...]]] = {}

    # -- reporting
    def problem(self, code: str, key_path: tuple, message: str, fix: str | None = None) -> None:
        self.problems.append(Problem(code, message, tuple(key_path), self.index.line_of(key_path), fix))

    def fail(self) -> None:
        ordered = sorted(enumerate(self.problems), key=lambda p: (p[1].line is None, p[1].line or 0, p[0]))
        raise SheetError([p for _, p in ordered], self.path)

    # -- values
    def quantity(self, key_path: tuple, value: Any, kind: str) -> float | None:
        try:
            return quantities.parse_quantity(value, kind, atmospheric_pressure_Pa=self.atmospheric)
        except QuantityError as error:
            self.quantity_problem(key_path, value, error)
            return None

    def quantity_problem(self, key_path: tuple, value: Any, error: QuantityError) -> None:
        if isinstance(value, (int, float)) and not isinstance(value, bool):
            code = "bare-number"
        elif _is_wrong_unit(error):
            code = "wrong-unit"
        elif "beyond any process value" in error.reason:
            code = "absurd-value"
        elif "absolute zero" in error.reason or "must be above zero" in error.reason:
            code = "impossible-value"
        else:
            code = "bad-quantity"
        if error.suggestions:
            key = _last_key(key_path)
            fix = f'write {key} = ' + " or ".join(f'"{s}"' for s in error.suggestions)
        else:
            fix = f'write it like "{error.example}"' if error.example else None
        self.problem(code, key_path, error.reason, fix=fix)

    def number(self, key_path: tuple, value: Any, *, low: float | None = None, high: float | None = None,
               low_open: bool = False, what: str = "a number", example: str = "0.78",
               note: str = "") -> float | None:
        if isinstance(value, bool) or not isinstance(value, (int, float)):
            hint = ""
            if isinstance(value, str):
                stripped = value.strip()
                percent = stripped.endswith("%")
                try:
                    written = float(stripped.rstrip("%").strip())
                    if math.isfinite(written):
                        shown = f"{written / 100:g}" if percent else f"{written:g}"
                        hint = f"; write it without quotes{' as a fraction' if percent else ''}: " \
                               f"{_last_key(key_path)} = {shown}"
                except ValueError:
                    pass
            self.problem("not-a-number", key_path,
                         f"{what} is a plain number without a unit{f' ({note})' if note else ''}; "
                         f"got {_shown(value)}",
                         fix=hint.lstrip("; ") or f"write it as a plain number, e.g. {_last_key(key_path)} = {example}")
            return None
        number = float(value)
        if not math.isfinite(number):
            self.problem("not-a-number", key_path, f"{value} is not a finite number",
                         fix=f"e.g. {_last_key(key_path)} = {example}")
            return None
        too_low = low is not None and (number <= low if low_open else number < low)
        too_high = high is not None and number > high
        if too_low or too_high:
            span = f"{'above' if low_open else 'at least'} {low:g}" if low is not None else ""
            if high is not None:
                span += (" and " if span else "") + f"at most {high:g}"
            self.problem("out-of-range", key_path,
                         f"{what} must be {span}{f' ({note})' if note else ''}; got {value}",
                         fix=f"e.g. {_last_key(key_path)} = {example}")
            return None
        return number

    def text_value(self, key_path: tuple, value: Any) -> str | None:
        if not isinstance(value, str):
            self.problem("not-text", key_path, f"expected text in quotes, got {_shown(value)}",
                         fix=f'e.g. {key_path[-1]} = "..."')
            return None
        return value

    def table(self, key_path: tuple, value: Any, what: str) -> dict | None:
        if not isinstance(value, dict):
            self.problem("not-a-table", key_path, f"expected a table ({what}), got {_shown(value)}",
                         fix=f"write it as [{format_key_path(key_path)}] with its keys below")
            return None
        return value

    def unknown_keys(self, key_path: tuple, table: dict, allowed: Iterable[str], what: str) -> None:
        allowed = list(allowed)
        for key in table:
            if key not in allowed:
                suggestion = _did_you_mean(key, allowed)
                self.problem("unknown-key", key_path + (key,), f"{key!r} is not a key of {what}",
                             fix=(_sentence(suggestion) if suggestion else f"keys allowed: {', '.join(allowed)}"))

    def name_ok(self, key_path: tuple, name: str, what: str) -> bool:
        if isinstance(name, str) and NAME_PATTERN.match(name):
            return True
        self.problem("bad-name", key_path,
                     f"{what} name {name!r} is not lower-case words joined by hyphens",
                     fix=f"rename it to {suggest_name(name)!r}")
        return False

    # -- the parts of the file
    def build(self) -> Sheet:
        data = self.data
        self.unknown_keys((), data, TOP_LEVEL_KEYS, "a flowsheet (top level)")
        file_format = self.check_format()
        if file_format is not None and file_format != FORMAT_VERSION:
            self.fail()
        title = data.get("title", "")
        if "title" in data:
            title = self.text_value(("title",), title) or ""
        model = self.check_model()
        atmospheric = self.check_atmospheric()
        if atmospheric is not None:
            self.atmospheric = atmospheric
        ambient = 298.15
        if "ambient_temperature" in data:
            ambient_value = self.quantity(("ambient_temperature",), data["ambient_temperature"], "temperature")
            if ambient_value is not None and not 173.15 <= ambient_value <= 373.15:
                self.problem("out-of-range", ("ambient_temperature",),
                             f"an ambient (dead-state) temperature of {ambient_value - 273.15:.2f} degC is "
                             "not a site's air temperature", fix='write the site value, e.g. "15 degC"')
            elif ambient_value is not None:
                ambient = ambient_value
        limits = self.check_limits()
        components = self.check_components()
        known = self.known_components(components)
        interaction = self.check_interaction(known)
        streams, loop_estimates = self.check_streams(known)
        units = self.check_units()
        self.check_topology(streams, units)
        self.check_loop_estimates()
        if self.problems:
            self.fail()
        return Sheet(
            format=FORMAT_VERSION, title=title, model=model or DEFAULT_MODEL,
            ambient_temperature_K=ambient, atmospheric_pressure_Pa=self.atmospheric,
            limits=limits or Limits(), components=components, interaction=interaction,
            streams=streams, units=units, path=self.path, locations=self.index.lines(),
            loop_estimates=loop_estimates,
        )

    def check_format(self) -> int | None:
        if "format" not in self.data:
            self.problem("format-missing", (), "the file does not say its format",
                         fix=f"add `format = {FORMAT_VERSION}` as the first line")
            return None
        value = self.data["format"]
        if isinstance(value, bool) or not isinstance(value, int):
            self.problem("format-wrong", ("format",), f"format must be a whole number, got {_shown(value)}",
                         fix=f"write `format = {FORMAT_VERSION}`")
            return None
        if value != FORMAT_VERSION:
            newer = value > FORMAT_VERSION
            self.problem("format-unsupported", ("format",),
                         f"this file is format {value}; this statepath reads format {FORMAT_VERSION}",
                         fix="update statepath to read it" if newer else f"write `format = {FORMAT_VERSION}`")
        return value

    def check_model(self) -> str | None:
        if "model" not in self.data:
            return DEFAULT_MODEL
        value = self.data["model"]
        if not isinstance(value, str):
            self.problem("unknown-model", ("model",), f"model must be a name in quotes, got {_shown(value)}",
                         fix=f'e.g. model = "{DEFAULT_MODEL}" (one of {", ".join(MODELS)})')
            return None
        name = value.strip().lower().replace("_", "-").replace(" ", "-")
        if name in MODELS:
            return name
        suggestion = _did_you_mean(name, MODELS)
        self.problem("unknown-model", ("model",), f"unknown model {value!r}",
                     fix=(_sentence(suggestion) + " " if suggestion else "") + f"Models: {', '.join(MODELS)}")
        return None

    def check_atmospheric(self) -> float | None:
        if "atmospheric_pressure" not in self.data:
            return None
        key = ("atmospheric_pressure",)
        raw = self.data["atmospheric_pressure"]
        if isinstance(raw, str) and re.search(r"g\s*\)?\s*\Z", raw.strip()) and not raw.strip().lower().endswith("kg"):
            self.problem("wrong-unit", key, f"{raw!r}: the atmospheric pressure is itself absolute, not gauge",
                         fix='write it like "0.94 bar"')
            return None
        value = self.quantity(key, raw, "pressure")
        if value is not None and not 30e3 <= value <= 120e3:
            self.problem("out-of-range", key,
                         f"{raw!r} is {value / 1e5:.4g} bar, not an air pressure anywhere on land "
                         "(0.3 to 1.2 bar)", fix='write the site value, e.g. "0.94 bar"')
            return None
        return value

    def check_limits(self) -> Limits | None:
        raw = self.data.get("limits")
        if raw is None:
            return Limits()
        table = self.table(("limits",), raw, "site thresholds")
        if table is None:
            return None
        self.unknown_keys(("limits",), table, LIMIT_KEYS, "[limits]")
        values: dict[str, float] = {}
        for key, kind in LIMIT_KEYS.items():
            if key in table:
                value = self.quantity(("limits", key), table[key], kind)
                if value is not None:
                    values[key] = value
        low, high = values.get("min_temperature"), values.get("max_temperature")
        if low is not None and high is not None and low >= high:
            self.problem("out-of-range", ("limits", "max_temperature"),
                         "max_temperature is not above min_temperature", fix="swap or correct the two limits")
        defaults = Limits()
        return Limits(
            min_temperature_K=values.get("min_temperature", defaults.min_temperature_K),
            max_temperature_K=values.get("max_temperature", defaults.max_temperature_K),
            max_pressure_Pa=values.get("max_pressure", defaults.max_pressure_Pa),
            max_discharge_temperature_K=values.get("max_discharge_temperature", defaults.max_discharge_temperature_K),
        )

    def check_components(self) -> dict[str, UserComponent]:
        raw = self.data.get("components")
        if raw is None:
            return {}
        section = self.table(("components",), raw, "user components, one [components.NAME] each")
        if section is None:
            return {}
        result: dict[str, UserComponent] = {}
        for name, body in section.items():
            key = ("components", name)
            if not self.name_ok(key, name, "component"):
                continue
            table = self.table(key, body, "a component's properties")
            if table is None:
                continue
            self.unknown_keys(key, table, COMPONENT_KEYS, f"[components.{name}]")
            library_name = _library_name(name)
            overrides = library_name is not None
            canonical = library_name or name
            if canonical in result:
                self.problem("duplicate-component", key, f"{name!r} is {canonical!r} again",
                             fix="keep one table per component")
                continue
            values: dict[str, Any] = {}
            for prop, kind in COMPONENT_KEYS.items():
                if prop in table:
                    value = self.component_value(key + (prop,), table[prop], kind, table)
                    if value is not None:
                        values[prop] = value
            if overrides and not any(k != "source" for k in table if k in COMPONENT_KEYS):
                self.problem("component-empty", key,
                             f"[components.{name}] overrides library component {canonical!r} but sets nothing",
                             fix="give the properties to replace, or remove the table")
            if not overrides:
                missing = [p for p in NEW_COMPONENT_REQUIRED if p not in table]
                if missing:
                    self.problem("component-incomplete", key,
                                 f"new component {name!r} lacks {', '.join(missing)}",
                                 fix="give " + ", ".join(missing) + ' (e.g. molar_mass = "18.9 g/mol")')
            self.check_cp_positive(key, values)
            result[canonical] = UserComponent(name=canonical, overrides=overrides, **values)
        return result

    def component_value(self, key_path: tuple, value: Any, kind: str, table: dict):
        prop = key_path[-1]
        if kind == "number":
            if prop == "acentric_factor":
                return self.number(key_path, value, low=-1.0, high=3.0, what="the acentric factor", example="0.031")
            return self.number(key_path, value, low=0.0, high=1.0, low_open=True,
                               what="the critical compressibility", example="0.286")
        if kind == "text":
            return self.text_value(key_path, value)
        if kind == "cp":
            if not isinstance(value, list) or not 1 <= len(value) <= 4:
                self.problem("bad-cp", key_path,
                             f"ideal_gas_cp must be a list of 1 to 4 numbers, got {_shown(value)}",
                             fix="ideal_gas_cp = [29.1, 0.0121, 1.5e-5, -6.1e-9]  # J/(mol K), T in K")
                return None
            coefficients = [self.number(key_path + (i,), c, what="a Cp coefficient", example="29.1")
                            for i, c in enumerate(value)]
            if any(c is None for c in coefficients):
                return None
            return tuple(coefficients) + (0.0,) * (4 - len(coefficients))
        if kind == "cp_range":
            if not isinstance(value, list) or len(value) != 2:
                self.problem("bad-cp-range", key_path,
                             f"cp_range must be two temperatures, got {_shown(value)}",
                             fix='cp_range = ["200 K", "1200 K"]')
                return None
            ends = [self.quantity(key_path + (i,), v, "temperature") for i, v in enumerate(value)]
            if any(e is None for e in ends):
                return None
            if ends[0] >= ends[1]:
                self.problem("bad-cp-range", key_path, "the first temperature of cp_range must be the lower",
                             fix='cp_range = ["200 K", "1200 K"]')
                return None
            return (ends[0], ends[1])
        return self.quantity(key_path, value, kind)

    def check_cp_positive(self, key: tuple, values: dict) -> None:
        coefficients = values.get("ideal_gas_cp")
        if coefficients is None:
            return
        low, high = values.get("cp_range", (298.15, 298.15))
        for temperature in (low, 0.5 * (low + high), high):
            cp = sum(c * temperature**k for k, c in enumerate(coefficients))
            if not cp > 0.0:
                self.problem("bad-cp", key + ("ideal_gas_cp",),
                             f"the ideal-gas Cp is {cp:.4g} J/(mol K) at {temperature:.2f} K; it must be positive",
                             fix="check the coefficients' signs and that they are in J/(mol K) with T in K")
                return

    def known_components(self, components: Mapping[str, UserComponent]) -> tuple[str, ...]:
        return tuple(name for name, c in components.items() if not c.overrides)

    def resolve(self, key_path: tuple, name: str, user_names: tuple[str, ...]) -> str | None:
        from thermo.components import UnknownComponentError, resolve_name

        try:
            return resolve_name(name, user_names)
        except UnknownComponentError as error:
            self.problem("unknown-component", key_path, str(error),
                         fix="use a library name or formula, or define it under [components.NAME]")
            return None

    def check_interaction(self, user_names: tuple[str, ...]) -> dict[tuple[str, str], float]:
        raw = self.data.get("interaction")
        if raw is None:
            return {}
        section = self.table(("interaction",), raw, 'pairs like "methane/carbon-dioxide" = 0.09')
        if section is None:
            return {}
        result: dict[tuple[str, str], float] = {}
        for pair, value in section.items():
            key = ("interaction", pair)
            names = pair.split("/")
            if len(names) != 2 or not all(n.strip() for n in names):
                self.problem("bad-pair", key, f"{pair!r} is not two component names joined by '/'",
                             fix='write it like "methane/carbon-dioxide" = 0.09')
                continue
            resolved = [self.resolve(key, n.strip(), user_names) for n in names]
            number = self.number(key, value, low=-1.0, high=1.0, what="a binary interaction parameter",
                                 example="0.09")
            if None in resolved or number is None:
                continue
            if resolved[0] == resolved[1]:
                self.problem("bad-pair", key, f"{pair!r} pairs {resolved[0]!r} with itself",
                             fix="an interaction parameter is between two different components")
                continue
            pair_id = pair_key(resolved[0], resolved[1])
            if pair_id in result:
                self.problem("duplicate-pair", key, f"the pair {pair_id[0]}/{pair_id[1]} is given twice",
                             fix="keep one (k_ij is symmetric)")
                continue
            result[pair_id] = number
        return result

    def check_streams(self, user_names: tuple[str, ...]) -> tuple[dict[str, FeedStream], dict[str, LoopEstimate]]:
        """The feeds, and the loop estimates (tables with loop_estimate = true)."""
        raw = self.data.get("streams")
        if raw is None:
            return {}, {}
        section = self.table(("streams",), raw, "feed streams, one [streams.NAME] each")
        if section is None:
            return {}, {}
        feeds: dict[str, FeedStream] = {}
        estimates: dict[str, LoopEstimate] = {}
        for name, body in section.items():
            key = ("streams", name)
            name_ok = self.name_ok(key, name, "stream")
            table = self.table(key, body, "a feed stream's state, flow and composition")
            if table is None:
                continue
            is_estimate = self.loop_estimate_flag(key, table)
            stream = self.check_stream(key, name, table, user_names, is_estimate)
            if stream is None or not name_ok:
                continue
            if is_estimate:
                estimates[name] = LoopEstimate(**dataclasses.asdict(stream))
            else:
                feeds[name] = stream
        return feeds, estimates

    def loop_estimate_flag(self, key: tuple, table: dict) -> bool:
        if "loop_estimate" not in table:
            return False
        value = table["loop_estimate"]
        if not isinstance(value, bool):
            self.problem("not-a-boolean", key + ("loop_estimate",),
                         f"loop_estimate is true or false, without quotes; got {_shown(value)}",
                         fix="write loop_estimate = true (the stream is a unit's outlet inside a loop, given a "
                             "starting state) or remove the key (the stream is a feed)")
            return _is_estimate_table(table)
        return value

    def check_stream(self, key: tuple, name: str, table: dict, user_names: tuple[str, ...],
                     is_estimate: bool = False) -> FeedStream | None:
        self.unknown_keys(key, table, STREAM_KEYS, f"[streams.{name}]")
        what = "loop-estimate stream" if is_estimate else "feed stream"
        ok = True
        temperature = pressure = vapor_fraction = None
        if "temperature" in table:
            temperature = self.quantity(key + ("temperature",), table["temperature"], "temperature")
            ok &= temperature is not None
        if "pressure" in table:
            pressure = self.quantity(key + ("pressure",), table["pressure"], "pressure")
            ok &= pressure is not None
        if "vapor_fraction" in table:
            vapor_fraction = self.number(key + ("vapor_fraction",), table["vapor_fraction"], low=0.0, high=1.0,
                                         what="the vapor fraction", example="1.0")
            ok &= vapor_fraction is not None
        state_keys = [k for k in ("temperature", "pressure", "vapor_fraction") if k in table]
        if len(state_keys) < 2:
            missing = [f'{k} = "{quantities.example_of(k)}"' for k in ("temperature", "pressure") if k not in table]
            joined = " and ".join(missing) if not state_keys else " or ".join(missing)
            self.problem("state-underspecified", key,
                         f"{what} {name!r} needs two of temperature, pressure and vapor_fraction; "
                         f"it has {', '.join(state_keys) or 'none'}",
                         fix="add " + joined)
            ok = False
        elif len(state_keys) == 3:
            self.problem("state-overspecified", key + ("vapor_fraction",),
                         f"{what} {name!r} gives temperature, pressure and vapor_fraction; "
                         "two of them fix the state", fix="remove one of the three")
            ok = False

        molar_flow = mass_flow = None
        flow_keys = [k for k in ("flow", "molar_flow", "mass_flow") if k in table]
        if not flow_keys:
            self.problem("flow-missing", key, f"{what} {name!r} has no flow",
                         fix='add flow = "2400 kmol/h" (molar) or flow = "12 t/h" (mass)')
            ok = False
        elif len(flow_keys) > 1:
            self.problem("flow-conflict", key + (flow_keys[1],),
                         f"{what} {name!r} gives its flow twice ({' and '.join(flow_keys)})",
                         fix="keep one flow key")
            ok = False
        else:
            flow_key = flow_keys[0]
            flow = self.flow(key + (flow_key,), table[flow_key], flow_key,
                             "a loop estimate's flow" if is_estimate else "a feed's flow")
            if flow is None:
                ok = False
            elif flow[0] == "molar_flow":
                molar_flow = flow[1]
            else:
                mass_flow = flow[1]

        composition = self.check_composition(key, name, table.get("composition"), user_names, what)
        if composition is None or not ok:
            return None
        return FeedStream(name=name, temperature_K=temperature, pressure_Pa=pressure,
                          vapor_fraction=vapor_fraction, molar_flow_mol_s=molar_flow,
                          mass_flow_kg_s=mass_flow, composition=composition)

    def flow(self, key_path: tuple, value: Any, flow_key: str,
             what: str = "a feed's flow") -> tuple[str, float] | None:
        try:
            if flow_key == "flow":
                kind, number = quantities.parse_flow(value)
            else:
                kind, number = flow_key, quantities.parse_quantity(value, flow_key)
        except QuantityError as error:
            self.quantity_problem(key_path, value, error)
            return None
        if number <= 0.0:
            self.problem("out-of-range", key_path, f"{value!r}: {what} must be above zero",
                         fix="give the flow that enters, or remove the stream")
            return None
        return kind, number

    def check_composition(self, key: tuple, name: str, raw: Any, user_names: tuple[str, ...],
                          what: str = "feed stream") -> dict[str, float] | None:
        ckey = key + ("composition",)
        if raw is None:
            self.problem("composition-missing", key, f"{what} {name!r} has no composition",
                         fix="add composition = { methane = 0.9, ethane = 0.1 } (mole fractions)")
            return None
        if not isinstance(raw, dict) or not raw:
            self.problem("composition-wrong", ckey,
                         f"composition must be a table of mole fractions, got {_shown(raw)}",
                         fix="composition = { methane = 0.9, ethane = 0.1 }")
            return None
        result: dict[str, float] = {}
        ok = True
        for component, fraction in raw.items():
            fkey = ckey + (component,)
            canonical = self.resolve(fkey, component, user_names)
            number = self.number(fkey, fraction, low=0.0, high=1.0, what="a mole fraction", example="0.87")
            if canonical is None or number is None:
                ok = False
                continue
            if canonical in result:
                self.problem("duplicate-component", fkey, f"{component!r} is {canonical!r}, already listed",
                             fix="list each component once")
                ok = False
                continue
            result[canonical] = number
        if not ok:
            return None
        total = math.fsum(result.values())
        if abs(total - 1.0) > COMPOSITION_TOLERANCE:
            self.problem("composition-sum", ckey,
                         f"mole fractions sum to {total:.10g}, not 1 (within {COMPOSITION_TOLERANCE:g})",
                         fix="correct the fractions so that they add up to 1")
            return None
        return result

    def check_units(self) -> dict[str, UnitSpec]:
        raw = self.data.get("units")
        if raw is None:
            return {}
        section = self.table(("units",), raw, "units, one [units.NAME] each")
        if section is None:
            return {}
        result: dict[str, UnitSpec] = {}
        for name, body in section.items():
            key = ("units", name)
            name_ok = self.name_ok(key, name, "unit")
            table = self.table(key, body, "a unit's type, connections and specification")
            if table is None:
                continue
            unit = self.check_unit(key, name, table)
            if unit is not None and name_ok:
                result[name] = unit
        return result

    def check_unit(self, key: tuple, name: str, table: dict) -> UnitSpec | None:
        type_name = table.get("type")
        unit_type = None
        if type_name is None:
            self.problem("type-missing", key, f"unit {name!r} has no type",
                         fix=f'add type = "..." (one of {", ".join(UNIT_TYPES)})')
        elif not isinstance(type_name, str) or type_name not in UNIT_TYPES:
            suggestion = _did_you_mean(str(type_name), UNIT_TYPES) if isinstance(type_name, str) else ""
            self.problem("unknown-unit-type", key + ("type",), f"unknown unit type {_shown(type_name)}",
                         fix=(_sentence(suggestion) + " " if suggestion else "") + f"Types: {', '.join(UNIT_TYPES)}")
        else:
            unit_type = UNIT_TYPES[type_name]
        connections = self.check_connections(key, table, unit_type)
        self.connections[name] = connections
        if unit_type is None:
            return None
        self.unknown_keys(key, table, unit_type.allowed_keys, f"a {type_name}")
        params: dict[str, Any] = {}
        ok = True
        for spec_key in unit_type.spec_keys:
            if spec_key in table:
                value = self.spec_value(key + (spec_key,), spec_key, table[spec_key], type_name, connections)
                if value is None:
                    ok = False
                else:
                    params[spec_key] = value
        for group in unit_type.groups:
            given = [k for k in group.keys if k in table]
            if group.required and not given:
                options = ", ".join(group.keys)
                example = _spec_example(group.keys[0])
                self.problem("spec-missing", key,
                             f"{type_name} {name!r} needs one of: {options}",
                             fix=f"add e.g. {group.keys[0]} = {example}")
                ok = False
            elif len(given) > 1:
                self.problem("spec-conflict", key + (given[1],),
                             f"{type_name} {name!r} gives both {given[0]} and {given[1]}; "
                             f"only one of {', '.join(group.keys)} may be given",
                             fix=f"remove {given[0]} or {given[1]}")
                ok = False
        if not ok or any(role not in connections for role in unit_type.connections):
            return None
        return UnitSpec(name=name, type=type_name, connections=connections, params=params)

    def check_connections(self, key: tuple, table: dict, unit_type) -> dict[str, str | tuple[str, ...]]:
        connections: dict[str, str | tuple[str, ...]] = {}
        roles = unit_type.connections if unit_type else tuple(r for r in CONNECTION_ROLES if r in table)
        for role in roles:
            rkey = key + (role,)
            if role not in table:
                other = {"inlet": "inlets", "inlets": "inlet", "outlet": "outlets", "outlets": "outlet"}.get(role)
                if other and other in table:
                    continue  # reported as an unknown key with the right suggestion
                example = '["gas-a", "gas-b"]' if role in LIST_ROLES else '"gas-a"'
                self.problem("connection-missing", key, f"{role} is missing",
                             fix=f"add {role} = {example}")
                continue
            value = table[role]
            if role in LIST_ROLES:
                if not isinstance(value, list) or not value or not all(isinstance(v, str) for v in value):
                    self.problem("connection-wrong", rkey,
                                 f"{role} must be a list of stream names, got {_shown(value)}",
                                 fix=f'{role} = ["gas-a", "gas-b"]')
                    continue
                if len(set(value)) != len(value):
                    self.problem("connection-wrong", rkey, f"{role} names a stream twice",
                                 fix="list each stream once")
                    continue
                if not all(self.name_ok(rkey, v, "stream") for v in value):
                    continue
                connections[role] = tuple(value)
            else:
                if not isinstance(value, str):
                    hint = f'{role} = "{value[0]}"' if isinstance(value, list) and value and isinstance(value[0], str) \
                        else f'{role} = "gas-a"'
                    self.problem("connection-wrong", rkey, f"{role} must be one stream name, got {_shown(value)}",
                                 fix=hint)
                    continue
                if not self.name_ok(rkey, value, "stream"):
                    continue
                connections[role] = value
        if unit_type is not None and unit_type.name == "exchanger":
            names = [v for v in connections.values() if isinstance(v, str)]
            if len(set(names)) != len(names):
                self.problem("connection-wrong", key, "an exchanger's four streams must all differ",
                             fix="give hot_inlet, hot_outlet, cold_inlet and cold_outlet distinct names")
        return connections

    def spec_value(self, key_path: tuple, spec_key: str, value: Any, type_name: str,
                   connections: Mapping[str, Any]):
        kind = SPEC_KEY_KINDS[spec_key]
        if kind == "efficiency":
            return self.number(key_path, value, low=0.0, high=1.0, low_open=True,
                               what="an efficiency", note="a fraction, not a percentage", example="0.78")
        if kind == "vapor_fraction":
            return self.number(key_path, value, low=0.0, high=1.0, what="a vapor fraction", example="1.0")
        if kind == "ratio":
            return self.number(key_path, value, low=0.0, low_open=True, high=1e4,
                               what="a pressure ratio", example="2.5")
        if kind == "fractions":
            return self.fractions(key_path, value, connections)
        number = self.quantity(key_path, value, kind)
        if number is None:
            return None
        if spec_key == "duty" and number < 0.0:
            meaning = {"heater": "the heat it adds", "cooler": "the heat it removes",
                       "exchanger": "the heat passed from hot to cold"}.get(type_name, "positive")
            opposite = {"heater": ' To take heat out, use type = "cooler".',
                        "cooler": ' To add heat, use type = "heater".'}.get(type_name, "")
            self.problem("negative-duty", key_path,
                         f"a {type_name}'s duty is {meaning}, written as a positive value; got {value!r}",
                         fix=f"write it without the minus sign.{opposite}")
            return None
        if kind == "pressure_difference" and number < 0.0:
            self.problem("out-of-range", key_path,
                         f"{spec_key} is written as a positive difference; got {value!r}",
                         fix=f"write it without the minus sign, e.g. {spec_key} = \"{value.lstrip(' -')}\""
                         if isinstance(value, str) else "write it as a positive value")
            return None
        return number

    def fractions(self, key_path: tuple, value: Any, connections: Mapping[str, Any]) -> tuple[float, ...] | None:
        if not isinstance(value, list) or not value:
            self.problem("fractions-wrong", key_path, f"fractions must be a list of numbers, got {_shown(value)}",
                         fix="fractions = [0.6, 0.4]")
            return None
        numbers = [self.number(key_path + (i,), v, low=0.0, high=1.0, what="a split fraction", example="0.6")
                   for i, v in enumerate(value)]
        if any(n is None for n in numbers):
            return None
        outlets = connections.get("outlets")
        if isinstance(outlets, tuple) and len(outlets) != len(numbers):
            self.problem("fractions-count", key_path,
                         f"{len(numbers)} fractions for {len(outlets)} outlets",
                         fix="give one fraction per outlet, in the order of outlets")
            return None
        total = math.fsum(numbers)
        if abs(total - 1.0) > COMPOSITION_TOLERANCE:
            self.problem("fractions-sum", key_path,
                         f"split fractions sum to {total:.10g}, not 1 (within {COMPOSITION_TOLERANCE:g})",
                         fix="correct the fractions so that they add up to 1")
            return None
        return tuple(numbers)

    def check_topology(self, streams: Mapping[str, FeedStream], units: Mapping[str, UnitSpec]) -> None:
        connections = self.connections
        raw_streams = self.data.get("streams") if isinstance(self.data.get("streams"), dict) else {}
        feeds = {name for name, table in raw_streams.items() if not _is_estimate_table(table)}
        estimates = set(raw_streams) - feeds
        producer: dict[str, str] = {}
        consumer: dict[str, str] = {}
        fed_outlets: list[tuple[tuple, str, str]] = []  # (key path, stream, unit): reported once the loops are known
        for unit_name, roles in connections.items():
            for role, value in roles.items():
                names = value if isinstance(value, tuple) else (value,)
                for stream in names:
                    rkey = ("units", unit_name, role)
                    if role.endswith(("outlet", "outlets")):
                        if stream in feeds:
                            fed_outlets.append((rkey, stream, unit_name))
                        elif stream in producer and producer[stream] != unit_name:
                            self.problem("stream-two-sources", rkey,
                                         f"stream {stream!r} is the outlet of both {producer[stream]!r} and "
                                         f"{unit_name!r}",
                                         fix="give each outlet its own name; to join streams use a mixer")
                        producer.setdefault(stream, unit_name)
                    else:
                        if stream in consumer and consumer[stream] != unit_name:
                            self.problem("stream-two-destinations", rkey,
                                         f"stream {stream!r} enters both {consumer[stream]!r} and {unit_name!r}",
                                         fix="a stream goes to one unit; to divide it use a splitter")
                        consumer.setdefault(stream, unit_name)
        outlets = _outlets_by_unit(connections)
        for rkey, stream, unit_name in fed_outlets:
            fix = f"rename the outlet, or remove [streams.{stream}] if the unit makes it"
            reader = consumer.get(stream)
            if reader is not None and _leads_back(reader, unit_name, outlets, consumer):
                fix += (f"; or, if {stream!r} is on a closed loop (nothing enters it) and the table gives the "
                        f"circulating flow, add loop_estimate = true to [streams.{stream}]")
            self.problem("feed-is-outlet", rkey,
                         f"stream {stream!r} is a feed ([streams.{stream}]) and also the outlet of unit {unit_name!r}",
                         fix=fix)
        for unit_name, roles in connections.items():
            ins = {s for role, v in roles.items() if not role.endswith(("outlet", "outlets"))
                   for s in (v if isinstance(v, tuple) else (v,))}
            outs = {s for role, v in roles.items() if role.endswith(("outlet", "outlets"))
                    for s in (v if isinstance(v, tuple) else (v,))}
            for stream in sorted(ins & outs):
                self.problem("connection-wrong", ("units", unit_name),
                             f"stream {stream!r} is both an inlet and an outlet of unit {unit_name!r}",
                             fix="give the outlet its own name")
            for role, value in roles.items():
                if role.endswith(("outlet", "outlets")):
                    continue
                for stream in value if isinstance(value, tuple) else (value,):
                    if stream not in feeds and stream not in producer and stream not in estimates:
                        known = sorted(feeds | set(producer))
                        suggestion = _did_you_mean(stream, known)
                        self.problem("dangling-stream", ("units", unit_name, role),
                                     f"stream {stream!r} enters unit {unit_name!r} but is neither a feed "
                                     "nor the outlet of a unit",
                                     fix=(_sentence(suggestion) + " " if suggestion else "")
                                     + f"Or define it as a feed under [streams.{stream}]")


    def check_loop_estimates(self) -> None:
        """Each loop_estimate stream must be written by a unit and lead, through
        the units, back to that unit (it is a recycle's tear stream)."""
        raw_streams = self.data.get("streams") if isinstance(self.data.get("streams"), dict) else {}
        estimates = [name for name, table in raw_streams.items() if _is_estimate_table(table)]
        if not estimates:
            return
        producer: dict[str, str] = {}
        consumer: dict[str, str] = {}
        for unit_name, roles in self.connections.items():
            for role, value in roles.items():
                for stream in value if isinstance(value, tuple) else (value,):
                    if role.endswith(("outlet", "outlets")):
                        producer.setdefault(stream, unit_name)
                    else:
                        consumer.setdefault(stream, unit_name)
        outlets = _outlets_by_unit(self.connections)
        for name in estimates:
            key = ("streams", name, "loop_estimate")
            writer = producer.get(name)
            if writer is None:
                self.problem("loop-estimate-not-an-outlet", key,
                             f"stream {name!r} has loop_estimate = true, but no unit names it as its outlet: "
                             "a loop estimate is a stream that a unit inside a recycle loop writes",
                             fix=f"remove loop_estimate = true to make {name!r} a feed, or name {name!r} as the "
                                 "outlet of a unit in the loop")
                continue
            reader = consumer.get(name)
            if reader is None or not _leads_back(reader, writer, outlets, consumer):
                where_to = (f"enters unit {reader!r}, from which no path of streams returns to {writer!r}"
                            if reader is not None else "enters no unit")
                self.problem("loop-estimate-not-on-loop", key,
                             f"stream {name!r} has loop_estimate = true, but it is not on a recycle loop: it "
                             f"leaves unit {writer!r} and {where_to}",
                             fix=f"remove the [streams.{name}] table (unit {writer!r} gives {name!r} its state), "
                                 "or connect the units so that the stream returns to the unit that writes it")


def _is_estimate_table(table: Any) -> bool:
    """A [streams.NAME] table meant as a loop estimate (loop_estimate written
    and not false; a wrongly typed value is reported on its own)."""
    return isinstance(table, dict) and "loop_estimate" in table and table["loop_estimate"] is not False


def _outlets_by_unit(connections: Mapping[str, Mapping[str, Any]]) -> dict[str, list[str]]:
    """Unit name -> the streams it writes, from the validator's connections."""
    return {
        unit_name: [stream for role, value in roles.items() if role.endswith(("outlet", "outlets"))
                    for stream in (value if isinstance(value, tuple) else (value,))]
        for unit_name, roles in connections.items()
    }


def _leads_back(start: str, target: str, outlets: Mapping[str, list[str]], consumer: Mapping[str, str]) -> bool:
    """Whether a path of streams leads from unit ``start`` to unit ``target``."""
    seen = {start}
    work = [start]
    while work:
        unit_name = work.pop()
        if unit_name == target:
            return True
        for stream in outlets.get(unit_name, ()):
            nxt = consumer.get(stream)
            if nxt is not None and nxt not in seen:
                seen.add(nxt)
                work.append(nxt)
    return False


def _library_name(name: str) -> str | None:
    from thermo.components import UnknownComponentError, resolve_name

    try:
        return resolve_name(name)
    except UnknownComponentError:
        return None


def _last_key(key_path: tuple) -> str:
    """The last key name of a path, skipping array indices."""
    for part in reversed(key_path):
        if isinstance(part, str):
            return format_key_path((part,))
    return "value"


def _is_wrong_unit(error: QuantityError) -> bool:
    return " unit, but " in error.reason or "gauge or absolute reference" in error.reason


def _spec_example(key: str) -> str:
    kind = SPEC_KEY_KINDS.get(key, "")
    examples = {"efficiency": "0.78", "vapor_fraction": "1.0", "ratio": "2.5", "fractions": "[0.6, 0.4]"}
    if kind in examples:
        return examples[kind]
    if key == "outlet_pressure":
        return '"22 barg"'
    return f'"{quantities.example_of(kind)}"'


def _shown(value: Any) -> str:
    if isinstance(value, dict):
        return "a table"
    if isinstance(value, list):
        return f"a list {value!r}" if len(repr(value)) < 60 else "a list"
    if isinstance(value, bool):
        return "true" if value else "false"
    if isinstance(value, str):
        return repr(value) if len(value) < 60 else repr(value[:57] + "...")
    return f"{type(value).__name__} {value!r}" if not isinstance(value, (int, float)) else repr(value)


# ============================================================== writing
#
# Every edit takes a document and returns a new one; the input is left as it
# was. Value edits go through tomlkit, which keeps each line's comment;
# structural edits (renames, adding and removing tables) are made on the text
# at the spans ``locate_keys`` found, then parsed again, so that everything
# not touched stays byte for byte.


def document_text(doc: TOMLDocument) -> str:
    """The TOML text of ``doc``."""
    return doc.as_string()


def _reparse(text: str, what: str) -> TOMLDocument:
    try:
        tomllib.loads(text)
        return tomlkit.parse(text)
    except Exception as error:  # any failure means the edit would break the file
        raise SheetEditError(f"cannot {what}: the result would not be valid TOML ({error})") from None


def _copy(doc: TOMLDocument) -> TOMLDocument:
    return tomlkit.parse(doc.as_string())


def _checked(result: TOMLDocument, what: str) -> TOMLDocument:
    """``result`` (a copy that tomlkit changed in place) if its text is valid
    TOML, else SheetEditError. Only tomllib reads it again here: a second
    tomlkit parse would cost as much as the copy, and whoever accepts the edit
    reads the text with both anyway (``parse_sheet_text``, as the app does)."""
    try:
        tomllib.loads(result.as_string())
    except Exception as error:  # any failure means the edit would break the file
        raise SheetEditError(f"cannot {what}: the result would not be valid TOML ({error})") from None
    return result


def _check_new_name(name: str, what: str) -> None:
    if not isinstance(name, str) or not NAME_PATTERN.match(name):
        raise SheetEditError(
            f"{what} name {name!r} is not lower-case words joined by hyphens; try {suggest_name(name)!r}")


def _to_item(value: Any):
    if isinstance(value, dict):
        table = tomlkit.inline_table()
        for key, inner in value.items():
            table[key] = _to_item(inner)
        return table
    if isinstance(value, (list, tuple)):
        array = tomlkit.array()
        for inner in value:
            array.append(_to_item(inner))
        return array
    if isinstance(value, float) and not math.isfinite(value):
        raise SheetEditError(f"cannot write {value!r}: not a finite number")
    if isinstance(value, (str, int, float, bool)):
        return tomlkit.item(value)
    raise SheetEditError(f"cannot write a {type(value).__name__} into a flowsheet")


def _walk(doc: TOMLDocument, key_path: tuple, create: bool, what: str):
    container = doc
    for depth, key in enumerate(key_path[:-1]):
        if key not in container:
            if not create:
                raise SheetEditError(f"cannot {what}: {format_key_path(key_path[:depth + 1])} does not exist")
            container[key] = tomlkit.table()
        container = container[key]
        if not hasattr(container, "keys") or isinstance(container, (str, bytes)):
            raise SheetEditError(f"cannot {what}: {format_key_path(key_path[:depth + 1])} is not a table")
    return container


def _render(value: Any) -> str:
    """``value`` as TOML text, inline tables spaced as the contract writes them."""
    if isinstance(value, Mapping):
        inner = ", ".join(f"{tomlkit.key(k).as_string()} = {_render(v)}" for k, v in value.items())
        return "{ " + inner + " }" if inner else "{}"
    if isinstance(value, (list, tuple)):
        return "[" + ", ".join(_render(v) for v in value) + "]"
    return _to_item(value).as_string()


def _key_line(key: str, value: Any) -> str:
    return f"{tomlkit.key(key).as_string()} = {_render(value)}"


def _insert_at(text: str, at: int, lines: str) -> str:
    """Insert whole ``lines`` (ending in a newline) at line start ``at``."""
    before, after = text[:at], text[at:]
    if before and not before.endswith("\n"):
        before += _newline(text)
    return before + lines + after


def _new_table_at(text: str, index: KeyIndex, table_path: tuple) -> int:
    """Where a new ``[table]`` for ``table_path`` goes: after the last table of
    its own section, else before the first table of a later section, else at the end."""
    section = table_path[0]
    own = [h for h in index.headers if h.path[:1] == (section,)]
    if own:
        return _content_end(text, own[-1].start, own[-1].body_end)
    order = {key: i for i, key in enumerate(TOP_LEVEL_KEYS)}
    rank = order.get(section, len(order))
    for header in index.headers:
        if order.get(header.path[0] if header.path else "", len(order)) > rank:
            return _content_end(text, 0, header.start)
    return _content_end(text, 0, len(text))


def _add_key_text(text: str, key_path: tuple, value: Any, what: str) -> str | None:
    """Text with the missing ``key_path`` added as a line at the end of its
    table (before comments that belong to the next table), or None if the
    table is not written as a ``[header]`` (then tomlkit places it)."""
    index = locate_keys(text)
    newline = _newline(text)
    parent, key = key_path[:-1], key_path[-1]
    line = _key_line(str(key), value) + newline
    if not parent:
        first = index.headers[0].start if index.headers else len(text)
        return _insert_at(text, _content_end(text, 0, first), line)
    header = next((h for h in index.headers if h.path == parent and not h.is_array), None)
    if header is not None:
        return _insert_at(text, _content_end(text, header.start, header.body_end), line)
    location = index.locations.get(parent)
    if location is not None and location.value_span and text[location.value_span[0]] == "{":
        start, end = location.value_span  # an inline table: add before its closing brace
        close = end - 1
        inner_end = close
        while inner_end > start + 1 and text[inner_end - 1] in " \t":
            inner_end -= 1
        entry = _key_line(str(key), value)
        if inner_end == start + 1:
            return text[:start] + "{ " + entry + " }" + text[end:]
        return text[:inner_end] + ", " + entry + text[inner_end:]
    if location is not None:
        return None  # dotted keys or a table implied by its sub-tables: tomlkit places it
    at = _new_table_at(text, index, parent)
    block = f"[{format_key_path(parent)}]{newline}{line}"
    prefix = newline if text[:at].strip() else ""
    suffix = newline if text[at:].strip() and not text[at:].startswith(("\n", "\r\n")) else ""
    return _insert_at(text, at, prefix + block + suffix)


def set_value(doc: TOMLDocument, key_path: tuple[str, ...], value: Any) -> TOMLDocument:
    """A copy of ``doc`` with ``key_path`` set to ``value`` (a string with its
    unit such as ``"40 degC"``, a number, a list, or a dict for an inline
    table). An existing line keeps its comment and position; a value equal to
    the one written leaves the text as it was; a missing key is added as the
    last line of its table, a missing table after the others of its section."""
    key_path = tuple(key_path)
    if not key_path:
        raise SheetEditError("cannot set a value without a key")
    what = f"set {format_key_path(key_path)}"
    _to_item(value)  # refuses what cannot be written, before anything else
    node: Any = doc.unwrap()  # read only: ``doc`` itself is never changed
    for depth, key in enumerate(key_path[:-1]):
        if isinstance(node, dict) and key in node:
            node = node[key]
            if not isinstance(node, dict):
                raise SheetEditError(f"cannot {what}: {format_key_path(key_path[:depth + 1])} is not a table")
        else:
            node = None
            break
    if isinstance(node, dict) and key_path[-1] in node:
        current = node[key_path[-1]]
        if type(current) is type(value) and current == value:
            return _copy(doc)
        if isinstance(current, dict) and not isinstance(value, Mapping):
            raise SheetEditError(f"cannot {what}: it is a table; set its keys one by one")
        result = _copy(doc)
        container = _walk(result, key_path, create=False, what=what)
        container[key_path[-1]] = _to_item(value)
        return _checked(result, what)
    text = _add_key_text(doc.as_string(), key_path, value, what)
    if text is None:
        result = _copy(doc)
        container = _walk(result, key_path, create=True, what=what)
        container[key_path[-1]] = _to_item(value)
        text = result.as_string()
    new = _reparse(text, what)
    check: Any = new.unwrap()
    for key in key_path:
        if not isinstance(check, dict) or key not in check:
            raise SheetEditError(f"cannot {what}: the file's layout does not allow adding it safely; add it by hand")
        check = check[key]
    return new


def remove_value(doc: TOMLDocument, key_path: tuple[str, ...]) -> TOMLDocument:
    """A copy of ``doc`` without ``key_path`` (e.g. a specification being
    replaced by another of its group)."""
    key_path = tuple(key_path)
    what = f"remove {format_key_path(key_path)}"
    result = _copy(doc)
    container = _walk(result, key_path, create=False, what=what)
    if key_path[-1] not in container:
        raise SheetEditError(f"cannot {what}: it does not exist")
    del container[key_path[-1]]
    return _checked(result, what)


def _streams_in_use(plain: dict) -> set[str]:
    names = set(plain.get("streams", {}) if isinstance(plain.get("streams"), dict) else ())
    units = plain.get("units")
    for table in (units.values() if isinstance(units, dict) else ()):
        if not isinstance(table, dict):
            continue
        for role in CONNECTION_ROLES:
            value = table.get(role)
            if isinstance(value, str):
                names.add(value)
            elif isinstance(value, list):
                names.update(v for v in value if isinstance(v, str))
    return names


def _apply(text: str, replacements: list[tuple[int, int, str]]) -> str:
    for start, end, new in sorted(replacements, reverse=True):
        text = text[:start] + new + text[end:]
    return text


def _quoted_like(original: str, name: str) -> str:
    quote = original[:1] if original[:1] in ("'", '"') else '"'
    return f"{quote}{name}{quote}"


def rename_stream(doc: TOMLDocument, old: str, new: str) -> TOMLDocument:
    """A copy of ``doc`` with stream ``old`` renamed ``new``: its
    ``[streams.OLD]`` table if it is a feed, and every unit connection naming
    it (inlet, outlet, inlets, outlets, hot_/cold_ inlets and outlets).
    Nothing else changes."""
    _check_new_name(new, "stream")
    text = doc.as_string()
    plain = doc.unwrap()
    in_use = _streams_in_use(plain)
    if old not in in_use:
        raise SheetEditError(f"cannot rename stream {old!r}: no feed or unit names it")
    if new in in_use and new != old:
        raise SheetEditError(f"cannot rename stream {old!r} to {new!r}: {new!r} is already a stream")
    if new == old:
        return _copy(doc)
    index = locate_keys(text)
    replacements = [(seg.start, seg.end, new) for seg in index.segments if seg.path == ("streams", old)]
    units = plain.get("units") if isinstance(plain.get("units"), dict) else {}
    for unit_name, table in units.items():
        if not isinstance(table, dict):
            continue
        for role in CONNECTION_ROLES:
            value = table.get(role)
            spots: list[tuple] = []
            if value == old:
                spots.append(("units", unit_name, role))
            elif isinstance(value, list):
                spots.extend(("units", unit_name, role, i) for i, v in enumerate(value) if v == old)
            for spot in spots:
                location = index.locations.get(spot)
                if location is None or location.value_span is None:
                    raise SheetEditError(f"cannot rename stream {old!r}: could not find "
                                         f"{format_key_path(spot)} in the text")
                start, end = location.value_span
                replacements.append((start, end, _quoted_like(text[start:end], new)))
    result = _reparse(_apply(text, replacements), f"rename stream {old!r}")
    if _streams_in_use(result.unwrap()) != (in_use - {old}) | {new}:
        raise SheetEditError(f"cannot rename stream {old!r}: the file defines it in a way statepath "
                             "cannot rewrite safely; rename it by hand")
    return result


def rename_unit(doc: TOMLDocument, old: str, new: str) -> TOMLDocument:
    """A copy of ``doc`` with ``[units.OLD]`` renamed ``[units.NEW]`` (and any
    sub-tables or dotted keys under it); nothing else changes."""
    _check_new_name(new, "unit")
    plain = doc.unwrap()
    units = plain.get("units") if isinstance(plain.get("units"), dict) else {}
    if old not in units:
        raise SheetEditError(f"cannot rename unit {old!r}: there is no [units.{old}]")
    if new in units and new != old:
        raise SheetEditError(f"cannot rename unit {old!r} to {new!r}: [units.{new}] exists")
    if new == old:
        return _copy(doc)
    text = doc.as_string()
    index = locate_keys(text)
    replacements = [(seg.start, seg.end, new) for seg in index.segments if seg.path == ("units", old)]
    result = _reparse(_apply(text, replacements), f"rename unit {old!r}")
    new_units = result.unwrap().get("units", {})
    if old in new_units or new not in new_units:
        raise SheetEditError(f"cannot rename unit {old!r}: the file defines it in a way statepath "
                             "cannot rewrite safely; rename it by hand")
    return result


def _line_start(text: str, offset: int) -> int:
    return text.rfind("\n", 0, offset) + 1


def _attached_comment_start(text: str, header_start: int) -> int:
    """Start of the comment lines directly above a header (no blank line
    between): they describe that table and move or go with it."""
    start = header_start
    while start > 0:
        previous = _line_start(text, start - 1)
        line = text[previous:start].strip()
        if not line.startswith("#"):
            break
        start = previous
    return start


def _content_end(text: str, start: int, end: int) -> int:
    """End of the last line in text[start:end] that holds more than blank
    space or comments attached to the next table."""
    end = _attached_comment_start(text, end) if end < len(text) else end
    while end > start:
        previous = _line_start(text, end - 1)
        if text[previous:end].strip():
            break
        end = previous
    return end


def _newline(text: str) -> str:
    return "\r\n" if "\r\n" in text else "\n"


def _table_text(section: str, name: str, table: Mapping[str, Any], newline: str) -> str:
    lines = [f"[{section}.{name}]"] + [_key_line(key, value) for key, value in table.items()]
    return newline.join(lines) + newline


def _add_table(doc: TOMLDocument, section: str, name: str, table: Mapping[str, Any], what: str) -> TOMLDocument:
    text = doc.as_string()
    newline = _newline(text)
    index = locate_keys(text)
    own = [h for h in index.headers if h.path[:1] == (section,)]
    units = [h for h in index.headers if h.path[:1] == ("units",)]
    if own:
        at = _content_end(text, own[-1].start, own[-1].body_end)
    elif section == "streams" and units:
        at = _content_end(text, 0, units[0].start)
    else:
        at = _content_end(text, 0, len(text))
    before, after = text[:at], text[at:]
    if before and not before.endswith("\n"):
        before += newline
    if before:
        before += newline  # one blank line between tables
    block = _table_text(section, name, table, newline)
    if after.strip() and not after.startswith(("\n", "\r\n")):
        block += newline
    return _reparse(before + block + after, what)


def add_stream(doc: TOMLDocument, name: str, table: Mapping[str, Any]) -> TOMLDocument:
    """A copy of ``doc`` with a new feed ``[streams.NAME]`` holding ``table``
    (e.g. ``{"temperature": "35 degC", "pressure": "68 barg", "flow":
    "2400 kmol/h", "composition": {"methane": 1.0}}``), written after the last
    feed stream. The new stream is not validated here: load the result."""
    _check_new_name(name, "stream")
    if name in _streams_in_use(doc.unwrap()):
        raise SheetEditError(f"cannot add stream {name!r}: a stream of that name exists")
    return _add_table(doc, "streams", name, table, f"add stream {name!r}")


def add_unit(doc: TOMLDocument, name: str, table: Mapping[str, Any]) -> TOMLDocument:
    """A copy of ``doc`` with a new ``[units.NAME]`` holding ``table`` (e.g.
    ``{"type": "valve", "inlet": "a", "outlet": "b", "outlet_pressure": "22 barg"}``),
    written after the last unit."""
    _check_new_name(name, "unit")
    units = doc.unwrap().get("units")
    if isinstance(units, dict) and name in units:
        raise SheetEditError(f"cannot add unit {name!r}: [units.{name}] exists")
    return _add_table(doc, "units", name, table, f"add unit {name!r}")


def _remove_table(doc: TOMLDocument, section: str, name: str, what: str) -> TOMLDocument:
    plain = doc.unwrap()
    tables = plain.get(section)
    if not isinstance(tables, dict) or name not in tables:
        raise SheetEditError(f"cannot {what}: there is no [{section}.{name}]")
    text = doc.as_string()
    index = locate_keys(text)
    spans = []
    for header in index.headers:
        if header.path[:2] == (section, name):
            start = _attached_comment_start(text, header.start)
            end = _content_end(text, header.start, header.body_end)
            if end < len(text) and text[end:end + 1] == "\n":
                end += 1
            spans.append((start, end))
    new_text = text
    for start, end in sorted(spans, reverse=True):
        before, after = new_text[:start], new_text[end:]
        # keep a single blank line where the table was
        blank_before = not before or before.endswith(("\n\n", "\n\r\n"))
        while blank_before and after.startswith(("\n", "\r\n")):
            after = after[2:] if after.startswith("\r\n") else after[1:]
        if before and not after.strip():
            before = before.rstrip("\r\n") + _newline(text)  # no blank lines left at the end
        new_text = before + after
    result = _reparse(new_text, what)
    remaining = result.get(section)
    if remaining is not None and name in remaining:
        del remaining[name]  # defined by dotted keys or an inline table, not a header
        result = _reparse(result.as_string(), what)
    return result


def remove_stream(doc: TOMLDocument, name: str) -> TOMLDocument:
    """A copy of ``doc`` without the feed ``[streams.NAME]`` (and the comment
    lines directly above it). Units that still name the stream are left as
    they are: loading the result reports them."""
    return _remove_table(doc, "streams", name, f"remove stream {name!r}")


def remove_unit(doc: TOMLDocument, name: str) -> TOMLDocument:
    """A copy of ``doc`` without ``[units.NAME]`` (and the comment lines
    directly above it)."""
    return _remove_table(doc, "units", name, f"remove unit {name!r}")


def set_model(doc: TOMLDocument, name: str) -> TOMLDocument:
    """A copy of ``doc`` using equation of state ``name`` (one of ``MODELS``)."""
    if name not in MODELS:
        suggestion = _did_you_mean(str(name), MODELS)
        raise SheetEditError(f"unknown model {name!r}; {suggestion or 'models: ' + ', '.join(MODELS)}")
    return set_value(doc, ("model",), name)


def save_atomic(path: str | os.PathLike, text: str | bytes, *, expected_fingerprint: str | None = None) -> str:
    """Write ``text`` (UTF-8) to ``path`` so that the file is either the old one
    or the new one, never half: a temporary file in the same folder, flushed
    to disk, then renamed over. The file keeps its permissions.

    With ``expected_fingerprint`` (``LoadedSheet.fingerprint`` or
    ``fingerprint(path)`` taken when the file was read), raise
    ``FileChangedOnDisk`` and write nothing if the file is no longer those
    bytes. Other failures raise ``SaveError``. Returns the new fingerprint.
    """
    target = Path(os.path.realpath(path))
    data = text.encode("utf-8") if isinstance(text, str) else bytes(text)
    if expected_fingerprint is not None and fingerprint(target) != expected_fingerprint:
        raise FileChangedOnDisk(str(path))
    temporary = None
    try:
        try:
            mode = stat.S_IMODE(target.stat().st_mode)
        except FileNotFoundError:
            umask = os.umask(0)
            os.umask(umask)
            mode = 0o666 & ~umask
        descriptor, temporary = tempfile.mkstemp(prefix=f".{target.name}.", suffix=".tmp", dir=target.parent)
        with os.fdopen(descriptor, "wb") as handle:
            handle.write(data)
            handle.flush()
            os.fsync(handle.fileno())
        os.chmod(temporary, mode)
        os.replace(temporary, target)
        temporary = None
        try:
            folder = os.open(target.parent, os.O_RDONLY)
        except OSError:
            folder = None
        if folder is not None:
            try:
                os.fsync(folder)
            except OSError:
                pass
            finally:
                os.close(folder)
    except OSError as error:
        raise SaveError(str(path), error.strerror or str(error)) from None
    finally:
        if temporary is not None:
            try:
                os.unlink(temporary)
            except OSError:
                pass
    return fingerprint_bytes(data)
