"""The command line: solve in every format and unit system, check, new,
components, open, --help and --version, driven through ``tui.cli.main``
(and once through the installed console script)."""

from __future__ import annotations

import csv
import io
import json
import math
import os
import shutil
import subprocess
import sys
import types
from pathlib import Path

import pytest

from thermo.components import library
from thermo.flowsheet import load_and_solve
from thermo.report import result_to_json_dict
from tui import cli, render

ROOT = Path(__file__).resolve().parents[1]
DEMOS = sorted((ROOT / "flowsheets").glob("*.toml"))
DEMO_IDS = [path.stem for path in DEMOS]
LETDOWN = ROOT / "flowsheets" / "gas-letdown.toml"

CONTRACT_TOP = {"status", "model", "streams", "units", "cautions", "errors"}
CONTRACT_STREAM = {
    "temperature_K", "pressure_Pa", "molar_flow_mol_s", "mass_flow_kg_s", "vapor_fraction", "phase",
    "molar_enthalpy_J_mol", "molar_entropy_J_molK", "composition",
}
CONTRACT_UNIT = {
    "type", "duty_W", "power_W", "entropy_generation_W_K", "lost_work_W", "energy_balance_residual_W",
    "cautions", "violations",
}


@pytest.fixture(autouse=True)
def plain_terminal(monkeypatch):
    """Every test runs as a CI job would: no colour, 80 columns; and the
    last-resort handler must never be what answers."""
    monkeypatch.setenv("NO_COLOR", "1")
    monkeypatch.setenv("COLUMNS", "80")
    monkeypatch.delenv("STATEPATH_UNITS", raising=False)
    monkeypatch.delenv("STATEPATH_DEBUG", raising=False)

    def never(error, stderr):
        raise AssertionError(f"the last-resort handler was reached: {type(error).__name__}: {error}")

    monkeypatch.setattr(cli, "internal_error", never)


def run(capsys, *argv) -> tuple[int, str, str]:
    code = cli.main([str(a) for a in argv])
    captured = capsys.readouterr()
    return code, captured.out, captured.err


def solved_json(path: Path) -> dict:
    """The contract JSON straight from the library, to hold the CLI's against."""
    return json.loads(json.dumps(result_to_json_dict(load_and_solve(str(path))[1])))


def test_there_are_at_least_four_demo_sheets():
    assert len(DEMOS) >= 4


# ------------------------------------------------------------------ solve


@pytest.mark.parametrize("path", DEMOS, ids=DEMO_IDS)
def test_solve_table_names_every_stream_and_unit_within_80_columns(capsys, path):
    code, out, err = run(capsys, "solve", path)
    expected = solved_json(path)
    assert code == {"ok": 0, "violations": 1}[expected["status"]]
    assert err == ""
    assert "\x1b[" not in out, "NO_COLOR is set: no escape codes"
    for line in out.splitlines():
        assert len(line.rstrip()) <= 80, line
    for name in expected["streams"]:
        assert any(line.startswith(name + " ") for line in out.splitlines()), name
    for name, unit in expected["units"].items():
        assert any(line.startswith(name + " ") and unit["type"] in line for line in out.splitlines()), name
    assert "Streams" in out and "Units" in out


@pytest.mark.parametrize("path", DEMOS, ids=DEMO_IDS)
def test_solve_json_is_exactly_the_report(capsys, path):
    code, out, err = run(capsys, "solve", path, "--json")
    document = json.loads(out)
    assert document == solved_json(path)
    assert CONTRACT_TOP <= set(document)
    assert document["status"] in ("ok", "violations")
    assert code == {"ok": 0, "violations": 1}[document["status"]]
    assert document["streams"] and document["units"]
    for stream in document["streams"].values():
        assert CONTRACT_STREAM <= set(stream)
        assert stream["phase"] in ("vapor", "liquid", "two-phase", "supercritical")
        assert math.isclose(sum(stream["composition"].values()), 1.0, abs_tol=1e-9)
    for unit in document["units"].values():
        assert CONTRACT_UNIT <= set(unit)
        for caution in unit["cautions"]:
            assert {"code", "severity", "message"} <= set(caution)
        for violation in unit["violations"]:
            assert {"code", "message"} <= set(violation)
    for caution in document["cautions"]:
        assert {"code", "severity", "message"} <= set(caution)


def _csv_blocks(text: str) -> list[list[dict]]:
    blocks = [block for block in text.split("\n\n") if block.strip()]
    return [list(csv.DictReader(io.StringIO(block))) for block in blocks]


@pytest.mark.parametrize("path", DEMOS, ids=DEMO_IDS)
def test_solve_csv_converts_to_the_units_named_in_its_header(capsys, path):
    code, out, err = run(capsys, "solve", path, "--csv")
    expected = solved_json(path)
    assert code in (0, 1)
    streams, units = _csv_blocks(out)[:2]
    assert [row["stream"] for row in streams] == list(expected["streams"])
    for row in streams:
        truth = expected["streams"][row["stream"]]
        assert float(row["temperature [degC]"]) == pytest.approx(truth["temperature_K"] - 273.15, abs=1e-6)
        assert float(row["pressure [bara]"]) == pytest.approx(truth["pressure_Pa"] / 1e5, rel=1e-8)
        assert float(row["molar_flow [kmol/h]"]) == pytest.approx(truth["molar_flow_mol_s"] * 3.6, rel=1e-8)
        assert float(row["mass_flow [kg/h]"]) == pytest.approx(truth["mass_flow_kg_s"] * 3600, rel=1e-8)
        assert row["phase"] == truth["phase"]
    assert [row["unit"] for row in units] == list(expected["units"])
    for row in units:
        truth = expected["units"][row["unit"]]
        for column, key in (("duty [kW]", "duty_W"), ("power [kW]", "power_W")):
            if truth[key] is None:
                assert row[column] == ""
            else:
                assert float(row[column]) == pytest.approx(truth[key] / 1e3, rel=1e-8, abs=1e-9)


def test_csv_in_us_units():
    # 1 degF = 5/9 K; psi = 6894.757 Pa; lbmol = 453.59237 mol; Btu(IT)/h = 0.29307107 W
    # (definitions of the units, from memory).
    result = load_and_solve(str(LETDOWN))[1]
    streams, units = _csv_blocks(render.render_csv(result, "US"))[:2]
    feed = result.streams["inlet-gas"]
    row = next(r for r in streams if r["stream"] == "inlet-gas")
    assert float(row["temperature [degF]"]) == pytest.approx((feed.state.temperature - 273.15) * 1.8 + 32, abs=1e-6)
    assert float(row["pressure [psia]"]) == pytest.approx(feed.state.pressure / 6894.757293168, rel=1e-8)
    assert float(row["molar_flow [lbmol/h]"]) == pytest.approx(feed.molar_flow * 3600 / 453.59237, rel=1e-8)
    heater = next(r for r in units if r["unit"] == "line-heater")
    assert float(heater["duty [Btu/h]"]) == pytest.approx(result.units["line-heater"].duty_W / 0.29307107017, rel=1e-7)


@pytest.mark.parametrize("path", DEMOS, ids=DEMO_IDS)
def test_solve_markdown_has_a_row_per_stream_and_unit(capsys, path):
    code, out, err = run(capsys, "solve", path, "--markdown")
    expected = solved_json(path)
    assert code in (0, 1)
    assert out.startswith("## ")
    rows = [line for line in out.splitlines() if line.startswith("| ")]
    for name in list(expected["streams"]) + list(expected["units"]):
        assert any(line.startswith(f"| {name} |") for line in rows), name
    assert "### Violations and cautions" in out


@pytest.mark.parametrize("units, temperature_unit, pressure_unit", [
    ("si", "K", "kPa"), ("metric", "degC", "bara"), ("us", "degF", "psia"),
])
def test_solve_table_in_each_unit_system(capsys, units, temperature_unit, pressure_unit):
    code, out, err = run(capsys, "solve", LETDOWN, "--units", units)
    assert code == 0
    header_lines = out.split("Streams", 1)[1].split("\u2500", 1)[0]
    assert temperature_unit in header_lines and pressure_unit in header_lines
    feed = load_and_solve(str(LETDOWN))[1].streams["inlet-gas"].state
    shown = {"si": feed.temperature, "metric": feed.temperature - 273.15,
             "us": (feed.temperature - 273.15) * 1.8 + 32}[units]
    line = next(line for line in out.splitlines() if line.startswith("inlet-gas "))
    assert f"{shown:.2f}" in line.split()


def test_units_default_comes_from_the_environment(capsys, monkeypatch):
    monkeypatch.setenv("STATEPATH_UNITS", "us")
    code, out, err = run(capsys, "solve", LETDOWN)
    assert code == 0 and "psia" in out


def test_cautions_carry_a_symbol_and_a_word(capsys):
    chiller = ROOT / "flowsheets" / "propane-chiller.toml"
    expected = solved_json(chiller)
    cautions = [(name, c) for name, u in expected["units"].items() for c in u["cautions"]]
    assert cautions, "the chiller demo shows its valve's two-phase outlet caution"
    code, out, err = run(capsys, "solve", chiller)
    assert code == 0
    for name, caution in cautions:
        assert f"{render.level_label(caution['severity'])}  {caution['code']}" in out
        unit_line = next(line for line in out.splitlines() if line.startswith(name + " "))
        assert caution["severity"] in unit_line
    assert "two-phase" in out  # the valve outlet's phase, with its vapor fraction


def test_ascii_labels_for_terminals_without_unicode():
    assert render.level_label("violation", ascii_only=True) == "X violation"
    assert render.level_label("danger", ascii_only=True) == "!! danger"
    assert all(label.isascii() for label in
               (render.level_label(level, ascii_only=True) for level in ("violation", "danger", "warning", "notice")))


def _write(tmp_path: Path, name: str, text: str) -> Path:
    path = tmp_path / name
    path.write_text(text, encoding="utf-8")
    return path


def _letdown_with(old: str, new: str) -> str:
    text = LETDOWN.read_text(encoding="utf-8")
    assert old in text
    return text.replace(old, new)


@pytest.fixture
def violating_sheet(tmp_path) -> Path:
    # A heating medium at 20 degC cannot warm gas to 32 degC: heat flows downhill only.
    return _write(tmp_path, "cold-bath.toml", _letdown_with('medium_temperature = "70 degC"',
                                                          'medium_temperature = "20 degC"'))


def test_solve_exits_1_on_a_violation_and_lists_it(capsys, violating_sheet):
    code, out, err = run(capsys, "solve", violating_sheet)
    assert code == 1
    violations = solved_json(violating_sheet)["units"]["line-heater"]["violations"]
    assert violations
    assert f"{render.level_label('violation')}  {violations[0]['code']}  units.line-heater" in out
    assert "violations" in out.splitlines()[1]  # the status line under the title
    code, out, err = run(capsys, "solve", violating_sheet, "--json")
    assert code == 1 and json.loads(out)["status"] == "violations"


# ------------------------------------------------------------------ check


def test_check_passes_every_demo(capsys):
    code, out, err = run(capsys, "check", *DEMOS)
    assert code == 0, out + err
    lines = out.splitlines()
    assert len(lines) == len(DEMOS)
    for path, line in zip(DEMOS, lines):
        assert line.startswith(f"{path}: ok (0 violations, ")


def test_check_strict_fails_on_cautions(capsys):
    with_cautions = [p for p in DEMOS if render.count_flags(load_and_solve(str(p))[1])[1]]
    without = [p for p in DEMOS if p not in with_cautions]
    assert with_cautions and without
    code, out, err = run(capsys, "check", "--strict", *without)
    assert code == 0
    code, out, err = run(capsys, "check", "--strict", *with_cautions)
    assert code == 1
    assert all(": cautions (" in line for line in out.splitlines())
    assert "warning" in err or "danger" in err or "notice" in err


def test_check_reports_each_file_and_exits_with_the_worst(capsys, tmp_path, violating_sheet):
    broken = _write(tmp_path, "broken.toml", "format = 1\n[streams.feed]\ntemperature = 30\n")
    code, out, err = run(capsys, "check", LETDOWN, violating_sheet)
    assert code == 1
    assert out.splitlines()[1].startswith(f"{violating_sheet}: violations (1 violation")
    code, out, err = run(capsys, "check", violating_sheet, broken, LETDOWN)
    assert code == 2
    words = [line.split(": ", 1)[1].split(" ", 1)[0] for line in out.splitlines()]
    assert words == ["violations", "error", "ok"]
    assert f"statepath: {broken}:3: streams.feed.temperature:" in err


# ------------------------------------------------------------------ new


def test_new_writes_the_template_which_checks_clean(capsys, tmp_path):
    target = tmp_path / "station.toml"
    code, out, err = run(capsys, "new", target)
    assert code == 0 and target.exists()
    assert target.read_text(encoding="utf-8") == cli.template_text()
    assert "invented" in target.read_text(encoding="utf-8").lower()
    code, out, err = run(capsys, "check", target)
    assert code == 0, out + err
    assert out.startswith(f"{target}: ok")


def test_new_refuses_to_overwrite_without_force(capsys, tmp_path):
    target = _write(tmp_path, "mine.toml", "# my own work\n")
    code, out, err = run(capsys, "new", target)
    assert code == 2
    assert "exists" in err and "--force" in err
    assert target.read_text(encoding="utf-8") == "# my own work\n"
    code, out, err = run(capsys, "new", target, "--force")
    assert code == 0
    assert target.read_text(encoding="utf-8") == cli.template_text()


def test_new_into_a_missing_folder_or_onto_a_folder(capsys, tmp_path):
    code, out, err = run(capsys, "new", tmp_path / "no-such-folder" / "x.toml")
    assert code == 2 and "does not exist" in err
    code, out, err = run(capsys, "new", tmp_path)
    assert code == 2 and "folder" in err


# ------------------------------------------------------------------ components


def test_components_lists_library_records_with_critical_constants(capsys):
    code, out, err = run(capsys, "components", "methane", "--units", "si")
    assert code == 0
    methane = library()["methane"]
    line = next(line for line in out.splitlines() if line.strip().startswith("methane "))
    fields = line.split()
    assert fields[1] == methane.formula
    assert float(fields[3]) == pytest.approx(methane.critical_temperature, abs=0.01)
    assert float(fields[4]) == pytest.approx(methane.critical_pressure / 1e3, abs=0.01)  # kPa in SI
    assert float(fields[5]) == pytest.approx(methane.acentric_factor, abs=5e-4)


def test_components_without_filter_lists_all_and_unmatched_filter_exits_1(capsys):
    code, out, err = run(capsys, "components")
    assert code == 0
    assert f"{len(library())} components" in out
    code, out, err = run(capsys, "components", "unobtainium")
    assert code == 1 and "No library component" in out


# ------------------------------------------------------------------ help, version


def test_version(capsys):
    code, out, err = run(capsys, "--version")
    assert code == 0
    assert out.strip().startswith("statepath ") and out.strip() != "statepath unknown (not installed)"


@pytest.mark.parametrize("command", ["solve", "check", "diff", "new", "components", "open"])
def test_each_command_has_help_with_examples(capsys, command):
    code, out, err = run(capsys, command, "--help")
    assert code == 0
    assert "examples:" in out
    assert f"statepath {command}" in out or (command == "open" and "statepath station.toml" in out)


def test_main_help_lists_exit_codes(capsys):
    code, out, err = run(capsys, "--help")
    assert code == 0
    assert "exit codes" in out and "0  solved" in out


def test_usage_errors_exit_2_with_a_fix(capsys):
    code, out, err = run(capsys, "solve")
    assert code == 2 and "statepath: " in err and "Fix:" in err
    code, out, err = run(capsys, "solve", LETDOWN, "--units", "imperial")
    assert code == 2 and "imperial" in err
    code, out, err = run(capsys, "solve", LETDOWN, "--json", "--csv")
    assert code == 2 and "not allowed" in err


# ------------------------------------------------------------------ open


@pytest.fixture
def fake_app(monkeypatch):
    opened = []
    module = types.ModuleType("tui.app")
    module.run_app = lambda path: opened.append(path) or 0
    monkeypatch.setitem(sys.modules, "tui.app", module)
    monkeypatch.setattr(cli, "interactive_terminal", lambda: True)
    return opened


def test_open_and_the_bare_file_shorthand_call_run_app(capsys, fake_app):
    assert run(capsys, "open", LETDOWN)[0] == 0
    assert run(capsys, LETDOWN)[0] == 0
    assert run(capsys, "open")[0] == 0
    assert fake_app == [str(LETDOWN), str(LETDOWN), None]


def test_open_without_the_app_says_so(capsys, monkeypatch):
    monkeypatch.setitem(sys.modules, "tui.app", None)  # import tui.app now fails as if absent
    code, out, err = run(capsys, "open", LETDOWN)
    assert code == 2
    assert "interactive app" in err and "statepath solve" in err


def test_open_a_missing_file_suggests_new(capsys, fake_app, tmp_path):
    code, out, err = run(capsys, "open", tmp_path / "nothing.toml")
    assert code == 2 and "statepath new" in err
    assert fake_app == []


def test_open_refuses_without_a_terminal(capsys, monkeypatch):
    module = types.ModuleType("tui.app")
    module.run_app = lambda path: pytest.fail("the app must not start without a terminal")
    monkeypatch.setitem(sys.modules, "tui.app", module)
    monkeypatch.setattr(cli, "interactive_terminal", lambda: False)
    code, out, err = run(capsys, "open", LETDOWN)
    assert code == 2 and "terminal" in err


# ------------------------------------------------------------------ last resort


def test_last_resort_handler_prints_one_line_and_exits_2(capsys, monkeypatch):
    monkeypatch.undo()  # the real handler, not the autouse guard
    monkeypatch.setenv("NO_COLOR", "1")
    monkeypatch.delenv("STATEPATH_DEBUG", raising=False)

    def explode(args, stdout, stderr):
        raise RuntimeError("boom")

    monkeypatch.setitem(cli._HANDLERS, "solve", explode)
    code = cli.main(["solve", str(LETDOWN)])
    err = capsys.readouterr().err
    assert code == 2
    assert err.startswith("statepath: internal error (RuntimeError: boom)")
    assert len(err.strip().splitlines()) == 1 and "Traceback" not in err


# ------------------------------------------------------------------ console script


def _console_script() -> Path:
    script = Path(sys.executable).parent / "statepath"
    if not script.exists():
        found = shutil.which("statepath")
        if found is None:
            pytest.skip("the statepath console script is not installed")
        script = Path(found)
    return script


def test_installed_console_script(tmp_path):
    script = _console_script()
    env = dict(os.environ, NO_COLOR="1", COLUMNS="80")
    done = subprocess.run([script, "solve", LETDOWN, "--json"], capture_output=True, text=True, env=env, timeout=120)
    assert done.returncode == 0, done.stderr
    assert json.loads(done.stdout) == solved_json(LETDOWN)
    broken = _write(tmp_path, "broken.toml", 'format = 1\ntitle = "never closed\n')
    done = subprocess.run([script, "check", broken, LETDOWN], capture_output=True, text=True, env=env, timeout=120)
    assert done.returncode == 2
    assert done.stdout.splitlines()[0] == f"{broken}: error (1 problem)"
    assert done.stderr.startswith(f"statepath: {broken}:2")
    assert "Traceback" not in done.stderr


def test_bare_statepath_without_a_terminal_prints_help_and_exits_2(capsys, monkeypatch):
    monkeypatch.setattr(cli, "interactive_terminal", lambda: False)
    code, out, err = run(capsys)
    assert code == 2
    assert "usage: statepath" in err and "examples:" in err


def test_a_mistyped_command_is_not_taken_for_a_file(capsys):
    code, out, err = run(capsys, "slove", LETDOWN)
    assert code == 2
    assert "invalid choice: 'slove'" in err
