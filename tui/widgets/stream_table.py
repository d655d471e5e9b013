"""The live table of streams: one row per stream, its state in display units."""

from __future__ import annotations

from typing import Mapping

from rich.text import Text

from thermo.quantities import display_units, format_number

from tui.phase_words import WITH_FRACTION, phase_word

from .cells import cell, entered_quantities, flag_variants, flags_by_place, number
from .fitted_table import Column, FittedTable, header_unit
from .row_table import NamedRows

# The phase word spelled out, and shortened for a narrow terminal.
PHASE_WORDS = {
    "vapor": ("vapor", "vapor"),
    "liquid": ("liquid", "liquid"),
    "supercritical": ("supercritical", "supercrit."),
    "two-phase": ("two-phase", "2\u03c6"),
    "three-phase": ("three-phase", "3\u03c6"),
    "liquid-liquid": ("liquid-liquid", "liq-liq"),
}
# An entered vapor fraction beside a one-phase word: "liquid [0.00]", "liq [0.00]".
SHORT_WITH_FRACTION = {"vapor": "vap", "liquid": "liq", "supercritical": "supercrit.", "liquid-liquid": "liq-liq"}


def phase_cell(phase: str, vapor_fraction: float, entered: bool) -> tuple[Text, Text]:
    """The phase column: the phase word, with the vapor fraction where it
    says something (two-phase, or written in the file: then in brackets)."""
    full, short = PHASE_WORDS.get(phase, (phase, phase))
    fraction = format_number(vapor_fraction, significant=3, max_decimals=3)
    if entered:
        mark = f"[{fraction}]"
        short = short if phase in WITH_FRACTION else SHORT_WITH_FRACTION.get(phase, short)
        return Text(f"{full} {mark}", style="bold"), Text(f"{short} {mark}", style="bold")
    if phase in WITH_FRACTION:
        return Text(f"{full} {fraction}"), Text(f"{short} {fraction}")
    return Text(full), Text(short)


def stream_columns(system: str) -> tuple[Column, ...]:
    return (
        Column("name", "stream", shrink=1, min_width=8),
        Column("T", "T", header_unit(display_units("temperature", system)), right=True),
        Column("P", "P", header_unit(display_units("pressure", system)), right=True),
        Column("flow", "flow", header_unit(display_units("molar_flow", system)), right=True),
        Column("phase", "phase", "vap. frac"),
        Column("H", "H", header_unit(display_units("molar_energy", system)), right=True),
        Column("S", "S", header_unit(display_units("molar_entropy", system)), right=True),
        Column("flags", "flags"),
    )


class StreamTable(NamedRows, FittedTable):
    """Streams of the solved sheet. Posts ``Picked`` when the cursor lands on
    a stream and ``Opened`` when one is chosen with enter."""

    class Picked(NamedRows.Picked):
        """The cursor landed on the stream ``name``."""

    class Opened(NamedRows.Opened):
        """The stream ``name`` was chosen."""

    def show(self, result, document: Mapping, system: str) -> None:
        """Fill the table from ``result`` (a SheetResult or None) keeping the
        cursor on the same stream where it still exists."""
        rows = []
        if result is not None:
            pinned = entered_quantities(document)
            places = flags_by_place(result)
            for name, stream in result.streams.items():
                state = stream.state
                fixed = pinned.get(name, set())
                rows.append((name, [
                    Text(name, style="bold" if stream.is_feed else ""),
                    cell(number(state.temperature, "temperature", system), "temperature" in fixed),
                    cell(number(state.pressure, "pressure", system), "pressure" in fixed),
                    cell(number(stream.molar_flow, "molar_flow", system), "flow" in fixed),
                    phase_cell(phase_word(state), state.vapor_fraction, "vapor_fraction" in fixed),
                    Text(number(state.enthalpy, "molar_energy", system, 6)),
                    Text(number(state.entropy, "molar_entropy", system)),
                    flag_variants(places.get(name, [])),
                ]))
        self.fill(stream_columns(system), rows)
