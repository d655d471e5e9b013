"""Renderings of a solved flowsheet for the command line: a Rich table for the
terminal, CSV for spreadsheets and Markdown for review comments.

Every rendering reads a ``thermo.results.SheetResult`` (SI inside) and shows
it in one display unit system ("SI", "metric" or "US", see
``thermo.quantities``). Nothing here computes a property: it only converts
and lays out.

Flags (violations, cautions) always carry a symbol and a word, so they read
the same with NO_COLOR set, in a CI log or on a monochrome terminal.
"""

from __future__ import annotations

import csv
import io
from dataclasses import dataclass

from rich import box
from rich.console import Console, Group, RenderableType
from rich.padding import Padding
from rich.table import Table
from rich.text import Text

from thermo.quantities import display_units, format_number, to_display
from thermo.results import STATUS_ERROR, STATUS_OK, STATUS_VIOLATIONS, SheetResult, UnitResult
from tui.phase_words import WITH_FRACTION, phase_word

#: The command line's spelling of a unit system -> thermo.quantities' name.
UNIT_SYSTEM_CHOICES = {"si": "SI", "metric": "metric", "us": "US"}

# Worst first. Each level: (symbol, ascii symbol, Rich style).
_LEVELS = {
    "violation": ("\u2716", "X", "bold red"),
    "danger": ("\u25b2", "!!", "bold red"),
    "warning": ("\u25b3", "!", "yellow"),
    "notice": ("\u2022", "i", "cyan"),
}
_LEVEL_ORDER = tuple(_LEVELS)
_STATUS_MARKS = {
    STATUS_OK: ("\u2714", "ok", "green"),
    STATUS_VIOLATIONS: ("\u2716", "X", "bold red"),
    STATUS_ERROR: ("\u2716", "X", "bold red"),
}


@dataclass(frozen=True)
class Flag:
    """A violation or a caution, flattened for listing. ``level`` is
    "violation" or a caution severity ("danger", "warning", "notice")."""

    level: str
    code: str
    message: str
    where: str

    @property
    def rank(self) -> int:
        """0 for the worst level; unknown severities sort last."""
        return _LEVEL_ORDER.index(self.level) if self.level in _LEVELS else len(_LEVELS)


def collect_flags(result: SheetResult) -> list[Flag]:
    """Every violation and caution of ``result``, worst first, then in unit
    order; flowsheet-wide cautions after those of the units at each level."""
    flags: list[Flag] = []
    for unit in result.units.values():
        for violation in unit.violations:
            flags.append(Flag("violation", violation.code, violation.message, violation.where or unit.name))
        for caution in unit.cautions:
            flags.append(Flag(caution.severity, caution.code, caution.message, caution.where or unit.name))
    for caution in result.cautions:
        flags.append(Flag(caution.severity, caution.code, caution.message, caution.where or "flowsheet"))
    return sorted(flags, key=lambda flag: flag.rank)  # stable: keeps unit order within a level


def count_flags(result: SheetResult) -> tuple[int, int]:
    """(violations, cautions) over the whole flowsheet."""
    flags = collect_flags(result)
    violations = sum(1 for flag in flags if flag.level == "violation")
    return violations, len(flags) - violations


def level_label(level: str, *, ascii_only: bool = False) -> str:
    """``"\u2716 violation"``: the symbol and the word of a flag level."""
    symbol = _LEVELS.get(level, ("?", "?", ""))[1 if ascii_only else 0]
    return f"{symbol} {level}"


def plural(count: int, word: str) -> str:
    """``plural(1, "caution") == "1 caution"``, ``plural(2, ...) == "2 cautions"``."""
    return f"{count} {word}{'' if count == 1 else ('es' if word.endswith('s') else 's')}"


# ------------------------------------------------------------------ numbers


def _number(value_SI: float | None, kind: str, system: str) -> str:
    """A table cell: the value in the system's unit, without the unit (the
    column header carries it); an em dash where there is no value."""
    if value_SI is None:
        return "\u2014"
    return format_number(to_display(value_SI, kind, system), significant=5, max_decimals=_decimals(kind, system))


def _decimals(kind: str, system: str) -> int:
    # Enough to see a fraction of a kelvin or a millibar, no false precision beyond.
    if kind == "temperature":
        return 2
    if kind == "pressure":
        return {"SI": 2, "metric": 3, "US": 2}[system]
    return 6


def _vapor_phase(stream) -> str:
    """The phase word; a split with a vapor adds its vapor fraction."""
    state = stream.state
    word = phase_word(state)
    if word in WITH_FRACTION:
        return f"{word} {format_number(state.vapor_fraction, significant=3, max_decimals=3)}"
    return word


def _unit_flag_summary(unit: UnitResult, ascii_only: bool) -> str:
    """The worst flags of a unit, one symbol and word per level present:
    ``"\u2716 violation \u25b3 warning"``; ``"ok"`` when there are none."""
    levels = [("violation", len(unit.violations))]
    for level in _LEVEL_ORDER[1:]:
        levels.append((level, sum(1 for c in unit.cautions if c.severity == level)))
    unknown = sum(1 for c in unit.cautions if c.severity not in _LEVELS)
    parts = []
    for level, count in levels:
        if count:
            label = level_label(level, ascii_only=ascii_only)
            parts.append(label if count == 1 else f"{label} x{count}")
    if unknown:
        parts.append(f"? {plural(unknown, 'caution')}")
    return " ".join(parts) if parts else "ok"


# ------------------------------------------------------------------ Rich


def _ascii_console(console: Console) -> bool:
    return not (console.encoding or "").lower().startswith("utf")


def _header(label: str, kind: str | None, system: str) -> str:
    """The label over its unit; a long unit breaks at its space so that the
    column stays as narrow as its numbers."""
    if kind is None:
        return label
    unit = display_units(kind, system)
    if len(unit) > 11 and " " in unit:
        unit = unit.replace(" ", "\n", 1)
    return f"{label}\n{unit}"


# One space of padding on the right and a blank column rule: two spaces between
# columns, no edges, so that a sheet's tables fit 80 columns.
_TABLE_STYLE = dict(box=box.SIMPLE_HEAD, title_justify="left", show_edge=False, pad_edge=False, padding=(0, 1, 0, 0))


def _align_headers(table: Table) -> Table:
    # Headers of two or three lines (label, unit) line up at their foot: pad
    # the shorter ones with blank lines above. (Bottom alignment of the
    # column would also push a wrapped cell's first line above its row.)
    tallest = max(str(column.header).count("\n") for column in table.columns)
    for column in table.columns:
        header = str(column.header)
        column.header = "\n" * (tallest - header.count("\n")) + header
    return table


# The columns of the stream and unit tables: (label, display kind or None),
# shared by the terminal and the Markdown renderings.
STREAM_COLUMNS = (
    ("stream", None), ("T", "temperature"), ("P", "pressure"), ("flow", "molar_flow"),
    ("phase\nvap. frac", None), ("H", "molar_energy"), ("S", "molar_entropy"),
)
UNIT_COLUMNS = (
    ("unit", None), ("type", None), ("duty", "power"), ("power", "power"),
    ("S gen", "entropy_rate"), ("lost work", "power"), ("flags", None),
)


def _stream_cells(name: str, stream, system: str) -> list[str]:
    state = stream.state
    return [
        name,
        _number(state.temperature, "temperature", system),
        _number(state.pressure, "pressure", system),
        _number(stream.molar_flow, "molar_flow", system),
        _vapor_phase(stream),
        _number(state.enthalpy, "molar_energy", system),
        _number(state.entropy, "molar_entropy", system),
    ]


def _unit_cells(name: str, unit: UnitResult, system: str, ascii_only: bool) -> list[str]:
    return [
        name,
        unit.type,
        _number(unit.duty_W, "power", system),
        _number(unit.power_W, "power", system),
        _number(unit.entropy_generation_W_K, "entropy_rate", system),
        _number(unit.lost_work_W, "power", system),
        _unit_flag_summary(unit, ascii_only),
    ]


def _rich_table(title: str, columns, system: str) -> Table:
    """Numbers right-aligned under their unit; names fold only when the
    terminal is too narrow for them."""
    table = Table(title=title, **_TABLE_STYLE)
    for label, kind in columns:
        if kind is None:
            table.add_column(label, overflow="fold")
        else:
            table.add_column(_header(label, kind, system), justify="right")
    return _align_headers(table)


def stream_table(result: SheetResult, system: str) -> Table:
    """Streams: T, P, molar flow, vapor fraction and phase, molar H and S."""
    table = _rich_table("Streams", STREAM_COLUMNS, system)
    table.columns[4].min_width = len("supercritical")
    for name, stream in result.streams.items():
        table.add_row(*_stream_cells(name, stream, system))
    return table


def unit_table(result: SheetResult, system: str, *, ascii_only: bool = False) -> Table:
    """Units: type, duty or power, entropy generation, lost work and flags."""
    table = _rich_table("Units", UNIT_COLUMNS, system)
    for name, unit in result.units.items():
        *cells, summary = _unit_cells(name, unit, system, ascii_only)
        table.add_row(*cells, Text(summary, style=_summary_style(unit)))
    return table


def _summary_style(unit: UnitResult) -> str:
    if unit.violations:
        return _LEVELS["violation"][2]
    for level in _LEVEL_ORDER[1:]:
        if any(c.severity == level for c in unit.cautions):
            return _LEVELS[level][2]
    return ""


def flag_list(flags: list[Flag], *, ascii_only: bool = False) -> RenderableType:
    """Violations and cautions, each as a line "symbol level  code  where"
    with its message indented below it, so that the message has the whole
    width of the terminal."""
    parts: list[RenderableType] = [Text("Violations and cautions", style="italic")]
    for flag in flags:
        style = _LEVELS.get(flag.level, ("", "", ""))[2]
        heading = Text()
        heading.append(level_label(flag.level, ascii_only=ascii_only), style=style)
        heading.append(f"  {flag.code}  {flag.where}")
        parts.append(heading)
        parts.append(Padding(Text(flag.message), (0, 0, 0, 4)))
    return Group(*parts)


def status_line(result: SheetResult, *, ascii_only: bool = False) -> Text:
    """``"\u2714 ok: 0 violations, 2 cautions (peng-robinson)"``."""
    symbol, ascii_symbol, style = _STATUS_MARKS.get(result.status, ("?", "?", ""))
    violations, cautions = count_flags(result)
    text = Text()
    text.append(f"{ascii_symbol if ascii_only else symbol} {result.status}", style=style)
    text.append(f": {plural(violations, 'violation')}, {plural(cautions, 'caution')}; model {result.model}")
    if result.recycle_iterations:
        text.append(f"; recycle {plural(result.recycle_iterations, 'pass')}")
    return text


def notes_lines(result: SheetResult) -> list[str]:
    """Plain remarks of the units, ``"unit: note"``."""
    return [f"{name}: {note}" for name, unit in result.units.items() for note in unit.notes]


def rich_report(result: SheetResult, system: str, *, title: str | None = None,
                ascii_only: bool = False) -> RenderableType:
    """The whole solved sheet for the terminal: title, status, streams,
    units, then violations and cautions, then notes."""
    parts: list[RenderableType] = []
    if title:
        parts.append(Text(title, style="bold"))
    parts.append(status_line(result, ascii_only=ascii_only))
    parts.append(Text(f"units: {_system_caption(system)}", style="dim"))
    if result.streams:
        parts += [Text(""), stream_table(result, system)]
    if result.units:
        parts += [Text(""), unit_table(result, system, ascii_only=ascii_only)]
    flags = collect_flags(result)
    parts.append(Text(""))
    if flags:
        parts.append(flag_list(flags, ascii_only=ascii_only))
    else:
        parts.append(Text("No violations or cautions."))
    notes = notes_lines(result)
    if notes:
        parts += [Text(""), Text("Notes", style="bold")]
        parts.extend(Text(f"  - {line}") for line in notes)
    return Group(*parts)


def _system_caption(system: str) -> str:
    return {
        "SI": "SI (K, kPa absolute, mol/s, kW)",
        "metric": "metric (degC, bar absolute, kmol/h, kW)",
        "US": "US (degF, psia, lbmol/h, Btu/h)",
    }[system]


def print_report(result: SheetResult, system: str, console: Console, *, title: str | None = None) -> None:
    """Print ``rich_report`` on ``console``, in ASCII symbols when its
    encoding cannot show the Unicode ones."""
    console.print(rich_report(result, system, title=title, ascii_only=_ascii_console(console)))


# ------------------------------------------------------------------ CSV


def _csv_number(value_SI: float | None, kind: str | None, system: str) -> str:
    if value_SI is None:
        return ""
    value = value_SI if kind is None else to_display(value_SI, kind, system)
    return f"{float(value):.10g}"


def _csv_column(name: str, kind: str, system: str) -> str:
    return f"{name} [{display_units(kind, system)}]"


def render_csv(result: SheetResult, system: str) -> str:
    """Three CSV blocks separated by a blank line, each with its header row:
    streams (first column ``stream``), units (``unit``) and flags (``level``).
    Numbers carry full precision in the system's units, named in the header
    (``temperature [degC]``); empty cells where a value does not apply."""
    out = io.StringIO()
    writer = csv.writer(out, lineterminator="\n")
    writer.writerow(
        [
            "stream",
            _csv_column("temperature", "temperature", system),
            _csv_column("pressure", "pressure", system),
            _csv_column("molar_flow", "molar_flow", system),
            _csv_column("mass_flow", "mass_flow", system),
            "vapor_fraction",
            "phase",
            _csv_column("molar_enthalpy", "molar_energy", system),
            _csv_column("molar_entropy", "molar_entropy", system),
            "feed",
        ]
    )
    for name, stream in result.streams.items():
        state = stream.state
        writer.writerow(
            [
                name,
                _csv_number(state.temperature, "temperature", system),
                _csv_number(state.pressure, "pressure", system),
                _csv_number(stream.molar_flow, "molar_flow", system),
                _csv_number(stream.mass_flow, "mass_flow", system),
                _csv_number(state.vapor_fraction, None, system),
                state.phase,
                _csv_number(state.enthalpy, "molar_energy", system),
                _csv_number(state.entropy, "molar_entropy", system),
                "yes" if stream.is_feed else "no",
            ]
        )
    out.write("\n")
    writer.writerow(
        [
            "unit",
            "type",
            _csv_column("duty", "power", system),
            _csv_column("power", "power", system),
            _csv_column("entropy_generation", "entropy_rate", system),
            _csv_column("lost_work", "power", system),
            _csv_column("energy_balance_residual", "power", system),
            "violations",
            "cautions",
        ]
    )
    for name, unit in result.units.items():
        writer.writerow(
            [
                name,
                unit.type,
                _csv_number(unit.duty_W, "power", system),
                _csv_number(unit.power_W, "power", system),
                _csv_number(unit.entropy_generation_W_K, "entropy_rate", system),
                _csv_number(unit.lost_work_W, "power", system),
                _csv_number(unit.energy_balance_residual_W, "power", system),
                len(unit.violations),
                len(unit.cautions),
            ]
        )
    out.write("\n")
    writer.writerow(["level", "where", "code", "message"])
    for flag in collect_flags(result):
        writer.writerow([flag.level, flag.where, flag.code, flag.message])
    return out.getvalue()


# ------------------------------------------------------------------ Markdown


def _md_cell(text: str) -> str:
    return text.replace("\\", "\\\\").replace("|", "\\|").replace("\n", " ")


def _md_table(header: list[str], rows: list[list[str]], right: set[int]) -> list[str]:
    lines = ["| " + " | ".join(_md_cell(h) for h in header) + " |"]
    lines.append("|" + "|".join("---:" if i in right else "---" for i in range(len(header))) + "|")
    lines.extend("| " + " | ".join(_md_cell(cell) for cell in row) + " |" for row in rows)
    return lines


def render_markdown(result: SheetResult, system: str, *, title: str | None = None) -> str:
    """GitHub-flavoured Markdown: a heading, the status, pipe tables of
    streams and units, and a list of violations and cautions; for pasting
    into a review or a report."""
    lines = [f"## {_md_cell(title)}" if title else "## Flowsheet result", ""]
    lines.append(status_line(result).plain)
    lines.append("")
    lines.append(f"Units: {_system_caption(system)}.")
    lines.append("")
    for heading, columns, rows in (
        ("Streams", STREAM_COLUMNS, [_stream_cells(n, s, system) for n, s in result.streams.items()]),
        ("Units", UNIT_COLUMNS, [_unit_cells(n, u, system, False) for n, u in result.units.items()]),
    ):
        if not rows:
            continue
        header = [label.replace("\n", ", ") + (f" ({display_units(kind, system)})" if kind else "")
                  for label, kind in columns]
        right = {i for i, (_, kind) in enumerate(columns) if kind is not None}
        lines += [f"### {heading}", "", *_md_table(header, rows, right), ""]
    flags = collect_flags(result)
    lines.append("### Violations and cautions")
    lines.append("")
    if flags:
        lines.extend(
            f"- **{level_label(f.level)}** `{f.code}` ({_md_cell(f.where)}): {_md_cell(f.message)}" for f in flags
        )
    else:
        lines.append("None.")
    notes = notes_lines(result)
    if notes:
        lines.append("")
        lines.append("### Notes")
        lines.append("")
        lines.extend(f"- {_md_cell(line)}" for line in notes)
    return "\n".join(lines) + "\n"
