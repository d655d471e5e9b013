"""The rules that flag a solved flowsheet: cautions and violations.

A *violation* is a specification that breaks the second law or the nature of
a unit (entropy destroyed, heat flowing uphill, a valve raising pressure); it
makes the sheet's status "violations" and the command line exit 1.
A *caution* is a hazard or a doubt about a result (cold metal, a compressor
inlet with liquid, a state where the model is weak); it has a severity,
"notice" < "warning" < "danger", and never changes the status.

Every rule is listed in ``RULES`` with its code (statepath's own), its kind,
severity, what it checks and where it comes from.

Where the flags go:
* rules about one stream's state (cold-metal, hot-metal, over-pressure,
  near-critical, cp-range, virial-out-of-range) are checked on every stream:
  for a stream a unit writes, the caution is listed under that unit, with
  ``where`` = "streams.NAME"; for a feed, in the flowsheet-wide list;
* rules about a unit (machine inlets, valve flashing, discharge temperature,
  and every violation) are listed under the unit, ``where`` = "units.NAME".

Every caution's message states the number, the limit it is held against, and
ends deferring to local codes and licensed engineering practice.

Adding a rule: a ``Rule`` in ``RULES`` (code, kind, severity for a caution,
what it checks, its source), the check in ``stream_cautions``,
``unit_cautions`` or ``unit_violations`` building its message with
``_caution`` (which appends ``DEFER``) or ``Violation``, and a test in
``tests/test_cautions.py`` calling ``check_caution``/``check_violation`` with
the code (a test there fails for any rule without one).
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Sequence

import numpy as np

from .equipment.common import Flow, UnitOutcome
from .properties import pseudo_critical
from .results import Caution, Violation
from .spec import Limits
from .state import TWO_PHASE

DEFER = "Defer to local codes and licensed engineering practice."

CAUTION = "caution"
VIOLATION = "violation"

#: Negative entropy generation is a violation beyond this fraction of the
#: unit's entropy flows (flash tolerances leave a few 1e-12 of noise).
ENTROPY_TOLERANCE = 5e-9
#: A temperature cross in an exchanger beyond this many kelvin.
CROSS_TOLERANCE_K = 1e-6
#: A pressure change across a unit counts beyond this fraction of the inlet pressure.
PRESSURE_TOLERANCE = 1e-9
#: Near-critical: reduced temperature and pressure (Kay's rule) both within these of 1.
NEAR_CRITICAL_TR = 0.05
NEAR_CRITICAL_PR = 0.10


@dataclass(frozen=True)
class Rule:
    """One rule: ``code``, ``kind`` (caution or violation), ``severity``
    (cautions only), what it checks, and where the rule comes from."""

    code: str
    kind: str
    severity: str | None
    checks: str
    source: str


def _rules(*rules: Rule) -> dict[str, Rule]:
    return {rule.code: rule for rule in rules}


RULES: dict[str, Rule] = _rules(
    Rule("cold-metal", CAUTION, "danger",
         "a stream colder than the site's min_temperature (often just after a throttle)",
         "[limits].min_temperature; default -29 degC, the usual rating of carbon-steel piping "
         "without impact testing (common practice, no published source)"),
    Rule("hot-metal", CAUTION, "warning", "a stream hotter than the site's max_temperature",
         "[limits].max_temperature (no default)"),
    Rule("over-pressure", CAUTION, "danger", "a stream above the site's max_pressure",
         "[limits].max_pressure (no default)"),
    Rule("hot-discharge", CAUTION, "warning",
         "a compressor discharge hotter than the site's max_discharge_temperature",
         "[limits].max_discharge_temperature; default 150 degC (common practice, no published source)"),
    Rule("liquid-at-machine-inlet", CAUTION, "danger",
         "liquid (vapor fraction below 1) entering a compressor or an expander",
         "machines built for gas are damaged by liquid (common practice, no published source)"),
    Rule("vapor-at-pump-inlet", CAUTION, "danger",
         "vapor (vapor fraction above 0) entering a pump",
         "vapor at a pump inlet means cavitation (common practice, no published source)"),
    Rule("valve-outlet-flashes", CAUTION, "warning",
         "a single-phase stream leaving a valve as two phases",
         "two-phase flow after a throttle brings erosion, vibration and a larger outlet line "
         "(common practice, no published source)"),
    Rule("near-critical", CAUTION, "warning",
         "a state near a critical point (the engine's note, or Kay's-rule Tr and Pr both near 1)",
         "properties change steeply there and cubic equations are least accurate near the critical "
         "point (Poling, Prausnitz and O'Connell, The Properties of Gases and Liquids, 5th ed., 2001)"),
    Rule("cp-range", CAUTION, "notice",
         "a temperature outside the range of a component's ideal-gas Cp polynomial",
         "the polynomial's stated temperature range in the component data"),
    Rule("virial-out-of-range", CAUTION, "warning",
         "the truncated virial equation used where the third-virial term it leaves out would change Z "
         "by more than 2 %, beyond half the critical density, or on a stream that would condense",
         "Smith, Van Ness and Abbott, Introduction to Chemical Engineering Thermodynamics, 8th ed., Sec. 3.7: "
         "the generalized virial correlation serves where Z is about linear in pressure (within 2 % of "
         "Lee/Kesler), a range that shrinks as the reduced temperature falls; the left-out term from Orbey "
         "and Vera's third virial coefficient, AIChE J. 29 (1983) 107 (thermo.models.virial.MAX_TRUNCATION); "
         "V/Vc of at least 2 as a backstop (common practice, no published source); condensation by "
         "Wilson's K-values (Wilson, 1968, as given by Michelsen and Mollerup, 2007, ch. 9), asked only when "
         "every component is below its critical temperature"),
    Rule("negative-entropy-generation", VIOLATION, None,
         "a unit that would destroy entropy (beyond a few 1e-9 of its entropy flows)",
         "the second law of thermodynamics"),
    Rule("medium-too-cold", VIOLATION, None,
         "a heating medium colder than the stream it heats (at its hottest point)",
         "the second law: heat flows only from hotter to colder"),
    Rule("medium-too-hot", VIOLATION, None,
         "a cooling medium hotter than the stream it cools (at its coldest point)",
         "the second law: heat flows only from hotter to colder"),
    Rule("heater-removes-heat", VIOLATION, None, "a heater whose specification makes it cool the stream",
         "the nature of the unit"),
    Rule("cooler-adds-heat", VIOLATION, None, "a cooler whose specification makes it heat the stream",
         "the nature of the unit"),
    Rule("temperature-cross", VIOLATION, None,
         "an exchanger whose cold side is hotter than its hot side at any of its profile slices",
         "the second law: heat flows only from hotter to colder"),
    Rule("exchanger-heat-reversed", VIOLATION, None,
         "an exchanger whose specification makes heat flow from the cold side to the hot side",
         "the nature of the unit"),
    Rule("valve-raises-pressure", VIOLATION, None, "a valve whose outlet pressure is above its inlet's",
         "a throttle only lowers pressure"),
    Rule("expander-raises-pressure", VIOLATION, None, "an expander whose outlet pressure is above its inlet's",
         "an expander only lowers pressure"),
    Rule("compressor-lowers-pressure", VIOLATION, None,
         "a compressor whose outlet pressure is below its inlet's", "a compressor only raises pressure"),
    Rule("pump-lowers-pressure", VIOLATION, None, "a pump whose outlet pressure is below its inlet's",
         "a pump only raises pressure"),
    Rule("site-limit-exceeded", VIOLATION, None,
         "a stream a unit writes crosses a value of the site's [limits] (the cautions cold-metal, hot-metal, "
         "over-pressure and hot-discharge)",
         "the flowsheet contract: a solved sheet with design-limit violations exits 1, so a check in CI fails"),
    Rule("mixer-raises-pressure", VIOLATION, None,
         "a mixer whose outlet pressure is above its lowest inlet pressure",
         "an adiabatic mixer without a machine cannot lift a stream's pressure"),
)


#: Cautions that hold a state against a value of the site's [limits]: crossing
#: one at a unit's outlet is a design-limit violation as well, listed under
#: the unit as "site-limit-exceeded", so that ``statepath check`` fails on it.
SITE_LIMIT_CAUTIONS = ("cold-metal", "hot-metal", "over-pressure", "hot-discharge")


def limit_violations(cautions: Sequence[Caution], *, where: str) -> list[Violation]:
    """A "site-limit-exceeded" violation for each caution of ``cautions``
    that crosses a [limits] value; ``where`` names the unit."""
    found = []
    for caution in cautions:
        if caution.code in SITE_LIMIT_CAUTIONS:
            what = caution.message.removesuffix(DEFER).strip()
            found.append(Violation(
                "site-limit-exceeded",
                f"{caution.where or where} crosses a design limit ({caution.code}): {what} "
                "Change the specification, or the [limits] value if the equipment is rated for it.",
                where))
    return found


def _temperature(kelvin: float) -> str:
    return f"{kelvin - 273.15:.1f} degC ({kelvin:.2f} K)"


def _pressure(pascal: float) -> str:
    return f"{pascal / 1e5:.4g} bar abs"


def _caution(code: str, message: str, where: str, severity: str | None = None) -> Caution:
    return Caution(code, severity or RULES[code].severity, f"{message} {DEFER}", where)


# ------------------------------------------------------------------ streams


def stream_cautions(state, *, where: str, model, limits: Limits) -> list[Caution]:
    """Cautions about one stream's ``state`` against the site ``limits``
    and the ``model``'s range; ``where`` names the stream ("streams.NAME")."""
    found: list[Caution] = []
    t, p = state.temperature, state.pressure
    if limits.min_temperature_K is not None and t < limits.min_temperature_K:
        found.append(_caution(
            "cold-metal",
            f"Temperature {_temperature(t)} is below the site's min_temperature {_temperature(limits.min_temperature_K)}: "
            "piping and vessels may be too cold for their material (brittle fracture). Heat the stream "
            "before the pressure drop, or use material rated for this temperature.",
            where))
    if limits.max_temperature_K is not None and t > limits.max_temperature_K:
        found.append(_caution(
            "hot-metal",
            f"Temperature {_temperature(t)} is above the site's max_temperature {_temperature(limits.max_temperature_K)}.",
            where))
    if limits.max_pressure_Pa is not None and p > limits.max_pressure_Pa:
        found.append(_caution(
            "over-pressure",
            f"Pressure {_pressure(p)} is above the site's max_pressure {_pressure(limits.max_pressure_Pa)}.",
            where))
    found.extend(_near_critical(state, where, model))
    found.extend(_cp_range(state, where, model.mixture))
    found.extend(_virial_range(state, where, model))
    return found


def _near_critical(state, where: str, model) -> list[Caution]:
    x = state.composition
    tc, pc = pseudo_critical(model.mixture, x)
    tr, pr = state.temperature / tc, state.pressure / pc
    noted = any("near-critical" in note for note in state.notes)
    if not noted and not (abs(tr - 1.0) <= NEAR_CRITICAL_TR and abs(pr - 1.0) <= NEAR_CRITICAL_PR):
        return []
    return [_caution(
        "near-critical",
        f"The state at {_temperature(state.temperature)} and {_pressure(state.pressure)} is near a critical point "
        f"(reduced temperature {tr:.3f}, reduced pressure {pr:.3f} against the pseudo-critical "
        f"{tc:.1f} K and {_pressure(pc)}; within {NEAR_CRITICAL_TR:g} and {NEAR_CRITICAL_PR:g} of 1 counts as near): "
        "properties change steeply here and the equation of state is at its least accurate.",
        where)]


def _cp_range(state, where: str, mixture) -> list[Caution]:
    t = state.temperature
    outside = [
        f"{name} ({low:.0f}-{high:.0f} K)"
        for name, xi, low, high in zip(mixture.names, state.composition, mixture.cp_low, mixture.cp_high)
        if xi > 0.0 and not (low <= t <= high)
    ]
    if not outside:
        return []
    return [_caution(
        "cp-range",
        f"Temperature {_temperature(t)} is outside the ideal-gas Cp range of {', '.join(outside)}: "
        "enthalpy and entropy there are extrapolated.",
        where)]


def _virial_range(state, where: str, model) -> list[Caution]:
    from .models.virial import MAX_TRUNCATION, MIN_REDUCED_VOLUME, VirialModel

    if not isinstance(model, VirialModel):
        return []
    t, p, x = state.temperature, state.pressure, state.composition
    left_out = model.truncation_error(t, p, x)
    reduced = model.reduced_volume(t, p, x)
    condensing = _wilson_condensing(model.mixture, t, p, x)
    if left_out <= MAX_TRUNCATION and reduced >= MIN_REDUCED_VOLUME and not condensing:
        return []
    # infinite where the truncated Z is not positive: no gas state at all there
    shown = "more than 1000 %" if left_out > 10.0 else f"about {left_out:.1%}"
    reasons = []
    if left_out > MAX_TRUNCATION or reduced < MIN_REDUCED_VOLUME:
        reasons.append(
            f"the third-virial term it leaves out would change Z by {shown} (its limit is {MAX_TRUNCATION:.0%}), "
            f"and the reduced volume V/Vc is {reduced:.2f} (its limit is at least {MIN_REDUCED_VOLUME:g}): the "
            "gas is too dense, or too cold for its pressure, for Z = 1 + BP/RT, and its enthalpy and entropy "
            "departures are off too")
    if condensing:
        reasons.append("by Wilson's K-value estimate the stream is below its dew point, partly or wholly liquid, "
                       "which a gas-only model cannot show (it reports a gas)")
    return [_caution(
        "virial-out-of-range",
        f"The truncated virial equation is used outside its range at {_temperature(t)}, {_pressure(p)}: "
        f"{'; and '.join(reasons)}. Use a cubic model (peng-robinson or soave-redlich-kwong) for this sheet.",
        where)]


def _wilson_condensing(mixture, temperature: float, pressure: float, x) -> bool:
    """Whether Wilson's K-values put (T, P) below the dew point of ``x``:
    sum x_i / K_i > 1. Asked only when every component present is below its
    critical temperature: with a supercritical one (methane in natural gas)
    Wilson's K-values, which fall without end as P rises, would report a dew
    point above the cricondenbar."""
    from .flash_support import wilson_k

    present = np.asarray(x) > 0.0
    tc = mixture.critical_temperature[present]
    if np.any(tc <= temperature):
        return False
    k = wilson_k(tc, mixture.critical_pressure[present], mixture.acentric_factor[present], temperature, pressure)
    return float(np.sum(np.asarray(x)[present] / k)) > 1.0


# ------------------------------------------------------------------ units


def unit_cautions(unit_type: str, inlets: Sequence[Flow], result: UnitOutcome, *, where: str,
                  limits: Limits) -> list[Caution]:
    """Cautions about a unit of ``unit_type`` with these ``inlets`` and its
    solved ``result`` (outlet-stream cautions come from ``stream_cautions``)."""
    found: list[Caution] = []
    outlets = result.outlets
    if unit_type in ("compressor", "expander"):
        state = inlets[0].state
        if state.vapor_fraction < 1.0 - 1e-9:
            found.append(_caution(
                "liquid-at-machine-inlet",
                f"The {unit_type} inlet is {state.phase} with vapor fraction {state.vapor_fraction:.4g} "
                f"(at {_temperature(state.temperature)}, {_pressure(state.pressure)}); a machine built for gas "
                "needs vapor fraction 1. Add a separator or heat the stream upstream.",
                where))
    if unit_type == "compressor":
        t = outlets[0].state.temperature
        limit = limits.max_discharge_temperature_K
        if limit is not None and t > limit:
            found.append(_caution(
                "hot-discharge",
                f"Discharge temperature {_temperature(t)} is above the site's max_discharge_temperature "
                f"{_temperature(limit)}. Compress in stages with intercooling, or lower the pressure ratio.",
                where))
    if unit_type == "pump":
        state = inlets[0].state
        if state.vapor_fraction > 1e-9:
            found.append(_caution(
                "vapor-at-pump-inlet",
                f"The pump inlet has vapor fraction {state.vapor_fraction:.4g} (at {_temperature(state.temperature)}, "
                f"{_pressure(state.pressure)}): a pump needs liquid. Subcool the feed or raise its pressure.",
                where))
    if unit_type == "valve":
        before, after = inlets[0].state, outlets[0].state
        if after.phase == TWO_PHASE and before.phase != TWO_PHASE:
            found.append(_caution(
                "valve-outlet-flashes",
                f"The valve outlet is two-phase with vapor fraction {after.vapor_fraction:.4g} at "
                f"{_temperature(after.temperature)}, {_pressure(after.pressure)}, from a {before.phase} inlet: "
                "size the valve and the outlet line for two-phase flow.",
                where))
    return found


def _pressure_violation(code: str, what: str, p_in: float, p_out: float, where: str, fix: str) -> Violation:
    return Violation(code, f"{what}: outlet {_pressure(p_out)} against inlet {_pressure(p_in)}. {fix}", where)


def unit_violations(unit_type: str, inlets: Sequence[Flow], result: UnitOutcome, *, where: str) -> list[Violation]:
    """Violations of the second law or of the unit's nature by a unit of
    ``unit_type`` with these ``inlets`` and its solved ``result``."""
    found: list[Violation] = []
    balance = result.balance
    outlets = result.outlets
    if balance.second_law_complete and balance.entropy_generation < -ENTROPY_TOLERANCE * balance.entropy_scale:
        found.append(Violation(
            "negative-entropy-generation",
            f"The unit would destroy entropy: generation {balance.entropy_generation:.6g} W/K is below zero. "
            "Check its specification (an efficiency above 1, a medium on the wrong side of the stream's "
            "temperature, or an outlet state no real unit reaches).",
            where))
    if unit_type in ("heater", "cooler"):
        found.extend(_heat_violations(unit_type, inlets[0], outlets[0], result, where))
    if unit_type == "exchanger":
        details = result.details
        if details.get("heat_passed_W", 0.0) < 0.0:
            found.append(Violation(
                "exchanger-heat-reversed",
                f"The specification makes {-details['heat_passed_W']:.6g} W flow from the cold side to the hot side. "
                "Swap hot and cold connections, or correct the outlet temperature.",
                where))
        if details.get("min_approach_K", 0.0) < -CROSS_TOLERANCE_K:
            fraction = details["min_approach_at_duty_fraction"]
            found.append(Violation(
                "temperature-cross",
                f"Temperature cross: the cold side is {-details['min_approach_K']:.3f} K hotter than the hot side at "
                f"{fraction:.0%} of the duty from the cold end (checked in {details['profile_slices']} slices). "
                "Lower the duty (or the cold outlet temperature, or raise the hot outlet temperature) until the "
                "minimum approach is positive.",
                where))
    p_in = min(f.state.pressure for f in inlets) if inlets else 0.0
    p_out = outlets[0].state.pressure if outlets else p_in
    rises = p_out > p_in * (1.0 + PRESSURE_TOLERANCE)
    falls = p_out < p_in * (1.0 - PRESSURE_TOLERANCE)
    if unit_type == "valve" and rises:
        found.append(_pressure_violation("valve-raises-pressure", "A valve cannot raise pressure", p_in, p_out, where,
                                         "Give an outlet pressure below the inlet pressure, or use a compressor or pump."))
    if unit_type == "expander" and rises:
        found.append(_pressure_violation("expander-raises-pressure", "An expander cannot raise pressure", p_in, p_out,
                                         where, "Give an outlet pressure below the inlet pressure (pressure_ratio below 1)."))
    if unit_type == "compressor" and falls:
        found.append(_pressure_violation("compressor-lowers-pressure", "A compressor cannot lower pressure", p_in,
                                         p_out, where, "Give an outlet pressure above the inlet pressure, or use a valve or expander."))
    if unit_type == "pump" and falls:
        found.append(_pressure_violation("pump-lowers-pressure", "A pump cannot lower pressure", p_in, p_out, where,
                                         "Give an outlet pressure above the inlet pressure (a positive pressure_rise)."))
    if unit_type == "mixer" and rises:
        found.append(_pressure_violation("mixer-raises-pressure",
                                         "A mixer cannot deliver above its lowest inlet pressure", p_in, p_out, where,
                                         "Leave outlet_pressure out, or lower it to the lowest inlet pressure or below."))
    return found


def _heat_violations(unit_type: str, inlet: Flow, outlet: Flow, result: UnitOutcome, where: str) -> list[Violation]:
    found: list[Violation] = []
    q = result.duty or 0.0
    small = 1e-12 * result.balance.scale
    if unit_type == "heater" and q < -small:
        found.append(Violation(
            "heater-removes-heat",
            f"The heater's specification makes it remove {-q:.6g} W (outlet {_temperature(outlet.state.temperature)} "
            f"below inlet {_temperature(inlet.state.temperature)}). Make it a cooler, or raise the outlet temperature.",
            where))
    if unit_type == "cooler" and q > small:
        found.append(Violation(
            "cooler-adds-heat",
            f"The cooler's specification makes it add {q:.6g} W (outlet {_temperature(outlet.state.temperature)} "
            f"above inlet {_temperature(inlet.state.temperature)}). Make it a heater, or lower the outlet temperature.",
            where))
    medium = result.medium_temperature
    if medium is None or abs(q) <= small:
        return found
    t_in, t_out = inlet.state.temperature, outlet.state.temperature
    if q > 0.0 and medium < max(t_in, t_out):
        found.append(Violation(
            "medium-too-cold",
            f"The heating medium at {_temperature(medium)} is colder than the stream it heats, which reaches "
            f"{_temperature(max(t_in, t_out))}: heat cannot flow uphill. Raise medium_temperature above the stream's "
            "outlet temperature, or lower the outlet temperature.",
            where))
    if q < 0.0 and medium > min(t_in, t_out):
        found.append(Violation(
            "medium-too-hot",
            f"The cooling medium at {_temperature(medium)} is hotter than the stream it cools, which reaches "
            f"{_temperature(min(t_in, t_out))}: heat cannot flow uphill. Lower medium_temperature below the stream's "
            "outlet temperature, or raise the outlet temperature.",
            where))
    return found
