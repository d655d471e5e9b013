"""The equations of state themselves: their published constants, their
critical points, their mixing rules and the virial coefficient they give."""

from __future__ import annotations

import dataclasses
import math

import numpy as np
import pytest
import CoolProp.CoolProp as CoolProp
from CoolProp import AbstractState
from scipy.optimize import brentq

from thermo.components import R, get_component
from thermo.mixture import make_mixture
from thermo.models import IdealGas, UnknownModelError, make_model, peng_robinson, soave_redlich_kwong, virial


def one_component(omega: float):
    """A pure component like n-decane but with the acentric factor given."""
    return make_mixture([dataclasses.replace(get_component("n-decane"), acentric_factor=omega)])


def kappa_seen_by_model(model, temperature: float) -> float:
    """kappa recovered from the model's a(T) = a_c [1 + kappa (1 - sqrt(T/Tc))]^2."""
    component = model.mixture.components[0]
    tc, pc = component.critical_temperature, component.critical_pressure
    a_c = model.parameters.omega_a * (R * tc) ** 2 / pc
    a, _, _ = model.attraction(temperature, np.array([1.0]))
    return (math.sqrt(a / a_c) - 1.0) / (1.0 - math.sqrt(temperature / tc))


@pytest.mark.parametrize("omega", [0.0, 0.2, 0.45, 0.49, 0.4901, 0.6, 0.9])
def test_peng_robinson_kappa_takes_the_1978_form_above_omega_049(omega):
    # Peng and Robinson, Ind. Eng. Chem. Fundam. 15 (1976) 59;
    # Robinson and Peng, GPA Research Report RR-28 (1978) for omega > 0.49.
    kappa_1976 = 0.37464 + 1.54226 * omega - 0.26992 * omega**2
    kappa_1978 = 0.379642 + 1.48503 * omega - 0.164423 * omega**2 + 0.016666 * omega**3
    expected = kappa_1978 if omega > 0.49 else kappa_1976
    model = peng_robinson(one_component(omega))
    for temperature in (300.0, 500.0, 800.0):
        assert kappa_seen_by_model(model, temperature) == pytest.approx(expected, rel=1e-10)


@pytest.mark.parametrize("omega", [0.0, 0.3, 0.6])
def test_soave_m_is_the_1972_polynomial(omega):
    # Soave, Chem. Eng. Sci. 27 (1972) 1197.
    model = soave_redlich_kwong(one_component(omega))
    assert kappa_seen_by_model(model, 400.0) == pytest.approx(0.480 + 1.574 * omega - 0.176 * omega**2, rel=1e-10)


def pressure_derivatives(isotherm, volume: float, h: float) -> tuple[float, float, float]:
    """P, dP/dV and d2P/dV2 by central differences on the model's own P(V)."""
    p = [isotherm.pressure(volume + k * h) for k in (-1, 0, 1)]
    return p[1], (p[2] - p[0]) / (2 * h), (p[2] - 2 * p[1] + p[0]) / h**2


@pytest.mark.parametrize("builder, model_zc", [(peng_robinson, 0.3074013087), (soave_redlich_kwong, 1.0 / 3.0)])
@pytest.mark.parametrize("name", ["methane", "carbon-dioxide", "water", "n-decane"])
def test_critical_point_of_a_pure_component_is_tc_pc(builder, model_zc, name):
    """At Tc the isotherm's inflection point has zero slope and sits at Pc:
    that holds only with the right Omega_a and Omega_b. Measured: slope
    3e-7 Pc/Vc and P - Pc = -1.3e-7 Pc for Peng-Robinson (whose Omega_b is
    carried to 7 digits, 5e-8 from the exact 0.0777960739), 6e-8 and 3e-8 for
    Soave-Redlich-Kwong, the same for step sizes 5e-5 to 2e-4 Vc (so not the
    differences). Band 1e-6: any error in the constants' first six digits fails."""
    component = get_component(name)
    tc, pc = component.critical_temperature, component.critical_pressure
    model = builder(make_mixture([name]))
    isotherm = model.at(tc, np.array([1.0]))
    b = model.covolume(np.array([1.0]))
    vc_guess = model_zc * R * tc / pc
    h = 1e-4 * vc_guess
    inflection = brentq(lambda v: pressure_derivatives(isotherm, v, h)[2], 0.7 * vc_guess, 1.4 * vc_guess, xtol=1e-14 * vc_guess)
    p, slope, _ = pressure_derivatives(isotherm, inflection, h)
    assert slope * inflection / pc == pytest.approx(0.0, abs=1e-6)
    assert p == pytest.approx(pc, rel=1e-6)
    assert pc * inflection / (R * tc) == pytest.approx(model_zc, rel=1e-5)  # the model's own Zc
    assert inflection > b
    # a degree below Tc the isotherm has a loop (dP/dV > 0 somewhere), a degree above none
    volumes = np.linspace(0.6 * inflection, 1.6 * inflection, 401)
    slope_below = np.diff([model.at(tc - 1.0, np.array([1.0])).pressure(v) for v in volumes])
    slope_above = np.diff([model.at(tc + 1.0, np.array([1.0])).pressure(v) for v in volumes])
    assert slope_below.max() > 0.0 and slope_above.max() < 0.0


def test_van_der_waals_mixing_rules(fluid):
    """a = sum_ij x_i x_j sqrt(a_i a_j)(1 - k_ij) and b = sum_i x_i b_i from the
    pure-component values, and D_i = d(n^2 a)/dn_i by differences."""
    here = fluid({"methane": 0.6, "nitrogen": 0.1, "carbon-dioxide": 0.2, "propane": 0.1})
    model, x = here.model("peng-robinson"), here.x
    t = 260.0
    pure = [model.attraction(t, np.eye(4)[i])[0] for i in range(4)]
    expected_a = sum(
        x[i] * x[j] * math.sqrt(pure[i] * pure[j]) * (1.0 - here.mixture.kij[i, j]) for i in range(4) for j in range(4)
    )
    a, da_dt, d_i = model.attraction(t, x)
    assert a == pytest.approx(expected_a, rel=1e-13)
    assert model.covolume(x) == pytest.approx(sum(x[i] * model.covolume(np.eye(4)[i]) for i in range(4)), rel=1e-14)
    step = 1e-6
    for i in range(4):
        bump = np.eye(4)[i] * step
        n2a = [(x + s * bump).sum() ** 2 * model.attraction(t, (x + s * bump) / (x + s * bump).sum())[0] for s in (1, -1)]
        assert d_i[i] == pytest.approx((n2a[0] - n2a[1]) / (2 * step), rel=1e-7)
    a_up, a_down = model.attraction(t + 1e-3, x)[0], model.attraction(t - 1e-3, x)[0]
    assert da_dt == pytest.approx((a_up - a_down) / 2e-3, rel=1e-7)


# Second virial coefficients at 300 K, cm3/mol: Dymond and Smith, The Virial
# Coefficients of Pure Gases and Mixtures (Oxford, 1980), recommended values
# (# from memory), each also checked below against CoolProp HEOS.
HANDBOOK_B_300K = {
    "methane": -42.0,  # from memory
    "nitrogen": -4.2,  # from memory
    "carbon-dioxide": -122.0,  # from memory
    "ethane": -182.0,  # from memory
}
HEOS_NAMES = {"methane": "Methane", "nitrogen": "Nitrogen", "carbon-dioxide": "CarbonDioxide", "ethane": "Ethane"}


@pytest.mark.parametrize("name", list(HANDBOOK_B_300K))
def test_virial_b_of_a_pure_gas_against_handbook(name):
    """The Pitzer-Abbott correlation is a two-parameter corresponding-states
    fit; against the handbook values here it was measured within 1.2 cm3/mol
    (nitrogen) and 3.5 cm3/mol = 1.9 % (ethane). Band: 2 cm3/mol or 3 %,
    whichever is larger -- the size of the scatter between correlations of this
    kind and the data for simple nonpolar gases at T/Tc >= 1."""
    handbook = HANDBOOK_B_300K[name]
    # the recalled value itself, against the reference equation (CoolProp HEOS;
    # Setzmann and Wagner 1991, Span et al. 2000, Span and Wagner 1996,
    # Buecker and Wagner 2006): within 1.5 cm3/mol, else the memory is wrong
    state = AbstractState("HEOS", HEOS_NAMES[name])
    state.specify_phase(CoolProp.iphase_gas)
    state.update(CoolProp.PT_INPUTS, 1.0, 300.0)
    assert state.Bvirial() * 1e6 == pytest.approx(handbook, abs=1.5)
    model = virial(make_mixture([name]))
    b, _ = model.second_virial(300.0, np.array([1.0]))
    assert b * 1e6 == pytest.approx(handbook, abs=max(2.0, 0.03 * abs(handbook)))


def test_make_model_names_and_refuses_unknown_ones(natural_gas):
    mixture = natural_gas.mixture
    assert make_model("peng-robinson", mixture).name == "peng-robinson"
    assert make_model("soave-redlich-kwong", mixture).name == "soave-redlich-kwong"
    assert isinstance(make_model("ideal-gas", mixture), IdealGas)
    with pytest.raises(UnknownModelError) as caught:
        make_model("peng-robinsn", mixture)
    assert "peng-robinson" in str(caught.value) and "peng-robinsn" in str(caught.value)


@pytest.mark.parametrize("builder", [peng_robinson, soave_redlich_kwong])
def test_volume_roots_solve_the_cubic(natural_gas, builder):
    model, x = builder(natural_gas.mixture), natural_gas.x
    for t, p in ((160.0, 30e5), (200.0, 50e5), (300.0, 1e5), (400.0, 300e5)):
        isotherm = model.at(t, x)
        roots = isotherm.volume_roots(p)
        assert roots == sorted(roots) and 1 <= len(roots) <= 3
        for v in roots:
            assert v > model.covolume(x)
            assert isotherm.pressure(v) == pytest.approx(p, rel=1e-9)
