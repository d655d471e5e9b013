"""What the detail pane lists for a stream, a unit or the sheet: each field
with the text written in the file (an entered value) and what statepath
computed, plus how a typed entry becomes a value for the file.

Entered values are shown between square brackets, exactly as written in the
file: ``[68 barg]``. Computed values are shown plain, in the display units.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Any, Mapping

from thermo.errors import QuantityError
from thermo.quantities import format_quantity, parse_flow, parse_quantity
from thermo.spec import CONNECTION_ROLES, LIST_ROLES, MODELS, SPEC_KEY_KINDS, UNIT_TYPES
from tui.phase_words import phase_word

QUANTITY_KINDS = ("temperature", "pressure", "pressure_difference", "power")
NUMBER_KINDS = ("vapor_fraction", "efficiency", "ratio")

SHEET_KEYS: tuple[tuple[str, ...], ...] = (
    ("title",),
    ("model",),
    ("ambient_temperature",),
    ("atmospheric_pressure",),
    ("limits", "min_temperature"),
    ("limits", "max_temperature"),
    ("limits", "max_pressure"),
    ("limits", "max_discharge_temperature"),
)
SHEET_KINDS = {
    "title": "text",
    "model": "model",
    "ambient_temperature": "temperature",
    "atmospheric_pressure": "pressure",
    "min_temperature": "temperature",
    "max_temperature": "temperature",
    "max_pressure": "pressure",
    "max_discharge_temperature": "temperature",
}
STREAM_KEYS = ("temperature", "pressure", "vapor_fraction", "flow", "composition")
STREAM_KINDS = {
    "temperature": "temperature",
    "pressure": "pressure",
    "vapor_fraction": "vapor_fraction",
    "flow": "flow",
    "composition": "composition",
}


@dataclass(frozen=True)
class Field:
    """One row of the detail pane. ``entered`` is the file's text for the key
    (None when the file does not write it); ``computed`` what the solve gave;
    ``note`` a word about the row (e.g. "or" for an alternative specification)."""

    key_path: tuple
    label: str
    kind: str
    entered: str | None
    computed: str | None = None
    editable: bool = True
    note: str = ""


def shown(value: Any) -> str:
    """A value from the document as the engineer would type it back."""
    if isinstance(value, bool):
        return "true" if value else "false"
    if isinstance(value, float):
        return repr(value)
    if isinstance(value, dict):
        return ", ".join(f"{key}={shown(inner)}" for key, inner in value.items())
    if isinstance(value, (list, tuple)):
        return ", ".join(shown(inner) for inner in value)
    return str(value)


def marked(entered: str | None) -> str:
    """``[68 barg]`` for a value written in the file, ``—`` for none."""
    return "\u2014" if entered is None else f"[{entered}]"


def _atmospheric(document: Mapping) -> float:
    text = document.get("atmospheric_pressure")
    if isinstance(text, str):
        try:
            return parse_quantity(text, "pressure")
        except QuantityError:
            pass
    return 101325.0


def _number(text: str, kind: str) -> float:
    cleaned = text.strip().replace("\u2212", "-")
    try:
        value = float(cleaned)
    except ValueError:
        raise ValueError(f"{text!r} is not a number; {kind.replace('_', ' ')} is a plain number such as 0.78") from None
    if value != value or value in (float("inf"), float("-inf")):
        raise ValueError(f"{text!r} is not a finite number")
    if kind in ("vapor_fraction",) and not 0.0 <= value <= 1.0:
        raise ValueError(f"a vapor fraction is between 0 and 1, not {cleaned}")
    if kind == "efficiency" and not 0.0 < value <= 1.0:
        raise ValueError(f"an efficiency is above 0 and at most 1 (0.78, not 78), not {cleaned}")
    if kind == "ratio" and value <= 0.0:
        raise ValueError(f"a ratio is above zero, not {cleaned}")
    return int(value) if cleaned.lstrip("+-").isdigit() else value


def _names(text: str) -> list[str]:
    return [part.strip() for part in text.replace(";", ",").split(",") if part.strip()]


def parse_entry(kind: str, text: str, document: Mapping) -> Any:
    """The value to write for an entry typed as ``text`` into a field of
    ``kind``: the text itself (checked) for values with units, a number, a
    list or a table. Raises ``QuantityError`` or ``ValueError`` with a message
    for the engineer."""
    text = text.strip()
    if kind in QUANTITY_KINDS:
        parse_quantity(text, kind, atmospheric_pressure_Pa=_atmospheric(document))
        return text
    if kind == "flow":
        parse_flow(text)
        return text
    if kind in NUMBER_KINDS:
        return _number(text, kind)
    if kind == "fractions":
        parts = _names(text.strip("[]"))
        if not parts:
            raise ValueError("give the fractions separated by commas, such as 0.6, 0.4")
        return [float(_number(part, "fraction")) for part in parts]
    if kind == "composition":
        table: dict[str, float] = {}
        for part in _names(text.strip("{}")):
            name, sep, value = part.replace(":", "=").partition("=")
            if not sep or not name.strip():
                raise ValueError(f"write each component as name=fraction, such as methane=0.9, not {part!r}")
            table[name.strip()] = float(_number(value, "mole fraction"))
        if not table:
            raise ValueError("give at least one component, such as methane=1")
        return table
    if kind == "name":
        if not text:
            raise ValueError("give a stream name")
        return text
    if kind == "names":
        names = _names(text.strip("[]"))
        if not names:
            raise ValueError("give stream names separated by commas")
        return names
    if kind == "model":
        if text not in MODELS:
            raise ValueError(f"{text!r} is not an equation of state statepath knows; choose one of {', '.join(MODELS)}")
        return text
    if kind == "text":
        return text
    raise ValueError(f"this field ({kind}) cannot be edited")


# ------------------------------------------------------------------ listings


def _q(value: float | None, kind: str, system: str) -> str | None:
    return None if value is None else format_quantity(value, kind, system)


def _converted(value: Any, kind: str, document: Mapping, system: str) -> str | None:
    """An entered value with a unit, shown in the display units (gauge
    pressures as absolute), so the two columns can be compared."""
    if not isinstance(value, str) or kind not in QUANTITY_KINDS:
        return None
    try:
        return format_quantity(parse_quantity(value, kind, atmospheric_pressure_Pa=_atmospheric(document)), kind, system)
    except (QuantityError, ValueError):
        return None


def sheet_fields(document: Mapping, result, system: str) -> list[Field]:
    """Settings of the whole sheet: title, model, dead state, site limits."""
    rows: list[Field] = []
    for key_path in SHEET_KEYS:
        value: Any = document
        for key in key_path:
            value = value.get(key) if isinstance(value, Mapping) else None
        kind = SHEET_KINDS[key_path[-1]]
        computed = _converted(value, kind, document, system)
        if key_path == ("model",) and value is None:
            computed = "peng-robinson (default)"
        rows.append(Field(key_path, ".".join(key_path), kind, None if value is None else shown(value), computed))
    return rows


def stream_fields(document: Mapping, name: str, stream_result, system: str) -> list[Field]:
    """A feed's written state and composition with its computed state; for a
    stream made by a unit, only computed rows (it is set by that unit)."""
    feeds = document.get("streams") if isinstance(document.get("streams"), Mapping) else {}
    table = feeds.get(name) if isinstance(feeds, Mapping) else None
    state = stream_result.state if stream_result is not None else None
    computed = {
        "temperature": _q(state.temperature, "temperature", system) if state else None,
        "pressure": _q(state.pressure, "pressure", system) if state else None,
        "vapor_fraction": (f"{state.vapor_fraction:.4f} ({phase_word(state)})" if state else None),
        "flow": _q(stream_result.molar_flow, "molar_flow", system) if stream_result else None,
    }
    rows: list[Field] = []
    if isinstance(table, Mapping):
        for key in STREAM_KEYS:
            value = table.get(key)
            rows.append(Field(("streams", name, key), key, STREAM_KINDS[key],
                              None if value is None else shown(value), computed.get(key)))
    else:
        for key in ("temperature", "pressure", "vapor_fraction", "flow"):
            rows.append(Field(("streams", name, key), key, STREAM_KINDS[key], None, computed[key], editable=False))
    if stream_result is not None:
        rows.append(Field((), "mass flow", "computed", None, _q(stream_result.mass_flow, "mass_flow", system),
                          editable=False))
        rows.append(Field((), "enthalpy", "computed", None, _q(state.enthalpy, "molar_energy", system), editable=False))
        rows.append(Field((), "entropy", "computed", None, _q(state.entropy, "molar_entropy", system), editable=False))
        try:
            z = state.compressibility
        except Exception:  # noqa: BLE001 - a hand-made state without phases has no volume
            z = None
        if z is not None:
            rows.append(Field((), "Z", "computed", None, f"{z:.4f}", editable=False))
    return rows


def unit_key_kind(key: str) -> str:
    """How a unit key's value is typed: "name", "names" or a quantity kind."""
    if key in LIST_ROLES:
        return "names"
    if key in CONNECTION_ROLES:
        return "name"
    return SPEC_KEY_KINDS.get(key, "text")


def unit_fields(document: Mapping, name: str, unit_result, system: str) -> list[Field]:
    """A unit's type, connections and specification keys (written ones and
    the alternatives it could take), then its computed balance."""
    units = document.get("units") if isinstance(document.get("units"), Mapping) else {}
    table = units.get(name) if isinstance(units, Mapping) else None
    table = table if isinstance(table, Mapping) else {}
    type_name = table.get("type")
    unit_type = UNIT_TYPES.get(type_name) if isinstance(type_name, str) else None
    rows = [Field(("units", name, "type"), "type", "fixed", shown(type_name) if type_name else None,
                  editable=False, note="fixed")]
    if unit_type is None:
        for key, value in table.items():
            if key != "type":
                rows.append(Field(("units", name, key), key, unit_key_kind(key), shown(value)))
    else:
        for role in unit_type.connections:
            value = table.get(role)
            rows.append(Field(("units", name, role), role, unit_key_kind(role), None if value is None else shown(value)))
        for group in unit_type.groups:
            written = [k for k in group.keys if k in table]
            for key in group.keys:
                value = table.get(key)
                note = ""
                if value is None:
                    if written:
                        note = "or"
                    elif group.default and group.default[0] == key:
                        note = f"default {group.default[1]:g}"
                rows.append(Field(("units", name, key), key, unit_key_kind(key),
                                  None if value is None else shown(value),
                                  _converted(value, unit_key_kind(key), document, system), note=note))
        for key in unit_type.optional:
            value = table.get(key)
            rows.append(Field(("units", name, key), key, unit_key_kind(key),
                              None if value is None else shown(value),
                              _converted(value, unit_key_kind(key), document, system),
                              note="" if value is not None else "optional"))
        for key, value in table.items():
            if key not in unit_type.allowed_keys:
                rows.append(Field(("units", name, key), key, "text", shown(value), note="unknown key"))
    if unit_result is not None:
        if unit_result.duty_W is not None:
            rows.append(Field((), "duty", "computed", None, _q(unit_result.duty_W, "power", system), editable=False))
        if unit_result.power_W is not None:
            rows.append(Field((), "power", "computed", None, _q(unit_result.power_W, "power", system), editable=False))
        rows.append(Field((), "entropy generation", "computed", None,
                          _q(unit_result.entropy_generation_W_K, "entropy_rate", system), editable=False))
        rows.append(Field((), "lost work", "computed", None, _q(unit_result.lost_work_W, "power", system),
                          editable=False))
        rows.append(Field((), "balance residual", "computed", None,
                          _q(unit_result.energy_balance_residual_W, "power", system), editable=False))
    return rows


def setting_unit_key(document: Mapping, stream: str, key: str) -> tuple | None:
    """The unit key that sets ``key`` (temperature, pressure, vapor_fraction)
    of a stream made by a unit: ``("units", "line-heater",
    "outlet_temperature")`` for the heater's outlet; None when the unit that
    makes the stream has no such key (a valve's outlet temperature follows
    from its balance)."""
    units = document.get("units") if isinstance(document.get("units"), Mapping) else {}
    for unit_name, table in (units.items() if isinstance(units, Mapping) else ()):
        if not isinstance(table, Mapping):
            continue
        unit_type = UNIT_TYPES.get(table.get("type"))
        if unit_type is None:
            continue
        for role in unit_type.connections:
            made_here = table.get(role) == stream if role not in LIST_ROLES else False
            if role.endswith("outlet") and made_here:
                prefix = role[: -len("outlet")]
                candidate = f"{prefix}outlet_{key}"
                if candidate in unit_type.allowed_keys:
                    return ("units", unit_name, candidate)
                return None
    return None


def group_rivals(document: Mapping, key_path: tuple) -> list[tuple]:
    """Written keys of the same specification group as ``key_path`` (a unit
    key): setting one of a group replaces the others."""
    if len(key_path) != 3 or key_path[0] != "units":
        return []
    units = document.get("units") if isinstance(document.get("units"), Mapping) else {}
    table = units.get(key_path[1]) if isinstance(units, Mapping) else None
    if not isinstance(table, Mapping):
        return []
    unit_type = UNIT_TYPES.get(table.get("type"))
    if unit_type is None:
        return []
    for group in unit_type.groups:
        if key_path[2] in group.keys:
            return [("units", key_path[1], k) for k in group.keys if k != key_path[2] and k in table]
    return []


def key_path_text(key_path: tuple) -> str:
    """``units.choke.outlet_pressure`` for a key path."""
    from thermo.errors import format_key_path

    return format_key_path(key_path)
