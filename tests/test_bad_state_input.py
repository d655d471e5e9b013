"""States that cannot exist are refused with a message naming the value;
no NaN ever comes back; component names are resolved or met with suggestions."""

from __future__ import annotations

import math

import numpy as np
import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from thermo.components import UnknownComponentError, resolve_name
from thermo.departures import StateInputError, residual, residual_batch
from thermo.properties import single_phase_state

MODELS = ("peng-robinson", "soave-redlich-kwong", "virial", "ideal-gas")
CALLS = {"residual": residual, "single_phase_state": single_phase_state}


@pytest.mark.parametrize("call", list(CALLS))
@pytest.mark.parametrize("model_name", MODELS)
@pytest.mark.parametrize(
    "temperature, pressure, shown",
    [
        (0.0, 1e5, "temperature 0.0"),
        (-10.0, 1e5, "temperature -10.0"),
        (math.nan, 1e5, "temperature nan"),
        (math.inf, 1e5, "temperature inf"),
        (300.0, 0.0, "pressure 0.0"),
        (300.0, -1e5, "pressure -100000.0"),
        (300.0, math.nan, "pressure nan"),
        (300.0, -math.inf, "pressure -inf"),
    ],
)
def test_impossible_temperature_or_pressure_is_refused_by_name(natural_gas, call, model_name, temperature, pressure, shown):
    model = natural_gas.model(model_name)
    with pytest.raises(StateInputError) as caught:
        CALLS[call](model, temperature, pressure, natural_gas.x)
    assert shown in str(caught.value)


@pytest.mark.parametrize("call", list(CALLS))
@pytest.mark.parametrize("model_name", MODELS)
@pytest.mark.parametrize(
    "fractions, shown",
    [
        ([0.85, 0.07, 0.04, 0.02, 0.03], "sum to 1.01"),  # sums to 1.01
        ([0.5, 0.2, 0.1, 0.1, 0.0], "sum to 0.9"),
        ([1.1, -0.1, 0.0, 0.0, 0.0], "-0.1"),  # sums to 1 but one is negative
        ([0.85, 0.07, math.nan, 0.02, 0.02], "nan"),
    ],
)
def test_impossible_composition_is_refused_by_name(natural_gas, call, model_name, fractions, shown):
    model = natural_gas.model(model_name)
    with pytest.raises(StateInputError) as caught:
        CALLS[call](model, 300.0, 10e5, np.array(fractions))
    message = str(caught.value)
    assert "mole fractions" in message and shown in message


@pytest.mark.parametrize("call", list(CALLS))
@pytest.mark.parametrize("model_name", MODELS)
def test_composition_of_the_wrong_length_is_refused_by_name(natural_gas, call, model_name):
    model = natural_gas.model(model_name)
    with pytest.raises(StateInputError) as caught:
        CALLS[call](model, 300.0, 10e5, np.array([0.5, 0.5]))
    message = str(caught.value)
    assert "2 entries" in message and "5 components" in message and "methane" in message


@pytest.mark.parametrize("model_name", MODELS)
@pytest.mark.parametrize("t, p", [(0.0, 1e5), (300.0, -1.0), (math.nan, 1e5), (300.0, math.inf)])
def test_batch_refuses_any_impossible_state(natural_gas, model_name, t, p):
    model = natural_gas.model(model_name)
    temperatures = np.array([300.0, t, 310.0])
    pressures = np.array([1e5, p, 2e5])
    with pytest.raises(StateInputError, match="temperature and pressure"):
        residual_batch(model, temperatures, pressures, natural_gas.x)


def assert_finite(res) -> None:
    values = [res.enthalpy, res.entropy, res.gibbs, res.compressibility, res.molar_volume, *res.ln_phi]
    assert all(math.isfinite(v) for v in values), res
    assert res.compressibility > 0.0 and res.molar_volume > 0.0


@settings(max_examples=60, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(
    model_name=st.sampled_from(MODELS),
    t=st.floats(min_value=1e-3, max_value=1e5),
    p=st.floats(min_value=1e-3, max_value=1e10),
    methane_share=st.floats(min_value=0.0, max_value=1.0),
)
def test_any_positive_state_gives_finite_results_or_a_clear_refusal(fluid, model_name, t, p, methane_share):
    """Over 1 mK - 100 000 K and 1 mPa - 10 GPa: either every number is finite
    or StateInputError says why (e.g. the virial equation past its density)."""
    here = fluid({"methane": methane_share, "n-butane": 1.0 - methane_share + 1e-12, "nitrogen": 0.05})
    model = here.model(model_name)
    try:
        res = residual(model, t, p, here.x)
    except StateInputError as error:
        assert str(error)
        return
    assert_finite(res)
    state = single_phase_state(model, t, p, here.x)
    assert math.isfinite(state.enthalpy) and math.isfinite(state.entropy)
    batch = residual_batch(model, np.array([t]), np.array([p]), here.x)
    assert np.isfinite(batch.enthalpy).all() and np.isfinite(batch.entropy).all()


def test_misspelled_component_name_suggests_the_right_one():
    with pytest.raises(UnknownComponentError) as caught:
        resolve_name("methan")
    assert "methane" in caught.value.suggestions
    assert "'methane'" in str(caught.value) and "methan" in str(caught.value)


def test_nonsense_component_name_says_where_to_look():
    with pytest.raises(UnknownComponentError) as caught:
        resolve_name("unobtainium")
    assert "unobtainium" in str(caught.value)


@pytest.mark.parametrize(
    "written, canonical",
    [("CH4", "methane"), ("ch4", "methane"), ("co2", "carbon-dioxide"), ("CO2", "carbon-dioxide"),
     ("N2", "nitrogen"), ("H2O", "water"), ("Methane", "methane"), (" propane ", "propane")],
)
def test_formulas_and_any_case_resolve(written, canonical):
    assert resolve_name(written) == canonical


def test_user_defined_names_resolve_as_written():
    assert resolve_name("my-oil", user_names=("my-oil",)) == "my-oil"
