"""Pressure-enthalpy and temperature-entropy charts drawn in text cells.

Lines, the saturation dome of a pure fluid and the phase envelope (bubble
and dew curves) of a mixture are drawn in braille dots (2 x 4 dots a cell);
each stream is a point drawn as its tag (1, 2, ... then a, b, ...) with a
legend underneath. Without colour the parts stay apart by their drawing: the
dome and envelope are dotted, unit paths are solid, streams are tags.

Everything here only converts and lays out values that ``thermo`` computed;
``saturation_dome`` asks ``thermo.flash`` for the saturation states and
``tui.envelope`` traces the bubble and dew curves.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field
from typing import Callable, Iterable, Sequence

from rich.style import Style
from rich.text import Text

from thermo.quantities import display_units, format_number, to_display

PRESSURE_ENTHALPY = "ph"
TEMPERATURE_ENTROPY = "ts"
CHART_KINDS = (PRESSURE_ENTHALPY, TEMPERATURE_ENTROPY)
CHART_TITLES = {PRESSURE_ENTHALPY: "pressure-enthalpy", TEMPERATURE_ENTROPY: "temperature-entropy"}

TAGS = "123456789abcdefghijklmnopqrstuvwxyzABCDEFGHIJKLMNOPQRSTUVWXYZ"

_BRAILLE_BASE = 0x2800
# Bit of each dot in a braille cell, by (column, row) within the cell.
_DOT_BITS = {
    (0, 0): 0x01, (0, 1): 0x02, (0, 2): 0x04, (0, 3): 0x40,
    (1, 0): 0x08, (1, 1): 0x10, (1, 2): 0x20, (1, 3): 0x80,
}

LAYER_DOME = "dome"
LAYER_ENVELOPE = "envelope"
LAYER_PATH = "path"
_LAYER_STYLES = {LAYER_DOME: Style(dim=True), LAYER_ENVELOPE: Style(dim=True), LAYER_PATH: Style(bold=True)}
ENVELOPE_CUT_NOTE = "envelope ends near the critical point (the points beyond did not converge)"


# ------------------------------------------------------------------ data


@dataclass(frozen=True)
class DomeState:
    """One temperature on the saturation curve of a pure fluid, SI:
    K, Pa, J/mol, J/(mol K) of the saturated liquid and vapor."""

    temperature: float
    pressure: float
    liquid_enthalpy: float
    vapor_enthalpy: float
    liquid_entropy: float
    vapor_entropy: float


@dataclass(frozen=True)
class Dome:
    """The saturation dome of ``component``: states from cold to near critical."""

    component: str
    states: tuple[DomeState, ...]


@dataclass(frozen=True)
class ChartPoint:
    tag: str
    name: str
    x: float
    y: float


@dataclass(frozen=True)
class ChartLine:
    name: str
    start: tuple[float, float]
    end: tuple[float, float]


@dataclass(frozen=True)
class ChartData:
    """A chart ready to draw, in display units (``y`` on a log scale for P-H)."""

    kind: str
    x_label: str
    y_label: str
    log_y: bool
    points: tuple[ChartPoint, ...]
    lines: tuple[ChartLine, ...]
    dome: tuple[tuple[tuple[float, float], ...], ...] = ()  # curves: liquid side, vapor side
    notes: tuple[str, ...] = ()
    envelope: tuple[tuple[tuple[float, float], ...], ...] = ()  # curves: bubble, dew
    envelope_source: str = ""  # whose composition the envelope is of


def _axes(kind: str, system: str):
    if kind == PRESSURE_ENTHALPY:
        return (
            ("molar_energy", lambda s: s.enthalpy, f"H [{display_units('molar_energy', system)}]"),
            ("pressure", lambda s: s.pressure, f"P [{display_units('pressure', system)}]"),
            True,
        )
    if kind == TEMPERATURE_ENTROPY:
        return (
            ("molar_entropy", lambda s: s.entropy, f"S [{display_units('molar_entropy', system)}]"),
            ("temperature", lambda s: s.temperature, f"T [{display_units('temperature', system)}]"),
            False,
        )
    raise ValueError(f"unknown chart kind {kind!r}; known: {', '.join(CHART_KINDS)}")


def _unit_streams(unit, result) -> tuple[list[str], list[str]]:
    """Inlet and outlet stream names of a solved unit, from the streams' sources."""
    outlets = [name for name, stream in result.streams.items() if stream.source_unit == unit.name]
    inlets = list(unit.details.get("inlets", ())) if isinstance(unit.details.get("inlets"), (list, tuple)) else []
    return inlets, outlets


def chart_data(
    result,
    kind: str,
    system: str,
    *,
    dome: Dome | None = None,
    envelope=None,
    connections: dict[str, tuple[Sequence[str], Sequence[str]]] | None = None,
    notes: Iterable[str] = (),
) -> ChartData:
    """The points, paths and dome or phase envelope (a
    ``tui.envelope.PhaseEnvelope``) of ``result`` (a ``SheetResult``) for a
    chart of ``kind`` ("ph" or "ts") in the display ``system``.

    ``connections`` maps unit names to (inlet names, outlet names); without
    it, outlets are found from each stream's ``source_unit`` and a unit's
    paths need its inlets in ``details["inlets"]``.
    """
    (x_kind, x_of, x_label), (y_kind, y_of, y_label), log_y = _axes(kind, system)
    points: list[ChartPoint] = []
    position: dict[str, tuple[float, float]] = {}
    for number, (name, stream) in enumerate(result.streams.items()):
        x = to_display(x_of(stream.state), x_kind, system)
        y = to_display(y_of(stream.state), y_kind, system)
        if not (math.isfinite(x) and math.isfinite(y)) or (log_y and y <= 0):
            continue
        tag = TAGS[number] if number < len(TAGS) else "*"
        points.append(ChartPoint(tag, name, x, y))
        position[name] = (x, y)
    lines: list[ChartLine] = []
    for unit in result.units.values():
        if connections is not None and unit.name in connections:
            inlets, outlets = connections[unit.name]
        else:
            inlets, outlets = _unit_streams(unit, result)
        for inlet in inlets:
            for outlet in outlets:
                if inlet in position and outlet in position:
                    lines.append(ChartLine(unit.name, position[inlet], position[outlet]))
    curves: list[tuple[tuple[float, float], ...]] = []
    if dome is not None and dome.states:
        if kind == PRESSURE_ENTHALPY:
            liquid = [(s.liquid_enthalpy, s.pressure) for s in dome.states]
            vapor = [(s.vapor_enthalpy, s.pressure) for s in dome.states]
        else:
            liquid = [(s.liquid_entropy, s.temperature) for s in dome.states]
            vapor = [(s.vapor_entropy, s.temperature) for s in dome.states]
        for curve in (liquid, vapor):
            curves.append(tuple((to_display(a, x_kind, system), to_display(b, y_kind, system)) for a, b in curve))
    envelope_curves: list[tuple[tuple[float, float], ...]] = []
    notes = list(notes)
    if envelope is not None:
        for side in (envelope.bubble, envelope.dew):
            envelope_curves.append(tuple((to_display(x_of(s), x_kind, system), to_display(y_of(s), y_kind, system))
                                         for s in side))
        if envelope.cut:
            notes.append(ENVELOPE_CUT_NOTE)
    return ChartData(kind, x_label, y_label, log_y, tuple(points), tuple(lines), tuple(curves), tuple(notes),
                     tuple(envelope_curves), envelope.source if envelope is not None else "")


# ------------------------------------------------------------------ scales


def nice_ticks(low: float, high: float, count: int = 5) -> list[float]:
    """About ``count`` round values (1, 2 or 5 times a power of ten apart)
    covering [low, high]."""
    if not (math.isfinite(low) and math.isfinite(high)):
        return []
    if high <= low:
        return [low]
    raw = (high - low) / max(count - 1, 1)
    power = 10.0 ** math.floor(math.log10(raw))

    def ticks_for(step: float) -> list[float]:
        first = math.ceil(low / step - 1e-9) * step
        values, value = [], first
        while value <= high + step * 1e-9:
            values.append(0.0 if abs(value) < step * 1e-9 else value)
            value += step
        return values

    candidates = [ticks_for(m * power) for m in (1, 2, 2.5, 5, 10)]
    return min(reversed(candidates), key=lambda ticks: abs(len(ticks) - count))


def log_ticks(low: float, high: float) -> list[float]:
    """Decades within [low, high], with 2 and 5 between when there are few."""
    if low <= 0 or high <= low:
        return [low] if low > 0 else []
    first, last = math.floor(math.log10(low)), math.ceil(math.log10(high))
    multipliers = (1,) if last - first > 3 else (1, 2, 5)
    ticks = [m * 10.0 ** e for e in range(first, last + 1) for m in multipliers]
    inside = [t for t in ticks if low * (1 - 1e-9) <= t <= high * (1 + 1e-9)]
    if len(inside) >= 3:
        return inside
    return [t for t in nice_ticks(low, high, 4) if t > 0] or [low, high]  # less than a decade: even steps


def _padded(low: float, high: float, log: bool) -> tuple[float, float]:
    if log:
        low, high = math.log10(low), math.log10(high)
    span = high - low
    if span <= 0:
        span = abs(low) * 0.1 or 1.0
        low, high = low - span / 2, high + span / 2
    else:
        low, high = low - span * 0.06, high + span * 0.06
    if log:
        return 10.0 ** low, 10.0 ** high
    return low, high


# ------------------------------------------------------------------ canvas


class BrailleCanvas:
    """A grid of ``width`` x ``height`` cells; dots are addressed in a
    (2 * width) x (4 * height) space with y growing downwards."""

    def __init__(self, width: int, height: int):
        self.width = max(1, width)
        self.height = max(1, height)
        self._bits = [[0] * self.width for _ in range(self.height)]
        self._layer = [[""] * self.width for _ in range(self.height)]
        self._text: dict[tuple[int, int], tuple[str, str]] = {}

    @property
    def dot_width(self) -> int:
        return self.width * 2

    @property
    def dot_height(self) -> int:
        return self.height * 4

    def dot(self, x: int, y: int, layer: str = LAYER_PATH) -> None:
        if 0 <= x < self.dot_width and 0 <= y < self.dot_height:
            column, row = x // 2, y // 4
            self._bits[row][column] |= _DOT_BITS[(x % 2, y % 4)]
            if self._layer[row][column] != LAYER_PATH:
                self._layer[row][column] = layer

    def line(self, x0: float, y0: float, x1: float, y1: float, layer: str = LAYER_PATH, every: int = 1) -> None:
        """A straight line in dot space; ``every`` > 1 draws it dotted."""
        steps = int(max(abs(x1 - x0), abs(y1 - y0))) + 1
        for step in range(0, steps + 1):
            if step % every:
                continue
            t = step / steps if steps else 0.0
            self.dot(round(x0 + (x1 - x0) * t), round(y0 + (y1 - y0) * t), layer)

    def put(self, column: int, row: int, text: str, style: str = "bold") -> None:
        """Text over the dots, starting at a cell (clipped at the right edge)."""
        for offset, character in enumerate(text):
            if 0 <= column + offset < self.width and 0 <= row < self.height:
                self._text[(column + offset, row)] = (character, style)

    def rows(self) -> list[Text]:
        lines = []
        for row in range(self.height):
            line = Text()
            for column in range(self.width):
                if (column, row) in self._text:
                    character, style = self._text[(column, row)]
                    line.append(character, style)
                    continue
                bits = self._bits[row][column]
                if bits:
                    line.append(chr(_BRAILLE_BASE + bits), _LAYER_STYLES.get(self._layer[row][column]))
                else:
                    line.append(" ")
            lines.append(line)
        return lines


# ------------------------------------------------------------------ drawing


def _tick_label(value: float) -> str:
    return "0" if value == 0 else format_number(value, significant=3, max_decimals=3)


def draw_chart(data: ChartData, width: int, height: int) -> list[Text]:
    """The chart as ``height`` lines of ``width`` cells: plot, axes, tick
    labels and axis names; the legend is ``legend_lines``."""
    width, height = max(width, 24), max(height, 8)
    xs = [p.x for p in data.points] + [x for line in data.lines for x in (line.start[0], line.end[0])]
    ys = [p.y for p in data.points] + [y for line in data.lines for y in (line.start[1], line.end[1])]
    for curve in data.dome + data.envelope:
        xs.extend(x for x, _ in curve)
        ys.extend(y for _, y in curve)
    if data.log_y:
        ys = [y for y in ys if y > 0]
    if not xs or not ys:
        empty = [Text(" " * width) for _ in range(height)]
        empty[height // 2] = Text("no states to draw".center(width))
        return empty
    x_low, x_high = _padded(min(xs), max(xs), False)
    y_low, y_high = _padded(min(ys), max(ys), data.log_y)
    y_ticks = log_ticks(y_low, y_high) if data.log_y else nice_ticks(y_low, y_high, max(3, height // 4))
    y_labels = [_tick_label(t) for t in y_ticks]
    margin = max([len(label) for label in y_labels] + [4]) + 1
    plot_width, plot_height = width - margin - 1, height - 3
    canvas = BrailleCanvas(plot_width, plot_height)

    def to_dot(x: float, y: float) -> tuple[float, float]:
        fx = (x - x_low) / (x_high - x_low)
        if data.log_y:
            fy = (math.log10(y) - math.log10(y_low)) / (math.log10(y_high) - math.log10(y_low))
        else:
            fy = (y - y_low) / (y_high - y_low)
        return fx * (canvas.dot_width - 1), (1.0 - fy) * (canvas.dot_height - 1)

    for curve in data.dome:
        drawable = [(x, y) for x, y in curve if y > 0 or not data.log_y]
        for (xa, ya), (xb, yb) in zip(drawable, drawable[1:]):
            canvas.line(*to_dot(xa, ya), *to_dot(xb, yb), layer=LAYER_DOME, every=2)
    if len(data.dome) == 2 and data.dome[0] and data.dome[1]:
        top_liquid, top_vapor = data.dome[0][-1], data.dome[1][-1]
        canvas.line(*to_dot(*top_liquid), *to_dot(*top_vapor), layer=LAYER_DOME, every=2)
    # The bubble and dew curves are left open at the top: where they stopped
    # converging nothing is known of the curve between them.
    for curve in data.envelope:
        drawable = [(x, y) for x, y in curve if y > 0 or not data.log_y]
        for (xa, ya), (xb, yb) in zip(drawable, drawable[1:]):
            canvas.line(*to_dot(xa, ya), *to_dot(xb, yb), layer=LAYER_ENVELOPE, every=2)
    for line in data.lines:
        canvas.line(*to_dot(*line.start), *to_dot(*line.end), layer=LAYER_PATH)
    for point in data.points:
        dx, dy = to_dot(point.x, point.y)
        canvas.put(int(dx) // 2, int(dy) // 4, point.tag, "bold reverse")

    plot_rows = canvas.rows()
    tick_rows: dict[int, str] = {}
    for tick, label in zip(y_ticks, y_labels):
        _, dy = to_dot(x_low, tick)
        row = int(round(dy)) // 4
        if 0 <= row < plot_height and row not in tick_rows:
            tick_rows[row] = label
    lines: list[Text] = []
    for row, plot_row in enumerate(plot_rows):
        label = tick_rows.get(row, "")
        axis = "┤" if label else "│"
        line = Text(label.rjust(margin - 1) + " " + axis, style="dim")
        line.append_text(plot_row)
        lines.append(line)
    x_ticks = nice_ticks(x_low, x_high, max(3, plot_width // 12))
    axis = ["─"] * plot_width
    labels = [" "] * plot_width
    for tick in x_ticks:
        dx, _ = to_dot(tick, y_ticks[0] if y_ticks else 1.0)
        column = int(round(dx)) // 2
        if 0 <= column < plot_width:
            axis[column] = "┬"
            text = _tick_label(tick)
            start = max(0, min(plot_width - len(text), column - len(text) // 2))
            if all(c == " " for c in labels[max(0, start - 1): start + len(text) + 1]):
                labels[start: start + len(text)] = list(text)
    lines.append(Text(" " * margin + "└" + "".join(axis), style="dim"))
    lines.append(Text(" " * (margin + 1) + "".join(labels), style="dim"))
    title = f"{data.y_label} vs {data.x_label}" + ("  (log pressure)" if data.log_y else "")
    lines.append(Text((" " * (margin + 1) + title)[:width], style="bold"))
    return [line[:width] if line.cell_len > width else line for line in lines]


def legend_lines(data: ChartData, width: int) -> list[Text]:
    """Tags and names of the streams, as many to a line as fit, then the
    drawing key (which marks mean what) and any notes."""
    lines: list[Text] = []
    line = Text()
    for point in data.points:
        entry = Text()
        entry.append(point.tag, "bold reverse")
        entry.append(f" {point.name}  ")
        if line.cell_len + entry.cell_len > width and line.cell_len:
            lines.append(line)
            line = Text()
        line.append_text(entry)
    if line.cell_len:
        lines.append(line)
    key = "tag = stream  ⣿ solid = unit path"
    key += "  ⡁ dotted = saturation dome" if data.dome else ""
    lines.append(Text(key[:width], style="dim"))
    if data.envelope:
        lines.append(Text(f"⡁ dotted = bubble line (left) and dew line (right) of {data.envelope_source}"[:width],
                          style="dim"))
    for note in data.notes:
        lines.append(Text(note[:width], style="italic"))
    return lines


# ------------------------------------------------------------------ the dome


def pure_component_index(result) -> int | None:
    """Index of the one component every stream of ``result`` is made of, or
    None when the sheet holds a mixture (no single saturation dome)."""
    present: set[int] = set()
    for stream in result.streams.values():
        composition = stream.state.composition
        present.update(i for i, value in enumerate(composition) if value > 1e-12)
        if len(present) > 1:
            return None
    return next(iter(present)) if len(present) == 1 else None


def saturation_dome(model, index: int, component: str, *, critical_temperature: float,
                    points: int = 36, coldest: float | None = None) -> Dome:
    """The saturated liquid and vapor of component ``index`` of ``model``,
    from ``coldest`` (K; default 0.5 Tc) to just below the critical point,
    computed by ``thermo.flash`` and ``thermo.properties``. Raises what they
    raise when the saturation calculation fails."""
    import numpy as np

    try:
        from thermo.flash import saturation_pressure
    except ImportError:
        from thermo.saturation import saturation_pressure
    from thermo.properties import single_phase_state

    size = len(model.mixture.names) if hasattr(model, "mixture") else index + 1
    x = np.zeros(size)
    x[index] = 1.0
    low = max(coldest if coldest is not None else 0.5 * critical_temperature, 0.35 * critical_temperature)
    high = 0.995 * critical_temperature
    if low >= high:
        low = 0.5 * critical_temperature
    # Closer spacing near the top, where the dome turns.
    fractions = 1.0 - (1.0 - np.linspace(0.0, 1.0, points)) ** 1.6
    states: list[DomeState] = []
    last_error: Exception | None = None
    for temperature in low + (high - low) * fractions:
        try:
            pressure = float(saturation_pressure(model, float(temperature), index))
            liquid = single_phase_state(model, float(temperature), pressure, x, root="liquid")
            vapor = single_phase_state(model, float(temperature), pressure, x, root="vapor")
        except Exception as error:  # noqa: BLE001 - any failure of one point only drops that point
            last_error = error
            continue
        states.append(DomeState(float(temperature), pressure, liquid.enthalpy, vapor.enthalpy,
                                liquid.entropy, vapor.entropy))
    if len(states) < 3:
        raise RuntimeError(f"the saturation curve of {component} could not be computed"
                           + (f": {last_error}" if last_error else ""))
    return Dome(component, tuple(states))


def dome_for_result(result, model_builder: Callable[[], object] | None) -> tuple[Dome | None, str | None]:
    """The dome for a solved sheet when it is one pure fluid: (dome, None),
    else (None, a note saying why there is none)."""
    index = pure_component_index(result)
    if index is None:
        return None, "no saturation dome: the sheet holds a mixture"
    if result.model == "ideal-gas":
        return None, "no saturation dome: the ideal gas never condenses"
    if model_builder is None:
        return None, "no saturation dome: the equation of state is not at hand"
    try:
        model = model_builder()
        component = result.component_names[index]
        critical = float(model.mixture.critical_temperature[index])
        coldest = min(s.state.temperature for s in result.streams.values())
        dome = saturation_dome(model, index, component, critical_temperature=critical,
                               coldest=min(coldest * 0.9, 0.6 * critical))
    except Exception as error:  # noqa: BLE001 - the chart goes on without the dome, saying why
        return None, f"saturation dome skipped: {error}"
    return dome, None
