"""Solving a whole flowsheet: feeds, solve order, recycles, balances, flags.

``solve_sheet(sheet)`` takes a validated ``thermo.spec.Sheet`` and returns a
``thermo.results.SheetResult``; it never raises for a problem of the sheet
(each becomes a ``SolveError`` naming the key path and a fix).
``load_and_solve(path)`` is what the command line and the app share.

Solve order: units may appear in any order in the file. Units are joined by
the streams between them; strongly connected groups (recycle loops) are found
(Tarjan) and the groups solved in topological order, file order breaking
ties. Inside a loop, a depth-first walk from the unit where outside material
enters picks the tear streams (the walk's back edges) and the order; a
stream written with ``loop_estimate = true`` is always torn, and the walk
then tears only what else it needs.

Recycles: each tear stream is held as (molar enthalpy, pressure, component
molar flows) and converged by bounded Wegstein acceleration (Wegstein, Comm.
ACM 1 (1958) 9), q bounded to [-5, 0], direct substitution for the first
two passes, to a relative change of 1e-9 (enthalpy scaled by max(|h|, R T),
flows by the stream's total flow), within ``MAX_RECYCLE_ITERATIONS`` passes.

Closed loops: a loop that nothing enters (a refrigeration circuit) has no
mass balance to fix its flow, so it needs a ``loop_estimate`` stream; its
component flows (the circulating charge) are held as written, and only its
enthalpy and pressure are iterated. On a loop that is fed from outside, a
``loop_estimate`` stream is only the tear's starting state.
"""

from __future__ import annotations

import dataclasses
import heapq
import math
import tomllib
from dataclasses import dataclass
from functools import lru_cache
from importlib import resources
from typing import Callable

import numpy as np

from . import cautions as rules
from . import flash
from .components import R, Component, UnknownComponentError, get_component, resolve_name
from .departures import StateInputError
from .equipment import compressor, exchanger, heater, mixer, pump, splitter, valve
from .equipment.common import Flow, UnitError, UnitOutcome
from .errors import SheetError, format_key_path
from .mixture import Mixture, make_mixture
from .models import UnknownModelError, make_model
from .results import (
    STATUS_ERROR,
    STATUS_OK,
    STATUS_VIOLATIONS,
    Caution,
    SheetResult,
    SolveError,
    StreamResult,
    UnitPath,
    UnitResult,
    Violation,
)
from .spec import FeedStream, LoopEstimate, Sheet, UnitSpec

MAX_RECYCLE_ITERATIONS = 100
RECYCLE_TOLERANCE = 1e-9
WEGSTEIN_BOUNDS = (-5.0, 0.0)
#: Component flows and the enthalpy flow obey linear balances, so their Wegstein factor may go
#: much further: a loop that bleeds a fraction f of its flow has q = -(1 - f)/f,
#: which the state bounds would cap to a crawl of many passes.
WEGSTEIN_FLOW_BOUNDS = (-200.0, 0.0)
DIRECT_SUBSTITUTION_PASSES = 2

#: What solves each kind of unit: (spec, inlet flows, model, ambient K) -> UnitOutcome.
UNIT_SOLVERS: dict[str, Callable[..., UnitOutcome]] = {
    "heater": heater.solve,
    "cooler": heater.solve,
    "valve": valve.solve,
    "compressor": compressor.solve,
    "expander": compressor.solve,
    "pump": pump.solve,
    "mixer": mixer.solve,
    "splitter": splitter.solve,
    "exchanger": exchanger.solve,
}

#: How many inlets and outlets each kind takes (None: one or more).
_PORTS = {
    "heater": (1, 1), "cooler": (1, 1), "valve": (1, 1), "compressor": (1, 1), "expander": (1, 1),
    "pump": (1, 1), "mixer": (None, 1), "splitter": (1, None), "exchanger": (2, 2),
}


class _Refused(Exception):
    """Internal: stop solving and report these errors."""

    def __init__(self, errors: list[SolveError]):
        self.errors = errors
        super().__init__("; ".join(e.message for e in errors))


# ------------------------------------------------------------------ mixture


def parse_interaction_table(text: str) -> dict[str, dict[tuple[str, str], float]]:
    """k_ij by model name from the text of an interaction table:
    ``[peng-robinson] "methane/carbon-dioxide" = { kij = 0.09, source = "..." }``
    (a bare number is accepted for the value). Pairs naming an unknown
    component, and entries without a number, are left out."""
    table: dict[str, dict[tuple[str, str], float]] = {}
    for model, pairs in tomllib.loads(text).items():
        if not isinstance(pairs, dict):
            continue
        for key, record in pairs.items():
            names = key.split("/")
            value = record.get("kij") if isinstance(record, dict) else record
            if len(names) != 2 or isinstance(value, bool) or not isinstance(value, (int, float)):
                continue
            try:
                a, b = resolve_name(names[0].strip()), resolve_name(names[1].strip())
            except UnknownComponentError:
                continue
            table.setdefault(model, {})[(a, b)] = float(value)
    return table


@lru_cache(maxsize=1)
def _interaction_library() -> dict[str, dict[tuple[str, str], float]]:
    """The library of k_ij by model (thermo/data/interaction.toml), if it exists."""
    try:
        text = resources.files("thermo").joinpath("data/interaction.toml").read_text("utf-8")
    except (FileNotFoundError, OSError):
        return {}
    return parse_interaction_table(text)


def sheet_component_names(sheet: Sheet) -> tuple[str, ...]:
    """Every component the sheet's feeds and loop estimates use, in order of
    first appearance (feeds first)."""
    names: list[str] = []
    for feed in (*sheet.streams.values(), *sheet.loop_estimates.values()):
        for name in feed.composition:
            if name not in names:
                names.append(name)
    return tuple(names)


def _component(sheet: Sheet, name: str) -> Component:
    user = sheet.components.get(name)
    if user is None:
        return get_component(name)
    given = user.given()
    if user.overrides:
        return dataclasses.replace(get_component(name), **given)
    given.setdefault("cp_range", (0.0, math.inf))
    given.setdefault("source", "defined in the flowsheet file")
    return Component(name=name, **given)


def build_mixture(sheet: Sheet) -> Mixture:
    """One Mixture over every component the sheet uses: library records,
    user components (new or overriding), and k_ij from the library table of
    the sheet's model (if any) overridden by the sheet's ``[interaction]``."""
    names = sheet_component_names(sheet)
    components = [_component(sheet, name) for name in names]
    interaction = dict(_interaction_library().get(sheet.model, {}))
    interaction.update(sheet.interaction)
    return make_mixture(components, interaction)


# ------------------------------------------------------------------ structure


@dataclass(frozen=True)
class Group:
    """Units solved together: one unit, or a recycle loop with its tear streams."""

    units: tuple[str, ...]
    tears: tuple[str, ...] = ()


@dataclass(frozen=True)
class Plan:
    """The solve order: groups in topological order."""

    groups: tuple[Group, ...]

    @property
    def order(self) -> tuple[str, ...]:
        return tuple(name for group in self.groups for name in group.units)

    @property
    def tears(self) -> tuple[str, ...]:
        return tuple(name for group in self.groups for name in group.tears)


def _where(sheet: Sheet, *key_path) -> dict:
    place = sheet.where(tuple(key_path))
    return {"where": format_key_path(key_path), "line": place.line, "file": sheet.path}


def _error(sheet: Sheet, code: str, message: str, fix: str, *key_path) -> SolveError:
    text = message.rstrip(".") + "."
    if fix:
        text += " Fix: " + fix.rstrip(".") + "."
    return SolveError(code, text, **_where(sheet, *key_path))


def _role_of(unit: UnitSpec, stream: str) -> tuple:
    for role, value in unit.connections.items():
        if value == stream:
            return (role,)
        if isinstance(value, tuple) and stream in value:
            return (role, value.index(stream))
    return ()


def check_connections(sheet: Sheet) -> list[SolveError]:
    """What is wrong with how the sheet's units and streams connect (empty if nothing)."""
    errors: list[SolveError] = []
    producer: dict[str, str] = {}
    consumer: dict[str, str] = {}
    for unit in sheet.units.values():
        if unit.type not in UNIT_SOLVERS:
            errors.append(_error(sheet, "unknown-unit-type", f"unit {unit.name!r} has type {unit.type!r}, which statepath does not know",
                                 "use one of " + ", ".join(UNIT_SOLVERS), "units", unit.name, "type"))
            continue
        for streams, what in ((unit.inlet_streams, "inlets"), (unit.outlet_streams, "outlets")):
            repeated = sorted({name for name in streams if streams.count(name) > 1})
            if repeated:
                errors.append(_error(sheet, "stream-listed-twice",
                                     f"unit {unit.name!r} lists stream {repeated[0]!r} twice among its {what}",
                                     "name each stream once", "units", unit.name))
        n_in, n_out = _PORTS[unit.type]
        for streams, count, what in ((unit.inlet_streams, n_in, "inlet"), (unit.outlet_streams, n_out, "outlet")):
            if (count is None and not streams) or (count is not None and len(streams) != count):
                wanted = "at least one" if count is None else str(count)
                errors.append(_error(sheet, "bad-connections",
                                     f"a {unit.type} takes {wanted} {what} stream(s), this one names {len(streams)}",
                                     f"give its {what} connection(s) as the contract's table shows", "units", unit.name))
        for stream in unit.outlet_streams:
            if stream in sheet.streams:
                errors.append(_error(sheet, "feed-is-outlet",
                                     f"stream {stream!r} is a feed ([streams.{stream}]) and also the outlet of unit {unit.name!r}",
                                     "rename the outlet, or remove the feed's table: a unit's outlet gets its state from the unit",
                                     "units", unit.name, *_role_of(unit, stream)))
            elif stream in producer and producer[stream] != unit.name:
                errors.append(_error(sheet, "two-producers",
                                     f"stream {stream!r} is the outlet of both {producer[stream]!r} and {unit.name!r}",
                                     "give each outlet its own name and join them with a mixer",
                                     "units", unit.name, *_role_of(unit, stream)))
            else:
                producer[stream] = unit.name
        for stream in unit.inlet_streams:
            if stream in consumer and consumer[stream] != unit.name:
                errors.append(_error(sheet, "two-consumers",
                                     f"stream {stream!r} enters both {consumer[stream]!r} and {unit.name!r}",
                                     "divide it with a splitter first", "units", unit.name, *_role_of(unit, stream)))
            consumer.setdefault(stream, unit.name)
    for unit in sheet.units.values():
        for stream in unit.inlet_streams:
            if stream not in sheet.streams and stream not in producer:
                errors.append(_error(sheet, "unknown-stream",
                                     f"unit {unit.name!r} takes stream {stream!r}, which is neither a feed nor any unit's outlet",
                                     f"add a [streams.{stream}] table with its state, or correct the name",
                                     "units", unit.name, *_role_of(unit, stream)))
    return errors


def check_loop_estimates(sheet: Sheet, plan: Plan) -> list[SolveError]:
    """What is wrong with the sheet's loop_estimate streams (empty if nothing):
    each must be a unit's outlet on a recycle loop (``plan`` then tears it),
    and not a feed as well."""
    errors: list[SolveError] = []
    for name in sheet.loop_estimates:
        where = ("streams", name, "loop_estimate")
        writer = sheet.producer_of(name)
        if name in sheet.streams:
            errors.append(_error(sheet, "loop-estimate-is-feed",
                                 f"stream {name!r} is given both as a feed and as a loop estimate",
                                 "keep one of the two", *where))
        elif writer is None:
            errors.append(_error(sheet, "loop-estimate-not-an-outlet",
                                 f"stream {name!r} has loop_estimate = true, but no unit names it as its outlet",
                                 f"remove loop_estimate = true to make {name!r} a feed, or name it as the outlet "
                                 "of a unit in the loop", *where))
        elif name not in plan.tears:
            errors.append(_error(sheet, "loop-estimate-not-on-loop",
                                 f"stream {name!r} has loop_estimate = true, but it is not on a recycle loop "
                                 f"(unit {writer!r} writes it and no path of streams leads back to that unit)",
                                 f"remove the [streams.{name}] table: unit {writer!r} gives the stream its state",
                                 *where))
    return errors


def plan_solve(sheet: Sheet) -> Plan:
    """The order to solve the (well-connected) sheet's units in, with the
    tear streams of each recycle loop."""
    names = list(sheet.units)
    position = {name: i for i, name in enumerate(names)}
    producer = {s: u.name for u in sheet.units.values() for s in u.outlet_streams}
    successors: dict[str, list[tuple[str, str]]] = {name: [] for name in names}  # (unit, via stream)
    for unit in sheet.units.values():
        for stream in unit.inlet_streams:
            source = producer.get(stream)
            if source is not None:
                successors[source].append((unit.name, stream))
    for edges in successors.values():
        edges.sort(key=lambda edge: position[edge[0]])

    components = _strongly_connected(names, successors)
    group_of = {unit: k for k, members in enumerate(components) for unit in members}
    upstream_count = [0] * len(components)
    downstream: list[set[int]] = [set() for _ in components]
    for unit, edges in successors.items():
        for target, _ in edges:
            a, b = group_of[unit], group_of[target]
            if a != b and b not in downstream[a]:
                downstream[a].add(b)
                upstream_count[b] += 1
    ready = [(min(position[u] for u in members), k) for k, members in enumerate(components) if upstream_count[k] == 0]
    heapq.heapify(ready)
    groups: list[Group] = []
    while ready:
        _, k = heapq.heappop(ready)
        groups.append(_order_group(sheet, components[k], successors, position))
        for b in downstream[k]:
            upstream_count[b] -= 1
            if upstream_count[b] == 0:
                heapq.heappush(ready, (min(position[u] for u in components[b]), b))
    return Plan(tuple(groups))


def _strongly_connected(names: list[str], successors) -> list[list[str]]:
    """Tarjan's strongly connected components, iteratively (no recursion limit)."""
    index: dict[str, int] = {}
    low: dict[str, int] = {}
    on_stack: set[str] = set()
    stack: list[str] = []
    found: list[list[str]] = []
    counter = 0
    for root in names:
        if root in index:
            continue
        work = [(root, 0)]
        while work:
            node, i = work.pop()
            if i == 0:
                index[node] = low[node] = counter
                counter += 1
                stack.append(node)
                on_stack.add(node)
            edges = successors[node]
            if i < len(edges):
                work.append((node, i + 1))
                target = edges[i][0]
                if target not in index:
                    work.append((target, 0))
                elif target in on_stack:
                    low[node] = min(low[node], index[target])
                continue
            if low[node] == index[node]:
                members = []
                while True:
                    member = stack.pop()
                    on_stack.discard(member)
                    members.append(member)
                    if member == node:
                        break
                found.append(members)
            if work:
                parent = work[-1][0]
                low[parent] = min(low[parent], low[node])
    return found


def _order_group(sheet: Sheet, members: list[str], successors, position) -> Group:
    inside = set(members)
    if len(members) == 1 and not any(target == members[0] for target, _ in successors[members[0]]):
        return Group((members[0],))
    producer = {s: u.name for u in sheet.units.values() for s in u.outlet_streams}
    entries = [
        name for name in members
        if any(producer.get(s) not in inside for s in sheet.units[name].inlet_streams)
    ]
    # A loop_estimate stream is torn whatever the walk would pick: that is
    # where the engineer gave a state (and, on a closed loop, the flow).
    estimated = [s for s in sheet.loop_estimates
                 if producer.get(s) in inside and sheet.consumer_of(s) in inside]
    if entries:
        start = min(entries, key=lambda name: position[name])
    elif estimated:
        start = sheet.consumer_of(estimated[0])
    else:
        start = min(members, key=lambda name: position[name])
    postorder: list[str] = []
    tears: list[str] = list(estimated)
    state: dict[str, int] = {}  # 1 on the walk's path, 2 finished

    def walk_from(root: str) -> None:
        state[root] = 1
        work = [(root, iter(successors[root]))]
        while work:
            node, edges = work[-1]
            for target, stream in edges:
                if target not in inside or stream in estimated:
                    continue
                if state.get(target) == 1:
                    tears.append(stream)
                elif target not in state:
                    state[target] = 1
                    work.append((target, iter(successors[target])))
                    break
            else:
                work.pop()
                state[node] = 2
                postorder.append(node)

    walk_from(start)
    for name in sorted(members, key=lambda n: position[n]):
        if name not in state:
            walk_from(name)
    return Group(tuple(reversed(postorder)), tuple(tears))


# ------------------------------------------------------------------ solving


@dataclass
class _Run:
    """Mutable bookkeeping of one solve (kept out of the result dataclasses)."""

    sheet: Sheet
    model: object
    mixture: Mixture
    flows: dict[str, Flow]
    outcomes: dict[str, UnitOutcome]
    inlets_of: dict[str, tuple[Flow, ...]]
    errors: list[SolveError]
    ports: dict[str, tuple[tuple[str, ...], tuple[str, ...]]]  # unit -> (inlet streams, outlet streams)
    iterations: int = 0
    estimates: dict[str, Flow] = dataclasses.field(default_factory=dict)  # loop_estimate streams as written


def _feed_state(run: _Run, name: str) -> Flow:
    return _written_state(run, run.sheet.streams[name], "feed")


def _written_state(run: _Run, feed: FeedStream | LoopEstimate, what: str) -> Flow:
    """The flow of a stream given by a [streams.NAME] table (``what`` names it
    in messages)."""
    name = feed.name
    mixture = run.mixture
    x = mixture.composition(dict(feed.composition))
    x = x / x.sum()
    where = ("streams", name)
    if feed.temperature_K is not None and feed.pressure_Pa is not None:
        state = flash.flash_tp(run.model, feed.temperature_K, feed.pressure_Pa, x)
    elif feed.vapor_fraction is not None and (feed.pressure_Pa is not None or feed.temperature_K is not None):
        by_pressure = feed.pressure_Pa is not None
        fn = getattr(flash, "flash_pv" if by_pressure else "flash_tv", None)
        if fn is None:
            raise _Refused([_error(run.sheet, "flash-unavailable",
                                   "this version of the flash cannot fix a vapor fraction yet",
                                   f"give the {what} a temperature and a pressure", *where, "vapor_fraction")])
        state = fn(run.model, feed.pressure_Pa if by_pressure else feed.temperature_K, feed.vapor_fraction, x)
    else:
        raise _Refused([_error(run.sheet, "feed-underspecified",
                               f"{what} {name!r} needs two of temperature, pressure and vapor_fraction",
                               "give temperature and pressure (or vapor_fraction with one of them)", *where)])
    if feed.molar_flow_mol_s is not None:
        flow = feed.molar_flow_mol_s
    elif feed.mass_flow_kg_s is not None:
        flow = feed.mass_flow_kg_s / float(x @ mixture.molar_mass)
    else:
        raise _Refused([_error(run.sheet, "feed-underspecified", f"{what} {name!r} has no flow",
                               'give flow = "100 kmol/h" (molar) or "2 kg/s" (mass)', *where)])
    return Flow(state, float(flow))


def _check_finite(result: UnitOutcome) -> None:
    numbers = [result.balance.entropy_generation, result.balance.residual, result.duty or 0.0, result.power or 0.0]
    for f in result.outlets:
        numbers += [f.state.temperature, f.state.pressure, f.state.enthalpy, f.state.entropy, f.molar_flow]
    if not all(math.isfinite(v) for v in numbers):
        raise FloatingPointError("the unit's result is not a finite number")


def _solve_unit(run: _Run, name: str) -> None:
    """Solve unit ``name`` from the flows of its inlets; raises _Refused on failure."""
    sheet = run.sheet
    unit = sheet.units[name]
    inlet_names, outlet_names = run.ports[name]
    inlets = tuple(run.flows[s] for s in inlet_names)
    try:
        result = UNIT_SOLVERS[unit.type](unit, inlets, run.model, sheet.ambient_temperature_K)
        _check_finite(result)
    except UnitError as error:
        key = () if error.key is None else _spec_key_path(unit, error.key)
        raise _Refused([_error(sheet, "unit-specification", f"unit {name!r}: {error}",
                               error.fix, "units", name, *key)]) from None
    except (flash.FlashError, StateInputError) as error:
        raise _Refused([_error(sheet, "no-outlet-state", f"unit {name!r}: could not find its outlet state: {error}",
                               "check the unit's specification against its inlet state (a state far outside "
                               "what the model can describe cannot be found)", "units", name)]) from None
    except Exception as error:  # never a traceback for the user
        raise _Refused([_error(sheet, "unit-failed",
                               f"unit {name!r} could not be solved ({type(error).__name__}: {error})",
                               "check the unit's specification and its inlet streams", "units", name)]) from None
    run.outcomes[name] = result
    run.inlets_of[name] = inlets
    for stream, flow in zip(outlet_names, result.outlets):
        run.flows[stream] = flow


def _spec_key_path(unit: UnitSpec, key: str) -> tuple:
    if key in unit.params or key in unit.connections:
        return (key,)
    return ()


def _pack(flow: Flow) -> np.ndarray:
    # Enthalpy flow (W) and component flows (mol/s) rather than molar values:
    # a loop's energy and mass balances are linear in them, which is what
    # lets Wegstein's secant step take a slowly bleeding loop home at once.
    return np.concatenate(([flow.state.enthalpy * flow.molar_flow, flow.state.pressure], flow.component_flows()))


def _scales(flow: Flow) -> np.ndarray:
    state = flow.state
    size = len(state.composition)
    return np.concatenate((
        [max(abs(state.enthalpy), R * state.temperature) * max(flow.molar_flow, 1e-12), state.pressure],
        np.full(size, max(flow.molar_flow, 1e-12)),
    ))


def _unpack(run: _Run, values: np.ndarray, like: Flow) -> Flow:
    moles = np.clip(values[2:], 0.0, None)
    total = float(moles.sum())
    enthalpy = float(values[0]) / total if total > 0.0 else like.state.enthalpy
    pressure = float(values[1])
    x = moles / total if total > 0.0 else like.state.composition
    pressure = pressure if pressure > 0.0 else like.state.pressure
    state = flash.flash_ph(run.model, pressure, enthalpy, x, like.state.temperature)
    return Flow(state, total)


def _initial_guess(run: _Run, group: Group, stream: str) -> Flow:
    """A start for tear ``stream``: its loop_estimate table if it has one, else
    the state of a known inlet of the unit it enters (else of the first stream
    entering the loop from outside, else of the loop's estimate stream), with
    that stream's flow."""
    sheet = run.sheet
    if stream in run.estimates:
        return run.estimates[stream]
    consumer = next(u for u in group.units if stream in sheet.units[u].inlet_streams)

    def known(name: str) -> bool:
        return name in run.flows and (name not in group.tears or name in run.estimates)

    candidates = [s for s in sheet.units[consumer].inlet_streams if known(s)]
    if not candidates:
        candidates = [s for u in group.units for s in sheet.units[u].inlet_streams if known(s)]
    if not candidates:
        raise _Refused([_error(sheet, "loop-without-feed",
                               f"the recycle loop through units {', '.join(group.units)} has no stream entering it from outside",
                               "feed the loop from a [streams.NAME] table or from a unit outside it; or, for a closed "
                               "loop such as a refrigeration circuit, give one stream that a unit of the loop writes "
                               "a [streams.NAME] table with loop_estimate = true, the circulating flow, the "
                               "composition and an estimate of its state (temperature and pressure)",
                               "units", consumer)])
    return run.flows[candidates[0]]


def _is_closed(run: _Run, group: Group) -> bool:
    """Whether nothing enters the loop ``group`` from outside."""
    produced = {s for u in group.units for s in run.ports[u][1]}
    return all(s in produced for u in group.units for s in run.ports[u][0])


def _held_entries(run: _Run, group: Group, sizes: list[int]) -> np.ndarray:
    """Mask of the packed tear values held as written: the component flows of
    the loop_estimate tears of a closed loop (its circulating charge)."""
    held = np.zeros(sum(sizes), dtype=bool)
    if not _is_closed(run, group):
        return held
    offset = 0
    for s, size in zip(group.tears, sizes):
        if s in run.estimates:
            held[offset + 2:offset + size] = True
        offset += size
    return held


def _charge_not_returned(run: _Run, group: Group, sizes: list[int], x: np.ndarray, g: np.ndarray,
                         scale: np.ndarray, held: np.ndarray) -> SolveError:
    offset = 0
    for s, size in zip(group.tears, sizes):
        part = slice(offset + 2, offset + size)
        offset += size
        if held[part].any() and np.max(np.abs(g[part] - x[part]) / scale[part]) > RECYCLE_TOLERANCE:
            break
    written, returned = float(x[part].sum()), float(g[part].sum())
    return _error(
        run.sheet, "closed-loop-charge-not-returned",
        f"the closed loop through units {', '.join(group.units)} returns {returned:.6g} mol/s "
        f"to stream {s!r}, not the {written:.6g} mol/s (or not the composition) written in its "
        "loop_estimate table: material leaves the loop and nothing enters it",
        "a closed loop must return everything it circulates: send every outlet of its units back into the loop, "
        "or feed the loop from a [streams.NAME] table (its make-up), which makes the loop_estimate stream only "
        "a starting state", "streams", s, "loop_estimate")


def _converge(run: _Run, group: Group) -> None:
    """Solve a recycle loop by bounded Wegstein iteration on its tear streams
    (a closed loop's loop_estimate flows held as written)."""
    for s in sorted(group.tears, key=lambda name: name not in run.estimates):  # estimates first: others may start from them
        run.flows[s] = _initial_guess(run, group, s)
    x = np.concatenate([_pack(run.flows[s]) for s in group.tears])
    sizes = [2 + len(run.flows[s].state.composition) for s in group.tears]
    held = _held_entries(run, group, sizes)
    held_values = x[held]
    lower_bounds = np.concatenate([
        [WEGSTEIN_FLOW_BOUNDS[0], WEGSTEIN_BOUNDS[0]] + [WEGSTEIN_FLOW_BOUNDS[0]] * len(run.flows[s].state.composition)
        for s in group.tears
    ])
    x_old = g_old = None
    mismatch = math.inf
    for iteration in range(1, MAX_RECYCLE_ITERATIONS + 1):
        run.iterations += 1
        for name in group.units:
            _solve_unit(run, name)
        computed = [run.flows[s] for s in group.tears]
        g = np.concatenate([_pack(f) for f in computed])
        scale = np.concatenate([_scales(f) for f in computed])
        relative = np.abs(g - x) / scale
        mismatch = float(np.max(relative))
        if mismatch <= RECYCLE_TOLERANCE:
            return
        if held.any() and float(np.max(relative[~held], initial=0.0)) <= RECYCLE_TOLERANCE:
            raise _Refused([_charge_not_returned(run, group, sizes, x, g, scale, held)])
        if iteration <= DIRECT_SUBSTITUTION_PASSES or x_old is None:
            x_new = g
        else:
            dx = x - x_old
            dg = g - g_old
            with np.errstate(divide="ignore", invalid="ignore"):
                slope = np.where(np.abs(dx) > 1e-14 * scale, dg / dx, 0.0)
                q = np.where(slope != 1.0, slope / (slope - 1.0), WEGSTEIN_BOUNDS[0])
            q = np.clip(np.nan_to_num(q, nan=0.0), lower_bounds, WEGSTEIN_BOUNDS[1])
            x_new = q * x + (1.0 - q) * g
        x_old, g_old = x, g
        x = np.array(x_new, dtype=float)
        x[held] = held_values
        offset = 0
        for s, flow in zip(group.tears, computed):
            part = slice(offset, offset + 2 + len(flow.state.composition))
            offset = part.stop
            if np.array_equal(x[part], g[part]):
                run.flows[s] = flow
                continue
            try:
                run.flows[s] = _unpack(run, x[part], flow)
            except (flash.FlashError, StateInputError):
                run.flows[s] = flow  # plain substitution for this stream this pass
                x[part] = g[part]
    raise _Refused([_error(
        run.sheet, "recycle-not-converged",
        f"the recycle loop through units {', '.join(group.units)} (tear stream{'s' if len(group.tears) > 1 else ''} "
        f"{', '.join(group.tears)}) did not converge within {MAX_RECYCLE_ITERATIONS} iterations "
        f"(largest relative change in the last pass {mismatch:.3g}, tolerance {RECYCLE_TOLERANCE:g})",
        "check that material can leave the loop (a splitter fraction to a product, not all recycled) and that "
        "the loop's specifications are consistent",
        "units", group.units[0])])


def _unit_result(run: _Run, name: str) -> UnitResult:
    sheet = run.sheet
    unit = sheet.units[name]
    result = run.outcomes[name]
    inlets = run.inlets_of[name]
    balance = result.balance
    where = f"units.{name}"
    found = rules.unit_cautions(unit.type, inlets, result, where=where, limits=sheet.limits)
    outlet_names = run.ports[name][1]
    for stream, flow in zip(outlet_names, result.outlets):
        found.extend(rules.stream_cautions(flow.state, where=f"streams.{stream}", model=run.model, limits=sheet.limits))
    violations = rules.unit_violations(unit.type, inlets, result, where=where)
    violations.extend(rules.limit_violations(found, where=where))
    per_stream = {outlet_names[o]: change for o, change in result.paths}
    details = dict(result.details)
    details["energy_balance_relative_residual"] = balance.relative_residual
    details["second_law_complete"] = balance.second_law_complete
    if result.medium_temperature is not None:
        details["medium_temperature_K"] = result.medium_temperature
    return UnitResult(
        name=name,
        type=unit.type,
        duty_W=result.duty,
        power_W=result.power,
        entropy_generation_W_K=balance.entropy_generation,
        lost_work_W=balance.lost_work,
        energy_balance_residual_W=balance.residual,
        path=UnitPath(balance.path_enthalpy, balance.path_entropy, per_stream),
        cautions=tuple(found),
        violations=tuple(violations),
        notes=result.notes,
        details=details,
    )


def _stream_results(run: _Run) -> dict[str, StreamResult]:
    sheet = run.sheet
    producer = {s: u.name for u in sheet.units.values() for s in u.outlet_streams}
    results: dict[str, StreamResult] = {}
    for name in sheet.stream_names():
        flow = run.flows.get(name)
        if flow is None:
            continue
        mass = flow.molar_flow * float(flow.state.composition @ run.mixture.molar_mass)
        results[name] = StreamResult(name, flow.state, flow.molar_flow, mass, name in sheet.streams, producer.get(name),
                                     loop_estimate=name in sheet.loop_estimates)
    return results


def error_result(errors: list[SolveError] | tuple[SolveError, ...], model: str = "") -> SheetResult:
    """A SheetResult with status "error" and nothing solved."""
    return SheetResult(STATUS_ERROR, model, (), {}, {}, errors=tuple(errors))


def solve_sheet(sheet: Sheet) -> SheetResult:
    """Solve every unit of ``sheet`` (SI throughout) and flag the results.

    Status "error" (with ``errors``) when the sheet cannot be solved, or part
    of it; "violations" when any unit breaks the second law or its nature;
    else "ok". Never raises for a problem of the sheet.
    """
    try:
        return _solve(sheet)
    except _Refused as refused:
        return error_result(refused.errors, sheet.model)
    except Exception as error:  # a last guard: the user never sees a traceback
        return error_result([SolveError("internal-error",
                                        f"statepath could not solve the sheet ({type(error).__name__}: {error}). "
                                        "Fix: please report this with the flowsheet file.", "", None, sheet.path)],
                            sheet.model)


def _solve(sheet: Sheet) -> SheetResult:
    try:
        mixture = build_mixture(sheet)
        model = make_model(sheet.model, mixture)
    except UnknownComponentError as error:
        raise _Refused([_error(sheet, "unknown-component", str(error),
                               "define it under [components.NAME] or use a library name", "streams")]) from None
    except UnknownModelError as error:
        raise _Refused([_error(sheet, "unknown-model", str(error), "", "model")]) from None
    except (TypeError, ValueError) as error:
        raise _Refused([_error(sheet, "bad-component-data", f"the component data cannot be used: {error}",
                               "check the [components] tables", "components")]) from None

    structure = check_connections(sheet)
    if structure:
        raise _Refused(structure)
    ports = {u.name: (u.inlet_streams, u.outlet_streams) for u in sheet.units.values()}
    run = _Run(sheet, model, mixture, {}, {}, {}, [], ports)
    for name in sheet.streams:
        try:
            run.flows[name] = _feed_state(run, name)
        except _Refused as refused:
            run.errors.extend(refused.errors)
        except (flash.FlashError, StateInputError) as error:
            run.errors.append(_error(sheet, "no-feed-state", f"feed {name!r}: its state cannot be found: {error}",
                                     "check its temperature, pressure and composition", "streams", name))

    plan = plan_solve(sheet)
    estimate_errors = check_loop_estimates(sheet, plan)
    if estimate_errors:
        raise _Refused(run.errors + estimate_errors)
    for name, estimate in sheet.loop_estimates.items():
        try:
            run.estimates[name] = _written_state(run, estimate, "loop estimate")
        except _Refused as refused:
            run.errors.extend(refused.errors)
        except (flash.FlashError, StateInputError) as error:
            run.errors.append(_error(sheet, "no-estimate-state",
                                     f"loop estimate {name!r}: its state cannot be found: {error}",
                                     "check its temperature, pressure and composition", "streams", name))
    skipped: list[str] = []
    for group in plan.groups:
        needed = {s for u in group.units for s in ports[u][0]} - set(group.tears)
        produced_inside = {s for u in group.units for s in ports[u][1]}
        lost_estimate = any(s in sheet.loop_estimates and s not in run.estimates for s in group.tears)
        if lost_estimate or any(s not in run.flows and s not in produced_inside for s in needed):
            skipped.extend(group.units)
            continue
        try:
            if group.tears:
                _converge(run, group)
            else:
                _solve_unit(run, group.units[0])
        except _Refused as refused:
            run.errors.extend(refused.errors)
            for u in group.units:
                run.outcomes.pop(u, None)
                for s in ports[u][1]:
                    run.flows.pop(s, None)
    if skipped:
        run.errors.append(SolveError(
            "not-solved",
            f"unit{'s' if len(skipped) > 1 else ''} {', '.join(skipped)} not solved because a stream they take "
            "could not be found (see the errors above). Fix: correct those first.",
            f"units.{skipped[0]}", sheet.where(("units", skipped[0])).line, sheet.path))

    units = {name: _unit_result(run, name) for name in plan.order if name in run.outcomes}
    streams = _stream_results(run)
    sheet_cautions: list[Caution] = []
    for name in sheet.streams:
        if name in run.flows:
            sheet_cautions.extend(rules.stream_cautions(run.flows[name].state, where=f"streams.{name}",
                                                        model=model, limits=sheet.limits))
    if run.errors:
        status = STATUS_ERROR
    elif any(u.violations for u in units.values()):
        status = STATUS_VIOLATIONS
    else:
        status = STATUS_OK
    return SheetResult(
        status=status,
        model=sheet.model,
        component_names=mixture.names,
        streams=streams,
        units=units,
        cautions=tuple(sheet_cautions),
        errors=tuple(run.errors),
        solve_order=plan.order,
        recycle_iterations=run.iterations,
        tear_streams=plan.tears,
    )


def violations_of(result: SheetResult) -> list[Violation]:
    """Every violation of a solved sheet, unit by unit in solve order."""
    return [v for unit in result.units.values() for v in unit.violations]


def load_and_solve(path) -> tuple[object | None, SheetResult]:
    """Read the flowsheet file at ``path`` and solve it: (LoadedSheet, result),
    or (None, an "error" result listing the file's problems with key path,
    line and fix). Shared by the command line and the app."""
    from .sheetfile import load_sheet

    try:
        loaded = load_sheet(path)
    except SheetError as error:
        return None, error_result(sheet_error_to_solve_errors(error))
    return loaded, solve_sheet(loaded.sheet)


def sheet_error_to_solve_errors(error: SheetError) -> list[SolveError]:
    """The problems of a SheetError as SolveError items (message with its fix)."""
    found = []
    for problem in error.problems:
        message = problem.message.rstrip()
        if problem.fix:
            message = message.rstrip(".") + ". Fix: " + problem.fix.rstrip(".") + "."
        found.append(SolveError(problem.code, message, format_key_path(problem.key_path) if problem.key_path else "",
                                problem.line, error.path))
    return found
