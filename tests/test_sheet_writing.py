"""Writing flowsheet files: edits keep the engineer's comments, key order and
untouched values byte for byte, so that a git diff shows only what changed;
saving is atomic and refuses to overwrite a file changed by someone else."""

from __future__ import annotations

import difflib
import os
import stat
import tomllib

import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from test_sheetfile import BASE, TEMPLATE

from thermo.errors import FileChangedOnDisk, SaveError, SheetEditError
from thermo.sheetfile import (
    add_stream,
    add_unit,
    fingerprint,
    load_sheet,
    parse_sheet_text,
    remove_stream,
    remove_unit,
    remove_value,
    rename_stream,
    rename_unit,
    save_atomic,
    set_model,
    set_value,
)

# Comments on every kind of line, dotted keys, a sub-table, a multi-line array
# and odd spacing: the layouts an engineer might write by hand.
COMMENTED = '''\
# Invented site: the Tollbridge test loop (names and numbers are made up).
format = 1   # do not change
title = 'Tollbridge loop'
model    =    "soave-redlich-kwong"      # chosen for the test

# ---- feeds ----
[streams.feed-a]  # from the test rig
temperature = "35 degC"   # thermocouple TT-1
pressure = "20 bara"
flow = "100 kmol/h"
composition.methane = 0.9   # lab sheet 12
composition.ethane = 0.1

[streams.feed-b]
temperature = "40 degC"
pressure = "20 bara"
flow = "50 kmol/h"

[streams.feed-b.composition]
methane = 1.0

# ---- units ----
# the mixer joins both rigs
[units.join]
type = "mixer"
inlets = [
    "feed-a",   # rig 1
    "feed-b",   # rig 2
]
outlet = "mixed"

[units.trim]
type = "cooler"
inlet = "mixed"
outlet = "cooled"      # to the flare header
outlet_temperature = "30 degC"   # set point

# last unit
[units.drop]
type = "valve"
inlet = "cooled"
outlet = "out"
pressure_drop = "2 bar"
'''


def changed_lines(before: str, after: str) -> tuple[list[str], list[str]]:
    """(removed lines, added lines) of a line diff."""
    removed, added = [], []
    for line in difflib.ndiff(before.splitlines(), after.splitlines()):
        if line.startswith("- "):
            removed.append(line[2:])
        elif line.startswith("+ "):
            added.append(line[2:])
    return removed, added


@pytest.mark.parametrize("text", [BASE, COMMENTED, COMMENTED.replace("\n", "\r\n"), TEMPLATE.read_text("utf-8")])
def test_untouched_files_round_trip_byte_for_byte(text, tmp_path):
    loaded = parse_sheet_text(text)
    assert loaded.render() == text
    path = tmp_path / "sheet.toml"
    path.write_bytes(text.encode())
    loaded = load_sheet(path)
    save_atomic(path, loaded.render(), expected_fingerprint=loaded.fingerprint)
    assert path.read_bytes() == text.encode()


def test_changing_one_value_and_saving_changes_exactly_that_line(tmp_path):
    path = tmp_path / "loop.toml"
    path.write_text(COMMENTED)
    loaded = load_sheet(path)
    edited = set_value(loaded.document, ("streams", "feed-a", "temperature"), "38 degC")
    save_atomic(path, loaded.render(edited), expected_fingerprint=loaded.fingerprint)
    diff = [line for line in difflib.unified_diff(COMMENTED.splitlines(), path.read_text().splitlines(), lineterm="", n=0)
            if not line.startswith(("---", "+++", "@@"))]
    assert diff == ['-temperature = "35 degC"   # thermocouple TT-1', '+temperature = "38 degC"   # thermocouple TT-1']
    assert load_sheet(path).sheet.streams["feed-a"].temperature_K == pytest.approx(311.15)


@pytest.mark.parametrize(
    "key_path, value, old_line, new_line",
    [
        (("model",), "peng-robinson", 'model    =    "soave-redlich-kwong"      # chosen for the test',
         'model    =    "peng-robinson"      # chosen for the test'),
        (("streams", "feed-a", "composition", "methane"), 0.85, "composition.methane = 0.9   # lab sheet 12",
         "composition.methane = 0.85   # lab sheet 12"),
        (("streams", "feed-b", "composition", "methane"), 1, "methane = 1.0", "methane = 1"),
        (("units", "join", "inlets"), ["feed-b", "feed-a"], None, None),
        (("units", "trim", "outlet_temperature"), "25 degC", 'outlet_temperature = "30 degC"   # set point',
         'outlet_temperature = "25 degC"   # set point'),
    ],
)
def test_set_value_keeps_the_comment_of_its_line(key_path, value, old_line, new_line):
    after = set_value(parse_sheet_text(COMMENTED).document, key_path, value).as_string()
    removed, added = changed_lines(COMMENTED, after)
    if old_line is not None:
        assert removed == [old_line] and added == [new_line]
    assert tomllib.loads(after)


def test_set_value_with_the_written_value_changes_nothing():
    document = parse_sheet_text(BASE).document
    assert set_value(document, ("units", "booster", "isentropic_efficiency"), 0.78).as_string() == BASE
    assert set_value(document, ("units", "choke", "outlet_pressure"), "22 barg").as_string() == BASE


def test_set_value_adds_a_missing_key_at_the_end_of_its_table():
    after = set_value(parse_sheet_text(COMMENTED).document, ("units", "trim", "pressure_drop"), "0.3 bar").as_string()
    removed, added = changed_lines(COMMENTED, after)
    assert removed == [] and added == ['pressure_drop = "0.3 bar"']
    lines = after.splitlines()
    # the new key goes before the comment that belongs to the next table
    assert lines[lines.index('pressure_drop = "0.3 bar"') + 2] == "# last unit"
    assert parse_sheet_text(after).sheet.units["trim"].params["pressure_drop"] == pytest.approx(3e4)


def test_set_value_creates_a_missing_table():
    after = set_value(parse_sheet_text(COMMENTED).document, ("limits", "max_pressure"), "30 barg").as_string()
    removed, added = changed_lines(COMMENTED, after)
    assert removed == [] and "[limits]" in added and 'max_pressure = "30 barg"' in added
    assert parse_sheet_text(after).sheet.limits.max_pressure_Pa == pytest.approx(30e5 + 101325.0)


def test_set_value_refuses_what_cannot_be_written():
    document = parse_sheet_text(BASE).document
    with pytest.raises(SheetEditError):
        set_value(document, ("units", "choke", "outlet_pressure"), float("nan"))
    with pytest.raises(SheetEditError):
        set_value(document, ("units", "choke", "type", "deeper"), "x")
    with pytest.raises(SheetEditError):
        set_value(document, ("streams", "well-gas"), "a string over a table")


def test_edits_never_change_the_document_given():
    document = parse_sheet_text(COMMENTED).document
    set_value(document, ("title",), "other")
    rename_stream(document, "mixed", "joined")
    remove_unit(document, "drop")
    add_stream(document, "feed-c", {"temperature": "1 degC"})
    assert document.as_string() == COMMENTED


def test_remove_value_removes_only_its_line():
    after = remove_value(parse_sheet_text(COMMENTED).document, ("units", "trim", "outlet_temperature")).as_string()
    assert changed_lines(COMMENTED, after) == (['outlet_temperature = "30 degC"   # set point'], [])


def test_rename_stream_updates_every_reference_and_nothing_else():
    after = rename_stream(parse_sheet_text(COMMENTED).document, "feed-a", "rig-one").as_string()
    removed, added = changed_lines(COMMENTED, after)
    assert removed == ["[streams.feed-a]  # from the test rig", '    "feed-a",   # rig 1']
    assert added == ["[streams.rig-one]  # from the test rig", '    "rig-one",   # rig 1']
    sheet = parse_sheet_text(after).sheet
    assert "rig-one" in sheet.streams and sheet.units["join"].inlet_streams == ("rig-one", "feed-b")


def test_rename_of_an_intermediate_stream_changes_both_ends():
    after = rename_stream(parse_sheet_text(COMMENTED).document, "cooled", "cold-gas").as_string()
    removed, added = changed_lines(COMMENTED, after)
    assert removed == ['outlet = "cooled"      # to the flare header', 'inlet = "cooled"']
    assert added == ['outlet = "cold-gas"      # to the flare header', 'inlet = "cold-gas"']


def test_rename_stream_in_the_base_file_with_its_sub_table_and_dotted_forms():
    after = rename_stream(parse_sheet_text(COMMENTED).document, "feed-b", "rig-two").as_string()
    removed, added = changed_lines(COMMENTED, after)
    assert removed == ["[streams.feed-b]", "[streams.feed-b.composition]", '    "feed-b",   # rig 2']
    assert added == ["[streams.rig-two]", "[streams.rig-two.composition]", '    "rig-two",   # rig 2']


def test_rename_stream_refusals():
    document = parse_sheet_text(COMMENTED).document
    with pytest.raises(SheetEditError, match="already a stream"):
        rename_stream(document, "feed-a", "feed-b")
    with pytest.raises(SheetEditError, match="lower-case"):
        rename_stream(document, "feed-a", "Feed A")
    with pytest.raises(SheetEditError, match="no feed or unit"):
        rename_stream(document, "nowhere", "somewhere")


def test_rename_unit_changes_only_its_header():
    after = rename_unit(parse_sheet_text(COMMENTED).document, "join", "header").as_string()
    assert changed_lines(COMMENTED, after) == (["[units.join]"], ["[units.header]"])
    assert list(parse_sheet_text(after).sheet.units) == ["header", "trim", "drop"]
    with pytest.raises(SheetEditError):
        rename_unit(parse_sheet_text(COMMENTED).document, "join", "trim")


def test_add_stream_after_the_last_feed():
    new = {"temperature": "10 degC", "pressure": "20 bara", "flow": "5 t/h", "composition": {"methane": 1.0}}
    after = add_stream(parse_sheet_text(COMMENTED).document, "feed-c", new).as_string()
    removed, added = changed_lines(COMMENTED, after)
    assert removed == []
    assert [line for line in added if line] == [
        "[streams.feed-c]", 'temperature = "10 degC"', 'pressure = "20 bara"', 'flow = "5 t/h"',
        "composition = { methane = 1.0 }"]
    lines = after.splitlines()
    assert lines.index("[streams.feed-c]") < lines.index("# ---- units ----")
    assert parse_sheet_text(after).sheet.streams["feed-c"].mass_flow_kg_s == pytest.approx(5e3 / 3600)
    with pytest.raises(SheetEditError):
        add_stream(parse_sheet_text(COMMENTED).document, "mixed", new)


def test_add_unit_after_the_last_unit():
    new = {"type": "heater", "inlet": "out", "outlet": "warm", "duty": "50 kW"}
    after = add_unit(parse_sheet_text(COMMENTED).document, "warmer", new).as_string()
    removed, added = changed_lines(COMMENTED, after)
    assert removed == [] and added[-1] == 'duty = "50 kW"'
    assert list(parse_sheet_text(after).sheet.units)[-1] == "warmer"


def test_add_unit_to_a_file_without_units():
    after = add_unit(parse_sheet_text("format = 1\n").document, "choke",
                     {"type": "valve", "inlet": "a", "outlet": "b", "outlet_pressure": "1 bara"}).as_string()
    assert after.startswith("format = 1\n\n[units.choke]\n")


def test_remove_unit_takes_its_attached_comment_and_keeps_the_rest():
    after = remove_unit(parse_sheet_text(COMMENTED).document, "drop").as_string()
    removed, added = changed_lines(COMMENTED, after)
    assert added == []
    assert removed == ["", "# last unit", "[units.drop]", 'type = "valve"', 'inlet = "cooled"', 'outlet = "out"',
                       'pressure_drop = "2 bar"']
    assert after.endswith('# set point\n')  # no blank line left at the end of the file
    assert list(parse_sheet_text(after).sheet.units) == ["join", "trim"]


def test_remove_stream_with_its_sub_table():
    after = remove_stream(parse_sheet_text(COMMENTED).document, "feed-b").as_string()
    removed, added = changed_lines(COMMENTED, after)
    assert added == [] and "[streams.feed-b]" in removed and "[streams.feed-b.composition]" in removed
    assert "methane = 1.0" in removed and '    "feed-b",   # rig 2' not in removed
    assert "feed-b" not in after.split("# ---- units ----")[0]


def test_set_model():
    after = set_model(parse_sheet_text(COMMENTED).document, "virial").as_string()
    assert parse_sheet_text(after).sheet.model == "virial"
    with pytest.raises(SheetEditError, match="peng-robinson"):
        set_model(parse_sheet_text(COMMENTED).document, "peng-robinsen")


# ------------------------------------------------------------------ saving


def test_save_refuses_a_file_changed_on_disk(tmp_path):
    path = tmp_path / "loop.toml"
    path.write_text(COMMENTED)
    loaded = load_sheet(path)
    path.write_text(COMMENTED + "# edited in another editor\n")
    with pytest.raises(FileChangedOnDisk):
        save_atomic(path, "format = 1\n", expected_fingerprint=loaded.fingerprint)
    assert path.read_text().endswith("# edited in another editor\n")


def test_save_refuses_a_file_removed_since_it_was_read(tmp_path):
    path = tmp_path / "loop.toml"
    path.write_text(COMMENTED)
    digest = fingerprint(path)
    path.unlink()
    with pytest.raises(FileChangedOnDisk):
        save_atomic(path, COMMENTED, expected_fingerprint=digest)
    assert not path.exists()


def test_save_keeps_permissions_and_leaves_no_temporary_file(tmp_path):
    path = tmp_path / "loop.toml"
    path.write_text(COMMENTED)
    os.chmod(path, 0o640)
    new_digest = save_atomic(path, "format = 1\n", expected_fingerprint=fingerprint(path))
    assert path.read_text() == "format = 1\n" and fingerprint(path) == new_digest
    assert stat.S_IMODE(path.stat().st_mode) == 0o640
    assert sorted(p.name for p in tmp_path.iterdir()) == ["loop.toml"]


def test_save_to_a_missing_folder_is_a_save_error(tmp_path):
    with pytest.raises(SaveError) as caught:
        save_atomic(tmp_path / "no-such-folder" / "x.toml", "format = 1\n")
    assert "x.toml" in str(caught.value)


def test_save_creates_a_new_file(tmp_path):
    path = tmp_path / "new.toml"
    save_atomic(path, TEMPLATE.read_text("utf-8"))
    assert load_sheet(path).sheet.units


# ------------------------------------------------------------------ properties

_LEAVES = [
    (("streams", "feed-a", "temperature"), st.sampled_from(["36 degC", "300 K", "90 degF"])),
    (("streams", "feed-a", "pressure"), st.sampled_from(["21 bara", "300 psia", "19 barg"])),
    (("streams", "feed-b", "flow"), st.sampled_from(["60 kmol/h", "2 t/h", "10 mol/s"])),
    (("units", "trim", "outlet_temperature"), st.sampled_from(["20 degC", "290 K"])),
    (("units", "drop", "pressure_drop"), st.sampled_from(["1 bar", "15 psi", "50 kPa"])),
    (("title",), st.text(alphabet="abcxyz ", max_size=10)),
]


@settings(max_examples=40, deadline=None)
@given(st.lists(st.sampled_from(range(len(_LEAVES))), min_size=1, max_size=4, unique=True), st.data())
def test_value_edits_change_only_their_own_lines(choices, data):
    document = parse_sheet_text(COMMENTED).document
    edited_lines = set()
    lines = COMMENTED.splitlines()
    loaded = parse_sheet_text(COMMENTED)
    for choice in choices:
        key_path, values = _LEAVES[choice]
        document = set_value(document, key_path, data.draw(values))
        edited_lines.add(loaded.line_of(key_path))
    after = document.as_string().splitlines()
    assert len(after) == len(lines)
    for number, (old, new) in enumerate(zip(lines, after), start=1):
        if number not in edited_lines:
            assert old == new
    parse_sheet_text(document.as_string())


_new_names = st.from_regex(r"[a-z][a-z0-9]{0,6}(-[a-z0-9]{1,5}){0,2}", fullmatch=True)


@settings(max_examples=40, deadline=None)
@given(st.sampled_from(["feed-a", "feed-b", "mixed", "cooled", "out"]), _new_names)
def test_renamed_streams_keep_the_flowsheet_the_same(old, new):
    document = parse_sheet_text(COMMENTED).document
    if new in {"feed-a", "feed-b", "mixed", "cooled", "out"}:
        if new != old:
            with pytest.raises(SheetEditError):
                rename_stream(document, old, new)
        return
    before = parse_sheet_text(COMMENTED).sheet
    after = parse_sheet_text(rename_stream(document, old, new).as_string()).sheet
    rename = {old: new}
    assert [rename.get(s, s) for s in before.stream_names()] == list(after.stream_names())
    assert [u.type for u in before.units.values()] == [u.type for u in after.units.values()]


def test_set_value_adds_to_an_inline_table_in_its_own_style():
    after = set_value(parse_sheet_text(BASE).document, ("streams", "well-gas", "composition", "helium"), 0.0)
    removed, added = changed_lines(BASE, after.as_string())
    assert added == [removed[0].replace("carbon-dioxide = 0.01 }", "carbon-dioxide = 0.01, helium = 0.0 }")]
    assert parse_sheet_text(after.as_string()).sheet.streams["well-gas"].composition["helium"] == 0.0


def test_set_value_adds_to_dotted_keys_and_sub_tables():
    document = parse_sheet_text(COMMENTED).document
    after = set_value(document, ("streams", "feed-a", "composition", "propane"), 0.0).as_string()
    assert changed_lines(COMMENTED, after) == ([], ["composition.propane = 0.0"])
    after = set_value(document, ("streams", "feed-b", "composition", "propane"), 0.0).as_string()
    assert changed_lines(COMMENTED, after) == ([], ["propane = 0.0"])
    assert parse_sheet_text(after).sheet.streams["feed-b"].composition == {"methane": 1.0, "propane": 0.0}
