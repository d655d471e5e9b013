"""Closed loops: a refrigeration circuit that nothing enters, solved from a
``loop_estimate = true`` stream whose circulating flow is a design input.

Every sheet here is an invented test case."""

from __future__ import annotations

import json
from pathlib import Path

import pytest

from thermo.equipment import heater
from thermo.equipment.common import Flow
from thermo.flowsheet import build_mixture, load_and_solve, plan_solve
from thermo.models import make_model
from thermo.report import result_to_json_dict
from thermo.sheetfile import parse_sheet_text
from tui import cli

CIRCULATION_MOL_S = 120e3 / 3600  # the 120 kmol/h written below

# A single-stage propane cycle: evaporating near -19 degC, condensing near
# 46 degC. The estimate (5 degC, 3 bara) is deliberately off, so the solver
# has to bring the tear's state to what the chiller writes.
CLOSED_LOOP = '''\
format = 1
title = "invented closed propane loop"
model = "peng-robinson"
ambient_temperature = "35 degC"

[streams.suction]
loop_estimate = true
temperature = "5 degC"
pressure = "3 bara"
flow = "120 kmol/h"
composition = { propane = 1.0 }

[units.compressor]
type = "compressor"
inlet = "suction"
outlet = "hot-gas"
outlet_pressure = "16 bara"
isentropic_efficiency = 0.74

[units.condenser]
type = "cooler"
inlet = "hot-gas"
outlet = "condensate"
outlet_vapor_fraction = 0
pressure_drop = "0.3 bar"
medium_temperature = "35 degC"

[units.expansion-valve]
type = "valve"
inlet = "condensate"
outlet = "chiller-feed"
outlet_pressure = "2.5 bara"

[units.chiller]
type = "heater"
inlet = "chiller-feed"
outlet = "suction"
outlet_temperature = "-15 degC"
pressure_drop = "0.1 bar"
medium_temperature = "-5 degC"
'''


@pytest.fixture(autouse=True)
def plain_terminal(monkeypatch):
    monkeypatch.setenv("NO_COLOR", "1")
    monkeypatch.setenv("COLUMNS", "100")


def write(tmp_path: Path, text: str, name: str = "loop.toml") -> Path:
    path = tmp_path / name
    path.write_text(text, encoding="utf-8")
    return path


@pytest.fixture(scope="module")
def closed(tmp_path_factory):
    """(LoadedSheet, SheetResult) of CLOSED_LOOP, solved once."""
    path = write(tmp_path_factory.mktemp("closed"), CLOSED_LOOP)
    loaded, result = load_and_solve(str(path))
    assert loaded is not None and result.status == "ok", result.errors
    return loaded, result


def check(capsys, path: Path) -> tuple[int, str]:
    code = cli.main(["check", str(path)])
    return code, capsys.readouterr().err


# ------------------------------------------------------------------ solving


def test_the_closed_loop_converges_at_its_estimate_stream(closed):
    loaded, result = closed
    assert not loaded.sheet.streams, "no feed: the estimate is not a feed"
    assert set(loaded.sheet.loop_estimates) == {"suction"}
    assert result.tear_streams == ("suction",)
    assert 1 < result.recycle_iterations < 20
    assert result.solve_order == ("compressor", "condenser", "expansion-valve", "chiller")


def test_the_circulating_flow_is_the_one_written(closed):
    result = closed[1]
    for stream in result.streams.values():
        assert stream.molar_flow == pytest.approx(CIRCULATION_MOL_S, rel=1e-12), stream.name
        assert stream.state.composition[0] == pytest.approx(1.0)


def test_energy_balance_over_the_loop_closes(closed):
    # Nothing crosses the boundary but heat and work: compressor power plus
    # the heat taken up in the chiller is the heat the condenser rejects.
    units = closed[1].units
    power, lift, rejected = units["compressor"].power_W, units["chiller"].duty_W, -units["condenser"].duty_W
    assert power > 0 and lift > 0 and rejected > 0
    assert power + lift == pytest.approx(rejected, rel=1e-6)


def test_the_tear_stream_is_what_its_writer_makes_of_its_inlet(closed):
    # Re-solving the chiller on the reported inlet gives the reported tear:
    # the loop closes on itself, and the written estimate (5 degC, 3 bara)
    # is gone.
    loaded, result = closed
    sheet = loaded.sheet
    model = make_model(sheet.model, build_mixture(sheet))
    inlet = result.streams["chiller-feed"]
    again = heater.solve(sheet.units["chiller"], (Flow(inlet.state, inlet.molar_flow),), model,
                         sheet.ambient_temperature_K).outlets[0]
    tear = result.streams["suction"]
    assert tear.state.temperature == pytest.approx(258.15, abs=1e-6)
    assert tear.state.pressure == pytest.approx(2.4e5, rel=1e-9)
    assert again.state.temperature == pytest.approx(tear.state.temperature, abs=1e-6)
    assert again.state.pressure == pytest.approx(tear.state.pressure, rel=1e-9)
    assert again.state.enthalpy == pytest.approx(tear.state.enthalpy, rel=1e-8, abs=1e-3)
    assert tear.state.phase == "vapor"


def test_the_coefficient_of_performance_is_sensible(closed):
    # Sanity band: above 1 and below the Carnot COP between the evaporating
    # and condensing temperatures (about 3.9 here). Throttling saturated
    # liquid from 46 degC flashes some 43 % of it, and a 0.74 efficient
    # compressor takes a third more work than an isentropic one, so this
    # cycle's COP is near 1.9, under a "2 to 6" rule of thumb for chillers.
    result = closed[1]
    cop = result.units["chiller"].duty_W / result.units["compressor"].power_W
    t_evaporating = result.streams["chiller-feed"].state.temperature
    t_condensing = result.streams["condensate"].state.temperature
    carnot = t_evaporating / (t_condensing - t_evaporating)
    assert 1.0 < cop < carnot
    assert 3.5 < carnot < 4.5


def test_the_coefficient_of_performance_matches_the_reference_equation(closed):
    # CoolProp HEOS (Lemmon, McLinden and Wagner 2009 propane equation) for
    # the same cycle: suction -15 degC and 2.4 bara, isentropic efficiency
    # 0.74 to 16 bara, saturated liquid at 15.7 bara, throttled. Measured
    # difference of the Peng-Robinson cycle: 0.7 %. Band 3 %: the COP rests on
    # the liquid enthalpy, where Peng-Robinson's departure is good to a few
    # percent of the latent heat (from memory), and on the vapor's enthalpy
    # rise over the compressor, where it is closer.
    coolprop = pytest.importorskip("CoolProp.CoolProp")
    fluid = "HEOS::Propane"
    h1 = coolprop.PropsSI("H", "T", 258.15, "P", 2.4e5, fluid)
    s1 = coolprop.PropsSI("S", "T", 258.15, "P", 2.4e5, fluid)
    h2 = h1 + (coolprop.PropsSI("H", "P", 16e5, "S", s1, fluid) - h1) / 0.74
    h3 = coolprop.PropsSI("H", "P", 15.7e5, "Q", 0, fluid)
    reference = (h1 - h3) / (h2 - h1)
    result = closed[1]
    cop = result.units["chiller"].duty_W / result.units["compressor"].power_W
    assert cop == pytest.approx(reference, rel=0.03)


def test_the_json_marks_the_estimate_stream(closed):
    streams = json.loads(json.dumps(result_to_json_dict(closed[1])))["streams"]
    assert streams["suction"]["is_feed"] is False
    assert streams["suction"]["loop_estimate"] is True
    assert streams["suction"]["source_unit"] == "chiller"
    assert streams["suction"]["molar_flow_mol_s"] == pytest.approx(CIRCULATION_MOL_S, rel=1e-12)
    assert all(s["loop_estimate"] is False for name, s in streams.items() if name != "suction")


def test_the_estimate_may_be_given_as_a_mass_flow_and_a_saturated_state(tmp_path):
    text = CLOSED_LOOP.replace('temperature = "5 degC"\npressure = "3 bara"\nflow = "120 kmol/h"',
                               'vapor_fraction = 1.0\npressure = "2.4 bara"\nflow = "5.3 t/h"')
    loaded, result = load_and_solve(str(write(tmp_path, text)))
    assert result.status == "ok", result.errors
    mass = result.streams["condensate"].mass_flow
    assert mass == pytest.approx(5.3e3 / 3600, rel=1e-9)


def test_a_suction_line_exchanger_adds_a_second_tear_and_still_closes(tmp_path):
    # Condensate subcools against the cold suction vapor: a second cycle
    # through the exchanger, torn by the solver, while the estimate stream
    # still holds the loop's flow.
    text = CLOSED_LOOP.replace('inlet = "suction"\noutlet = "hot-gas"', 'inlet = "warm-suction"\noutlet = "hot-gas"')
    text = text.replace('inlet = "condensate"\noutlet = "chiller-feed"', 'inlet = "subcooled"\noutlet = "chiller-feed"')
    text += '''
[units.suction-exchanger]
type = "exchanger"
hot_inlet = "condensate"
hot_outlet = "subcooled"
cold_inlet = "suction"
cold_outlet = "warm-suction"
cold_outlet_temperature = "10 degC"
'''
    loaded, result = load_and_solve(str(write(tmp_path, text)))
    assert result.status == "ok", result.errors
    assert result.tear_streams[0] == "suction" and len(result.tear_streams) == 2
    for stream in result.streams.values():
        assert stream.molar_flow == pytest.approx(CIRCULATION_MOL_S, rel=1e-8), stream.name
    units = result.units
    assert units["compressor"].power_W + units["chiller"].duty_W == pytest.approx(-units["condenser"].duty_W,
                                                                                 rel=1e-6)
    assert result.streams["warm-suction"].state.temperature == pytest.approx(283.15, abs=1e-6)
    assert result.streams["subcooled"].state.temperature < result.streams["condensate"].state.temperature


def test_a_closed_loop_that_loses_material_is_refused(tmp_path):
    text = CLOSED_LOOP.replace('inlet = "condensate"\noutlet = "chiller-feed"', 'inlet = "to-valve"\noutlet = "chiller-feed"')
    text += '''
[units.drain]
type = "splitter"
inlet = "condensate"
outlets = ["to-valve", "drained"]
fractions = [0.9, 0.1]
'''
    loaded, result = load_and_solve(str(write(tmp_path, text)))
    assert result.status == "error"
    (error,) = [e for e in result.errors if e.code == "closed-loop-charge-not-returned"]
    assert error.where == "streams.suction.loop_estimate" and error.line == 7
    assert "Fix:" in error.message and "suction" in error.message


# ------------------------------------------------------------------ on a fed loop


RECYCLE = '''\
format = 1
title = "invented gas recycle"

[streams.fresh]
temperature = "300 K"
pressure = "30 bara"
flow = "360 kmol/h"
composition = { methane = 0.9, ethane = 0.1 }

[units.mix]
type = "mixer"
inlets = ["fresh", "back"]
outlet = "mixed"

[units.heat]
type = "heater"
inlet = "mixed"
outlet = "hot"
duty = "200 kW"

[units.letdown]
type = "valve"
inlet = "hot"
outlet = "let"
pressure_drop = "2 bar"

[units.tee]
type = "splitter"
inlet = "let"
outlets = ["product", "loop"]
fractions = [0.6, 0.4]

[units.recompress]
type = "compressor"
inlet = "loop"
outlet = "back"
outlet_pressure = "30 bara"
'''


def test_on_a_fed_loop_the_estimate_is_the_tear_and_only_a_start(tmp_path):
    _, plain = load_and_solve(str(write(tmp_path, RECYCLE, "plain.toml")))
    assert plain.status == "ok" and plain.tear_streams == ("back",)
    estimated = RECYCLE.replace('[units.mix]', '''[streams.let]
loop_estimate = true
temperature = "320 K"
pressure = "28 bara"
flow = "100 kmol/h"
composition = { methane = 0.5, ethane = 0.5 }

[units.mix]''')
    loaded, result = load_and_solve(str(write(tmp_path, estimated, "estimated.toml")))
    assert result.status == "ok", result.errors
    assert result.tear_streams == ("let",), "the estimate stream is preferred as the tear"
    assert plan_solve(loaded.sheet).order[0] == "tee"
    # the flow and composition written are iterated away: the feed fixes them
    for name in ("let", "product", "back"):
        a, b = plain.streams[name], result.streams[name]
        assert b.molar_flow == pytest.approx(a.molar_flow, rel=1e-7), name
        assert b.state.temperature == pytest.approx(a.state.temperature, abs=1e-5), name
        assert b.state.composition == pytest.approx(a.state.composition, abs=1e-8), name
    assert result.streams["product"].molar_flow == pytest.approx(100.0, rel=1e-8)


def test_loop_estimate_false_is_an_ordinary_feed():
    text = RECYCLE.replace('[streams.fresh]\n', '[streams.fresh]\nloop_estimate = false\n')
    sheet = parse_sheet_text(text).sheet
    assert set(sheet.streams) == {"fresh"} and not sheet.loop_estimates


# ------------------------------------------------------------------ refusals


def test_an_estimate_not_on_a_loop_is_refused(tmp_path, capsys):
    text = CLOSED_LOOP.replace('outlet = "suction"\n', 'outlet = "spent"\n').replace(
        '[streams.suction]', '[streams.spent]\nloop_estimate = true\ntemperature = "-15 degC"\npressure = "2.4 bara"\n'
                             'flow = "120 kmol/h"\ncomposition = { propane = 1.0 }\n\n[streams.suction]').replace(
        'loop_estimate = true\ntemperature = "5 degC"', 'temperature = "5 degC"')
    path = write(tmp_path, text)
    code, err = check(capsys, path)
    assert code == 2
    assert f"{path}:7: streams.spent.loop_estimate:" in err
    assert "not on a recycle loop" in err and "enters no unit" in err and "Fix:" in err


def test_an_estimate_that_no_unit_writes_is_refused(tmp_path, capsys):
    path = write(tmp_path, CLOSED_LOOP.replace('outlet = "suction"\n', 'outlet = "chiller-out"\n'))
    code, err = check(capsys, path)
    assert code == 2
    assert f"{path}:7: streams.suction.loop_estimate:" in err
    assert "no unit names it as its outlet" in err and "Fix:" in err


def test_an_estimate_flag_that_is_not_a_boolean_is_refused(tmp_path, capsys):
    path = write(tmp_path, CLOSED_LOOP.replace("loop_estimate = true", 'loop_estimate = "true"'))
    code, err = check(capsys, path)
    assert code == 2
    assert "streams.suction.loop_estimate" in err and "without quotes" in err
    assert err.count("statepath:") == 1, "one problem, not a second one about a feed that is an outlet"


def test_a_closed_loop_without_an_estimate_says_how_to_give_one(tmp_path, capsys):
    start, end = CLOSED_LOOP.index("[streams.suction]"), CLOSED_LOOP.index("[units.compressor]")
    path = write(tmp_path, CLOSED_LOOP[:start] + CLOSED_LOOP[end:])
    _, result = load_and_solve(str(path))
    (error,) = result.errors
    assert error.code == "loop-without-feed" and "loop_estimate = true" in error.message
    code, err = check(capsys, path)
    assert code == 2 and "loop_estimate = true" in err


def test_a_table_for_a_loop_stream_without_the_flag_points_to_it(tmp_path, capsys):
    path = write(tmp_path, CLOSED_LOOP.replace("loop_estimate = true\n", ""))
    code, err = check(capsys, path)
    assert code == 2
    assert "is a feed ([streams.suction]) and also the outlet of unit 'chiller'" in err
    assert "add loop_estimate = true to [streams.suction]" in err


def test_the_solver_refuses_a_hand_built_estimate_off_any_loop():
    import dataclasses

    from thermo.flowsheet import solve_sheet

    sheet = parse_sheet_text(RECYCLE).sheet
    estimate = dict(parse_sheet_text(CLOSED_LOOP).sheet.loop_estimates)["suction"]
    stray = dataclasses.replace(estimate, name="product", composition={"methane": 1.0})
    result = solve_sheet(dataclasses.replace(sheet, loop_estimates={"product": stray}))
    assert result.status == "error"
    assert [e.code for e in result.errors] == ["loop-estimate-not-on-loop"]
    assert result.errors[0].where == "streams.product.loop_estimate"
