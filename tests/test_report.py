"""The contract's machine output: keys, signs, nulls, and the extra keys."""

from __future__ import annotations

import json
import math

import pytest

from thermo.flowsheet import load_and_solve
from thermo.report import result_to_json_dict
from thermo.sheetfile import parse_sheet_text
from thermo.flowsheet import solve_sheet

SHEET = """
format = 1
title = "Invented let-down and recompression, for the tests"
model = "peng-robinson"
ambient_temperature = "15 degC"

[limits]
min_temperature = "15 degC"

[streams.well-gas]
temperature = "35 degC"
pressure = "68 barg"
flow = "2400 kmol/h"
composition = { methane = 0.87, ethane = 0.07, propane = 0.03, nitrogen = 0.02, carbon-dioxide = 0.01 }

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

[units.booster]
type = "compressor"
inlet = "warm-gas"
outlet = "hot-gas"
outlet_pressure = "45 barg"

[units.after-cooler]
type = "cooler"
inlet = "hot-gas"
outlet = "export"
duty = "1 MW"
medium_temperature = "20 degC"
"""

STREAM_KEYS = {"temperature_K", "pressure_Pa", "molar_flow_mol_s", "mass_flow_kg_s", "vapor_fraction", "phase",
               "molar_enthalpy_J_mol", "molar_entropy_J_molK", "composition"}
UNIT_KEYS = {"type", "duty_W", "power_W", "entropy_generation_W_K", "lost_work_W", "energy_balance_residual_W",
             "cautions", "violations"}


@pytest.fixture(scope="module")
def output():
    result = solve_sheet(parse_sheet_text(SHEET, "let-down.toml").sheet)
    return json.loads(json.dumps(result_to_json_dict(result), allow_nan=False))


def test_top_level_keys_of_the_contract(output):
    assert {"status", "model", "streams", "units", "cautions", "errors"} <= set(output)
    # the choke outlet crosses the sheet's min_temperature: a design-limit violation
    assert output["status"] == "violations"
    assert output["model"] == "peng-robinson"
    assert output["errors"] == []


def test_every_stream_has_the_contract_keys_in_si(output):
    assert set(output["streams"]) == {"well-gas", "lp-gas", "warm-gas", "hot-gas", "export"}
    for stream in output["streams"].values():
        assert STREAM_KEYS <= set(stream)
        assert stream["phase"] in ("vapor", "liquid", "two-phase", "supercritical")
        assert sum(stream["composition"].values()) == pytest.approx(1.0, abs=1e-12)
    well = output["streams"]["well-gas"]
    assert well["temperature_K"] == pytest.approx(308.15)
    assert well["pressure_Pa"] == pytest.approx(68e5 + 101325.0)
    assert well["molar_flow_mol_s"] == pytest.approx(2400e3 / 3600.0)
    assert well["is_feed"] is True and well["source_unit"] is None
    assert output["streams"]["export"]["source_unit"] == "after-cooler"


def test_units_carry_signed_duty_and_power_and_null_where_they_do_not_apply(output):
    units = output["units"]
    for u in units.values():
        assert UNIT_KEYS <= set(u)
        assert all({"code", "severity", "message"} <= set(c) for c in u["cautions"])
        assert all({"code", "message"} <= set(v) for v in u["violations"])
    assert units["choke"]["duty_W"] is None and units["choke"]["power_W"] is None
    assert units["line-heater"]["duty_W"] > 0.0 and units["line-heater"]["power_W"] is None
    assert units["booster"]["power_W"] > 0.0 and units["booster"]["duty_W"] is None
    assert units["after-cooler"]["duty_W"] == pytest.approx(-1e6)


def test_lost_work_is_ambient_temperature_times_entropy_generation(output):
    for u in output["units"].values():
        assert u["lost_work_W"] == pytest.approx(288.15 * u["entropy_generation_W_K"], rel=1e-12)


def test_the_three_step_path_adds_up_to_the_unit_enthalpy_change(output):
    streams, heater = output["streams"], output["units"]["line-heater"]
    path = heater["path"]
    assert set(path) == {"real_to_ideal", "ideal_gas_change", "ideal_to_real", "per_stream"}
    total = sum(path[k]["enthalpy_W"] for k in ("real_to_ideal", "ideal_gas_change", "ideal_to_real"))
    n = streams["lp-gas"]["molar_flow_mol_s"]
    change = n * (streams["warm-gas"]["molar_enthalpy_J_mol"] - streams["lp-gas"]["molar_enthalpy_J_mol"])
    assert total == pytest.approx(change, rel=1e-9)
    assert total == pytest.approx(heater["duty_W"], rel=1e-9)
    per_mole = path["per_stream"]["warm-gas"]
    assert set(per_mole["ideal_to_real"]) == {"enthalpy_J_mol", "entropy_J_molK"}


def test_a_heat_without_medium_has_a_note_and_details_say_so(output):
    heater = output["units"]["line-heater"]
    assert any("medium_temperature" in note for note in heater["notes"])
    assert heater["details"]["second_law_complete"] is False
    assert output["units"]["after-cooler"]["details"]["second_law_complete"] is True


def test_stream_cautions_carry_where_and_the_caution_text_defers(output):
    # the site limit of 15 degC is above the choke outlet (about 11 degC)
    (cold,) = [c for c in output["units"]["choke"]["cautions"] if c["code"] == "cold-metal"]
    assert cold["severity"] == "danger"
    assert cold["where"] == "streams.lp-gas"
    assert "15.0 degC" in cold["message"]
    assert cold["message"].endswith("Defer to local codes and licensed engineering practice.")
    # a caution alone never changes the status; crossing a [limits] value at a
    # unit's outlet is also a design-limit violation, listed under the unit
    codes = [v["code"] for v in output["units"]["choke"]["violations"]]
    assert codes == ["site-limit-exceeded"] and output["status"] == "violations"


def test_recycle_and_order_extras(output):
    assert output["solve_order"] == ["choke", "line-heater", "booster", "after-cooler"]
    assert output["recycle"] == {"tear_streams": [], "iterations": 0}
    assert output["components"][0] == "methane"


def test_errors_in_the_machine_output_name_the_key_and_line(tmp_path):
    path = tmp_path / "bad.toml"
    path.write_text(SHEET.replace('outlet_pressure = "22 barg"', 'outlet_pressure = "22"'), encoding="utf-8")
    loaded, result = load_and_solve(path)
    data = json.loads(json.dumps(result_to_json_dict(result), allow_nan=False))
    assert data["status"] == "error"
    assert data["streams"] == {} and data["units"] == {}
    (error,) = data["errors"]
    assert {"code", "message", "where"} <= set(error)
    assert error["where"] == "units.choke.outlet_pressure"
    assert error["line"] == SHEET.splitlines().index('outlet_pressure = "22 barg"') + 1
    assert error["file"] == str(path)


def test_numbers_that_are_not_finite_become_null():
    from thermo.report import _plain

    assert _plain({"a": math.nan, "b": [1.0, math.inf], "c": "text"}) == {"a": None, "b": [1.0, None], "c": "text"}
