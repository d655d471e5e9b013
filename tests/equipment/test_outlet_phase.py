"""Valves and heaters on random mixtures of library components: the phase
at the outlet is the equilibrium one.

Each drawn inlet (a TP flash) goes through a valve (PH flash at a lower
pressure) or a heater (PH flash at h_in + Q/n, or a TP flash at an outlet
temperature), and the outlet is checked at its own T and P by means that do
not go through the flash's own stability code:

* Gibbs's tangent-plane criterion (Baker, Pierce and Luks, Soc. Pet. Eng.
  J. 22 (1982) 731; Michelsen, Fluid Phase Equilib. 9 (1982) 1): the outlet
  is the equilibrium state only if no trial phase w has a negative distance
  tm(w) = sum w_i (ln w_i + ln phi_i(w) - ln x_i - ln phi_i(x)) from the
  tangent plane at an outlet phase x. Trials start vapor-like and
  liquid-like from Wilson's K-values and near-pure in each component, and
  are minimised by plain successive substitution written here, with ln phi
  from the engine's departure functions (lowest-Gibbs root);
* equal fugacities of the outlet phases, from the same departure functions;
* a TP flash at the outlet T and P reaches no lower Gibbs energy;
* for a pure component, two phases only at the saturation temperature.

A request the flash cannot meet must raise FlashError naming the flash.
"""

from __future__ import annotations

import numpy as np
import pytest
from hypothesis import HealthCheck, assume, event, given, settings
from hypothesis import strategies as st

from thermo.components import R, library
from thermo.departures import residual
from thermo.equipment import heater, valve
from thermo.equipment.common import Flow
from thermo.flash import FlashError, flash_tp, saturation_temperature
from thermo.flash_support import wilson_k
from thermo.mixture import make_mixture
from thermo.models import make_model

from unit_helpers import AMBIENT

COMPONENTS = sorted(library())
# tm below this (in units of R T per mole of trial) proves the outlet is not the
# equilibrium; the margin is far above rounding but far below any phase an
# engineer would see (a missed phase of even 1e-4 mol per mole of stream has
# |tm| well above it away from critical points).
UNSTABLE_TM = -1e-6
TRIAL_STEPS = 150
EXAMPLES = 150  # per test: about 2 s each on one core


@st.composite
def inlets(draw):
    names = draw(st.lists(st.sampled_from(COMPONENTS), min_size=1, max_size=4, unique=True))
    weights = draw(st.lists(st.floats(0.02, 1.0), min_size=len(names), max_size=len(names)))
    model_name = draw(st.sampled_from(["peng-robinson", "soave-redlich-kwong"]))
    t = draw(st.floats(150.0, 500.0))
    p = draw(st.floats(1e5, 1e7))
    return model_name, names, np.array(weights) / sum(weights), t, p


def _ln_phi(model, t, p, x):
    return residual(model, t, p, x).ln_phi


def _tangent_plane_minimum(model, t, p, z, phase_x, phase_ln_phi):
    """The lowest tm found from the trial starts, over the components present."""
    present = z > 0.0
    d = np.log(phase_x[present]) + phase_ln_phi[present]
    mixture = model.mixture
    k = wilson_k(mixture.critical_temperature[present], mixture.critical_pressure[present],
                 mixture.acentric_factor[present], t, p)
    zp = z[present]
    starts = [zp * k, zp / k]
    for i in range(int(present.sum())):
        pure = np.full(int(present.sum()), 1e-3)
        pure[i] = 1.0
        starts.append(pure)
    lowest = np.inf
    full = np.zeros(len(z))
    for w_moles in starts:
        for _ in range(TRIAL_STEPS):
            w = w_moles / w_moles.sum()
            full[present] = w
            ln_phi = _ln_phi(model, t, p, full)[present]
            tm = float(w @ (np.log(w) + ln_phi - d))
            lowest = min(lowest, tm)
            if tm < UNSTABLE_TM:
                return tm
            new = np.exp(np.clip(d - ln_phi, -700.0, 50.0))
            if float(np.abs(np.log(new) - np.log(w_moles)).max()) < 1e-10:
                break
            w_moles = new
    return lowest


def _gibbs(state) -> float:
    return state.enthalpy - state.temperature * state.entropy


def _check_outlet(model, z, out, what):
    t, p = out.temperature, out.pressure
    event(f"{len(out.phases)} phase(s)")
    assert out.phase in ("vapor", "liquid", "two-phase", "supercritical"), what
    if len(out.phases) > 1:
        assert 0.0 < out.vapor_fraction <= 1.0 or out.vapor_fraction == 0.0, what
        present = z > 0.0
        ln_f = [np.log(ph.composition[present]) + residual(
            model, t, p, ph.composition, "liquid" if ph.residual.root == "liquid-like" else "vapor").ln_phi[present]
            for ph in out.phases]
        assert float(np.max(np.ptp(np.array(ln_f), axis=0))) < 1e-8, what
    if np.count_nonzero(z) == 1:
        i = int(np.flatnonzero(z)[0])
        if len(out.phases) > 1:
            # A pure component has two phases only on its saturation curve.
            assert t == pytest.approx(saturation_temperature(model, p, i), rel=1e-8), what
        else:
            assert flash_tp(model, t, p, z).phase == out.phase, what
        return
    reference = out.phases[0]
    tm = _tangent_plane_minimum(model, t, p, z, reference.composition, reference.residual.ln_phi)
    assert tm > UNSTABLE_TM, f"{what}: a trial phase lies {tm:.3g} below the outlet's tangent plane"
    try:
        again = flash_tp(model, t, p, z)
    except FlashError:
        return
    assert _gibbs(again) >= _gibbs(out) - 1e-6 * R * t, f"{what}: a TP flash at the outlet finds a lower Gibbs energy"


def _inlet(case):
    model_name, names, z, t, p = case
    model = make_model(model_name, make_mixture(names))
    try:
        state = flash_tp(model, t, p, z)
    except FlashError:
        assume(False)
    return model, z, Flow(state, 10.0)


@settings(max_examples=EXAMPLES, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(inlets(), st.floats(0.05, 0.9))
def test_valve_outlet_is_the_equilibrium_phase(case, pressure_ratio):
    model, z, inlet = _inlet(case)
    try:
        result = valve.throttle(model, inlet, ambient_temperature=AMBIENT,
                                outlet_pressure=pressure_ratio * inlet.state.pressure)
    except FlashError as error:
        assert "PH flash" in str(error)
        return
    _check_outlet(model, z, result.outlets[0].state, f"valve on {case}")


@settings(max_examples=EXAMPLES, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(inlets(), st.floats(-8000.0, 15000.0), st.booleans())
def test_heater_outlet_is_the_equilibrium_phase(case, enthalpy_rise, by_temperature):
    model, z, inlet = _inlet(case)
    try:
        if by_temperature:
            # the outlet temperature a duty of this size would about reach
            outlet_t = max(60.0, inlet.state.temperature + enthalpy_rise / 150.0)
            result = heater.heat_stream(model, inlet, ambient_temperature=AMBIENT, outlet_temperature=outlet_t)
        else:
            result = heater.heat_stream(model, inlet, ambient_temperature=AMBIENT,
                                        duty=inlet.molar_flow * enthalpy_rise)
    except FlashError as error:
        assert ("TP flash" if by_temperature else "PH flash") in str(error)
        return
    _check_outlet(model, z, result.outlets[0].state, f"heater on {case}")
