"""Closed-form departure functions against the integrals that define them.

Residual properties are defined by integrals of the equation of state itself
(e.g. Michelsen and Mollerup, Thermodynamic Models: Fundamentals and
Computational Aspects, 2nd ed. (2007), ch. 2):

pressure-explicit, P(T, V, n), one mole at its molar volume V:
    A_res(T, V)  = integral_V^inf (P - R T / V') dV'
    U_res(T, V)  = integral_V^inf (P - T (dP/dT)_V) dV'
    H_res        = U_res + R T (Z - 1)
    S_res        = -integral_V^inf ((dP/dT)_V - R / V') dV' + R ln Z
    ln phi_i     = integral_V^inf ((dP/dn_i)_{T,V} - R T / V') dV' / (R T) - ln Z

volume-explicit, Z(T, P, n):
    H_res / (R T) = -T integral_0^P (dZ/dT)_P dP'/P'
    S_res / R     = -integral_0^P (T (dZ/dT)_P + Z - 1) dP'/P'
    ln phi_i      = integral_0^P (d(n Z)/dn_i - 1) dP'/P'

The pressure below is written out from the cubic's defining equation here,
not taken from the engine, and differentiated by complex step (exact to
round-off). The integrals are done by scipy's adaptive quadrature to 1e-13,
so agreement to 1e-8 leaves room only for round-off in the closed forms.
"""

from __future__ import annotations

import math

import numpy as np
import pytest
from scipy.integrate import quad

from thermo.components import R
from thermo.departures import LIQUID_LIKE, VAPOR_LIKE, residual, residual_batch

COMPLEX_STEP = 1e-20
RELATIVE = 1e-8  # the agreement asked of closed form vs quadrature

MIXTURE_3 = {"ethane": 0.2, "propane": 0.3, "n-butane": 0.5}
MIXTURE_4 = {"methane": 0.7, "carbon-dioxide": 0.1, "ethane": 0.12, "nitrogen": 0.08}
NATURAL_GAS_5 = {"methane": 0.85, "ethane": 0.07, "propane": 0.04, "n-butane": 0.02, "nitrogen": 0.02}

# (fractions, T K, P Pa, root asked for, root label expected)
CUBIC_STATES = [
    ({"methane": 1.0}, 250.0, 50e5, "auto", VAPOR_LIKE),
    ({"methane": 1.0}, 150.0, 30e5, "auto", LIQUID_LIKE),
    ({"propane": 1.0}, 250.0, 20e5, "auto", LIQUID_LIKE),
    # a state with three roots: both the liquid and the vapor branch
    ({"propane": 1.0}, 300.0, 9e5, "liquid", LIQUID_LIKE),
    ({"propane": 1.0}, 300.0, 9e5, "vapor", VAPOR_LIKE),
    ({"carbon-dioxide": 1.0}, 350.0, 60e5, "auto", VAPOR_LIKE),
    # supercritical but denser than the model's critical density
    ({"carbon-dioxide": 1.0}, 320.0, 300e5, "auto", LIQUID_LIKE),
    (MIXTURE_3, 280.0, 50e5, "auto", LIQUID_LIKE),
    (MIXTURE_3, 400.0, 10e5, "auto", VAPOR_LIKE),
    (MIXTURE_4, 260.0, 80e5, "auto", VAPOR_LIKE),
    (NATURAL_GAS_5, 280.0, 60e5, "auto", VAPOR_LIKE),
    (NATURAL_GAS_5, 160.0, 60e5, "auto", LIQUID_LIKE),
]

VIRIAL_STATES = [
    ({"methane": 1.0}, 250.0, 20e5),
    ({"nitrogen": 1.0}, 300.0, 50e5),
    ({"propane": 1.0}, 350.0, 5e5),
    (MIXTURE_3, 420.0, 5e5),
    (MIXTURE_4, 300.0, 30e5),
    (NATURAL_GAS_5, 300.0, 20e5),
]


def state_id(case) -> str:
    fractions, t, p = case[:3]
    return f"{'+'.join(fractions)}-{t:g}K-{p / 1e5:g}bar" + (f"-{case[3]}" if len(case) > 3 else "")


def cubic_pressure(model, temperature, volume, moles):
    """P (Pa) of the generic cubic P = nRT/(V - nb) - n^2 a / ((V + d1 nb)(V + d2 nb)),
    a_i = Omega_a (R Tc)^2 / Pc [1 + kappa (1 - sqrt(T/Tc))]^2, b_i = Omega_b R Tc / Pc,
    van der Waals one-fluid mixing with k_ij; written here from the defining
    equations (Peng and Robinson 1976; Soave 1972), complex-safe."""
    parameters, mixture = model.parameters, model.mixture
    tc, pc = mixture.critical_temperature, mixture.critical_pressure
    kappa = parameters.kappa(mixture.acentric_factor)
    sqrt_a = math.sqrt(parameters.omega_a) * R * tc / np.sqrt(pc) * (1.0 + kappa * (1.0 - np.sqrt(temperature / tc)))
    n2a = moles @ (np.outer(sqrt_a, sqrt_a) * (1.0 - mixture.kij)) @ moles
    nb = (parameters.omega_b * R * tc / pc) @ moles
    return moles.sum() * R * temperature / (volume - nb) - n2a / (
        (volume + parameters.delta1 * nb) * (volume + parameters.delta2 * nb)
    )


def integral_from_volume_to_infinity(integrand, volume: float) -> float:
    """integral_V^inf f(V') dV' with V' = V/u, u in (0, 1]: a finite interval on
    which f (decaying as 1/V'^2) times V/u^2 stays bounded."""
    value, _ = quad(lambda u: integrand(volume / u) * volume / u**2, 0.0, 1.0, epsabs=0.0, epsrel=1e-13, limit=200)
    return value


def close(engine: float, reference: float, scale: float) -> bool:
    """Relative agreement, with a floor far below the quantity's natural scale
    for values that happen to be near zero."""
    return abs(engine - reference) <= RELATIVE * abs(reference) + 1e-13 * scale


@pytest.mark.parametrize("model_name", ["peng-robinson", "soave-redlich-kwong"])
@pytest.mark.parametrize("case", CUBIC_STATES, ids=state_id)
def test_cubic_departures_equal_volume_integrals(fluid, model_name, case):
    fractions, t, p, root, expected_root = case
    fluid_here = fluid(fractions)
    model, x = fluid_here.model(model_name), fluid_here.x
    res = residual(model, t, p, x, root)
    assert res.root == expected_root
    v, z, rt = res.molar_volume, res.compressibility, R * t
    assert cubic_pressure(model, t, v, x) == pytest.approx(p, rel=1e-10)  # the root solves the cubic

    def dp_dt(volume):
        return cubic_pressure(model, t + 1j * COMPLEX_STEP, volume, x.astype(complex)).imag / COMPLEX_STEP

    a_res = integral_from_volume_to_infinity(lambda vv: cubic_pressure(model, t, vv, x) - rt / vv, v)
    u_res = integral_from_volume_to_infinity(lambda vv: cubic_pressure(model, t, vv, x) - t * dp_dt(vv), v)
    s_integral = integral_from_volume_to_infinity(lambda vv: dp_dt(vv) - R / vv, v)
    h_expected = u_res + rt * (z - 1.0)
    s_expected = -s_integral + R * math.log(z)
    g_expected = a_res + rt * (z - 1.0 - math.log(z))
    assert close(res.enthalpy, h_expected, rt), (res.enthalpy, h_expected)
    assert close(res.entropy, s_expected, R), (res.entropy, s_expected)
    assert close(res.gibbs, g_expected, rt), (res.gibbs, g_expected)
    for i in range(len(x)):
        bump = np.zeros(len(x), dtype=complex)
        bump[i] = 1j * COMPLEX_STEP

        def dp_dni(volume, bump=bump):
            return cubic_pressure(model, t, volume, x + bump).imag / COMPLEX_STEP

        ln_phi = integral_from_volume_to_infinity(lambda vv: dp_dni(vv) - rt / vv, v) / rt - math.log(z)
        assert close(res.ln_phi[i], ln_phi, 1.0), (i, res.ln_phi[i], ln_phi)


def virial_n_times_z(model, temperature, pressure, moles):
    """n Z = n + P/(R T) (sum_ij n_i n_j B_ij) / n for the truncated virial
    equation, from the model's own B_ij(T); complex-safe in T and n."""
    b_ij, _ = model.cross_coefficients(temperature)
    return moles.sum() + pressure / (R * temperature) * (moles @ b_ij @ moles) / moles.sum()


def integral_from_zero_pressure(integrand, pressure: float) -> float:
    value, _ = quad(integrand, 0.0, pressure, epsabs=0.0, epsrel=1e-13, limit=200)
    return value


@pytest.mark.parametrize("case", VIRIAL_STATES, ids=state_id)
def test_virial_departures_equal_pressure_integrals(fluid, case):
    fractions, t, p = case
    fluid_here = fluid(fractions)
    model, x = fluid_here.model("virial"), fluid_here.x
    res = residual(model, t, p, x)
    xc = x.astype(complex)

    def z(pp):
        return virial_n_times_z(model, t, pp, x)

    def dz_dt(pp):
        return virial_n_times_z(model, t + 1j * COMPLEX_STEP, pp, xc).imag / COMPLEX_STEP

    rt = R * t
    h_expected = -rt * t * integral_from_zero_pressure(lambda pp: dz_dt(pp) / pp, p)
    s_expected = -R * integral_from_zero_pressure(lambda pp: (t * dz_dt(pp) + z(pp) - 1.0) / pp, p)
    g_expected = rt * integral_from_zero_pressure(lambda pp: (z(pp) - 1.0) / pp, p)
    assert res.compressibility == pytest.approx(z(p), rel=1e-13)
    assert close(res.enthalpy, h_expected, rt), (res.enthalpy, h_expected)
    assert close(res.entropy, s_expected, R), (res.entropy, s_expected)
    assert close(res.gibbs, g_expected, rt), (res.gibbs, g_expected)
    for i in range(len(x)):
        bump = np.zeros(len(x), dtype=complex)
        bump[i] = 1j * COMPLEX_STEP

        def partial_z(pp, bump=bump):
            return virial_n_times_z(model, t, pp, x + bump).imag / COMPLEX_STEP

        ln_phi = integral_from_zero_pressure(lambda pp: (partial_z(pp) - 1.0) / pp, p)
        assert close(res.ln_phi[i], ln_phi, 1.0), (i, res.ln_phi[i], ln_phi)


def test_virial_temperature_derivative_of_b_is_exact(fluid):
    """The analytic dB_ij/dT the virial model returns equals the complex-step
    derivative of its own B_ij(T)."""
    model = fluid(NATURAL_GAS_5).model("virial")
    for t in (150.0, 300.0, 600.0):
        _, db_ij = model.cross_coefficients(t)
        b_step, _ = model.cross_coefficients(t + 1j * COMPLEX_STEP)
        np.testing.assert_allclose(db_ij, b_step.imag / COMPLEX_STEP, rtol=1e-12)


# ln phi_i = d(n G_res/(R T))/dn_i at constant T, P: central differences in the
# mole numbers with a step of 1e-5 mol (per mole of mixture). Truncation error is
# about h^2 times the third derivative (~1e-10) and round-off about
# 1e-16 |g| / h (~1e-11), so 1e-7 is a safe yet still sharp bound.
LN_PHI_STEP = 1e-5
LN_PHI_TOLERANCE = 1e-7

FUGACITY_CASES = [
    ("peng-robinson", {"methane": 1.0}, 250.0, 50e5, "auto"),
    ("peng-robinson", NATURAL_GAS_5, 280.0, 60e5, "auto"),
    ("peng-robinson", NATURAL_GAS_5, 160.0, 60e5, "auto"),
    ("peng-robinson", MIXTURE_3, 330.0, 15e5, "liquid"),
    ("peng-robinson", MIXTURE_3, 330.0, 15e5, "vapor"),
    ("soave-redlich-kwong", MIXTURE_4, 260.0, 80e5, "auto"),
    ("soave-redlich-kwong", MIXTURE_3, 280.0, 50e5, "auto"),
    ("virial", NATURAL_GAS_5, 300.0, 20e5, "auto"),
    ("virial", MIXTURE_4, 250.0, 10e5, "auto"),
]


@pytest.mark.parametrize("model_name, fractions, t, p, root", FUGACITY_CASES,
                         ids=lambda v: v if isinstance(v, str) else None)
def test_ln_phi_is_mole_number_derivative_of_residual_gibbs(fluid, model_name, fractions, t, p, root):
    fluid_here = fluid(fractions)
    model, x = fluid_here.model(model_name), fluid_here.x
    rt = R * t
    centre = residual(model, t, p, x, root)

    def n_g_over_rt(moles):
        total = moles.sum()
        res = residual(model, t, p, moles / total, root)
        assert res.root == centre.root  # the same branch on both sides of the step
        return total * res.gibbs / rt

    for i in range(len(x)):
        step = np.zeros(len(x))
        step[i] = LN_PHI_STEP
        derivative = (n_g_over_rt(x + step) - n_g_over_rt(x - step)) / (2.0 * LN_PHI_STEP)
        assert abs(derivative - centre.ln_phi[i]) < LN_PHI_TOLERANCE, (i, derivative, centre.ln_phi[i])
    # Euler's theorem for the homogeneous n G_res: sum x_i ln phi_i = G_res/(R T)
    assert float(x @ centre.ln_phi) == pytest.approx(centre.gibbs / rt, rel=1e-11, abs=1e-13)


def test_auto_root_is_the_one_of_lower_gibbs_energy(fluid):
    model, x = fluid({"propane": 1.0}).model("peng-robinson"), np.array([1.0])
    for t, p in ((300.0, 9e5), (300.0, 11e5), (330.0, 16e5), (330.0, 13e5)):
        liquid, vapor = residual(model, t, p, x, "liquid"), residual(model, t, p, x, "vapor")
        assert liquid.molar_volume < vapor.molar_volume  # three roots here
        chosen = residual(model, t, p, x)
        lower = liquid if liquid.gibbs < vapor.gibbs else vapor
        assert chosen.molar_volume == lower.molar_volume and chosen.root == lower.root


@pytest.mark.parametrize("model_name", ["peng-robinson", "soave-redlich-kwong", "virial", "ideal-gas"])
@pytest.mark.parametrize("fractions", [{"methane": 1.0}, {"propane": 1.0}, NATURAL_GAS_5], ids=lambda f: "+".join(f))
def test_batch_equals_one_state_at_a_time(fluid, model_name, fractions):
    fluid_here = fluid(fractions)
    model, x = fluid_here.model(model_name), fluid_here.x
    temperatures, pressures = np.meshgrid(np.linspace(170.0, 520.0, 15), np.geomspace(0.5e5, 120e5, 12))
    if model_name == "virial":  # the truncated virial equation serves at gas densities only
        temperatures, pressures = np.meshgrid(np.linspace(300.0, 520.0, 8), np.geomspace(0.5e5, 10e5, 6))
    batch = residual_batch(model, temperatures, pressures, x)
    assert batch.enthalpy.shape == temperatures.shape
    for index in np.ndindex(temperatures.shape):
        one = residual(model, float(temperatures[index]), float(pressures[index]), x)
        assert batch.enthalpy[index] == pytest.approx(one.enthalpy, rel=1e-9, abs=1e-9)
        assert batch.entropy[index] == pytest.approx(one.entropy, rel=1e-9, abs=1e-12)
        assert batch.compressibility[index] == pytest.approx(one.compressibility, rel=1e-10)
        assert bool(batch.liquid_like[index]) == (one.root == LIQUID_LIKE)
