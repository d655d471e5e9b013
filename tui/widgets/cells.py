"""Text for table cells: numbers in display units, the entered-value
marking and the flag symbols, all readable without colour.

An entered value (written in the file) is shown between square brackets,
``[35.00]``; a computed one is padded to the same width so digits line up.
Flags carry a symbol and a word (``▲ danger``) from ``tui.render``, the same
as the command line prints.
"""

from __future__ import annotations

from typing import Mapping

from rich.text import Text

from thermo.quantities import format_number, to_display
from tui.render import collect_flags, level_label

LEVEL_STYLES = {
    "violation": "bold red",
    "danger": "bold red",
    "warning": "yellow",
    "notice": "cyan",
}
LEVEL_ORDER = ("violation", "danger", "warning", "notice")

# Unit specification keys that fix a property of an outlet stream:
# key -> (connection role of that outlet, stream quantity it fixes).
PINNING_KEYS = {
    "outlet_temperature": ("outlet", "temperature"),
    "outlet_pressure": ("outlet", "pressure"),
    "outlet_vapor_fraction": ("outlet", "vapor_fraction"),
    "hot_outlet_temperature": ("hot_outlet", "temperature"),
    "cold_outlet_temperature": ("cold_outlet", "temperature"),
}


# Most decimals worth showing: a hundredth of a kelvin, a millibar, no false precision.
MAX_DECIMALS = {"temperature": 2, "pressure": 3, "pressure_difference": 3, "molar_flow": 2, "mass_flow": 1,
                "molar_energy": 1, "molar_entropy": 3, "power": 2, "entropy_rate": 4}


def number(value_SI: float | None, kind: str, system: str, significant: int = 5) -> str:
    """A value in the display unit of ``kind``, without the unit; sums that
    cancel to rounding noise show as 0."""
    if value_SI is None:
        return "\u2014"
    shown = to_display(value_SI, kind, system)
    if kind in ("power", "entropy_rate", "molar_energy", "molar_entropy") and abs(value_SI) < 1e-7:
        shown = 0.0
    return format_number(shown, significant=significant, max_decimals=MAX_DECIMALS.get(kind, 4))


def cell(text: str, entered: bool, style: str = "") -> Text:
    """``[text]`` when entered, ``text `` otherwise: right-aligned in a column,
    the digits of both line up."""
    shown = f"[{text}]" if entered else f"{text} "
    return Text(shown, style=("bold " + style).strip() if entered else style, justify="right")


def entered_quantities(document: Mapping) -> dict[str, set[str]]:
    """Stream name -> the quantities of it the file fixes: a feed's written
    temperature, pressure, vapor fraction and flow; an outlet's temperature or
    pressure named by its unit's specification (outlet_pressure, ...)."""
    pinned: dict[str, set[str]] = {}
    streams = document.get("streams")
    if isinstance(streams, Mapping):
        for name, table in streams.items():
            if isinstance(table, Mapping):
                pinned[name] = {k for k in ("temperature", "pressure", "vapor_fraction", "flow") if k in table}
    units = document.get("units")
    if isinstance(units, Mapping):
        for table in units.values():
            if not isinstance(table, Mapping):
                continue
            for key, (role, quantity) in PINNING_KEYS.items():
                outlet = table.get(role)
                if key in table and isinstance(outlet, str):
                    pinned.setdefault(outlet, set()).add(quantity)
    return pinned


def flags_by_place(result) -> dict[str, list]:
    """Flags of ``result`` keyed by the unit that lists them and by the stream
    they concern (a caution on a unit's outlet shows on both); sheet-wide
    cautions also under "flowsheet"."""
    places: dict[str, list] = {}
    if result is None:
        return places

    def put(key: str, flag) -> None:
        bucket = places.setdefault(key, [])
        if flag not in bucket:
            bucket.append(flag)

    def stream_of(where: str) -> str | None:
        return where.split(".", 1)[1] if where.startswith("streams.") else None

    for flag in collect_flags(result):
        where = flag.where
        if where.startswith("units."):
            put(where.split(".", 1)[1], flag)
        elif stream_of(where):
            put(stream_of(where), flag)
        else:
            put(where, flag)
    for name, unit in result.units.items():
        for flag in collect_flags_of_unit(unit):
            put(name, flag)
    return places


def collect_flags_of_unit(unit) -> list:
    """The violations and cautions a unit lists, as render.Flag items."""
    from ..render import Flag

    flags = [Flag("violation", v.code, v.message, v.where or f"units.{unit.name}") for v in unit.violations]
    flags += [Flag(c.severity, c.code, c.message, c.where or f"units.{unit.name}") for c in unit.cautions]
    return sorted(flags, key=lambda flag: flag.rank)


def flag_summary(flags: list, *, short: bool = False) -> Text:
    """The worst levels present, each as symbol and word (``✖ violation``);
    ``✔ ok`` when there are none."""
    if not flags:
        return Text("\u2714 ok", style="green")
    text = Text()
    for level in LEVEL_ORDER:
        count = sum(1 for flag in flags if flag.level == level)
        if not count:
            continue
        if text:
            text.append(" ")
        label = level_label(level)
        if short:
            label = label.split(" ")[0] + " " + {"violation": "viol", "danger": "danger",
                                                 "warning": "warn", "notice": "note"}[level]
        text.append(label + (f"\u00d7{count}" if count > 1 else ""), style=LEVEL_STYLES[level])
    return text


def flag_variants(flags: list) -> tuple[Text, Text]:
    """The flag summary spelled out and shortened (``✖ violation``, ``✖ viol``),
    for a table that picks what fits; both keep symbol and word."""
    return flag_summary(flags), flag_summary(flags, short=True)


def flag_line(flag) -> Text:
    """One flag spelled out: symbol, level word, code, message."""
    text = Text()
    text.append(level_label(flag.level), style=LEVEL_STYLES.get(flag.level, ""))
    text.append(f" {flag.code}: ", style="bold")
    text.append(flag.message)
    return text
