"""Identities any correct equation-of-state engine satisfies, drawn at random
single-phase states (hypothesis): closed cycles, the zero-pressure limit,
Maxwell relations, the two routes to the departures, the ideal gas and the
reference state."""

from __future__ import annotations

import numpy as np
import pytest
from hypothesis import HealthCheck, assume, given, settings
from hypothesis import strategies as st
from scipy.integrate import quad_vec

from thermo import idealgas
from thermo.components import P_REF, R, T_REF, library
from thermo.departures import residual, residual_batch
from thermo.mixture import make_mixture
from thermo.models import IdealGas
from thermo.path import path_between
from thermo.properties import single_phase_state

SETTINGS = settings(max_examples=40, deadline=None, suppress_health_check=[HealthCheck.too_slow])

CUBICS = ("peng-robinson", "soave-redlich-kwong")
FLUIDS = (
    {"methane": 1.0},
    {"propane": 1.0},
    {"methane": 0.85, "ethane": 0.07, "propane": 0.04, "n-butane": 0.02, "nitrogen": 0.02},
    {"methane": 0.7, "carbon-dioxide": 0.1, "ethane": 0.12, "nitrogen": 0.08},
)

temperatures = st.floats(min_value=120.0, max_value=700.0)
pressures = st.floats(min_value=1e4, max_value=200e5)  # 0.1 to 200 bar
fluid_indices = st.integers(min_value=0, max_value=len(FLUIDS) - 1)


def virial_serves(model, t, p, x) -> bool:
    """Whether the truncated virial equation gives a sensible state here
    (reduced volume of at least 2). The identities hold wherever the model
    has a volume; the range caution of thermo.cautions, which also bounds the
    left-out third-virial term, is stricter and is tested on its own."""
    return model.reduced_volume(t, p, x) >= 2.0


# --- closed cycles -------------------------------------------------------------


@SETTINGS
@given(
    model_name=st.sampled_from(CUBICS + ("virial",)),
    fluid_index=fluid_indices,
    states=st.lists(st.tuples(temperatures, pressures), min_size=3, max_size=3),
)
def test_closed_cycle_of_states_gives_zero_change(fluid, model_name, fluid_index, states):
    here = fluid(FLUIDS[fluid_index])
    model, x = here.model(model_name), here.x
    if model_name == "virial":
        assume(all(virial_serves(model, t, p, x) for t, p in states))
    a, b, c = (single_phase_state(model, t, p, x) for t, p in states)
    legs = [path_between(a, b), path_between(b, c), path_between(c, a)]
    size_h = sum(abs(step.enthalpy) for leg in legs for step in leg.steps) + R * 300.0
    size_s = sum(abs(step.entropy) for leg in legs for step in leg.steps) + R
    assert abs(sum(leg.enthalpy for leg in legs)) <= 1e-12 * size_h
    assert abs(sum(leg.entropy for leg in legs)) <= 1e-12 * size_s
    for leg, start, end in zip(legs, (a, b, c), (b, c, a)):
        assert leg.enthalpy == pytest.approx(end.enthalpy - start.enthalpy, rel=1e-12, abs=1e-12 * size_h)
        assert leg.entropy == pytest.approx(end.entropy - start.entropy, rel=1e-12, abs=1e-12 * size_s)


# --- departures vanish with pressure ----------------------------------------------


@SETTINGS
@given(
    model_name=st.sampled_from(CUBICS + ("virial",)),
    fluid_index=fluid_indices,
    t=st.floats(min_value=150.0, max_value=700.0),
)
def test_departures_vanish_in_proportion_to_pressure(fluid, model_name, fluid_index, t):
    """At low pressure every departure is the second-virial term, linear in P:
    H_res/P and S_res/P settle to finite limits, so a hundredfold drop of
    pressure cuts them a hundredfold, up to the next term, relatively about
    B P/(R T) (< 2e-5 at 10 Pa even for propane at 150 K, B ~ -2.5 L/mol)."""
    here = fluid(FLUIDS[fluid_index])
    model, x = here.model(model_name), here.x
    high, low = residual(model, t, 10.0, x), residual(model, t, 0.1, x)
    assert abs(high.enthalpy) > 0.0 and abs(high.entropy) > 0.0
    # limits per pascal: H_res/P -> B - T dB/dT (m3/mol), S_res/P -> -dB/dT,
    # (Z - 1) R T / P -> B. B - T dB/dT and B each cross zero at some
    # temperature (the zero-pressure inversion and the Boyle temperature), so
    # each agreement has an absolute floor too: 1e-9 m3/mol, a ten-thousandth
    # of a small molecule's co-volume.
    rt = R * t
    assert low.enthalpy / 0.1 == pytest.approx(high.enthalpy / 10.0, rel=1e-4, abs=1e-9)
    assert low.entropy / 0.1 == pytest.approx(high.entropy / 10.0, rel=1e-4, abs=1e-9 / t)
    assert (low.compressibility - 1.0) * rt / 0.1 == pytest.approx(
        (high.compressibility - 1.0) * rt / 10.0, rel=1e-4, abs=1e-9)
    # and the limits themselves are finite and modest: |H_res| / P below
    # 0.1 J/mol per Pa and |S_res| / P below 1e-3 J/(mol K) per Pa
    assert abs(high.enthalpy) / 10.0 < 0.1 and abs(high.entropy) / 10.0 < 1e-3


# --- Maxwell and Gibbs relations by finite differences ------------------------------


def states_on_one_branch(model, t, p, x, dt, dp):
    """The centre state and its four neighbours in T and P on the centre's own
    root, or None where a neighbour would fall onto another branch."""
    centre = single_phase_state(model, t, p, x)
    root = "liquid" if centre.phases[0].residual.root == "liquid-like" else "vapor"
    roots = model.at(t, x).volume_roots(p)
    if len(roots) == 1:
        root = "auto"
    neighbours = [single_phase_state(model, tt, pp, x, root) for tt, pp in
                  ((t + dt, p), (t - dt, p), (t, p + dp), (t, p - dp))]
    v0 = centre.molar_volume
    if any(abs(s.molar_volume / v0 - 1.0) > 0.01 for s in neighbours):
        return None
    return centre, neighbours


@SETTINGS
@given(model_name=st.sampled_from(CUBICS), fluid_index=fluid_indices, t=temperatures, p=pressures)
def test_maxwell_relation_and_gibbs_derivatives(fluid, model_name, fluid_index, t, p):
    """(dS/dP)_T = -(dV/dT)_P, (dH/dT)_P = T (dS/dT)_P and
    (dH/dP)_T = V - T (dV/dT)_P, by central differences with relative steps of
    1e-5: truncation ~ 1e-10 relative, round-off ~ 1e-16/1e-5; 1e-6 relative
    (plus a floor at the size of the terms) leaves room only for error."""
    here = fluid(FLUIDS[fluid_index])
    model, x = here.model(model_name), here.x
    dt, dp = 1e-5 * t, 1e-4 * p
    found = states_on_one_branch(model, t, p, x, dt, dp)
    assume(found is not None)
    centre, (t_up, t_down, p_up, p_down) = found
    ds_dp = (p_up.entropy - p_down.entropy) / (2 * dp)
    dv_dt = (t_up.molar_volume - t_down.molar_volume) / (2 * dt)
    ds_dt = (t_up.entropy - t_down.entropy) / (2 * dt)
    dh_dt = (t_up.enthalpy - t_down.enthalpy) / (2 * dt)
    dh_dp = (p_up.enthalpy - p_down.enthalpy) / (2 * dp)
    v = centre.molar_volume
    assert ds_dp == pytest.approx(-dv_dt, rel=1e-6, abs=1e-6 * R / p)
    assert dh_dt == pytest.approx(t * ds_dt, rel=1e-6, abs=1e-6 * R)
    assert dh_dp == pytest.approx(v - t * dv_dt, rel=1e-6, abs=1e-6 * v)


# --- pressure-explicit and volume-explicit routes agree ----------------------------


def vapor_branch_is_continuous(model, t, p, x) -> bool:
    """Whether the largest volume root runs unbroken from P -> 0 to ``p``.

    At fixed composition the cubic is a one-fluid cubic with its own critical
    volume V_c = (Z_c / Omega_b) b. Where three roots exist the largest lies on
    the vapor branch; a lone root denser than V_c lies on the liquid branch (or
    its supercritical continuation), which the path from P -> 0 may have
    reached only by jumping across the three-root window; a lone root lighter
    than V_c is on the vapor branch or above the critical temperature."""
    roots = model.at(t, x).volume_roots(p)
    critical_volume = model.parameters.critical_compressibility / model.parameters.omega_b * model.covolume(x)
    return len(roots) == 3 or roots[-1] > critical_volume


def compressibility_on_vapor_branch(model, t, p, x) -> float:
    return residual(model, t, p, x, "vapor").compressibility


def dz_dt(model, t, p, x, h=0.05) -> float:
    """(dZ/dT)_P by the five-point central stencil (error ~ h^4 Z''''')."""
    z = [compressibility_on_vapor_branch(model, t + k * h, p, x) for k in (-2, -1, 1, 2)]
    return (z[0] - 8.0 * z[1] + 8.0 * z[2] - z[3]) / (12.0 * h)


@settings(max_examples=30, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(
    fluid_index=fluid_indices,
    t=st.floats(min_value=200.0, max_value=600.0),
    p=st.floats(min_value=1e5, max_value=150e5),
)
def test_pressure_integrals_on_cubic_z_equal_helmholtz_results(fluid, fluid_index, t, p):
    """The volume-explicit formulas
        H_res/(R T) = -T int_0^P (dZ/dT)_P dP/P,
        S_res/R = -int_0^P (T (dZ/dT)_P + Z - 1) dP/P,
        G_res/(R T) = int_0^P (Z - 1) dP/P
    evaluated numerically on Peng-Robinson's own Z(T, P) along its vapor
    branch give Peng-Robinson's closed-form Helmholtz results. Over a grid of
    such states the differences in T and the quadrature left at most 3e-9
    (measured); the band is 1e-7. From 1 bar up: below it (dZ/dT)_P by
    differences drowns in the round-off of Z (~1e-16), and the zero-pressure
    test covers that end."""
    here = fluid(FLUIDS[fluid_index])
    model, x = here.model("peng-robinson"), here.x
    # the finite differences in T must stay on the branch too
    assume(all(vapor_branch_is_continuous(model, t + k * 0.05, p, x) for k in (-2, -1, 0, 1, 2)))
    closed = residual(model, t, p, x, "vapor")

    def integrands(pp):
        return np.array([dz_dt(model, t, pp, x), compressibility_on_vapor_branch(model, t, pp, x) - 1.0]) / pp

    # Z - 1 carries an absolute round-off of ~1e-16, so the integrands are noisy
    # as P -> 0, where they contribute almost nothing: the absolute floor keeps
    # the quadrature from chasing that noise (the integrals are ~1e-4 to 1).
    (dz_dt_integral, z_integral), _ = quad_vec(integrands, 0.0, p, epsabs=1e-12, epsrel=1e-10, limit=200)
    rt = R * t
    assert -rt * t * dz_dt_integral == pytest.approx(closed.enthalpy, rel=1e-7, abs=1e-9 * rt)
    assert -R * (t * dz_dt_integral + z_integral) == pytest.approx(closed.entropy, rel=1e-7, abs=1e-9 * R)
    assert rt * z_integral == pytest.approx(closed.gibbs, rel=1e-7, abs=1e-9 * rt)


# --- the ideal gas and the reference state --------------------------------------------

compositions = st.lists(st.floats(min_value=0.0, max_value=1.0), min_size=4, max_size=4).filter(
    lambda v: sum(v) > 1e-3)


@SETTINGS
@given(t=temperatures, p=pressures, raw=compositions)
def test_ideal_gas_model_has_zero_residuals(fluid, t, p, raw):
    here = fluid(FLUIDS[3])
    x = np.array(raw) / sum(raw)
    x = x / x.sum()
    model = IdealGas(here.mixture)
    res = residual(model, t, p, x)
    assert res.enthalpy == 0.0 and res.entropy == 0.0 and res.gibbs == 0.0
    assert res.compressibility == 1.0 and not np.any(res.ln_phi)
    assert res.molar_volume == pytest.approx(R * t / p, rel=1e-15)
    state = single_phase_state(model, t, p, x)
    assert state.enthalpy == pytest.approx(idealgas.enthalpy(here.mixture, t, x), rel=1e-12, abs=1e-9)
    assert state.entropy == pytest.approx(idealgas.entropy(here.mixture, t, p, x), rel=1e-12, abs=1e-12)
    batch = residual_batch(model, np.array([t, t]), np.array([p, 2 * p]), x)
    assert not np.any(batch.enthalpy) and not np.any(batch.entropy) and np.all(batch.compressibility == 1.0)


def test_reference_state_of_every_library_component_is_zero():
    """Each pure component as an ideal gas at 298.15 K and 101.325 kPa has H = 0, S = 0."""
    for name in library():
        mixture = make_mixture([name])
        state = single_phase_state(IdealGas(mixture), T_REF, P_REF, np.array([1.0]))
        assert abs(state.enthalpy) < 1e-9, name
        assert abs(state.entropy) < 1e-12, name


@SETTINGS
@given(raw=compositions)
def test_mixture_at_reference_state_has_only_entropy_of_mixing(fluid, raw):
    here = fluid(FLUIDS[3])
    x = np.array(raw) / sum(raw)
    x = x / x.sum()
    state = single_phase_state(IdealGas(here.mixture), T_REF, P_REF, x)
    positive = x[x > 0]
    assert abs(state.enthalpy) < 1e-9
    assert state.entropy == pytest.approx(-R * float(positive @ np.log(positive)), rel=1e-12, abs=1e-12)


def test_real_fluid_departs_from_ideal_at_reference_state(methane):
    """At the reference T and P a real-gas model is not at zero: its departure is
    the only difference from the ideal gas (a sign the zero is the ideal gas's)."""
    model = methane.model("peng-robinson")
    state = single_phase_state(model, T_REF, P_REF, methane.x)
    res = residual(model, T_REF, P_REF, methane.x)
    assert state.enthalpy == pytest.approx(res.enthalpy, rel=1e-12)
    assert state.entropy == pytest.approx(res.entropy, rel=1e-12)
    assert -50.0 < res.enthalpy < -1.0  # methane near ambient: Z ~ 0.998
