"""The flowsheet solver: order, recycles, errors, and whole-sheet balances."""

from __future__ import annotations

import json
import math

import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from thermo.equipment import mixer
from thermo.flowsheet import build_mixture, load_and_solve, plan_solve, solve_sheet
from thermo.report import result_to_json_dict
from thermo.spec import FeedStream, Limits, Sheet, UnitSpec, UserComponent

GAS = {"methane": 0.85, "ethane": 0.07, "propane": 0.04, "n-butane": 0.02, "nitrogen": 0.02}
BALANCE_TOLERANCE = 1e-6


def feed(name, composition=GAS, temperature=300.0, pressure=30e5, flow=100.0, mass_flow=None):
    return FeedStream(name, temperature, pressure, None, None if mass_flow else flow, mass_flow, dict(composition))


def unit(name, type_, connections, **params):
    return UnitSpec(name, type_, connections, params)


def sheet(feeds, units, *, model="peng-robinson", limits=Limits(), components=None, interaction=None,
          ambient=288.15):
    return Sheet(1, "invented test sheet", model, ambient, 101325.0, limits, components or {}, interaction or {},
                 {f.name: f for f in feeds}, {u.name: u for u in units})


def assert_all_balanced(result):
    for u in result.units.values():
        assert u.details["energy_balance_relative_residual"] < BALANCE_TOLERANCE, u.name


# ------------------------------------------------------------------ order


def test_units_in_any_file_order_are_solved_upstream_first():
    units = [
        unit("booster", "compressor", {"inlet": "warm", "outlet": "export"}, outlet_pressure=45e5),
        unit("heat", "heater", {"inlet": "lp", "outlet": "warm"}, outlet_temperature=298.15, medium_temperature=363.15),
        unit("choke", "valve", {"inlet": "well", "outlet": "lp"}, outlet_pressure=22e5),
    ]
    result = solve_sheet(sheet([feed("well", pressure=69e5, temperature=308.15)], units))
    assert result.status == "ok", result.errors
    assert result.solve_order == ("choke", "heat", "booster")
    assert result.streams["export"].source_unit == "booster"
    assert result.streams["well"].is_feed
    assert_all_balanced(result)


def test_the_natural_gas_valve_rule_of_thumb():
    # Natural gas cools by roughly 0.5 K per bar across a valve near ambient
    # temperature. # common practice, no published source
    # Band 0.35-0.7 K/bar: the rule is a rough figure for "typical" gas; the
    # integral Joule-Thomson coefficient over 70 -> 20 bar grows as the gas
    # gets colder or richer and shrinks as it gets warmer, and across 15-35 degC
    # for a ~90 % methane gas that spread is some +-30 % about 0.5.
    composition = {"methane": 0.90, "ethane": 0.05, "propane": 0.02, "nitrogen": 0.02, "carbon-dioxide": 0.01}
    for inlet_c in (15.0, 25.0, 35.0):
        feeds = [feed("gas", composition, temperature=273.15 + inlet_c, pressure=70e5)]
        result = solve_sheet(sheet(feeds, [unit("choke", "valve", {"inlet": "gas", "outlet": "out"}, outlet_pressure=20e5)]))
        assert result.status == "ok"
        drop = result.streams["gas"].state.temperature - result.streams["out"].state.temperature
        per_bar = drop / 50.0
        assert 0.35 <= per_bar <= 0.7, (inlet_c, per_bar)
        assert result.units["choke"].details["temperature_drop_per_bar_K_bar"] == pytest.approx(per_bar, rel=1e-12)


def test_a_hundred_unit_chain_solves_and_repeats_its_cycle():
    gas5 = {"methane": 0.88, "ethane": 0.06, "propane": 0.03, "nitrogen": 0.02, "carbon-dioxide": 0.01}
    units = []
    stream = "s0"
    for cycle in range(25):
        for kind, params in (("valve", {"pressure_drop": 20e5}), ("heater", {"outlet_temperature": 310.0}),
                             ("compressor", {"pressure_ratio": 1.5}), ("cooler", {"outlet_temperature": 300.0})):
            name = f"{kind}-{cycle}"
            out = f"{name}-out"
            units.append(unit(name, kind, {"inlet": stream, "outlet": out}, **params))
            stream = out
    result = solve_sheet(sheet([feed("s0", gas5, temperature=300.0, pressure=60e5)], units))
    assert result.status == "ok", result.errors
    assert len(result.units) == 100
    first, last = result.streams["cooler-0-out"].state, result.streams[stream].state
    assert last.temperature == pytest.approx(first.temperature, abs=1e-9)
    assert last.pressure == pytest.approx(60e5, rel=1e-12)
    assert_all_balanced(result)


# ------------------------------------------------------------------ recycles


def recycle_sheet(fractions=(0.6, 0.4), order=None):
    units = [
        unit("mix", "mixer", {"inlets": ("fresh", "back"), "outlet": "mixed"}),
        unit("heat", "heater", {"inlet": "mixed", "outlet": "hot"}, duty=200e3, medium_temperature=500.0),
        unit("letdown", "valve", {"inlet": "hot", "outlet": "let"}, pressure_drop=2e5),
        unit("tee", "splitter", {"inlet": "let", "outlets": ("product", "loop")}, fractions=fractions),
        unit("recompress", "compressor", {"inlet": "loop", "outlet": "back"}, outlet_pressure=30e5),
    ]
    if order:
        units = [units[i] for i in order]
    return sheet([feed("fresh", temperature=300.0, pressure=30e5, flow=100.0)], units)


def test_a_recycle_loop_converges_and_closes_the_overall_balances():
    result = solve_sheet(recycle_sheet(order=(3, 1, 4, 0, 2)))
    assert result.status == "ok", result.errors
    assert len(result.tear_streams) == 1
    assert 0 < result.recycle_iterations < 100
    fresh, product = result.streams["fresh"], result.streams["product"]
    assert product.molar_flow == pytest.approx(100.0, rel=1e-8)
    assert result.streams["back"].molar_flow == pytest.approx(100.0 * 0.4 / 0.6, rel=1e-8)
    energy_in = result.units["heat"].duty_W + result.units["recompress"].power_W
    enthalpy_rise = product.molar_flow * product.state.enthalpy - fresh.molar_flow * fresh.state.enthalpy
    assert enthalpy_rise == pytest.approx(energy_in, rel=1e-6)
    assert_all_balanced(result)


def test_a_loop_that_bleeds_two_percent_converges_in_few_passes():
    # Direct substitution would shrink the flow error by only 2 % a pass; the
    # component flows' Wegstein factor (q near -49 here) removes it at once.
    result = solve_sheet(recycle_sheet(fractions=(0.02, 0.98)))
    # converged; the compressor's work heats the slow-bleeding loop to some
    # 890 K, so its fixed-temperature medium and discharge limit are flagged
    assert result.status == "violations" and not result.errors, result.errors
    assert result.recycle_iterations < 30
    assert result.streams["product"].molar_flow == pytest.approx(100.0, rel=1e-8)
    assert result.streams["back"].molar_flow == pytest.approx(100.0 * 0.98 / 0.02, rel=1e-7)
    assert_all_balanced(result)


def test_the_tear_stream_is_consistent_with_the_unit_it_feeds():
    # Re-mixing the reported feed and the reported (converged) tear stream
    # gives back the reported mixer outlet: the loop closes on itself.
    from thermo.equipment.common import Flow
    from thermo.models import make_model

    s = recycle_sheet()
    result = solve_sheet(s)
    assert result.tear_streams == ("back",)
    model = make_model(s.model, build_mixture(s))
    streams = result.streams
    inlets = tuple(Flow(streams[n].state, streams[n].molar_flow) for n in ("fresh", "back"))
    again = mixer.mix(model, inlets, ambient_temperature=288.15).outlets[0]
    mixed = streams["mixed"]
    assert again.state.temperature == pytest.approx(mixed.state.temperature, abs=1e-6)
    assert again.molar_flow == pytest.approx(mixed.molar_flow, rel=1e-8)
    assert again.state.enthalpy == pytest.approx(mixed.state.enthalpy, rel=1e-7, abs=1e-4)


def test_a_loop_that_cannot_converge_gives_a_clear_error_naming_its_units():
    result = solve_sheet(recycle_sheet(fractions=(0.0, 1.0)))  # nothing ever leaves the loop
    assert result.status == "error"
    (error,) = [e for e in result.errors if e.code == "recycle-not-converged"]
    for name in ("mix", "heat", "letdown", "tee", "recompress"):
        assert name in error.message
    assert "did not converge within 100 iterations" in error.message
    assert "Fix:" in error.message
    assert error.where.startswith("units.")


def test_a_loop_with_no_way_in_is_refused():
    units = [
        unit("a", "heater", {"inlet": "s2", "outlet": "s1"}, outlet_temperature=300.0),
        unit("b", "cooler", {"inlet": "s1", "outlet": "s2"}, outlet_temperature=290.0),
    ]
    result = solve_sheet(sheet([feed("unused")], units))
    assert result.status == "error"
    assert any(e.code == "loop-without-feed" for e in result.errors)


def test_plan_tears_each_loop_once():
    plan = plan_solve(recycle_sheet())
    assert plan.tears == ("back",)
    assert plan.order[0] == "mix"


# ------------------------------------------------------------------ errors


def test_an_inlet_that_nothing_makes_is_an_error_with_its_key_path():
    units = [unit("choke", "valve", {"inlet": "wel-gas", "outlet": "lp"}, outlet_pressure=20e5)]
    result = solve_sheet(sheet([feed("well-gas")], units))
    assert result.status == "error"
    (error,) = result.errors
    assert error.code == "unknown-stream"
    assert error.where == "units.choke.inlet"
    assert "wel-gas" in error.message and "Fix:" in error.message


def test_a_stream_made_by_two_units_is_an_error():
    units = [
        unit("a", "valve", {"inlet": "f1", "outlet": "same"}, outlet_pressure=20e5),
        unit("b", "valve", {"inlet": "f2", "outlet": "same"}, outlet_pressure=20e5),
    ]
    result = solve_sheet(sheet([feed("f1"), feed("f2")], units))
    assert [e.code for e in result.errors] == ["two-producers"]


def test_a_failing_unit_is_reported_and_the_units_after_it_are_listed_as_not_solved():
    units = [
        unit("choke", "valve", {"inlet": "gas", "outlet": "lp"}, pressure_drop=40e5),  # below vacuum
        unit("heat", "heater", {"inlet": "lp", "outlet": "warm"}, outlet_temperature=300.0),
    ]
    result = solve_sheet(sheet([feed("gas", pressure=30e5)], units))
    assert result.status == "error"
    codes = [e.code for e in result.errors]
    assert codes == ["unit-specification", "not-solved"]
    assert result.errors[0].where == "units.choke.pressure_drop"
    assert "heat" in result.errors[1].message
    assert "gas" in result.streams and "lp" not in result.streams


def test_an_unknown_component_is_an_error_not_a_traceback():
    result = solve_sheet(sheet([feed("gas", {"unobtainium": 1.0})], []))
    assert result.status == "error"
    assert result.errors[0].code == "unknown-component"


# ------------------------------------------------------------------ mixture and feeds


def test_user_components_and_interaction_parameters_reach_the_mixture():
    rig_gas = UserComponent("rig-gas", molar_mass=18.9e-3, critical_temperature=206.0, critical_pressure=46.1e5,
                            acentric_factor=0.031, ideal_gas_cp=(29.1, 0.0121, 1.5e-5, -6.1e-9),
                            cp_range=(200.0, 1200.0))
    s = sheet([feed("gas", {"rig-gas": 0.9, "carbon-dioxide": 0.1})],
              [unit("choke", "valve", {"inlet": "gas", "outlet": "lp"}, outlet_pressure=10e5)],
              components={"rig-gas": rig_gas}, interaction={("carbon-dioxide", "rig-gas"): 0.07})
    mixture = build_mixture(s)
    assert mixture.names == ("rig-gas", "carbon-dioxide")
    assert mixture.kij[0, 1] == 0.07
    assert mixture.components[0].critical_temperature == 206.0
    result = solve_sheet(s)
    assert result.status == "ok", result.errors
    assert result.streams["lp"].state.temperature < 300.0


def test_a_mass_flow_feed_becomes_its_molar_flow():
    s = sheet([feed("gas", mass_flow=2.0)], [unit("choke", "valve", {"inlet": "gas", "outlet": "lp"}, outlet_pressure=10e5)])
    result = solve_sheet(s)
    mixture = build_mixture(s)
    molar_mass = sum(GAS[n] * c.molar_mass for n, c in zip(mixture.names, mixture.components))
    assert result.streams["gas"].molar_flow == pytest.approx(2.0 / molar_mass, rel=1e-12)
    assert result.streams["lp"].mass_flow == pytest.approx(2.0, rel=1e-12)


# ------------------------------------------------------------------ files


EXAMPLE = """
format = 1
title = "Invented let-down station for the tests"
model = "peng-robinson"
ambient_temperature = "15 degC"

[streams.well-gas]
temperature = "35 degC"
pressure = "68 barg"
flow = "2400 kmol/h"
composition = { methane = 0.87, ethane = 0.07, propane = 0.03, nitrogen = 0.02, carbon-dioxide = 0.01 }

[units.booster]
type = "compressor"
inlet = "warm-gas"
outlet = "export"
outlet_pressure = "45 barg"
isentropic_efficiency = 0.78

[units.choke]
type = "valve"
inlet = "well-gas"
outlet = "lp-gas"
outlet_pressure = "22 barg"

[units.line-heater]
type = "heater"
inlet = "lp-gas"
outlet = "warm-gas"
outlet_temperature = "25 degC"
medium_temperature = "90 degC"
"""


def test_load_and_solve_a_file(tmp_path):
    path = tmp_path / "let-down.toml"
    path.write_text(EXAMPLE, encoding="utf-8")
    loaded, result = load_and_solve(path)
    assert loaded is not None and loaded.sheet.units["choke"].type == "valve"
    assert result.status == "ok", result.errors
    assert result.solve_order == ("choke", "line-heater", "booster")
    assert result.streams["export"].state.pressure == pytest.approx(45e5 + 101325.0, rel=1e-12)


def test_a_file_that_cannot_be_read_is_an_error_result(tmp_path):
    loaded, result = load_and_solve(tmp_path / "missing.toml")
    assert loaded is None
    assert result.status == "error"
    assert result.errors[0].file.endswith("missing.toml")
    assert "Fix:" in result.errors[0].message


def test_a_file_with_a_bad_key_is_an_error_result_with_its_line(tmp_path):
    path = tmp_path / "bad.toml"
    path.write_text(EXAMPLE.replace('outlet_pressure = "22 barg"', "outlet_pressure = 22"), encoding="utf-8")
    loaded, result = load_and_solve(path)
    assert loaded is None and result.status == "error"
    error = result.errors[0]
    assert error.where == "units.choke.outlet_pressure"
    assert error.line == EXAMPLE.splitlines().index("outlet_pressure = \"22 barg\"") + 1


# ------------------------------------------------------------------ never crash

_STEPS = st.one_of(
    st.tuples(st.just("valve"), st.floats(0.0, 8e5)),
    st.tuples(st.just("heater"), st.floats(250.0, 450.0)),
    st.tuples(st.just("cooler"), st.floats(0.0, 3e5)),
    st.tuples(st.just("compressor"), st.floats(0.5, 3.0)),
    st.tuples(st.just("expander"), st.floats(0.2, 1.2)),
    st.tuples(st.just("pump"), st.floats(-1e5, 20e5)),
)


@settings(max_examples=25, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(steps=st.lists(_STEPS, min_size=1, max_size=5), start_t=st.floats(230.0, 400.0),
       start_p=st.floats(2e5, 80e5))
def test_random_chains_of_units_never_crash(steps, start_t, start_p):
    units = []
    stream = "in"
    for k, (kind, value) in enumerate(steps):
        key = {"valve": "pressure_drop", "heater": "outlet_temperature", "cooler": "duty",
               "compressor": "pressure_ratio", "expander": "pressure_ratio", "pump": "pressure_rise"}[kind]
        units.append(unit(f"u{k}", kind, {"inlet": stream, "outlet": f"s{k}"}, **{key: value}))
        stream = f"s{k}"
    result = solve_sheet(sheet([feed("in", temperature=start_t, pressure=start_p)], units))
    assert result.status in ("ok", "violations", "error")
    if result.status == "error":
        assert all(e.message and e.code for e in result.errors)
    text = json.dumps(result_to_json_dict(result), allow_nan=False)
    assert text
    for u in result.units.values():
        assert math.isfinite(u.entropy_generation_W_K)
        assert u.details["energy_balance_relative_residual"] < BALANCE_TOLERANCE


# ------------------------------------------------------------------ more structure and data


def test_two_recycle_loops_through_one_mixer_converge():
    units = [
        unit("mix", "mixer", {"inlets": ("fresh", "back-1", "back-2"), "outlet": "mixed"}),
        unit("heat", "heater", {"inlet": "mixed", "outlet": "hot"}, outlet_temperature=330.0),
        unit("tee", "splitter", {"inlet": "hot", "outlets": ("product", "loops")}, fractions=(0.5, 0.5)),
        unit("tee-2", "splitter", {"inlet": "loops", "outlets": ("pre-1", "pre-2")}, fractions=(0.3, 0.7)),
        unit("cool", "cooler", {"inlet": "pre-2", "outlet": "back-2"}, outlet_temperature=310.0),
        unit("drop", "valve", {"inlet": "pre-1", "outlet": "back-1"}, pressure_drop=0.0),
    ]
    result = solve_sheet(sheet([feed("fresh", temperature=300.0, pressure=30e5, flow=100.0)], units))
    assert result.status == "ok", result.errors
    assert sorted(result.tear_streams) == ["back-1", "back-2"]
    assert result.streams["product"].molar_flow == pytest.approx(100.0, rel=1e-8)
    assert result.streams["back-2"].molar_flow == pytest.approx(70.0, rel=1e-8)
    assert_all_balanced(result)


def test_a_solve_time_error_names_the_line_of_the_key(tmp_path):
    text = EXAMPLE.replace('outlet_pressure = "22 barg"', 'pressure_drop = "80 bar"')
    path = tmp_path / "deep-drop.toml"
    path.write_text(text, encoding="utf-8")
    loaded, result = load_and_solve(path)
    assert loaded is not None and result.status == "error"
    error = result.errors[0]
    assert error.where == "units.choke.pressure_drop"
    assert error.line == text.splitlines().index('pressure_drop = "80 bar"') + 1
    assert error.file == str(path)


def test_a_saturated_liquid_feed_and_its_flash_across_a_valve():
    saturated = FeedStream("lpg", None, 10e5, 0.0, 10.0, None, {"propane": 1.0})
    s = sheet([saturated], [unit("choke", "valve", {"inlet": "lpg", "outlet": "out"}, outlet_pressure=3e5)])
    result = solve_sheet(s)
    assert result.status == "ok", result.errors
    assert result.streams["lpg"].state.vapor_fraction == pytest.approx(0.0, abs=1e-9)
    out = result.streams["out"].state
    assert out.phase == "two-phase" and 0.0 < out.vapor_fraction < 1.0
    assert "valve-outlet-flashes" in [c.code for c in result.units["choke"].cautions]


def test_the_interaction_table_is_read_by_model_and_pair():
    from thermo.flowsheet import parse_interaction_table

    table = parse_interaction_table(
        '[peng-robinson]\n"methane/CO2" = { kij = 0.09, source = "test" }\n"methane/unobtainium" = { kij = 0.1 }\n'
        '[soave-redlich-kwong]\n"N2/methane" = 0.03\n')
    assert table == {"peng-robinson": {("methane", "carbon-dioxide"): 0.09},
                     "soave-redlich-kwong": {("nitrogen", "methane"): 0.03}}


@pytest.mark.parametrize("model", ["soave-redlich-kwong", "virial", "ideal-gas"])
def test_every_model_solves_the_same_chain(model):
    units = [
        unit("choke", "valve", {"inlet": "gas", "outlet": "lp"}, outlet_pressure=10e5),
        unit("heat", "heater", {"inlet": "lp", "outlet": "warm"}, outlet_temperature=300.0),
        unit("boost", "compressor", {"inlet": "warm", "outlet": "hp"}, outlet_pressure=30e5),
    ]
    result = solve_sheet(sheet([feed("gas", pressure=30e5)], units, model=model))
    assert result.status == "ok", result.errors
    drop = 300.0 - result.streams["lp"].state.temperature
    if model == "ideal-gas":
        assert drop == pytest.approx(0.0, abs=1e-6)  # an ideal gas does not cool on throttling
    else:
        assert drop > 5.0
    assert_all_balanced(result)


def test_a_stream_listed_twice_by_one_unit_is_an_error():
    units = [unit("mix", "mixer", {"inlets": ("gas", "gas"), "outlet": "out"})]
    result = solve_sheet(sheet([feed("gas")], units))
    assert result.status == "error"
    assert result.errors[0].code == "stream-listed-twice"
    assert result.errors[0].where == "units.mix"
