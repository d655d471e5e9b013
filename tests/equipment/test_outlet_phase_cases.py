"""Valve outlets that a random sweep of library mixtures (the sweep of
test_outlet_phase.py run at 3000 draws) once left with "the two-phase answer
is unstable (a third phase would form), and the multiphase split did not
converge". In each, the stability test's trial phase lay close to a liquid
of the two-phase answer, and substitution in the multiphase method crept
(its rate near 1) while two liquids drew apart; Newton's method on the
Gibbs energy now finishes it (the third case also needed its four phases
at the one temperature where they coexist). The outlets are checked as in
test_outlet_phase.py: equal fugacities from the departure functions, closed
mass balances, the enthalpy met, and Gibbs's tangent-plane criterion from
trial phases of the test's own.
"""

from __future__ import annotations

import numpy as np
import pytest

from thermo.departures import residual
from thermo.flash import flash_ph, flash_tp
from thermo.mixture import make_mixture
from thermo.models import make_model

from test_outlet_phase import UNSTABLE_TM, _tangent_plane_minimum

# (components, inlet mole fractions, model, outlet pressure Pa, enthalpy J/mol, inlet T K)
STALLED = [
    (["methanol", "carbonyl-sulfide", "propane", "cyclohexane"],
     [0.3722652719377219, 0.17827756688244026, 0.37163981237972216, 0.0778173488001156],
     "soave-redlich-kwong", 195458.6259795855, -28769.223039475713, 264.59438073127126),
    (["methanol", "n-decane", "hydrogen-chloride", "nitrous-oxide"],
     [0.24437727113923757, 0.031469178569280984, 0.4892687761065292, 0.23488477418495232],
     "soave-redlich-kwong", 2843114.703352806, -9662.623974161723, 350.07945248648343),
]


def _assert_verified_phases(model, out, z) -> None:
    """Equal fugacities by the engine's departure functions, closed balances,
    phases that are distinct (not one counted twice), and no trial phase
    below any phase's tangent plane."""
    t, p = out.temperature, out.pressure
    ln_f = np.array([np.log(ph.composition) + residual(
        model, t, p, ph.composition, "liquid" if ph.residual.root == "liquid-like" else "vapor").ln_phi
        for ph in out.phases])
    assert float(np.max(np.ptp(ln_f, axis=0))) < 1e-8
    balance = sum(ph.amount * ph.composition for ph in out.phases) - z
    assert float(np.abs(balance).max()) < 1e-10
    count = len(out.phases)
    logs = np.log([ph.composition for ph in out.phases])
    assert min(float(np.abs(logs[k] - logs[l]).max()) for k in range(count) for l in range(k + 1, count)) > 0.05
    for phase in out.phases:
        tm = _tangent_plane_minimum(model, t, p, z, phase.composition, phase.residual.ln_phi)
        assert tm > UNSTABLE_TM


@pytest.mark.parametrize("names, fractions, model_name, pressure, enthalpy, guess", STALLED)
def test_stalled_multiphase_split_now_converges(names, fractions, model_name, pressure, enthalpy, guess):
    model = make_model(model_name, make_mixture(names))
    z = np.array(fractions)
    out = flash_ph(model, pressure, enthalpy, z, guess)
    assert out.enthalpy == pytest.approx(enthalpy, abs=1e-5)
    assert len(out.phases) == 3 and "three-phase" in out.notes
    _assert_verified_phases(model, out, z)


def test_ternary_valve_outlet_inside_the_jump_at_its_four_phase_temperature():
    # Water, oxygen and carbonyl sulfide at 45.6 bar (SRK): by the phase rule
    # three components have four phases at fixed P at one temperature T4
    # only. Below T4 water sits beside two liquids of oxygen and carbonyl
    # sulfide, above it beside one such liquid and an oxygen-rich vapor, and
    # H(T) jumps at T4; this valve outlet's enthalpy lies inside the jump.
    # Once the multiphase split crept here, then the oxygen-rich phase carried
    # on from above outlasted its range (the water's own trials showed it).
    names = ["water", "oxygen", "carbonyl-sulfide"]
    z = np.array([0.5421407135048059, 0.38169279269965883, 0.0761664937955354])
    model = make_model("soave-redlich-kwong", make_mixture(names))
    pressure, enthalpy = 4560128.470494747, -37698.57085815037
    out = flash_ph(model, pressure, enthalpy, z, 157.2628658502087)
    assert out.enthalpy == pytest.approx(enthalpy, abs=1e-5)
    assert len(out.phases) == 4
    assert all(0.0 < ph.amount < 1.0 for ph in out.phases)
    _assert_verified_phases(model, out, z)
    t, p = out.temperature, out.pressure
    # T4 is where H jumps: TP flashes 0.01 K either side bracket the target, three phases each
    below = flash_tp(model, t - 0.01, p, z)
    above = flash_tp(model, t + 0.01, p, z)
    assert below.enthalpy < enthalpy < above.enthalpy
    assert len(below.phases) == 3 and len(above.phases) == 3
