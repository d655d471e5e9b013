"""Chart drawing: the braille canvas, scales, the chart of a solved sheet and
the saturation dome of a pure fluid."""

from __future__ import annotations

import math

import numpy as np
import pytest

from thermo.results import SheetResult, StreamResult, UnitResult
from thermo.state import StreamState
from tui.chart import (
    BrailleCanvas,
    Dome,
    DomeState,
    chart_data,
    dome_for_result,
    draw_chart,
    legend_lines,
    log_ticks,
    nice_ticks,
    pure_component_index,
)


def _state(t, p, h, s, x=(1.0,)):
    return StreamState(temperature=t, pressure=p, composition=np.array(x), phase="vapor", vapor_fraction=1.0,
                       enthalpy=h, entropy=s, phases=(), ideal_gas_enthalpy=h, ideal_gas_entropy=s)


def _result(x_in=(1.0,), x_out=(1.0,)):
    """A hand-made two-stream result (values invented for layout only)."""
    streams = {
        "feed": StreamResult("feed", _state(300.0, 50e5, -1000.0, -30.0, x_in), 10.0, 0.16, True),
        "product": StreamResult("product", _state(280.0, 10e5, -1000.0, -17.0, x_out), 10.0, 0.16, False, "valve-1"),
    }
    units = {"valve-1": UnitResult("valve-1", "valve", None, None, 130.0, 37000.0, 0.0, None)}
    return SheetResult("ok", "peng-robinson", ("methane", "ethane")[: len(x_in)], streams, units)


def test_braille_dots_map_to_their_bits():
    canvas = BrailleCanvas(2, 1)
    canvas.dot(0, 0)
    canvas.dot(1, 3)
    canvas.dot(2, 1)
    row = canvas.rows()[0].plain
    assert row[0] == chr(0x2800 + 0x01 + 0x80)
    assert row[1] == chr(0x2800 + 0x02)


def test_canvas_line_touches_both_ends_and_dotted_has_gaps():
    solid, dotted = BrailleCanvas(10, 2), BrailleCanvas(10, 2)
    solid.line(0, 0, 19, 7)
    dotted.line(0, 0, 19, 0, every=2)
    assert solid.rows()[0].plain[0] != " " and solid.rows()[1].plain[9] != " "
    assert bin(ord(dotted.rows()[0].plain[0]) - 0x2800).count("1") == 1  # one of two dots in the first cell


def test_ticks_are_round_and_cover_the_range():
    ticks = nice_ticks(3.2, 97.0, 5)
    assert ticks[0] >= 3.2 and ticks[-1] <= 97.0 and len(ticks) >= 4
    steps = {round(b - a, 9) for a, b in zip(ticks, ticks[1:])}
    assert len(steps) == 1 and next(iter(steps)) in (10, 20, 25)
    assert log_ticks(5.0, 500.0) == [5.0, 10.0, 20.0, 50.0, 100.0, 200.0, 500.0]


def test_chart_of_a_result_has_its_size_points_legend_and_path():
    data = chart_data(_result(), "ph", "SI", connections={"valve-1": (("feed",), ("product",))})
    assert [p.tag for p in data.points] == ["1", "2"] and data.log_y
    assert len(data.lines) == 1 and data.lines[0].start[1] == pytest.approx(5000.0)  # kPa
    lines = draw_chart(data, 60, 20)
    assert len(lines) == 20 and all(line.cell_len <= 60 for line in lines)
    text = "\n".join(line.plain for line in lines)
    assert "1" in text and "2" in text and "P [kPa]" in text and "H [J/mol]" in text
    assert any(0x2800 < ord(c) <= 0x28FF for c in text)  # the valve's path
    legend = " ".join(line.plain for line in legend_lines(data, 60))
    assert "1 feed" in legend and "2 product" in legend


def test_temperature_entropy_chart_uses_display_units():
    data = chart_data(_result(), "ts", "US")
    assert data.x_label.startswith("S [Btu") and data.y_label == "T [degF]" and not data.log_y
    assert data.points[0].y == pytest.approx(300.0 * 1.8 - 459.67)


def test_dome_is_drawn_dotted_and_named_in_the_key():
    dome = Dome("methane", tuple(
        DomeState(t, 1e5 * (t / 100.0) ** 4, -9000.0 + 40 * t, -1000.0 + 5 * t, -70.0 + 0.2 * t, -10.0 - 0.05 * t)
        for t in (100.0, 130.0, 160.0, 185.0)))
    data = chart_data(_result(), "ph", "SI", dome=dome)
    assert len(data.dome) == 2 and len(data.dome[0]) == 4
    assert "dotted = saturation dome" in legend_lines(data, 80)[-1].plain


def test_pure_component_found_only_for_a_single_fluid():
    assert pure_component_index(_result()) == 0
    mixture = _result((0.9, 0.1), (0.9, 0.1))
    assert pure_component_index(mixture) is None
    dome, note = dome_for_result(mixture, None)
    assert dome is None and "mixture" in note


def test_dome_of_pure_methane_from_the_saturation_functions():
    from thermo.mixture import make_mixture
    from thermo.models import make_model

    model = make_model("peng-robinson", make_mixture(["methane"]))
    dome, note = dome_for_result(_result(), lambda: model)
    assert note is None and len(dome.states) >= 10
    pressures = [s.pressure for s in dome.states]
    assert pressures == sorted(pressures)  # vapor pressure rises with temperature
    assert all(s.vapor_enthalpy > s.liquid_enthalpy for s in dome.states)
    assert all(math.isfinite(s.liquid_entropy) for s in dome.states)


def test_dome_failure_is_a_note_not_an_error():
    def broken():
        raise RuntimeError("no model today")

    dome, note = dome_for_result(_result(), broken)
    assert dome is None and "skipped" in note and "no model today" in note
