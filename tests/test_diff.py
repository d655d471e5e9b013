"""``statepath diff``: two files, or a file against a git revision in a real
repository made for the test."""

from __future__ import annotations

import os
import shutil
import subprocess
from pathlib import Path

import pytest

from thermo.flowsheet import load_and_solve
from tui import cli, diffing

ROOT = Path(__file__).resolve().parents[1]
LETDOWN = ROOT / "flowsheets" / "gas-letdown.toml"
LETDOWN_TEXT = LETDOWN.read_text(encoding="utf-8")

pytestmark = pytest.mark.skipif(shutil.which("git") is None, reason="git is not installed")


@pytest.fixture(autouse=True)
def guard(monkeypatch):
    monkeypatch.setenv("NO_COLOR", "1")
    monkeypatch.setenv("COLUMNS", "80")
    monkeypatch.delenv("STATEPATH_UNITS", raising=False)

    def never(error, stderr):
        raise AssertionError(f"the last-resort handler was reached: {type(error).__name__}: {error}")

    monkeypatch.setattr(cli, "internal_error", never)


def run(capsys, *argv) -> tuple[int, str, str]:
    code = cli.main([str(a) for a in argv])
    captured = capsys.readouterr()
    return code, captured.out, captured.err


def edited(*replacements: tuple[str, str]) -> str:
    text = LETDOWN_TEXT
    for old, new in replacements:
        assert old in text, old
        text = text.replace(old, new, 1)
    return text


def git(repo: Path, *args: str) -> str:
    env = dict(os.environ, GIT_AUTHOR_NAME="Test", GIT_AUTHOR_EMAIL="test@example.invalid",
               GIT_COMMITTER_NAME="Test", GIT_COMMITTER_EMAIL="test@example.invalid",
               GIT_CONFIG_GLOBAL=os.devnull, GIT_CONFIG_SYSTEM=os.devnull)
    done = subprocess.run(["git", *args], cwd=repo, capture_output=True, text=True, env=env, check=True)
    return done.stdout


@pytest.fixture
def repo(tmp_path) -> Path:
    """A git repository with the let-down demo committed under sheets/."""
    root = tmp_path / "plant"
    (root / "sheets").mkdir(parents=True)
    git(root, "init", "-q")
    (root / "sheets" / "station.toml").write_text(LETDOWN_TEXT, encoding="utf-8")
    git(root, "add", "sheets/station.toml")
    git(root, "commit", "-q", "-m", "station as built")
    return root


CHOKE_SET_POINT = ('outlet_pressure = "20 barg"', 'outlet_pressure = "16 barg"')


def test_diff_rev_head_shows_the_edit_and_what_it_did(capsys, repo):
    sheet = repo / "sheets" / "station.toml"
    sheet.write_text(edited(CHOKE_SET_POINT), encoding="utf-8")
    code, out, err = run(capsys, "diff", sheet, "--rev", "HEAD")
    assert code == 1, err
    assert err == ""
    assert out.splitlines()[0] == "--- HEAD:sheets/station.toml"
    assert "units.choke.outlet_pressure: 21.000 bara -> 17.000 bara (-4.000 bar)" in out
    # Lower outlet pressure: more throttling, colder gas downstream (Joule-Thomson).
    old = load_and_solve(str(LETDOWN))[1]
    new = load_and_solve(str(sheet))[1]
    for stream in ("reduced-gas", "district-gas"):
        assert new.streams[stream].state.temperature < old.streams[stream].state.temperature
        assert f"{stream} temperature:" in out and f"{stream} pressure:" in out
    assert "inlet-gas" not in out.split("Streams:", 1)[1]  # the feed did not move
    assert "line-heater duty" not in out  # the heater upstream of the choke is untouched


def test_diff_rev_with_nothing_changed_exits_0(capsys, repo):
    sheet = repo / "sheets" / "station.toml"
    code, out, err = run(capsys, "diff", sheet, "--rev", "HEAD")
    assert code == 0
    assert "No changes" in out


def test_rewriting_a_value_in_other_units_or_comments_is_no_change(capsys, repo):
    sheet = repo / "sheets" / "station.toml"
    sheet.write_text(edited(('outlet_temperature = "32 degC"', 'outlet_temperature = "305.15 K"'),
                            ("# Pressure-reducing choke", "# The choke (re-worded comment)")), encoding="utf-8")
    code, out, err = run(capsys, "diff", sheet, "--rev", "HEAD")
    assert code == 0, out
    assert "No changes" in out


def test_diff_against_an_older_revision(capsys, repo):
    sheet = repo / "sheets" / "station.toml"
    sheet.write_text(edited(CHOKE_SET_POINT), encoding="utf-8")
    git(repo, "commit", "-q", "-am", "lower set point")
    code, out, err = run(capsys, "diff", sheet, "--rev", "HEAD~1")
    assert code == 1 and "units.choke.outlet_pressure" in out
    code, out, err = run(capsys, "diff", sheet, "--rev", "HEAD")
    assert code == 0


def test_diff_run_from_another_folder_uses_the_files_repository(capsys, repo, tmp_path, monkeypatch):
    sheet = repo / "sheets" / "station.toml"
    sheet.write_text(edited(CHOKE_SET_POINT), encoding="utf-8")
    elsewhere = tmp_path / "elsewhere"
    elsewhere.mkdir()
    monkeypatch.chdir(elsewhere)
    code, out, err = run(capsys, "diff", os.path.relpath(sheet, elsewhere), "--rev", "HEAD")
    assert code == 1, err
    assert "--- HEAD:sheets/station.toml" in out


def test_added_and_removed_units_and_streams(capsys, tmp_path):
    old = tmp_path / "old.toml"
    new = tmp_path / "new.toml"
    old.write_text(LETDOWN_TEXT, encoding="utf-8")
    without_meter = LETDOWN_TEXT.split("# Metering run:", 1)[0]
    with_booster = without_meter + (
        '[units.booster]\ntype = "compressor"\ninlet = "reduced-gas"\noutlet = "boosted-gas"\n'
        'outlet_pressure = "30 barg"\n'
    )
    new.write_text(with_booster, encoding="utf-8")
    code, out, err = run(capsys, "diff", old, new)
    assert code == 1, err
    assert "+ added   units.booster: 'compressor'" in out
    assert "- removed units.metering-run: 'valve'" in out
    assert "+ added   stream boosted-gas" in out
    assert "- removed stream district-gas" in out
    assert "+ added   unit booster (compressor)" in out


def test_flags_raised_and_cleared(capsys, tmp_path):
    old = tmp_path / "old.toml"
    new = tmp_path / "new.toml"
    old.write_text(LETDOWN_TEXT, encoding="utf-8")
    # A 20 degC bath cannot heat gas to 32 degC: a second-law violation appears.
    new.write_text(edited(('medium_temperature = "70 degC"', 'medium_temperature = "20 degC"')), encoding="utf-8")
    code, out, err = run(capsys, "diff", old, new)
    assert code == 1
    flags = out.split("Flags:", 1)[1]
    assert "+ raised" in flags and "violation" in flags and "units.line-heater" in flags
    code, out, err = run(capsys, "diff", new, old)
    assert "- cleared" in out.split("Flags:", 1)[1]


def test_feed_composition_and_flow_changes_are_inputs(capsys, tmp_path):
    old = tmp_path / "old.toml"
    new = tmp_path / "new.toml"
    old.write_text(LETDOWN_TEXT, encoding="utf-8")
    new.write_text(edited(("methane = 0.905, ethane = 0.048", "methane = 0.895, ethane = 0.058"),
                          ('flow = "2200 kmol/h"', 'flow = "2000 kmol/h"')), encoding="utf-8")
    code, out, err = run(capsys, "diff", old, new, "--units", "si")
    assert code == 1
    inputs = out.split("Inputs:", 1)[1].split("Streams:", 1)[0]
    assert "streams.inlet-gas.composition.methane: 0.905 -> 0.895" in inputs
    assert "streams.inlet-gas.composition.ethane: 0.048 -> 0.058" in inputs
    assert "streams.inlet-gas.flow: 611.11 mol/s -> 555.56 mol/s" in inputs
    assert "line-heater duty" in out  # less gas, less heat


def test_not_a_git_repository(capsys, tmp_path):
    lonely = tmp_path / "lonely.toml"
    lonely.write_text(LETDOWN_TEXT, encoding="utf-8")
    env_ceiling = os.environ.get("GIT_CEILING_DIRECTORIES")
    os.environ["GIT_CEILING_DIRECTORIES"] = str(tmp_path.parent)
    try:
        code, out, err = run(capsys, "diff", lonely, "--rev", "HEAD")
    finally:
        if env_ceiling is None:
            os.environ.pop("GIT_CEILING_DIRECTORIES")
        else:
            os.environ["GIT_CEILING_DIRECTORIES"] = env_ceiling
    assert code == 2
    assert "not inside a git repository" in err and "Fix:" in err
    assert "Traceback" not in err and out == ""


def test_unknown_revision(capsys, repo):
    code, out, err = run(capsys, "diff", repo / "sheets" / "station.toml", "--rev", "no-such-branch")
    assert code == 2
    assert "unknown revision 'no-such-branch'" in err and "git log" in err


def test_file_not_in_that_revision(capsys, repo):
    fresh = repo / "sheets" / "new-station.toml"
    fresh.write_text(LETDOWN_TEXT, encoding="utf-8")
    code, out, err = run(capsys, "diff", fresh, "--rev", "HEAD")
    assert code == 2
    assert "sheets/new-station.toml" in err and "not in revision 'HEAD'" in err


def test_a_revision_that_looks_like_an_option_is_refused(capsys, repo):
    code, out, err = run(capsys, "diff", repo / "sheets" / "station.toml", "--rev=--output=/tmp/x")
    assert code == 2 and "not a revision" in err


def test_old_version_that_does_not_read(capsys, repo):
    sheet = repo / "sheets" / "station.toml"
    sheet.write_text("format = 1\n[streams.x]\ntemperature = 30\n", encoding="utf-8")
    git(repo, "commit", "-q", "-am", "broken")
    sheet.write_text(LETDOWN_TEXT, encoding="utf-8")
    code, out, err = run(capsys, "diff", sheet, "--rev", "HEAD")
    assert code == 2
    assert "statepath: HEAD:sheets/station.toml:3: streams.x.temperature:" in err
    assert "the old version (HEAD:sheets/station.toml)" in err


def test_argument_mistakes(capsys, tmp_path):
    one = tmp_path / "one.toml"
    one.write_text(LETDOWN_TEXT, encoding="utf-8")
    code, out, err = run(capsys, "diff", one)
    assert code == 2 and "--rev" in err
    code, out, err = run(capsys, "diff", one, one, "--rev", "HEAD")
    assert code == 2 and "one FILE with --rev" in err
    code, out, err = run(capsys, "diff", one, tmp_path / "missing.toml")
    assert code == 2 and "no such file" in err


def test_old_version_from_git_returns_the_committed_bytes(repo):
    sheet = repo / "sheets" / "station.toml"
    sheet.write_text("changed on disk\n", encoding="utf-8")
    data, label = diffing.old_version_from_git(sheet, "HEAD")
    assert data.decode("utf-8") == LETDOWN_TEXT
    assert label == "HEAD:sheets/station.toml"


def test_a_closed_loop_circulation_change_is_an_input(capsys, tmp_path):
    chiller = (Path(__file__).resolve().parents[1] / "flowsheets" / "propane-chiller.toml").read_text("utf-8")
    assert 'flow = "120 kmol/h"' in chiller
    old, new = tmp_path / "old.toml", tmp_path / "new.toml"
    old.write_text(chiller, encoding="utf-8")
    new.write_text(chiller.replace('flow = "120 kmol/h"', 'flow = "130 kmol/h"', 1), encoding="utf-8")
    code, out, err = run(capsys, "diff", old, new)
    assert code == 1
    inputs = out.split("Inputs:", 1)[1].split("Units:", 1)[0]
    assert "streams.chiller-vapor.flow: 120.00 kmol/h -> 130.00 kmol/h" in inputs
