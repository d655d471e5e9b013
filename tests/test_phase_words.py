"""The phase column's words: two liquids and a vapor beside two liquids are
told apart from a vapor-liquid split on the screen and in the command line's
table, while the JSON keeps the contract's "two-phase"."""

from __future__ import annotations

import json
from pathlib import Path

import numpy as np

from thermo.flash import flash_ph, flash_tp
from thermo.flowsheet import load_and_solve
from thermo.mixture import make_mixture
from thermo.models import make_model
from rich.console import Console

from thermo.report import result_to_json_dict
from tui.phase_words import phase_word
from tui.render import render_markdown, stream_table
from tui.widgets.stream_table import phase_cell

HEXANE_WATER = np.array([0.5, 0.5])

SHEET = Path(__file__).parent / "app" / "sheets" / "flash-pot.toml"  # invented hexane-water let-down


def _model():
    return make_model("peng-robinson", make_mixture(["n-hexane", "water"]))


def test_two_liquids_read_liquid_liquid():
    # Hexane and water hardly mix (common practice, no published source): at
    # 95 degC and 6 bar, below their bubble point, they stand as two liquids.
    state = flash_tp(_model(), 368.15, 6e5, HEXANE_WATER)
    assert state.phase == "two-phase" and state.vapor_fraction == 0.0
    assert phase_word(state) == "liquid-liquid"
    assert phase_cell(phase_word(state), state.vapor_fraction, False)[0].plain == "liquid-liquid"


def test_a_vapor_beside_two_liquids_reads_three_phase_with_its_fraction():
    model = _model()
    drum = flash_tp(model, 368.15, 6e5, HEXANE_WATER)
    pot = flash_ph(model, 101325.0, drum.enthalpy, HEXANE_WATER)
    assert len(pot.phases) == 3 and phase_word(pot) == "three-phase"
    full, short = phase_cell(phase_word(pot), pot.vapor_fraction, False)
    assert full.plain.startswith("three-phase 0.") and short.plain.startswith("3\u03c6 0.")


def test_an_ordinary_split_keeps_the_contract_word():
    model = make_model("peng-robinson", make_mixture(["propane", "n-butane"]))
    state = flash_tp(model, 300.0, 6e5, np.array([0.5, 0.5]))
    assert state.phase == "two-phase" and phase_word(state) == "two-phase"


def test_command_line_table_and_json_of_the_let_down(tmp_path):
    path = tmp_path / "pot.toml"
    path.write_text(SHEET.read_text())
    _, result = load_and_solve(str(path))
    console = Console(width=120, record=True)
    console.print(stream_table(result, "metric"))
    table = console.export_text()
    assert "liquid-liquid" in table and "three-phase 0.1" in table
    assert "three-phase 0.1" in render_markdown(result, "metric")
    streams = json.loads(json.dumps(result_to_json_dict(result)))["streams"]
    assert streams["flash-pot"]["phase"] == "two-phase" and "three-phase" in streams["flash-pot"]["notes"]
