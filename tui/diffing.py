"""Two versions of one flowsheet, solved and compared: what the engineer
changed (inputs) and what that did (stream temperatures and pressures, unit
duties and powers, flags raised or cleared).

The old version comes from a second file or from git (``git show REV:path``,
run in the file's own repository). Values are compared in SI, so rewriting
``"25 degC"`` as ``"298.15 K"`` is no change; they are shown in the chosen
display unit system.
"""

from __future__ import annotations

import math
import subprocess
from dataclasses import dataclass, fields
from pathlib import Path
from typing import Callable, Mapping

from thermo.quantities import DISPLAY_KINDS, display_units, format_number, format_quantity, to_display
from thermo.results import SheetResult
from thermo.spec import SPEC_KEY_KINDS, Sheet
from tui.phase_words import phase_word

from .render import collect_flags, level_label

# Results closer than this are the same result (about the last digit shown).
TEMPERATURE_TOLERANCE_K = 0.005
PRESSURE_TOLERANCE_PA = 5.0
POWER_TOLERANCE_W = 0.5
RELATIVE_TOLERANCE = 1e-6
VAPOR_FRACTION_TOLERANCE = 5e-5

ADDED, REMOVED, CHANGED, RAISED, CLEARED = "added", "removed", "changed", "raised", "cleared"


class RevisionError(Exception):
    """The old version could not be had from git; ``str()`` says why and ``fix`` how to mend it."""

    def __init__(self, message: str, fix: str):
        self.message = message
        self.fix = fix
        super().__init__(message)


@dataclass(frozen=True)
class Change:
    """One difference. ``what`` names the thing (``"units.choke.outlet_pressure"``,
    ``"stream lp-gas temperature"``); ``old``/``new`` are SI values (None when
    added or removed) shown as ``kind`` (a ``thermo.quantities`` display kind,
    or None for plain numbers and words)."""

    section: str  # "inputs", "streams", "units", "flags"
    action: str  # added | removed | changed | raised | cleared
    what: str
    old: object = None
    new: object = None
    kind: str | None = None

    def describe(self, system: str) -> str:
        """One line for the terminal, values in ``system``."""
        if self.action == CHANGED:
            text = f"{self.what}: {show_value(self.old, self.kind, system)} -> {show_value(self.new, self.kind, system)}"
            delta = _delta(self.old, self.new, self.kind, system)
            return text + (f" ({delta})" if delta else "")
        if self.action in (ADDED, REMOVED) and (self.old is not None or self.new is not None):
            value = self.new if self.action == ADDED else self.old
            return f"{self.what}: {show_value(value, self.kind, system)}"
        return self.what


@dataclass(frozen=True)
class SheetDiff:
    """Every change between two versions, by section, in file order."""

    changes: tuple[Change, ...]

    def section(self, name: str) -> tuple[Change, ...]:
        """The changes of one section: "inputs", "streams", "units" or "flags"."""
        return tuple(c for c in self.changes if c.section == name)

    @property
    def changed(self) -> bool:
        """True when anything differs."""
        return bool(self.changes)


SECTIONS = (
    ("inputs", "Inputs"),
    ("streams", "Streams"),
    ("units", "Units"),
    ("flags", "Flags"),
)

_ACTION_MARKS = {ADDED: "+", REMOVED: "-", CHANGED: "~", RAISED: "+", CLEARED: "-"}


def action_mark(action: str) -> str:
    """``"+ added"``, ``"~ changed"``: a symbol and the word, never colour alone."""
    return f"{_ACTION_MARKS[action]} {action}"


# ------------------------------------------------------------------ values


def show_value(value: object, kind: str | None, system: str) -> str:
    """A value for a diff line: a quantity with its unit, a plain number, a
    list or a word; "(none)" for None."""
    if value is None:
        return "(none)"
    if isinstance(value, bool):
        return "yes" if value else "no"
    if isinstance(value, (tuple, list)):
        return "[" + ", ".join(show_value(v, kind, system) for v in value) + "]"
    if isinstance(value, dict):
        return "{" + ", ".join(f"{k} = {show_value(v, kind, system)}" for k, v in value.items()) + "}"
    if isinstance(value, (int, float)):
        if kind is not None:
            return format_quantity(float(value), kind, system)
        return f"{float(value):.6g}"
    return repr(value) if isinstance(value, str) else str(value)


def _delta(old: object, new: object, kind: str | None, system: str) -> str:
    """The signed difference for numbers of a kind that has one
    (temperatures and pressures as differences, not as absolute values)."""
    if not (isinstance(old, (int, float)) and isinstance(new, (int, float))) or isinstance(old, bool):
        return ""
    if kind in ("temperature", "pressure"):
        difference = to_display(float(new), kind, system) - to_display(float(old), kind, system)
        unit = display_units(kind, system)
        unit = {"degC": "K", "degF": "degF", "bara": "bar", "psia": "psi"}.get(unit, unit)
        return f"{'+' if difference >= 0 else ''}{format_number(difference, significant=4, max_decimals=3)} {unit}"
    if kind == "power" and float(old) != 0.0:
        percent = 100.0 * (float(new) - float(old)) / abs(float(old))
        return f"{'+' if percent >= 0 else ''}{format_number(percent, significant=3, max_decimals=1)} %"
    return ""


def _close(old: float | None, new: float | None, absolute: float) -> bool:
    if old is None or new is None:
        return old is None and new is None
    return math.isclose(old, new, rel_tol=RELATIVE_TOLERANCE, abs_tol=absolute)


# ------------------------------------------------------------------ inputs

_TOP_LEVEL = (
    ("title", None),
    ("model", None),
    ("ambient_temperature_K", "temperature"),
    ("atmospheric_pressure_Pa", "pressure"),
)
_TOP_LEVEL_KEYS = {"ambient_temperature_K": "ambient_temperature", "atmospheric_pressure_Pa": "atmospheric_pressure"}
_LIMIT_KINDS = {
    "min_temperature_K": ("min_temperature", "temperature"),
    "max_temperature_K": ("max_temperature", "temperature"),
    "max_pressure_Pa": ("max_pressure", "pressure"),
    "max_discharge_temperature_K": ("max_discharge_temperature", "temperature"),
}
_FEED_FIELDS = (
    ("temperature_K", "temperature", "temperature"),
    ("pressure_Pa", "pressure", "pressure"),
    ("vapor_fraction", "vapor_fraction", None),
    ("molar_flow_mol_s", "flow", "molar_flow"),
    ("mass_flow_kg_s", "flow", "mass_flow"),
)
_COMPONENT_KINDS = {
    "molar_mass": "molar_mass",
    "critical_temperature": "temperature",
    "critical_pressure": "pressure",
    "normal_boiling_point": "temperature",
    "critical_volume": "molar_volume",
}


def _input(action: str, what: str, old=None, new=None, kind=None) -> Change:
    return Change("inputs", action, what, old, new, kind)


def _same(old: object, new: object) -> bool:
    if isinstance(old, float) and isinstance(new, float):
        return math.isclose(old, new, rel_tol=1e-12, abs_tol=1e-12)
    if isinstance(old, tuple) and isinstance(new, tuple):
        return len(old) == len(new) and all(_same(a, b) for a, b in zip(old, new))
    return old == new


def diff_inputs(old: Sheet, new: Sheet) -> list[Change]:
    """What the engineer changed: top-level settings, limits, user components,
    interaction parameters, feeds (added, removed, state, flow, composition)
    and units (added, removed, type, connections, specification)."""
    changes: list[Change] = []
    for attribute, kind in _TOP_LEVEL:
        a, b = getattr(old, attribute), getattr(new, attribute)
        if not _same(a, b):
            changes.append(_input(CHANGED, _TOP_LEVEL_KEYS.get(attribute, attribute), a, b, kind))
    for attribute, (key, kind) in _LIMIT_KINDS.items():
        a, b = getattr(old.limits, attribute), getattr(new.limits, attribute)
        if not _same(a, b):
            changes.append(_input(CHANGED, f"limits.{key}", a, b, kind))
    changes += _diff_components(old, new)
    for _, what, a, b in _matched(old.interaction, new.interaction, lambda pair: f'interaction."{pair[0]}/{pair[1]}"',
                               changes, shown=lambda value: value):
        if not _same(a, b):
            changes.append(_input(CHANGED, what, a, b))
    changes += _diff_feeds(old, new)
    changes += _diff_units(old, new)
    return changes


def _ordered_union(first, second) -> list:
    keys = list(first)
    keys += [k for k in second if k not in first]
    return keys


def _matched(old: Mapping, new: Mapping, label: Callable[[object], str], changes: list[Change], *,
             shown: Callable[[object], object] = lambda item: None,
             kind: Callable[[object], str | None] = lambda key: None) -> list[tuple[object, str, object, object]]:
    """Append to ``changes`` the entries only one of ``old``/``new`` has
    (added or removed, with ``shown(entry)`` as the value), and return
    (key, label, old entry, new entry) for those both have, in file order."""
    both = []
    for key in _ordered_union(old, new):
        what = label(key)
        a, b = old.get(key), new.get(key)
        if a is None:
            changes.append(_input(ADDED, what, new=shown(b), kind=kind(key)))
        elif b is None:
            changes.append(_input(REMOVED, what, old=shown(a), kind=kind(key)))
        else:
            both.append((key, what, a, b))
    return both


def _diff_components(old: Sheet, new: Sheet) -> list[Change]:
    changes: list[Change] = []
    for _, what, a, b in _matched(old.components, new.components, lambda name: f"components.{name}", changes):
        for f in fields(a):
            if f.name == "name":
                continue
            va, vb = getattr(a, f.name), getattr(b, f.name)
            if not _same(va, vb):
                changes.append(_input(CHANGED, f"{what}.{f.name}", va, vb, _COMPONENT_KINDS.get(f.name)))
    return changes


def _diff_feeds(old: Sheet, new: Sheet) -> list[Change]:
    # Feeds and closed-loop estimates (whose flow is the loop's circulation)
    # are both stream tables the engineer writes.
    old_tables = {**old.streams, **getattr(old, "loop_estimates", {})}
    new_tables = {**new.streams, **getattr(new, "loop_estimates", {})}
    changes: list[Change] = []
    for _, what, a, b in _matched(old_tables, new_tables, lambda name: f"streams.{name}", changes):
        for attribute, key, kind in _FEED_FIELDS:
            va, vb = getattr(a, attribute), getattr(b, attribute)
            if not _same(va, vb):
                changes.append(_input(CHANGED, f"{what}.{key}", va, vb, kind))
        for component in _ordered_union(a.composition, b.composition):
            va, vb = a.composition.get(component, 0.0), b.composition.get(component, 0.0)
            if not _same(va, vb):
                changes.append(_input(CHANGED, f"{what}.composition.{component}", va, vb))
    return changes


def _spec_kind(key: str) -> str | None:
    kind = SPEC_KEY_KINDS.get(key)
    return kind if kind in DISPLAY_KINDS else None  # efficiencies, ratios, fractions: plain numbers


def _diff_units(old: Sheet, new: Sheet) -> list[Change]:
    changes: list[Change] = []
    for _, what, a, b in _matched(old.units, new.units, lambda name: f"units.{name}", changes,
                               shown=lambda unit: unit.type):
        if a.type != b.type:
            changes.append(_input(CHANGED, f"{what}.type", a.type, b.type))
        for role in _ordered_union(a.connections, b.connections):
            va, vb = a.connections.get(role), b.connections.get(role)
            if va != vb:
                changes.append(_input(CHANGED, f"{what}.{role}", va, vb))
        for key, spec_what, va, vb in _matched(a.params, b.params, lambda key: f"{what}.{key}", changes,
                                               shown=lambda value: value, kind=_spec_kind):
            if not _same(va, vb):
                changes.append(_input(CHANGED, spec_what, va, vb, _spec_kind(key)))
    return changes


# ------------------------------------------------------------------ results


def diff_results(old: SheetResult, new: SheetResult) -> list[Change]:
    """What the change did: streams appearing or going, their temperature,
    pressure and phase; units appearing or going, their duty and power; and
    flags (violations, cautions) raised or cleared."""
    changes: list[Change] = []
    for name in _ordered_union(old.streams, new.streams):
        a, b = old.streams.get(name), new.streams.get(name)
        if a is None or b is None:
            changes.append(Change("streams", ADDED if a is None else REMOVED, f"stream {name}"))
            continue
        sa, sb = a.state, b.state
        if not _close(sa.temperature, sb.temperature, TEMPERATURE_TOLERANCE_K):
            changes.append(Change("streams", CHANGED, f"{name} temperature", sa.temperature, sb.temperature, "temperature"))
        if not _close(sa.pressure, sb.pressure, PRESSURE_TOLERANCE_PA):
            changes.append(Change("streams", CHANGED, f"{name} pressure", sa.pressure, sb.pressure, "pressure"))
        if phase_word(sa) != phase_word(sb):
            changes.append(Change("streams", CHANGED, f"{name} phase", phase_word(sa), phase_word(sb)))
        elif not _close(sa.vapor_fraction, sb.vapor_fraction, VAPOR_FRACTION_TOLERANCE):
            changes.append(Change("streams", CHANGED, f"{name} vapor fraction", sa.vapor_fraction, sb.vapor_fraction))
    for name in _ordered_union(old.units, new.units):
        a, b = old.units.get(name), new.units.get(name)
        if a is None or b is None:
            changes.append(Change("units", ADDED if a is None else REMOVED, f"unit {name} ({(b or a).type})"))
            continue
        for label, va, vb in (("duty", a.duty_W, b.duty_W), ("power", a.power_W, b.power_W)):
            if not _close(va, vb, POWER_TOLERANCE_W):
                changes.append(Change("units", CHANGED, f"{name} {label}", va, vb, "power"))
    changes += _diff_flags(old, new)
    return changes


def _flag_key(flag) -> tuple[str, str, str]:
    return (flag.level, flag.code, flag.where)


def _diff_flags(old: SheetResult, new: SheetResult) -> list[Change]:
    """Flags are the same flag when level, code and place agree; a changed
    message alone (a number in it moved) is not a raised or cleared flag."""
    old_flags = {_flag_key(f): f for f in collect_flags(old)}
    new_flags = {_flag_key(f): f for f in collect_flags(new)}
    changes = []
    for key, flag in new_flags.items():
        if key not in old_flags:
            changes.append(Change("flags", RAISED, f"{level_label(flag.level)} {flag.code} at {flag.where}: {flag.message}"))
    for key, flag in old_flags.items():
        if key not in new_flags:
            changes.append(Change("flags", CLEARED, f"{level_label(flag.level)} {flag.code} at {flag.where}: {flag.message}"))
    return changes


def diff_versions(old_sheet: Sheet, old_result: SheetResult, new_sheet: Sheet, new_result: SheetResult) -> SheetDiff:
    """Inputs first, then results, in file order within each section."""
    return SheetDiff(tuple(diff_inputs(old_sheet, new_sheet) + diff_results(old_result, new_result)))


# ------------------------------------------------------------------ git


def _git(args: list[str], cwd: Path) -> subprocess.CompletedProcess:
    try:
        return subprocess.run(["git", *args], cwd=cwd, capture_output=True, timeout=30, check=False)
    except FileNotFoundError:
        raise RevisionError("git is not installed or not on PATH",
                            "install git, or compare two files with `statepath diff OLD NEW`") from None
    except subprocess.TimeoutExpired:
        raise RevisionError("git did not answer within 30 s", "try again, or compare two files") from None


def _first_line(data: bytes) -> str:
    text = data.decode("utf-8", "replace").strip()
    return text.splitlines()[0] if text else "no message"


def old_version_from_git(path: str | Path, revision: str) -> tuple[bytes, str]:
    """The bytes of ``path`` as it was at git ``revision`` (``git show
    REV:path`` in the file's own repository), and a label for messages
    (``"HEAD:flowsheets/a.toml"``). Raises ``RevisionError`` when the file is
    not in a git repository, the revision is unknown or the file did not exist in it."""
    file_path = Path(path).resolve()
    folder = file_path.parent
    if not folder.is_dir():
        raise RevisionError(f"folder {str(folder)!r} does not exist", "check the path of the file")
    if revision.startswith("-"):
        raise RevisionError(f"{revision!r} is not a revision", "give a revision such as HEAD, HEAD~1, a tag or a commit id")
    top = _git(["rev-parse", "--show-toplevel"], folder)
    if top.returncode != 0:
        raise RevisionError("the file is not inside a git repository",
                            "run it on a file in a git work tree, or compare two files with `statepath diff OLD NEW`")
    commit = _git(["rev-parse", "--verify", "--quiet", "--end-of-options", f"{revision}^{{commit}}"], folder)
    if commit.returncode != 0:
        raise RevisionError(f"unknown revision {revision!r} in the repository at {top.stdout.decode().strip()}",
                            "give a revision that exists: HEAD, HEAD~1, a branch, a tag or a commit id "
                            "(see `git log --oneline`)")
    root = Path(top.stdout.decode("utf-8", "replace").strip()).resolve()
    try:
        relative = file_path.relative_to(root).as_posix()
    except ValueError:
        relative = file_path.name
    label = f"{revision}:{relative}"
    shown = _git(["show", f"{commit.stdout.decode().strip()}:{relative}"], root)
    if shown.returncode != 0:
        raise RevisionError(f"{relative!r} is not in revision {revision!r} ({_first_line(shown.stderr)})",
                            "pick a revision in which the file was committed (`git log --oneline -- FILE`)")
    return shown.stdout, label
