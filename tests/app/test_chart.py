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


# ------------------------------------------------------------------ the phase envelope of a mixture

ROOT = __import__("pathlib").Path(__file__).resolve().parents[2]


def _solved_demo(name):
    from thermo.flowsheet import build_mixture, solve_sheet
    from thermo.models import make_model
    from thermo.sheetfile import load_sheet

    sheet = load_sheet(ROOT / "flowsheets" / name).sheet
    connections = {unit_name: (unit.inlet_streams, unit.outlet_streams) for unit_name, unit in sheet.units.items()}
    return solve_sheet(sheet), (lambda: make_model(sheet.model, build_mixture(sheet))), connections


@pytest.fixture(scope="module")
def letdown_envelope():
    from tui.envelope import envelope_for_result

    result, builder, connections = _solved_demo("gas-letdown.toml")
    envelope, note = envelope_for_result(result, builder, connections)
    return result, builder(), connections, envelope, note


def _phases_beside(model, temperature, pressure, z, shift=0.2):
    """Vapor fractions by an independent TP flash just colder and just hotter."""
    from thermo.flash import flash_tp

    return tuple(flash_tp(model, temperature + step, pressure, z).vapor_fraction for step in (-shift, shift))


def test_envelope_points_are_bubble_and_dew_points_by_tp_flash(letdown_envelope):
    # A bubble point is the warm edge of the all-liquid states at its pressure, a
    # dew point the cold edge of the all-vapor ones (definitions: Michelsen and
    # Mollerup, Thermodynamic Models, 2nd ed. (2007), ch. 12). thermo.flash.flash_tp
    # (stability test, then a split) decides the phase without the envelope code.
    result, model, _, envelope, note = letdown_envelope
    assert note is None and len(envelope.bubble) >= 8 and len(envelope.dew) >= 8
    z = np.array(envelope.composition)
    for point in envelope.bubble:
        colder, hotter = _phases_beside(model, point.temperature, point.pressure, z)
        assert colder == 0.0 and 0.0 < hotter < 1.0, (point, colder, hotter)
        if point.pressure < 0.8 * envelope.bubble[-1].pressure:
            # Away from the critical point 0.2 K past a bubble point boils little of the feed.
            assert hotter < 0.1, (point, hotter)
    for point in envelope.dew:
        colder, hotter = _phases_beside(model, point.temperature, point.pressure, z)
        assert 0.99 < colder < 1.0 and hotter == 1.0, (point, colder, hotter)


def test_envelope_is_of_the_sheet_composition_and_rises_in_pressure(letdown_envelope):
    result, _, _, envelope, _ = letdown_envelope
    feed = next(iter(result.streams.values())).state.composition
    assert envelope.source == "the sheet's composition"
    assert np.allclose(envelope.composition, feed)
    for curve in (envelope.bubble, envelope.dew):
        pressures = [s.pressure for s in curve]
        assert pressures == sorted(pressures)
        assert pressures[0] == pytest.approx(0.5 * min(s.state.pressure for s in result.streams.values()))
    # Liquid lies below vapor in enthalpy at the same pressure (the bubble line left of the dew line).
    assert envelope.bubble[0].enthalpy < envelope.dew[0].enthalpy


def test_letdown_pressure_enthalpy_chart_draws_the_dotted_envelope(letdown_envelope):
    from tui.chart import ENVELOPE_CUT_NOTE

    result, _, connections, envelope, _ = letdown_envelope

    def envelope_cells(data):
        """Braille cells drawn in the dim style of the dotted layers."""
        count = 0
        for line in draw_chart(data, 100, 30):
            for span in line.spans:
                if span.style and getattr(span.style, "dim", False):
                    count += sum(0x2800 < ord(c) <= 0x28FF for c in line.plain[span.start:span.end])
        return count

    data = chart_data(result, "ph", "SI", envelope=envelope, connections=connections)
    bare = chart_data(result, "ph", "SI", connections=connections)
    assert len(data.envelope) == 2 and data.envelope[0] and data.envelope[1]
    assert envelope_cells(bare) == 0 and envelope_cells(data) > 40
    key = " ".join(line.plain for line in legend_lines(data, 100))
    assert "bubble line (left) and dew line (right) of the sheet's composition" in key
    assert (ENVELOPE_CUT_NOTE in key) == envelope.cut
    temperature_entropy = chart_data(result, "ts", "SI", envelope=envelope, connections=connections)
    assert temperature_entropy.envelope[1][0][1] == pytest.approx(envelope.dew[0].temperature)


def test_envelope_of_a_mixed_sheet_is_the_first_units_inlet():
    from tui.envelope import envelope_feed

    result = _result((0.9, 0.1), (0.8, 0.2))
    z, source = envelope_feed(result, {"valve-1": (("feed",), ("product",))})
    assert list(z) == [0.9, 0.1] and source == "feed (inlet of valve-1)"


def test_envelope_of_a_blend_is_the_composition_most_streams_carry():
    from dataclasses import replace

    from tui.envelope import envelope_feed

    result = _result((0.9, 0.1), (0.8, 0.2))
    after = replace(result.streams["product"], name="burner-gas")
    result = replace(result, streams={**result.streams, "burner-gas": after})
    z, source = envelope_feed(result, {"valve-1": (("feed",), ("product",))})
    assert list(z) == [0.8, 0.2] and source == "product (and 1 more of that composition)"


def test_ideal_gas_has_no_envelope_and_says_why():
    import dataclasses

    from tui.envelope import envelope_for_result

    result = dataclasses.replace(_result((0.9, 0.1), (0.9, 0.1)), model="ideal-gas")
    envelope, note = envelope_for_result(result, lambda: None)
    assert envelope is None and "ideal gas never condenses" in note
