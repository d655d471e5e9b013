"""Pure-component saturation on the model's own curve: equal fugacities, the
Clapeyron equation, the inverse pair P_sat(T) and T_sat(P), and clear errors
(FlashError naming the state) where no saturation exists or the model cannot
give it; bubble and dew points of random mixtures, verified or refused the
same way."""

from __future__ import annotations

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from thermo.components import library
from thermo.departures import residual
from thermo.flash import (
    FlashError,
    envelope,
    lee_kesler_pressure,
    saturation_point,
    saturation_pressure,
    saturation_temperature,
    vaporization_enthalpy,
)
from thermo.mixture import make_mixture
from thermo.models import make_model

NAMES = ["methane", "ethane", "propane", "n-butane", "carbon-dioxide", "nitrogen", "water", "n-hexane"]


@pytest.fixture(scope="module", params=["peng-robinson", "soave-redlich-kwong"])
def model(request):
    return make_model(request.param, make_mixture(NAMES))


def reduced(model, i, tr):
    return tr * model.mixture.critical_temperature[i]


@pytest.mark.parametrize("tr", [0.5, 0.7, 0.9, 0.99])
def test_equal_fugacities_at_saturation(model, tr):
    for i, name in enumerate(NAMES):
        t = reduced(model, i, tr)
        p = saturation_pressure(model, t, i)
        x = np.zeros(len(NAMES))
        x[i] = 1.0
        liquid = residual(model, t, p, x, "liquid")
        vapor = residual(model, t, p, x, "vapor")
        assert liquid.molar_volume < vapor.molar_volume, name
        assert abs(liquid.ln_phi[i] - vapor.ln_phi[i]) < 1e-8, name


@pytest.mark.parametrize("tr", [0.6, 0.8, 0.95])
def test_clapeyron_on_the_models_own_curve(model, tr):
    """dP_sat/dT = H_vap / (T (V_vap - V_liq)), the model against itself, to 1e-5."""
    for i, name in enumerate(NAMES):
        t = reduced(model, i, tr)
        step = 1e-5 * t  # truncation error ~1e-9, rounding ~1e-8 with P_sat converged to 1e-12 in ln f
        slope = (saturation_pressure(model, t + step, i) - saturation_pressure(model, t - step, i)) / (2 * step)
        point = saturation_point(model, t, i)
        clapeyron = point.vaporization_enthalpy / (t * (point.vapor_volume - point.liquid_volume))
        assert slope == pytest.approx(clapeyron, rel=1e-5), name


def test_saturation_temperature_inverts_saturation_pressure(model):
    for i, name in enumerate(NAMES):
        for tr in (0.55, 0.75, 0.98):
            t = reduced(model, i, tr)
            p = saturation_pressure(model, t, i)
            assert saturation_temperature(model, p, i) == pytest.approx(t, rel=1e-9), name


def test_components_by_name(model):
    assert saturation_pressure(model, 300.0, "propane") == saturation_pressure(model, 300.0, NAMES.index("propane"))
    with pytest.raises(FlashError, match="not in the mixture"):
        saturation_pressure(model, 300.0, "benzene")


def test_vaporization_enthalpy_falls_to_zero_at_the_critical_point(model):
    i = NAMES.index("propane")
    values = [vaporization_enthalpy(model, reduced(model, i, tr), i) for tr in (0.6, 0.8, 0.95, 0.99, 0.999)]
    assert all(b < a for a, b in zip(values, values[1:]))
    assert values[-1] < 0.15 * values[0]
    assert values[0] > 0.0


def test_lee_kesler_first_guess_is_close(model):
    # The estimate only starts the search; within 10 % it puts Newton's method in its quadratic range.
    for i, c in enumerate(model.mixture.components):
        if c.name == "water":
            continue  # a polar fluid: the corresponding-states estimate is rougher
        for tr in (0.6, 0.8, 0.95):
            t = tr * c.critical_temperature
            estimate = lee_kesler_pressure(c.critical_temperature, c.critical_pressure, c.acentric_factor, t)
            assert estimate == pytest.approx(saturation_pressure(model, t, i), rel=0.1), c.name


def test_no_saturation_at_or_above_the_critical_point(model):
    i = NAMES.index("ethane")
    tc = model.mixture.critical_temperature[i]
    pc = model.mixture.critical_pressure[i]
    with pytest.raises(FlashError, match="critical temperature"):
        saturation_pressure(model, tc * 1.001, i)
    with pytest.raises(FlashError, match="critical pressure"):
        saturation_temperature(model, pc * 1.001, i)
    with pytest.raises(FlashError, match="positive"):
        saturation_pressure(model, -5.0, i)


@pytest.mark.parametrize("name", ["virial", "ideal-gas"])
def test_models_without_a_liquid_refuse_saturation(name):
    model = make_model(name, make_mixture(["propane"]))
    with pytest.raises(FlashError, match="vapor only"):
        saturation_pressure(model, 300.0, 0)
    with pytest.raises(FlashError, match="vapor only"):
        saturation_temperature(model, 5e5, 0)
    with pytest.raises(FlashError, match="vapor only"):
        vaporization_enthalpy(model, 300.0, 0)


# --- clear errors where the model cannot give a saturation point ------------------
@pytest.mark.parametrize("name, tr", [("methane", 0.1), ("methane", 0.02), ("n-hexane", 0.2), ("water", 0.2)])
def test_far_below_the_critical_point_is_a_clear_error(name, tr):
    # Below about Tr 0.25 the vapor pressure is so small (1e-6 Pa and less) that
    # the cubic's liquid root is lost in double precision; this once ended in an
    # UnboundLocalError from the root search.
    model = make_model("peng-robinson", make_mixture([name]))
    t = tr * model.mixture.critical_temperature[0]
    with pytest.raises(FlashError, match="cannot both be resolved") as caught:
        saturation_pressure(model, t, 0)
    assert name in str(caught.value) and "T = " in str(caught.value)


def test_a_tiny_temperature_is_a_clear_error():
    # Lee-Kesler's correlation overflows here (helium's negative acentric factor).
    model = make_model("peng-robinson", make_mixture(["helium"]))
    with pytest.raises(FlashError, match="helium"):
        saturation_pressure(model, 1e-5, 0)


@pytest.mark.parametrize("value", ["300", None, [300.0]])
def test_a_value_that_is_not_a_number_is_a_clear_error(value):
    model = make_model("peng-robinson", make_mixture(["propane"]))
    with pytest.raises(FlashError, match="not a number"):
        saturation_pressure(model, value, 0)
    with pytest.raises(FlashError, match="not a number"):
        saturation_temperature(model, value, 0)


COMPONENTS = sorted(library())


@settings(max_examples=60, deadline=None)
@given(st.sampled_from(COMPONENTS), st.sampled_from(["peng-robinson", "soave-redlich-kwong"]),
       st.floats(0.01, 1.2), st.floats(-8.0, 0.1))
def test_any_component_at_any_state_saturates_or_raises_flash_error(name, model_name, tr, log_pr):
    """Equal fugacities at the answer, or FlashError naming the component;
    never another exception."""
    model = make_model(model_name, make_mixture([name]))
    tc = model.mixture.critical_temperature[0]
    pc = model.mixture.critical_pressure[0]
    try:
        point = saturation_point(model, tr * tc, 0)
    except FlashError as error:
        assert name in str(error)
    else:
        x = np.ones(1)
        liquid = residual(model, point.temperature, point.pressure, x, "liquid")
        vapor = residual(model, point.temperature, point.pressure, x, "vapor")
        assert abs(liquid.ln_phi[0] - vapor.ln_phi[0]) < 1e-8
    try:
        t = saturation_temperature(model, pc * 10.0**log_pr, 0)
    except FlashError as error:
        assert name in str(error)
    else:
        assert 0.0 < t < tc
        assert saturation_pressure(model, t, 0) == pytest.approx(pc * 10.0**log_pr, rel=1e-8)


@settings(max_examples=25, deadline=None)
@given(st.lists(st.sampled_from(COMPONENTS), min_size=2, max_size=4, unique=True),
       st.lists(st.floats(0.05, 1.0), min_size=4, max_size=4),
       st.floats(80.0, 600.0), st.floats(5.0, 7.5), st.sampled_from([0.0, 1.0]))
def test_bubble_and_dew_points_of_any_mixture_or_flash_error(names, weights, t, log_p, fraction):
    """A bubble or dew point of a random library mixture is verified (equal
    fugacities) or FlashError names the request: its state and composition."""
    model = make_model("peng-robinson", make_mixture(names))
    z = np.array(weights[: len(names)]) / sum(weights[: len(names)])
    for spec in ({"temperature": t}, {"pressure": 10.0**log_p}):
        try:
            point = envelope(model, z, fraction, **spec)
        except FlashError as error:
            message = str(error)
            assert "composition" in message and ("T = " in message or "P = " in message)
        else:
            assert point.fugacity_error < 1e-8
