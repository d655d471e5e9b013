"""Reading flowsheet files: a good file gives the validated model in SI; every
kind of bad file gives one SheetError that lists each problem with its key
path, its line and a fix, and never another exception type."""

from __future__ import annotations

import string
import tomllib
from pathlib import Path

import pytest
import tomli_w
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from thermo.errors import SheetError
from thermo.sheetfile import load_sheet, locate_keys, parse_sheet_bytes, parse_sheet_text
from thermo.spec import UNIT_TYPES, Limits

TEMPLATE = Path(__file__).resolve().parents[1] / "tui" / "templates" / "new-sheet.toml"

# An invented scenario: a gas gathering site whose names and numbers are made up.
BASE = '''\
format = 1                           # required
title = "Brackenfold gathering"      # invented site
model = "peng-robinson"
ambient_temperature = "15 degC"
atmospheric_pressure = "0.94 bar"

[limits]
min_temperature = "-29 degC"
max_pressure = "100 barg"

[components.rig-gas]                 # invented pseudo-component
molar_mass = "18.9 g/mol"
critical_temperature = "206 K"
critical_pressure = "46.1 bar"
acentric_factor = 0.031
ideal_gas_cp = [29.1, 0.0121, 1.5e-5, -6.1e-9]
cp_range = ["200 K", "1200 K"]

[interaction]
"methane/carbon-dioxide" = 0.09

[streams.well-gas]
temperature = "35 degC"
pressure = "68 barg"
flow = "2400 kmol/h"
composition = { methane = 0.87, ethane = 0.07, propane = 0.03, nitrogen = 0.02, carbon-dioxide = 0.01 }

[streams.side-gas]
temperature = "20 degC"
pressure = "22 barg"
flow = "3 t/h"
composition = { methane = 0.5, rig-gas = 0.5 }

[units.choke]
type = "valve"
inlet = "well-gas"
outlet = "lp-gas"
outlet_pressure = "22 barg"

[units.header]
type = "mixer"
inlets = ["lp-gas", "side-gas"]
outlet = "mixed-gas"

[units.line-heater]
type = "heater"
inlet = "mixed-gas"
outlet = "warm-gas"
outlet_temperature = "25 degC"
medium_temperature = "90 degC"

[units.booster]
type = "compressor"
inlet = "warm-gas"
outlet = "export"
outlet_pressure = "45 barg"
isentropic_efficiency = 0.78
'''


def line_with(text: str, needle: str, after: str | None = None) -> int:
    """1-based number of the first line holding ``needle`` (after the line holding ``after``)."""
    lines = text.splitlines()
    start = 0
    if after is not None:
        start = next(i for i, line in enumerate(lines) if after in line) + 1
    return next(i + 1 for i in range(start, len(lines)) if needle in lines[i])


def problems_of(text: str):
    with pytest.raises(SheetError) as caught:
        parse_sheet_text(text, path="site.toml")
    assert caught.value.problems, "a SheetError always lists at least one problem"
    return caught.value.problems


def only_problem(text: str, code: str):
    found = problems_of(text)
    matching = [p for p in found if p.code == code]
    assert matching, f"expected a {code!r} problem, got {[(p.code, p.message) for p in found]}"
    return matching[0]


def replaced(old: str, new: str, text: str = BASE) -> str:
    assert old in text, old
    return text.replace(old, new, 1)


# ------------------------------------------------------------------ good files


def test_base_file_reads_into_si():
    sheet = parse_sheet_text(BASE, path="site.toml").sheet
    assert sheet.format == 1 and sheet.title == "Brackenfold gathering" and sheet.model == "peng-robinson"
    assert sheet.ambient_temperature_K == pytest.approx(288.15)
    assert sheet.atmospheric_pressure_Pa == pytest.approx(94000.0)
    assert sheet.limits.max_pressure_Pa == pytest.approx(100e5 + 94000.0)
    assert sheet.limits.min_temperature_K == pytest.approx(244.15)
    well = sheet.streams["well-gas"]
    assert well.pressure_Pa == pytest.approx(68e5 + 94000.0)
    assert well.molar_flow_mol_s == pytest.approx(2400e3 / 3600) and well.mass_flow_kg_s is None
    assert well.composition["carbon-dioxide"] == 0.01
    side = sheet.streams["side-gas"]
    assert side.mass_flow_kg_s == pytest.approx(3e3 / 3600) and side.molar_flow_mol_s is None
    assert set(side.composition) == {"methane", "rig-gas"}
    assert sheet.kij("methane", "carbon-dioxide") == sheet.kij("carbon-dioxide", "methane") == 0.09
    assert sheet.kij("methane", "ethane") == 0.0
    rig = sheet.components["rig-gas"]
    assert not rig.overrides and rig.molar_mass == pytest.approx(0.0189)
    assert rig.critical_pressure == pytest.approx(46.1e5) and rig.cp_range == (200.0, 1200.0)
    assert list(sheet.units) == ["choke", "header", "line-heater", "booster"]
    header = sheet.units["header"]
    assert header.inlet_streams == ("lp-gas", "side-gas") and header.outlet_streams == ("mixed-gas",)
    booster = sheet.units["booster"]
    assert booster.params["outlet_pressure"] == pytest.approx(45e5 + 94000.0)
    assert booster.value("isentropic_efficiency") == 0.78
    assert sheet.producer_of("export") == "booster" and sheet.consumer_of("well-gas") == "choke"
    assert sheet.stream_names()[:2] == ("well-gas", "side-gas")


def test_defaults_when_optional_keys_are_absent():
    text = "format = 1\n"
    sheet = parse_sheet_text(text).sheet
    assert sheet.model == "peng-robinson" and sheet.ambient_temperature_K == 298.15
    assert sheet.atmospheric_pressure_Pa == 101325.0 and sheet.limits == Limits()
    assert sheet.streams == {} and sheet.units == {}


def test_contract_defaults_for_efficiencies():
    text = replaced("isentropic_efficiency = 0.78\n", "")
    assert parse_sheet_text(text).sheet.units["booster"].value("isentropic_efficiency") == 0.75
    text = replaced("isentropic_efficiency = 0.78", "polytropic_efficiency = 0.8")
    unit = parse_sheet_text(text).sheet.units["booster"]
    assert unit.value("isentropic_efficiency") is None and unit.value("polytropic_efficiency") == 0.8


def test_template_loads_cleanly_and_has_every_top_level_key():
    loaded = load_sheet(TEMPLATE)
    sheet = loaded.sheet
    assert len(sheet.streams) == 1
    assert sorted(u.type for u in sheet.units.values()) == ["heater", "valve"]
    text = loaded.text
    for key in ("format", "title", "model", "ambient_temperature", "atmospheric_pressure",
                "[limits]", "components.", "[interaction]", "[streams.", "[units."):
        assert key in text, key
    assert "invented" in text.lower()


def test_line_numbers_of_the_common_layouts():
    loaded = parse_sheet_text(BASE)
    assert loaded.line_of(("units", "booster", "outlet_pressure")) == line_with(BASE, 'outlet_pressure = "45 barg"')
    assert loaded.line_of(("streams", "well-gas", "composition", "ethane")) == line_with(BASE, "ethane = 0.07")
    assert loaded.line_of(("units", "header", "inlets", 1)) == line_with(BASE, "inlets =")
    assert loaded.line_of(("units", "choke")) == line_with(BASE, "[units.choke]")
    assert loaded.line_of(("interaction", "methane/carbon-dioxide")) == line_with(BASE, '"methane/carbon-dioxide"')
    # a key that is not written gets the line of its nearest written parent
    assert loaded.line_of(("units", "choke", "pressure_drop")) == line_with(BASE, "[units.choke]")
    assert loaded.sheet.where(("units", "booster")).line == line_with(BASE, "[units.booster]")


def test_dotted_keys_and_composition_sub_tables_are_located():
    text = '''format = 1
[streams.a]
temperature = "35 degC"
pressure = "68 barg"
flow = "10 kmol/h"
composition.methane = 0.5
composition.ethane = 0.5

[streams.b]
temperature = "35 degC"
pressure = "68 barg"
flow = "10 kmol/h"

[streams.b.composition]
methane = 0.5
ethnae = 0.5
'''
    index = locate_keys(text)
    assert index.line_of(("streams", "a", "composition", "ethane")) == 7
    assert index.line_of(("streams", "b", "composition", "ethnae")) == 16
    problem = only_problem(text, "unknown-component")
    assert problem.key_path == ("streams", "b", "composition", "ethnae") and problem.line == 16
    assert "ethane" in problem.message


def test_multi_line_strings_and_arrays_do_not_confuse_the_line_count():
    text = '''format = 1
title = """A title
[units.fake]
over lines"""

[units.split]
type = "splitter"
inlet = "feed"
outlets = [
    "a",   # first
    "b",
]
fractions = [
    0.5,
    "0.5",
]
'''
    found = problems_of(text)
    fraction = next(p for p in found if p.key_path == ("units", "split", "fractions", 1))
    assert fraction.line == 15 and fraction.code == "not-a-number"
    dangling = next(p for p in found if p.code == "dangling-stream")
    assert dangling.line == 8


def test_crlf_and_byte_order_mark_are_read():
    text = BASE.replace("\n", "\r\n")
    loaded = parse_sheet_bytes(b"\xef\xbb\xbf" + text.encode())
    assert loaded.byte_order_mark and loaded.sheet.units["choke"].type == "valve"
    assert loaded.line_of(("units", "choke", "outlet_pressure")) == line_with(BASE, 'outlet_pressure = "22 barg"')
    assert loaded.render().encode() == b"\xef\xbb\xbf" + text.encode()


# ------------------------------------------------------------------ bad files


def test_syntax_error_gives_its_line_and_column():
    text = replaced('temperature = "35 degC"', "temperature = 35 degC")
    problem = only_problem(text, "toml-syntax")
    assert problem.line == line_with(text, "temperature = 35 degC")
    assert problem.column is not None
    assert "quoted" in problem.fix


def test_duplicate_key_is_a_syntax_error():
    text = replaced('outlet_pressure = "22 barg"', 'outlet_pressure = "22 barg"\noutlet_pressure = "20 barg"')
    assert only_problem(text, "toml-syntax").line is not None


@pytest.mark.parametrize("text", ["", "   \n\n", "\ufeff"])
def test_empty_file(text):
    assert only_problem(text, "empty-file").fix


def test_binary_file(tmp_path):
    path = tmp_path / "picture.toml"
    path.write_bytes(b"\x89PNG\r\n\x1a\n\x00\x00\x00\rIHDR")
    with pytest.raises(SheetError) as caught:
        load_sheet(path)
    assert caught.value.problems[0].code == "binary-file"
    assert str(path) in str(caught.value)


def test_not_utf8_names_the_line():
    data = BASE.replace("# invented site", "# Caf\u00e9 site").encode("latin-1")
    with pytest.raises(SheetError) as caught:
        parse_sheet_bytes(data, path="site.toml")
    problem = caught.value.problems[0]
    assert problem.code == "not-utf8" and problem.line == 2 and "UTF-8" in problem.fix


def test_missing_file_and_folder(tmp_path):
    for path in (tmp_path / "absent.toml", tmp_path):
        with pytest.raises(SheetError) as caught:
            load_sheet(path)
        assert caught.value.problems[0].code == "cannot-read"


def test_missing_format():
    problem = only_problem(replaced("format = 1                           # required\n", ""), "format-missing")
    assert "format = 1" in problem.fix


@pytest.mark.parametrize("value, code", [("2", "format-unsupported"), ('"1"', "format-wrong"), ("1.0", "format-wrong"),
                                         ("true", "format-wrong")])
def test_wrong_format(value, code):
    problem = only_problem(replaced("format = 1 ", f"format = {value} "), code)
    assert problem.key_path == ("format",) and problem.line == 1


def test_unknown_top_level_key_suggests_the_closest():
    text = replaced('title = "Brackenfold gathering"', 'titel = "Brackenfold gathering"')
    problem = only_problem(text, "unknown-key")
    assert problem.key_path == ("titel",) and problem.line == 2 and "'title'" in problem.fix


def test_unknown_unit_key_suggests_the_closest():
    text = replaced('outlet_pressure = "22 barg"', 'outlet_presure = "22 barg"')
    found = problems_of(text)
    unknown = next(p for p in found if p.code == "unknown-key")
    assert unknown.key_path == ("units", "choke", "outlet_presure")
    assert unknown.line == line_with(text, "outlet_presure") and "'outlet_pressure'" in unknown.fix
    assert any(p.code == "spec-missing" and p.key_path == ("units", "choke") for p in found)


def test_unknown_unit_type_suggests_the_closest():
    problem = only_problem(replaced('type = "valve"', 'type = "vlave"'), "unknown-unit-type")
    assert problem.key_path == ("units", "choke", "type") and "'valve'" in problem.fix


def test_unknown_unit_type_does_not_cascade_into_dangling_streams():
    found = problems_of(replaced('type = "valve"', 'type = "throttle"'))
    assert [p.code for p in found] == ["unknown-unit-type"]


def test_bare_number_names_the_key_and_shows_an_example():
    text = replaced('outlet_pressure = "22 barg"', "outlet_pressure = 22")
    problem = only_problem(text, "bare-number")
    assert problem.key_path == ("units", "choke", "outlet_pressure")
    assert problem.line == line_with(text, "outlet_pressure = 22")
    assert '"22 barg"' in problem.message and "units.choke.outlet_pressure" in str(problems_of(text)[0].describe())


def test_bare_number_for_a_temperature():
    problem = only_problem(replaced('temperature = "35 degC"', "temperature = 35"), "bare-number")
    assert '"35 degC"' in problem.message and problem.key_path == ("streams", "well-gas", "temperature")


def test_wrong_unit_kind():
    text = replaced('pressure = "68 barg"', 'pressure = "68 degC"')
    problem = only_problem(text, "wrong-unit")
    assert "temperature unit" in problem.message and problem.line == line_with(text, '"68 degC"')


def test_negative_absolute_pressure():
    problem = only_problem(replaced('pressure = "68 barg"', 'pressure = "-2 barg"'), "impossible-value")
    assert "above zero" in problem.message


def test_temperature_below_absolute_zero():
    problem = only_problem(replaced('temperature = "35 degC"', 'temperature = "-300 degC"'), "impossible-value")
    assert "absolute zero" in problem.message and problem.key_path == ("streams", "well-gas", "temperature")


@pytest.mark.parametrize(
    "old, new, shown",
    [('temperature = "35 degC"', 'temperature = "20000 K"', "20000 K"),
     ('pressure = "68 barg"', 'pressure = "2e10 Pa"', "2e10 Pa"),
     ('flow = "2400 kmol/h"', 'flow = "5e12 kg/h"', "5e12 kg/h")],
)
def test_absurd_magnitudes_are_refused_with_the_value(old, new, shown):
    problem = only_problem(replaced(old, new), "absurd-value")
    assert shown in problem.message


def test_composition_not_summing_to_one_shows_the_sum():
    text = replaced("methane = 0.87", "methane = 0.88")
    problem = only_problem(text, "composition-sum")
    assert "1.01" in problem.message and problem.key_path == ("streams", "well-gas", "composition")
    assert problem.line == line_with(text, "methane = 0.88")


def test_composition_within_the_tolerance_is_accepted():
    text = replaced("methane = 0.87", "methane = 0.8700004")
    assert parse_sheet_text(text).sheet.streams["well-gas"].composition["methane"] == 0.8700004


def test_unknown_component_suggests_the_closest():
    text = replaced("methane = 0.87", "methan = 0.87")
    problem = only_problem(text, "unknown-component")
    assert problem.key_path == ("streams", "well-gas", "composition", "methan") and "'methane'" in problem.message


def test_formulas_are_accepted_as_component_names():
    text = replaced("methane = 0.87, ethane = 0.07", "CH4 = 0.87, ethane = 0.07")
    assert "methane" in parse_sheet_text(text).sheet.streams["well-gas"].composition


def test_a_component_listed_twice_under_two_names():
    text = replaced("methane = 0.87, ethane = 0.07", "methane = 0.8, CH4 = 0.07, ethane = 0.07")
    assert only_problem(text, "duplicate-component").key_path[-1] == "CH4"


def test_user_component_overriding_a_library_one():
    text = replaced("[interaction]", '[components.nitrogen]\nacentric_factor = 0.04\n\n[interaction]')
    component = parse_sheet_text(text).sheet.components["nitrogen"]
    assert component.overrides and component.given() == {"acentric_factor": 0.04}


def test_incomplete_new_component():
    text = replaced("acentric_factor = 0.031\n", "")
    problem = only_problem(text, "component-incomplete")
    assert "acentric_factor" in problem.message and problem.key_path == ("components", "rig-gas")


def test_component_with_negative_cp():
    text = replaced("ideal_gas_cp = [29.1, 0.0121, 1.5e-5, -6.1e-9]", "ideal_gas_cp = [-29.1]")
    assert only_problem(text, "bad-cp").key_path == ("components", "rig-gas", "ideal_gas_cp")


def test_stream_with_both_flows():
    text = replaced('flow = "2400 kmol/h"', 'flow = "2400 kmol/h"\nmass_flow = "12 t/h"')
    problem = only_problem(text, "flow-conflict")
    assert problem.key_path == ("streams", "well-gas", "mass_flow") and problem.line == line_with(text, "mass_flow")


def test_stream_with_no_flow():
    problem = only_problem(replaced('flow = "2400 kmol/h"\n', ""), "flow-missing")
    assert problem.key_path == ("streams", "well-gas") and problem.line == line_with(BASE, "[streams.well-gas]")


def test_explicit_molar_flow_key_must_have_a_molar_unit():
    text = replaced('flow = "2400 kmol/h"', 'molar_flow = "12 t/h"')
    assert only_problem(text, "wrong-unit").key_path == ("streams", "well-gas", "molar_flow")


def test_feed_missing_pressure():
    problem = only_problem(replaced('pressure = "68 barg"\n', ""), "state-underspecified")
    assert problem.key_path == ("streams", "well-gas") and "pressure" in problem.fix


def test_saturated_feed_with_vapor_fraction():
    text = replaced('temperature = "35 degC"', "vapor_fraction = 1.0")
    stream = parse_sheet_text(text).sheet.streams["well-gas"]
    assert stream.vapor_fraction == 1.0 and stream.temperature_K is None


def test_feed_with_three_state_keys():
    text = replaced('temperature = "35 degC"', 'temperature = "35 degC"\nvapor_fraction = 1.0')
    assert only_problem(text, "state-overspecified")


def test_dangling_stream_suggests_the_closest_name():
    text = replaced('inlet = "well-gas"', 'inlet = "wel-gas"')
    problem = only_problem(text, "dangling-stream")
    assert problem.key_path == ("units", "choke", "inlet") and "'well-gas'" in problem.fix
    assert problem.line == line_with(text, 'inlet = "wel-gas"')


def test_stream_written_as_outlet_by_two_units():
    text = replaced('outlet = "export"', 'outlet = "warm-gas"')
    problem = only_problem(text, "stream-two-sources")
    assert "line-heater" in problem.message and "booster" in problem.message


def test_stream_entering_two_units():
    text = replaced('inlet = "warm-gas"', 'inlet = "mixed-gas"')
    assert only_problem(text, "stream-two-destinations")


def test_stream_that_is_a_feed_and_an_outlet():
    text = replaced('outlet = "lp-gas"', 'outlet = "side-gas"')
    problem = only_problem(text, "feed-is-outlet")
    assert problem.key_path == ("units", "choke", "outlet")


def test_unit_missing_its_specification():
    text = replaced('outlet_pressure = "22 barg"\n', "")
    problem = only_problem(text, "spec-missing")
    assert "outlet_pressure" in problem.message and "pressure_drop" in problem.message
    assert problem.line == line_with(text, "[units.choke]")


def test_unit_with_two_specifications_of_one_group():
    text = replaced('outlet_pressure = "22 barg"', 'outlet_pressure = "22 barg"\npressure_drop = "5 bar"')
    problem = only_problem(text, "spec-conflict")
    assert problem.key_path == ("units", "choke", "pressure_drop")


def test_heater_with_two_specifications():
    text = replaced('outlet_temperature = "25 degC"', 'outlet_temperature = "25 degC"\nduty = "1 MW"')
    assert only_problem(text, "spec-conflict")


SPLITTER = '''format = 1
[streams.feed]
temperature = "35 degC"
pressure = "20 bara"
flow = "100 kmol/h"
composition = { methane = 1.0 }

[units.split]
type = "splitter"
inlet = "feed"
outlets = ["a", "b"]
fractions = [0.6, 0.4]
'''


def test_splitter_reads():
    unit = parse_sheet_text(SPLITTER).sheet.units["split"]
    assert unit.params["fractions"] == (0.6, 0.4) and unit.outlet_streams == ("a", "b")


def test_splitter_fractions_not_summing_to_one():
    problem = only_problem(SPLITTER.replace("[0.6, 0.4]", "[0.6, 0.3]"), "fractions-sum")
    assert "0.9" in problem.message and problem.key_path == ("units", "split", "fractions")


def test_splitter_fraction_count_not_matching_outlets():
    assert only_problem(SPLITTER.replace("[0.6, 0.4]", "[0.6, 0.3, 0.1]"), "fractions-count")


@pytest.mark.parametrize("value", ["78", "0", "-0.5", "1.2"])
def test_efficiency_outside_zero_to_one(value):
    text = replaced("isentropic_efficiency = 0.78", f"isentropic_efficiency = {value}")
    problem = only_problem(text, "out-of-range")
    assert problem.key_path == ("units", "booster", "isentropic_efficiency")


def test_efficiency_written_as_a_percentage_string():
    problem = only_problem(replaced("isentropic_efficiency = 0.78", 'isentropic_efficiency = "78 %"'), "not-a-number")
    assert "0.78" in problem.fix


def test_efficiency_of_one_is_accepted():
    text = replaced("isentropic_efficiency = 0.78", "isentropic_efficiency = 1")
    assert parse_sheet_text(text).sheet.units["booster"].params["isentropic_efficiency"] == 1.0


def test_negative_duty_is_refused_with_a_message():
    text = replaced('outlet_temperature = "25 degC"', 'duty = "-1.2 MW"')
    problem = only_problem(text, "negative-duty")
    assert "cooler" in problem.fix and problem.key_path == ("units", "line-heater", "duty")


def test_negative_pressure_drop_is_refused():
    text = replaced('outlet_pressure = "22 barg"', 'pressure_drop = "-5 bar"')
    assert only_problem(text, "out-of-range").key_path == ("units", "choke", "pressure_drop")


@pytest.mark.parametrize("old, new, suggestion",
                         [("[streams.side-gas]", "[streams.Side_Gas]", "side-gas"),
                          ("[units.booster]", "[units.Booster]", "booster")])
def test_names_must_be_lower_case_with_hyphens(old, new, suggestion):
    text = replaced(old, new)
    problem = only_problem(text, "bad-name")
    assert suggestion in problem.fix and problem.line == line_with(text, new)


def test_unknown_model_suggests_the_closest():
    problem = only_problem(replaced('model = "peng-robinson"', 'model = "peng-robinsen"'), "unknown-model")
    assert "'peng-robinson'" in problem.fix and problem.line == 3


def test_gauge_atmospheric_pressure_is_refused():
    assert only_problem(replaced('"0.94 bar"', '"0.94 barg"'), "wrong-unit").key_path == ("atmospheric_pressure",)


def test_interaction_with_an_unknown_component_and_a_self_pair():
    text = replaced('"methane/carbon-dioxide" = 0.09', '"methane/carbon-dioxyde" = 0.09\n"ethane/C2H6" = 0.01')
    found = problems_of(text)
    codes = {p.code for p in found}
    assert "unknown-component" in codes


def test_every_problem_is_reported_at_once_in_file_order():
    text = replaced('title = "Brackenfold gathering"', 'titel = "x"')
    text = replaced("methane = 0.87", "methane = 0.88", text)
    text = replaced('type = "valve"', 'type = "vlave"', text)
    found = problems_of(text)
    assert [p.code for p in found] == ["unknown-key", "composition-sum", "unknown-unit-type"]
    assert [p.line for p in found] == sorted(p.line for p in found)


def test_message_format_names_file_line_key_and_fix():
    text = replaced('outlet_pressure = "22 barg"', "outlet_pressure = 22")
    with pytest.raises(SheetError) as caught:
        parse_sheet_text(text, path="site.toml")
    line = line_with(text, "outlet_pressure = 22")
    message = str(caught.value)
    assert message.startswith(f"site.toml:{line}: units.choke.outlet_pressure: ")
    assert " Fix: " in message and "\n" not in message
    as_json = caught.value.as_dicts()[0]
    assert as_json["code"] == "bare-number" and as_json["where"]["line"] == line


def test_every_unit_type_without_specification_is_named():
    for type_name, unit_type in UNIT_TYPES.items():
        if not any(group.required for group in unit_type.groups):
            continue
        connections = "\n".join(
            f'{role} = ["x-{role}-1", "x-{role}-2"]' if role.endswith("s") else f'{role} = "x-{role}"'
            for role in unit_type.connections)
        text = f'format = 1\n[units.u]\ntype = "{type_name}"\n{connections}\n'
        assert any(p.code == "spec-missing" for p in problems_of(text)), type_name


# ------------------------------------------------------------------ fuzzing

_names = st.text(alphabet=string.ascii_lowercase + "-_", min_size=1, max_size=12)
_values = st.recursive(
    st.one_of(
        st.integers(-10**6, 10**6),
        st.floats(allow_nan=False, allow_infinity=False),
        st.booleans(),
        st.sampled_from(["35 degC", "68 barg", "2400 kmol/h", "12 t/h", "1.2 MW", "0.5 bar", "-300 degC", "1e99 K",
                         "peng-robinson", "valve", "heater", "splitter", "mixer", "exchanger", "a", "b", "feed"]),
        st.text(max_size=15),
    ),
    lambda children: st.lists(children, max_size=4) | st.dictionaries(_names, children, max_size=4),
    max_leaves=12,
)
_keys = st.sampled_from(["format", "title", "model", "ambient_temperature", "atmospheric_pressure", "limits",
                         "components", "interaction", "streams", "units", "type", "inlet", "outlet", "inlets",
                         "outlets", "composition", "flow", "temperature", "pressure", "fractions", "duty",
                         "methane", "ethane", "a", "b", "feed"]) | _names
_tables = st.dictionaries(_keys, _values, max_size=5)
_documents = st.fixed_dictionaries(
    {"format": st.sampled_from([1, 1, 1, 2, "1"])},
    optional={
        "model": st.sampled_from(["peng-robinson", "virial", "bogus"]),
        "streams": st.dictionaries(_names, st.dictionaries(_keys, _values, max_size=6), max_size=3),
        "units": st.dictionaries(_names, _tables, max_size=3),
        "limits": _tables,
        "components": st.dictionaries(_names, _tables, max_size=2),
        "interaction": st.dictionaries(st.sampled_from(["methane/ethane", "a/b", "x", "methane/methane"]), _values),
    },
)


def _only_sheet_errors(text: str) -> None:
    try:
        parse_sheet_text(text)
    except SheetError as error:
        assert error.problems and str(error)


@settings(max_examples=60, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(_documents)
def test_random_toml_documents_give_a_sheet_or_a_sheet_error(document):
    _only_sheet_errors(tomli_w.dumps(document))


@settings(max_examples=120, deadline=None)
@given(st.text(max_size=200))
def test_random_text_gives_only_sheet_errors(text):
    _only_sheet_errors(text)


@settings(max_examples=80, deadline=None)
@given(st.integers(0, len(BASE) - 1), st.integers(1, 12), st.text(max_size=6))
def test_damaged_base_file_gives_a_sheet_or_a_sheet_error(position, length, insert):
    _only_sheet_errors(BASE[:position] + insert + BASE[position + length:])


@settings(max_examples=60, deadline=None)
@given(st.binary(max_size=200))
def test_random_bytes_give_only_sheet_errors(data):
    try:
        parse_sheet_bytes(data)
    except SheetError as error:
        assert error.problems


def _paths(node, path=()):
    if isinstance(node, dict):
        for key, value in node.items():
            yield path + (key,)
            yield from _paths(value, path + (key,))
    elif isinstance(node, list):
        for position, value in enumerate(node):
            yield path + (position,)
            yield from _paths(value, path + (position,))


@settings(max_examples=50, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(_documents)
def test_every_key_of_a_random_document_is_located_on_a_line_that_holds_it(document):
    text = tomli_w.dumps(document)
    lines = text.split("\n")  # TOML lines end at \n only (str.splitlines also splits at \x85 and more)
    index = locate_keys(text)
    for path in _paths(tomllib.loads(text)):
        assert path in index.locations, path
        if isinstance(path[-1], str):
            assert path[-1] in lines[index.locations[path].line - 1], path
