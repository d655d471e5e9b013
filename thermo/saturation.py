"""Saturation of a pure component on a cubic equation of state: the pressure
at which its liquid and vapor roots have equal fugacities, the temperature at
a given pressure, and the heat of vaporization.

The vapor pressure lies between the model's two spinodal pressures at T
(where dP/dV = 0), and ln phi_L - ln phi_V falls monotonically in ln P there
with slope Z_L - Z_V, so Newton's method in ln P keeps a bracket and falls
back to bisection. The first guess is the Lee-Kesler vapor-pressure
correlation (Lee and Kesler, AIChE J. 21 (1975) 510). Saturation
temperatures follow from the vapor-pressure curve by Newton's method on
ln P against 1/T with the Clapeyron slope, bracketed below the critical
temperature.

The ideal-gas and virial models describe vapor only: they have no liquid
root, so saturation requests on them raise FlashError.

SI units: K, Pa, J/mol, m3/mol.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from .components import R
from .fugacity import kernel_for
from .flash_support import FlashError
from .models.base import PRESSURE_EXPLICIT
from .models.cubic import CubicModel

SATURATION_TOLERANCE = 1e-12  # |ln phi_L - ln phi_V| of a converged saturation point
VERIFY_TOLERANCE = 1e-8


@dataclass(frozen=True)
class SaturationPoint:
    """A pure component's saturation state: T (K), P (Pa), liquid and vapor
    molar volumes (m3/mol), residual enthalpies (J/mol), compressibilities,
    and the fugacity mismatch |ln phi_L - ln phi_V| left at convergence."""

    temperature: float
    pressure: float
    liquid_volume: float
    vapor_volume: float
    liquid_residual_enthalpy: float
    vapor_residual_enthalpy: float
    liquid_compressibility: float
    vapor_compressibility: float
    fugacity_error: float

    @property
    def vaporization_enthalpy(self) -> float:
        """H_vapor - H_liquid, J/mol."""
        return self.vapor_residual_enthalpy - self.liquid_residual_enthalpy


def lee_kesler_pressure(tc: float, pc: float, omega: float, temperature: float) -> float:
    """Lee-Kesler estimate of the vapor pressure, Pa, at T (K)
    (Lee and Kesler, AIChE J. 21 (1975) 510)."""
    tr = temperature / tc
    f0 = 5.92714 - 6.09648 / tr - 1.28862 * math.log(tr) + 0.169347 * tr**6
    f1 = 15.2518 - 15.6875 / tr - 13.4721 * math.log(tr) + 0.43577 * tr**6
    return pc * math.exp(f0 + omega * f1)


def _require_liquid_model(model, what: str) -> CubicModel:
    if model.family != PRESSURE_EXPLICIT or not isinstance(model, CubicModel):
        raise FlashError(
            f"{what}: the {model.name} model describes vapor only (it has no liquid root), "
            "so it has no saturation curve; its streams are single-phase vapor. "
            "Use peng-robinson or soave-redlich-kwong for condensation and boiling."
        )
    return model


def _component_index(model, component) -> int:
    if isinstance(component, str):
        try:
            return model.mixture.index(component)
        except ValueError:
            raise FlashError(
                f"component {component!r} is not in the mixture ({', '.join(model.mixture.names)})"
            ) from None
    index = int(component)
    if not 0 <= index < model.mixture.size:
        raise FlashError(f"component index {index} is outside the mixture of {model.mixture.size} components")
    return index


def _spinodal_pressures(state, b: float, a: float) -> tuple[float, float] | None:
    """The pressures (Pa) of the liquid and vapor spinodals of a pure
    component at the state's T, or None above the model's critical point."""
    kernel = state.kernel
    t = state.temperature
    d1, d2 = kernel.delta1, kernel.delta2
    alpha = a / (b * R * t)
    # dP/dV = 0 in v = V/b:  ((v+d1)(v+d2))^2 - alpha (2v + d1 + d2)(v-1)^2 = 0
    s, p = d1 + d2, d1 * d2
    quadratic = np.array([1.0, s, p])  # (v+d1)(v+d2)
    left = np.polymul(quadratic, quadratic)
    right = alpha * np.polymul([2.0, s], [1.0, -2.0, 1.0])
    roots = np.roots(np.polysub(left, np.concatenate(([0.0], right))))
    real = sorted(r.real for r in roots if abs(r.imag) < 1e-9 * max(1.0, abs(r.real)) and r.real > 1.0)
    if len(real) < 2:
        return None
    v_liquid, v_vapor = real[0], real[-1]

    def pressure(v):
        return R * t / b * (1.0 / (v - 1.0) - alpha / ((v + d1) * (v + d2)))

    return pressure(v_liquid), pressure(v_vapor)


def _both_roots(state, x):
    """(ln phi, Z) of the liquid and the vapor root at the state's T and P;
    None where the cubic has one real root there."""
    big_a = float(x @ state.big_a @ x)
    big_b = float(state.big_b @ x)
    roots = state._roots(big_a, big_b)
    if len(roots) < 2:
        return None
    liquid, z_l, _ = state.ln_phi(x, "liquid")
    vapor, z_v, _ = state.ln_phi(x, "vapor")
    return float(liquid[0]), z_l, float(vapor[0]), z_v


def _saturation_pressure(kernel, temperature: float, guess: float | None) -> SaturationPoint:
    tc, pc, omega = float(kernel.tc[0]), float(kernel.pc[0]), float(kernel.omega[0])
    where = f"{kernel.model.name} saturation of {kernel.model.mixture.names[kernel.active[0]]} at T = {temperature:.8g} K"
    if not (math.isfinite(temperature) and temperature > 0.0):
        raise FlashError(f"{where}: temperature must be a positive number of kelvin")
    if temperature >= tc:
        raise FlashError(
            f"{where}: at or above the critical temperature {tc:.6g} K there is no vapor-liquid saturation"
        )
    x = np.ones(1)
    probe = kernel.at(temperature, pc)
    a = float(probe.a[0, 0])
    b = float(kernel.b[0])
    spinodal = _spinodal_pressures(probe, b, a)
    if spinodal is None:
        raise FlashError(f"{where}: the model shows no two-phase region at this temperature")
    p_liquid_spinodal, p_vapor_spinodal = spinodal
    low = max(p_liquid_spinodal, 0.0)
    high = p_vapor_spinodal
    if low <= 0.0:
        low = high * 1e-300 if high > 0.0 else 1e-300
    ln_low, ln_high = math.log(low), math.log(high)
    try:
        estimate = guess if guess is not None else lee_kesler_pressure(tc, pc, omega, temperature)
        ln_p = math.log(estimate)
    except (OverflowError, ValueError):  # far below any triple point the correlation over- or underflows
        ln_p = math.nan
    if not (ln_low < ln_p < ln_high):
        ln_p = 0.5 * (ln_low + ln_high) if ln_low > -600.0 else ln_high - 5.0
    mismatch = math.nan
    lost_roots = 0
    for _ in range(200):
        state = kernel.at(temperature, math.exp(ln_p))
        roots = _both_roots(state, x)
        if roots is None:
            # Rounding at a bracket end; move inside.
            lost_roots += 1
            if lost_roots > 60:
                raise FlashError(
                    f"{where} (reduced temperature {temperature / tc:.3g}): the model's liquid and vapor roots "
                    "cannot both be resolved in double precision at the tiny vapor pressures there; ask at a "
                    "higher temperature"
                )
            ln_p = 0.5 * (ln_low + ln_high)
            continue
        ln_phi_l, z_l, ln_phi_v, z_v = roots
        mismatch = ln_phi_l - ln_phi_v
        if abs(mismatch) < SATURATION_TOLERANCE:
            break
        if mismatch > 0.0:
            ln_low = ln_p
        else:
            ln_high = ln_p
        candidate = ln_p - mismatch / (z_l - z_v)
        if not (ln_low < candidate < ln_high):
            candidate = 0.5 * (ln_low + ln_high)
        if abs(candidate - ln_p) < 1e-15 and abs(mismatch) < VERIFY_TOLERANCE:
            break
        ln_p = candidate
    else:
        raise FlashError(f"{where}: liquid and vapor fugacities did not meet (last mismatch {mismatch:.3g})")
    if not abs(mismatch) < VERIFY_TOLERANCE:
        raise FlashError(f"{where}: liquid and vapor fugacities differ by {mismatch:.3g} in ln f")
    pressure = math.exp(ln_p)
    liquid = state.derivatives(x, "liquid")
    vapor = state.derivatives(x, "vapor")
    return SaturationPoint(
        temperature=temperature,
        pressure=pressure,
        liquid_volume=liquid.molar_volume,
        vapor_volume=vapor.molar_volume,
        liquid_residual_enthalpy=liquid.enthalpy,
        vapor_residual_enthalpy=vapor.enthalpy,
        liquid_compressibility=liquid.compressibility,
        vapor_compressibility=vapor.compressibility,
        fugacity_error=abs(float(liquid.ln_phi[0] - vapor.ln_phi[0])),
    )


def _real_number(value, what: str, unit: str) -> float:
    """``value`` as a float, or a FlashError saying it is not a number."""
    if isinstance(value, bool) or not isinstance(value, (int, float, np.floating, np.integer)):
        raise FlashError(f"saturation: the {what} {value!r} is not a number of {unit}")
    return float(value)


def _guarded(where: str, compute):
    """compute(), with a numerical breakdown (overflow, a domain error, a
    singular matrix) turned into a FlashError naming the state."""
    try:
        with np.errstate(all="ignore"):
            return compute()
    except FlashError:
        raise
    except (ArithmeticError, ValueError, np.linalg.LinAlgError) as error:
        raise FlashError(f"{where}: numerical breakdown ({error})") from None


def saturation_point(model, temperature: float, component: int | str) -> SaturationPoint:
    """The saturation state of pure ``component`` (index into the model's
    mixture, or its name) at ``temperature`` (K)."""
    temperature = _real_number(temperature, "temperature", "kelvin")
    model = _require_liquid_model(model, f"saturation at T = {temperature:.8g} K")
    index = _component_index(model, component)
    where = f"{model.name} saturation of {model.mixture.names[index]} at T = {temperature:.8g} K"
    return _guarded(where, lambda: _saturation_pressure(kernel_for(model, (index,)), temperature, None))


def saturation_pressure(model, temperature: float, component: int | str) -> float:
    """Vapor pressure, Pa, of pure ``component`` (index or name) at
    ``temperature`` (K), from equal liquid and vapor fugacities."""
    return saturation_point(model, temperature, component).pressure


def vaporization_enthalpy(model, temperature: float, component: int | str) -> float:
    """Heat of vaporization, J/mol, of pure ``component`` at ``temperature``
    (K): H_vapor - H_liquid at the model's saturation pressure."""
    return saturation_point(model, temperature, component).vaporization_enthalpy


def saturation_temperature_point(model, pressure: float, component: int | str) -> SaturationPoint:
    """The saturation state of pure ``component`` at ``pressure`` (Pa)."""
    pressure = _real_number(pressure, "pressure", "pascals")
    model = _require_liquid_model(model, f"saturation at P = {pressure:.8g} Pa")
    index = _component_index(model, component)
    where = f"{model.name} saturation of {model.mixture.names[index]} at P = {pressure:.8g} Pa"
    return _guarded(where, lambda: _saturation_temperature(model, pressure, index))


def _saturation_temperature(model, pressure: float, index: int) -> SaturationPoint:
    kernel = kernel_for(model, (index,))
    tc, pc, omega = float(kernel.tc[0]), float(kernel.pc[0]), float(kernel.omega[0])
    name = model.mixture.names[index]
    where = f"{model.name} saturation of {name} at P = {pressure:.8g} Pa"
    if not (math.isfinite(pressure) and pressure > 0.0):
        raise FlashError(f"{where}: pressure must be a positive number of pascals")
    if pressure >= pc:
        raise FlashError(
            f"{where}: at or above the critical pressure {pc:.6g} Pa there is no vapor-liquid saturation"
        )
    # Wilson's form of the vapor-pressure curve inverted for a first guess.
    guess = tc / (1.0 - math.log(pressure / pc) / (5.373 * (1.0 + omega)))
    # ln P is close to linear in 1/T: work in u = 1/T, bracketed by [1/Tc, 1/T_low].
    u_high = 1.0 / (0.05 * tc)
    u_low = 1.0 / tc
    u = min(max(1.0 / guess, u_low * (1.0 + 1e-9)), u_high)
    point = None
    next_guess = None
    for _ in range(100):
        t = 1.0 / u
        try:
            point = _saturation_pressure(kernel, t, next_guess)
        except FlashError as error:
            raise FlashError(f"{where}: on the way, {error}") from None
        miss = math.log(point.pressure / pressure)
        if abs(miss) < 1e-13:
            break
        if miss > 0.0:
            u_low = u  # too hot: the answer is colder, larger 1/T
        else:
            u_high = u
        # Clapeyron: d ln P / d(1/T) = -Hvap / (R dZ)
        slope = -point.vaporization_enthalpy / (R * (point.vapor_compressibility - point.liquid_compressibility))
        candidate = u - miss / slope if slope < 0.0 else 0.5 * (u_low + u_high)
        if not (u_low < candidate < u_high):
            candidate = 0.5 * (u_low + u_high)
        if abs(candidate - u) <= 1e-16 * u:
            break
        next_guess = point.pressure * math.exp(slope * (candidate - u))
        u = candidate
    else:
        raise FlashError(f"{where}: the saturation temperature did not converge")
    if not abs(math.log(point.pressure / pressure)) < 1e-9:
        raise FlashError(f"{where}: the saturation temperature search ended {point.pressure:.8g} Pa off")
    return point


def saturation_temperature(model, pressure: float, component: int | str) -> float:
    """Boiling temperature, K, of pure ``component`` (index or name) at
    ``pressure`` (Pa)."""
    return saturation_temperature_point(model, pressure, component).temperature
