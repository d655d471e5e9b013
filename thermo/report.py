"""The machine output of a solved flowsheet: the contract's JSON, SI units.

``result_to_json_dict(result)`` gives exactly the keys of the contract's
"Machine output" section, plus these (the contract allows more keys):

top level
    "components": component names of the sheet, in mixture order
    "solve_order": unit names in the order they were solved
    "recycle": {"tear_streams": [...], "iterations": n}
each stream
    "is_feed", "source_unit" (null for a feed), "loop_estimate" (true for a
    stream written with loop_estimate = true: not a feed, a loop's tear
    stream given a starting state), "compressibility",
    "molar_volume_m3_mol", "notes" (the engine's remarks on the state), and
    "phases" when there are two: [{"phase", "fraction", "composition"}]
each unit
    "path": the three-step breakdown of the unit's change, outlets minus
        inlets, summed with the flows:
        {"real_to_ideal": {"enthalpy_W", "entropy_W_K"}, "ideal_gas_change": {...},
         "ideal_to_real": {...}, "per_stream": {OUTLET: {step: {"enthalpy_J_mol",
         "entropy_J_molK"}}}} where per_stream lists each outlet that has one
        inlet's composition, per mole of that stream;
    "notes": plain-language remarks (e.g. that a heat's second-law check
        needs a medium_temperature);
    "details": unit-specific figures, SI, keys ending in their unit (an
        exchanger's min_approach_K and profile, a compressor's
        isentropic_outlet_temperature_K, ...). For an exchanger, "duty_W" is
        the heat passed from the hot side to the cold side (inside the unit:
        its energy balance has no outside heat).
cautions and violations
    "where": the stream or unit they concern ("streams.NAME", "units.NAME")
errors
    "where" is the key path as a string ("units.choke.outlet_pressure", or
    "" for the whole file); "line" and "file" are added, null when unknown.

Numbers that are not finite are written as null (never NaN).
"""

from __future__ import annotations

import math

import numpy as np

from .results import Caution, SheetResult, SolveError, StreamResult, UnitResult, Violation

PATH_KEYS = ("real_to_ideal", "ideal_gas_change", "ideal_to_real")


def _number(value):
    if value is None:
        return None
    value = float(value)
    return value if math.isfinite(value) else None


def _plain(value):
    """A JSON-ready copy of a details value: floats checked, numpy unwrapped."""
    if isinstance(value, (bool, np.bool_)):
        return bool(value)
    if isinstance(value, (int, np.integer)):
        return int(value)
    if isinstance(value, (float, np.floating)):
        return _number(value)
    if isinstance(value, str) or value is None:
        return value
    if isinstance(value, dict):
        return {str(k): _plain(v) for k, v in value.items()}
    if isinstance(value, (list, tuple, np.ndarray)):
        return [_plain(v) for v in value]
    return str(value)


def _composition(names, x) -> dict[str, float]:
    return {name: _number(value) for name, value in zip(names, x)}


def stream_to_json(stream: StreamResult, component_names) -> dict:
    """One stream in the contract's form plus the extra keys above."""
    state = stream.state
    entry = {
        "temperature_K": _number(state.temperature),
        "pressure_Pa": _number(state.pressure),
        "molar_flow_mol_s": _number(stream.molar_flow),
        "mass_flow_kg_s": _number(stream.mass_flow),
        "vapor_fraction": _number(state.vapor_fraction),
        "phase": state.phase,
        "molar_enthalpy_J_mol": _number(state.enthalpy),
        "molar_entropy_J_molK": _number(state.entropy),
        "composition": _composition(component_names, state.composition),
        "is_feed": stream.is_feed,
        "source_unit": stream.source_unit,
        "loop_estimate": stream.loop_estimate,
        "compressibility": _number(state.compressibility),
        "molar_volume_m3_mol": _number(state.molar_volume),
        "notes": list(state.notes),
    }
    if len(state.phases) > 1:
        entry["phases"] = [
            {"phase": p.label, "fraction": _number(p.amount), "composition": _composition(component_names, p.composition)}
            for p in state.phases
        ]
    return entry


def caution_to_json(caution: Caution) -> dict:
    """{"code", "severity", "message", "where"}."""
    return {"code": caution.code, "severity": caution.severity, "message": caution.message, "where": caution.where}


def violation_to_json(violation: Violation) -> dict:
    """{"code", "message", "where"}."""
    return {"code": violation.code, "message": violation.message, "where": violation.where}


def error_to_json(error: SolveError) -> dict:
    """{"code", "message", "where", "line", "file"}."""
    return {"code": error.code, "message": error.message, "where": error.where, "line": error.line,
            "file": error.file}


def path_to_json(unit: UnitResult) -> dict | None:
    """The three-step breakdown of ``unit`` in W and W/K, with per-stream legs per mole."""
    if unit.path is None:
        return None
    path = {
        key: {"enthalpy_W": _number(h), "entropy_W_K": _number(s)}
        for key, h, s in zip(PATH_KEYS, unit.path.enthalpy_W, unit.path.entropy_W_K)
    }
    path["per_stream"] = {
        stream: {
            key: {"enthalpy_J_mol": _number(step.enthalpy), "entropy_J_molK": _number(step.entropy)}
            for key, step in zip(PATH_KEYS, change.steps)
        }
        for stream, change in unit.path.per_stream.items()
    }
    return path


def unit_to_json(unit: UnitResult) -> dict:
    """One unit in the contract's form plus "path", "notes" and "details"."""
    return {
        "type": unit.type,
        "duty_W": _number(unit.duty_W),
        "power_W": _number(unit.power_W),
        "entropy_generation_W_K": _number(unit.entropy_generation_W_K),
        "lost_work_W": _number(unit.lost_work_W),
        "energy_balance_residual_W": _number(unit.energy_balance_residual_W),
        "cautions": [caution_to_json(c) for c in unit.cautions],
        "violations": [violation_to_json(v) for v in unit.violations],
        "path": path_to_json(unit),
        "notes": list(unit.notes),
        "details": _plain(unit.details),
    }


def result_to_json_dict(result: SheetResult) -> dict:
    """The whole result as the contract's JSON object (see the module docstring)."""
    names = result.component_names
    return {
        "status": result.status,
        "model": result.model,
        "streams": {name: stream_to_json(stream, names) for name, stream in result.streams.items()},
        "units": {name: unit_to_json(unit) for name, unit in result.units.items()},
        "cautions": [caution_to_json(c) for c in result.cautions],
        "errors": [error_to_json(e) for e in result.errors],
        "components": list(names),
        "solve_order": list(result.solve_order),
        "recycle": {"tear_streams": list(result.tear_streams), "iterations": result.recycle_iterations},
    }
