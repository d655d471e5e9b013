"""Bad input at the command line: every case exits 2 with a one-line
message per problem on stderr ("statepath: FILE:LINE: key.path: what. Fix:
how."), and never reaches the last-resort handler or shows a traceback."""

from __future__ import annotations

import json
from dataclasses import dataclass
from pathlib import Path

import pytest

from tui import cli

ROOT = Path(__file__).resolve().parents[1]
LETDOWN_TEXT = (ROOT / "flowsheets" / "gas-letdown.toml").read_text(encoding="utf-8")


@pytest.fixture(autouse=True)
def guard(monkeypatch):
    monkeypatch.setenv("NO_COLOR", "1")
    monkeypatch.setenv("COLUMNS", "80")
    monkeypatch.delenv("STATEPATH_DEBUG", raising=False)

    def never(error, stderr):
        raise AssertionError(f"the last-resort handler was reached: {type(error).__name__}: {error}")

    monkeypatch.setattr(cli, "internal_error", never)


@dataclass(frozen=True)
class Case:
    """A broken flowsheet: the demo with ``old`` replaced by ``new`` (or
    ``text`` / ``data`` as the whole file), and what the message must say."""

    name: str
    old: str = ""
    new: str = ""
    text: str | None = None
    data: bytes | None = None
    says: tuple[str, ...] = ()
    key: str | None = None  # the key path the message names
    line_of: str | None = None  # the message names the line where this text stands

    def content(self) -> bytes:
        if self.data is not None:
            return self.data
        if self.text is not None:
            return self.text.encode("utf-8")
        assert self.old in LETDOWN_TEXT, self.old
        return LETDOWN_TEXT.replace(self.old, self.new, 1).encode("utf-8")

    def expected_line(self) -> int | None:
        if self.line_of is None:
            return None
        text = self.content().decode("utf-8")
        for number, line in enumerate(text.splitlines(), start=1):
            if self.line_of in line:
                return number
        raise AssertionError(f"{self.line_of!r} not in the case's text")


CASES = [
    Case("toml-syntax", 'title = "Vellmarsh', 'title = "Vellmarsh\n', says=("not valid TOML",),
         line_of='title = "Vellmarsh'),
    Case("bare-number", 'flow = "2200 kmol/h"', "flow = 2200", says=("bare number", '"2200 kmol/h"'),
         key="streams.inlet-gas.flow", line_of="flow = 2200"),
    Case("unit-missing", 'pressure = "70 barg"', 'pressure = "70"', says=("no unit",),
         key="streams.inlet-gas.pressure", line_of='pressure = "70"'),
    Case("unit-of-wrong-kind", 'outlet_pressure = "20 barg"', 'outlet_pressure = "20 degC"',
         says=("temperature unit", "pressure"), key="units.choke.outlet_pressure", line_of="20 degC"),
    Case("unknown-unit-of-measure", 'outlet_temperature = "32 degC"', 'outlet_temperature = "32 kelvins"',
         says=("kelvins",), key="units.line-heater.outlet_temperature"),
    Case("unknown-component", "n-butane = 0.004", "unobtainium = 0.004", says=("unobtainium",),
         key="streams.inlet-gas.composition"),
    Case("unknown-stream-name", 'inlet = "reduced-gas"', 'inlet = "reduced-gaz"', says=("reduced-gaz", "reduced-gas"),
         key="units.metering-run.inlet", line_of='inlet = "reduced-gaz"'),
    Case("unknown-key", 'outlet_pressure = "20 barg"', 'outlet_presure = "20 barg"',
         says=("outlet_presure", "outlet_pressure"), key="units.choke"),
    Case("unknown-model", 'model = "peng-robinson"', 'model = "peng-robison"', says=("peng-robison", "peng-robinson"),
         key="model", line_of="peng-robison"),
    Case("composition-sum", "n-butane = 0.004", "n-butane = 0.104", says=("sum", "1.1"),
         key="streams.inlet-gas.composition"),
    Case("negative-absolute-pressure", 'pressure = "70 barg"', 'pressure = "-3 bara"', says=("absolute",),
         key="streams.inlet-gas.pressure", line_of="-3 bara"),
    Case("gauge-below-vacuum", 'pressure = "70 barg"', 'pressure = "-1.5 barg"', says=("absolute",),
         key="streams.inlet-gas.pressure"),
    Case("below-absolute-zero", 'temperature = "6 degC"', 'temperature = "-300 degC"', says=("absolute zero",),
         key="streams.inlet-gas.temperature", line_of="-300 degC"),
    Case("zero-kelvin", 'temperature = "6 degC"', 'temperature = "0 K"', says=("absolute zero",),
         key="streams.inlet-gas.temperature"),
    Case("dangling-stream", 'inlet = "hot-gas"', 'inlet = "warm-gas"', says=("warm-gas",), key="units.choke.inlet"),
    Case("doubly-written-stream", 'outlet = "district-gas"', 'outlet = "hot-gas"', says=("hot-gas", "both"),
         key="units.metering-run"),
    Case("feed-written-by-a-unit", 'outlet = "district-gas"', 'outlet = "inlet-gas"', says=("inlet-gas", "feed"),
         key="units.metering-run"),
    Case("unknown-unit-type", 'type = "heater"', 'type = "furnace"', says=("furnace",),
         key="units.line-heater.type", line_of='type = "furnace"'),
    Case("absurd-flow", 'flow = "2200 kmol/h"', 'flow = "2200e12 kmol/h"', says=("beyond",),
         key="streams.inlet-gas.flow"),
    Case("absurd-temperature", 'outlet_temperature = "32 degC"', 'outlet_temperature = "3.2e7 degC"',
         says=("beyond",), key="units.line-heater.outlet_temperature"),
    Case("not-a-number", 'pressure = "70 barg"', 'pressure = "nan barg"', says=("number",),
         key="streams.inlet-gas.pressure"),
    Case("negative-duty", 'outlet_temperature = "32 degC"', 'duty = "-500 kW"', says=("positive",),
         key="units.line-heater.duty"),
    Case("two-specifications", 'outlet_temperature = "32 degC"', 'outlet_temperature = "32 degC"\nduty = "1 MW"',
         says=("outlet_temperature", "duty"), key="units.line-heater"),
    Case("efficiency-above-one",
         text='format = 1\n[streams.a]\ntemperature = "20 degC"\npressure = "5 bara"\nflow = "1 kmol/h"\n'
              'composition = { methane = 1.0 }\n[units.c]\ntype = "compressor"\ninlet = "a"\noutlet = "b"\n'
              'pressure_ratio = 2\nisentropic_efficiency = 1.3\n',
         says=("isentropic_efficiency",), key="units.c.isentropic_efficiency"),
    Case("pressure-drop-below-vacuum", 'pressure_drop = "0.35 bar"', 'pressure_drop = "35 bar"',
         says=("positive absolute pressure",), key="units.metering-run.pressure_drop"),
    Case("format-missing", "format = 1\n", "", says=("format",)),
    Case("format-unknown", "format = 1\n", "format = 9\n", says=("format 9",), key="format"),
    Case("loop-without-feed", text='format = 1\n[units.a]\ntype = "valve"\ninlet = "s1"\noutlet = "s2"\n'
                                   'pressure_drop = "1 bar"\n[units.b]\ntype = "heater"\ninlet = "s2"\n'
                                   'outlet = "s1"\noutlet_temperature = "30 degC"\n',
         says=("loop",)),
    Case("empty-file", text="", says=("empty",)),
    Case("comments-only", text="\n   \n# just a comment\n", says=("format = 1",)),
    Case("binary-file", data=b"\x7fELF\x02\x01\x01\x00\x00\x00" * 20, says=("binary",)),
    Case("not-utf8", data='format = 1\ntitle = "café"\n'.encode("latin-1"), says=("UTF-8",)),
    Case("a-json-file", text='{"format": 1, "streams": {}}\n', says=("TOML",)),
]


def write_case(tmp_path: Path, case: Case) -> Path:
    path = tmp_path / f"{case.name}.toml"
    path.write_bytes(case.content())
    return path


def assert_clean_message(err: str, path: Path, case: Case | None = None) -> None:
    assert err.strip(), "a message on stderr"
    assert "Traceback" not in err and "internal error" not in err
    lines = err.strip().splitlines()
    for line in lines:
        assert line.startswith(f"statepath: {path}"), line
    assert any("Fix:" in line for line in lines)
    if case is None:
        return
    for word in case.says:
        assert word.lower() in err.lower(), (word, err)
    if case.key is not None:
        assert f": {case.key}" in err, (case.key, err)
    line = case.expected_line()
    if line is not None:
        assert f"statepath: {path}:{line}:" in err, (line, err)


@pytest.mark.parametrize("case", CASES, ids=[c.name for c in CASES])
def test_solve_refuses_with_a_located_message(capsys, tmp_path, case):
    path = write_case(tmp_path, case)
    code = cli.main(["solve", str(path)])
    out, err = capsys.readouterr()
    assert code == 2
    assert_clean_message(err, path, case)


@pytest.mark.parametrize("case", CASES, ids=[c.name for c in CASES])
def test_check_says_error_and_exits_2(capsys, tmp_path, case):
    path = write_case(tmp_path, case)
    code = cli.main(["check", str(path)])
    out, err = capsys.readouterr()
    assert code == 2
    assert out.startswith(f"{path}: error (")
    assert_clean_message(err, path, case)


@pytest.mark.parametrize("case", CASES[:6] + CASES[-4:], ids=[c.name for c in CASES[:6] + CASES[-4:]])
def test_solve_json_still_writes_the_error_document(capsys, tmp_path, case):
    path = write_case(tmp_path, case)
    code = cli.main(["solve", str(path), "--json"])
    out, err = capsys.readouterr()
    assert code == 2
    document = json.loads(out)
    assert document["status"] == "error"
    assert document["errors"] and all({"code", "message", "where"} <= set(e) for e in document["errors"])
    assert_clean_message(err, path, case)


def test_missing_file(capsys, tmp_path):
    path = tmp_path / "nowhere.toml"
    for argv in (["solve", str(path)], ["check", str(path)], ["solve", str(path), "--csv"]):
        code = cli.main(argv)
        out, err = capsys.readouterr()
        assert code == 2
        assert_clean_message(err, path)
        assert "no such file" in err


def test_directory_given_as_file(capsys, tmp_path):
    for argv in (["solve", str(tmp_path)], ["check", str(tmp_path)], ["diff", str(tmp_path), str(tmp_path)]):
        code = cli.main(argv)
        out, err = capsys.readouterr()
        assert code == 2
        assert_clean_message(err, tmp_path)
        assert "folder" in err


def test_unreadable_file(capsys, tmp_path):
    import os

    path = tmp_path / "locked.toml"
    path.write_text("format = 1\n", encoding="utf-8")
    path.chmod(0)
    try:
        if os.access(path, os.R_OK):
            pytest.skip("running as a user who can read any file")
        code = cli.main(["solve", str(path)])
        out, err = capsys.readouterr()
        assert code == 2
        assert_clean_message(err, path)
    finally:
        path.chmod(0o644)


def test_every_problem_of_a_file_is_listed(capsys, tmp_path):
    text = LETDOWN_TEXT.replace('flow = "2200 kmol/h"', "flow = 2200").replace('type = "heater"', 'type = "furnace"')
    path = tmp_path / "two-problems.toml"
    path.write_text(text, encoding="utf-8")
    code = cli.main(["solve", str(path)])
    out, err = capsys.readouterr()
    assert code == 2
    assert "streams.inlet-gas.flow" in err and "units.line-heater.type" in err
    assert len(err.strip().splitlines()) >= 2


def test_check_goes_on_after_a_bad_file(capsys, tmp_path):
    bad = write_case(tmp_path, CASES[0])
    good = ROOT / "flowsheets" / "gas-letdown.toml"
    code = cli.main(["check", str(bad), str(good)])
    out, err = capsys.readouterr()
    assert code == 2
    assert out.splitlines()[1].startswith(f"{good}: ok")
