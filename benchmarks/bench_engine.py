"""Speed of the real-gas H and S engine, printed as a table (not a test).

    .venv/bin/python benchmarks/bench_engine.py [--quick]

What is timed, per state, at random gas states (T 280-450 K, P 1-100 bar;
one fixed seed):
- statepath, Peng-Robinson: one state at a time through
  ``thermo.properties.single_phase_state``; and as a batch through
  ``thermo.departures.residual_batch`` plus ``thermo.idealgas.enthalpy_batch``
  and ``entropy_batch`` on arrays of states;
- CoolProp (test-only; thermo/ never imports it), measured in the same run:
  HEOS (reference equations; GERG-2008 mixture model for the natural gas) and
  its SRK backend, one state at a time through ``AbstractState.update(PT_INPUTS, ...)``
  then ``hmolar()`` and ``smolar()``; once with the phase left to CoolProp and
  once with ``specify_phase(iphase_gas)`` (its fastest single-state path).

Fluids: pure methane, and a five-component natural gas (methane 0.85, ethane
0.07, propane 0.04, n-butane 0.02, nitrogen 0.02; invented composition, with
the library's Peng-Robinson interaction parameters).

Targets (from the issue): batch >= 1,000,000 pure-fluid states per second; one
five-component state <= 50 us.
"""

from __future__ import annotations

import argparse
import os
import platform
import sys
import time
from importlib import resources
from pathlib import Path

import numpy as np

sys.path.insert(0, str(Path(__file__).resolve().parents[1]))

from thermo import idealgas  # noqa: E402
from thermo.departures import residual_batch  # noqa: E402
from thermo.flowsheet import parse_interaction_table  # noqa: E402
from thermo.mixture import make_mixture  # noqa: E402
from thermo.models import peng_robinson  # noqa: E402
from thermo.properties import single_phase_state  # noqa: E402

NATURAL_GAS = {"methane": 0.85, "ethane": 0.07, "propane": 0.04, "n-butane": 0.02, "nitrogen": 0.02}
COOLPROP_NAMES = {"methane": "Methane", "ethane": "Ethane", "propane": "Propane", "n-butane": "n-Butane",
                  "nitrogen": "Nitrogen"}
BATCH_TARGET_STATES_PER_S = 1_000_000
SINGLE_MIXTURE_TARGET_US = 50.0


def random_states(count: int, seed: int = 20240601) -> tuple[np.ndarray, np.ndarray]:
    rng = np.random.default_rng(seed)
    return rng.uniform(280.0, 450.0, count), rng.uniform(1e5, 100e5, count)


def best_of(repeats: int, run) -> float:
    """Shortest wall time (s) of ``repeats`` runs of ``run()``."""
    best = float("inf")
    for _ in range(repeats):
        start = time.perf_counter()
        run()
        best = min(best, time.perf_counter() - start)
    return best


def time_single(model, x, temperatures, pressures) -> float:
    """Seconds per state, one single_phase_state call each."""
    t_list, p_list = temperatures.tolist(), pressures.tolist()

    def run():
        for t, p in zip(t_list, p_list):
            state = single_phase_state(model, t, p, x)
            state.enthalpy, state.entropy  # noqa: B018  (the results a caller reads)

    return best_of(3, run) / len(t_list)


def time_batch(model, x, temperatures, pressures) -> float:
    """Seconds per state for residual_batch plus the ideal-gas batch functions."""
    mixture = model.mixture

    def run():
        res = residual_batch(model, temperatures, pressures, x)
        h = idealgas.enthalpy_batch(mixture, temperatures, x) + res.enthalpy
        s = idealgas.entropy_batch(mixture, temperatures, pressures, x) + res.entropy
        return h, s

    return best_of(3, run) / len(temperatures)


def time_coolprop(backend: str, names: list[str], x, temperatures, pressures, gas_phase: bool,
                  repeats: int = 3) -> float | str:
    """Seconds per state for CoolProp's AbstractState PT update + hmolar + smolar."""
    try:
        import CoolProp.CoolProp as CP
        from CoolProp import AbstractState
    except ImportError:
        return "CoolProp not installed"
    try:
        state = AbstractState(backend, "&".join(COOLPROP_NAMES[n] for n in names))
        if len(names) > 1:
            state.set_mole_fractions(list(x))
        if gas_phase:
            state.specify_phase(CP.iphase_gas)
        update, pt = state.update, CP.PT_INPUTS
        t_list, p_list = temperatures.tolist(), pressures.tolist()

        def run():
            for t, p in zip(t_list, p_list):
                update(pt, p, t)
                state.hmolar()
                state.smolar()

        return best_of(repeats, run) / len(t_list)
    except Exception as error:  # a backend that cannot do this fluid: say so in the table
        return f"failed: {str(error).splitlines()[0][:60]}"


def fmt_rate(seconds_per_state) -> tuple[str, str]:
    if isinstance(seconds_per_state, str):
        return seconds_per_state, ""
    return f"{seconds_per_state * 1e6:10.2f}", f"{1.0 / seconds_per_state:14,.0f}"


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--quick", action="store_true", help="fewer states (a smoke run)")
    args = parser.parse_args()
    n_single = 2_000 if args.quick else 20_000
    n_batch = 100_000 if args.quick else 1_000_000
    n_coolprop = 500 if args.quick else 5_000
    n_coolprop_mixture = 50 if args.quick else 300
    n_coolprop_mixture_unspecified = 5 if args.quick else 20  # ~60 ms a state: CoolProp finds the phase itself

    interaction = parse_interaction_table(
        resources.files("thermo").joinpath("data/interaction.toml").read_text("utf-8")
    ).get("peng-robinson", {})
    fluids = {
        "methane": (["methane"], np.array([1.0])),
        "natural gas (5)": (list(NATURAL_GAS), np.array(list(NATURAL_GAS.values()))),
    }
    print(f"statepath engine benchmark  (python {platform.python_version()}, numpy {np.__version__}, "
          f"{os.cpu_count()} cores, load average {os.getloadavg()[0]:.2f} at start; "
          "random gas states T 280-450 K, P 1-100 bar)")
    print()
    header = f"{'fluid':<16} {'engine / path':<50} {'states':>9} {'us/state':>10} {'states/s':>14}"
    print(header)
    print("-" * len(header))
    measured: dict[tuple[str, str], float] = {}
    for label, (names, x) in fluids.items():
        model = peng_robinson(make_mixture(names, interaction))
        t_single, p_single = random_states(n_single)
        t_batch, p_batch = random_states(n_batch)
        rows = [
            ("statepath PR, single_phase_state (one at a time)", n_single, time_single(model, x, t_single, p_single)),
            ("statepath PR, residual_batch + idealgas batch", n_batch, time_batch(model, x, t_batch, p_batch)),
        ]
        n_cp = n_coolprop if len(names) == 1 else n_coolprop_mixture
        n_cp_open = n_coolprop if len(names) == 1 else n_coolprop_mixture_unspecified
        t_cp, p_cp = random_states(n_cp)
        for backend in ("HEOS", "SRK"):
            rows.append((f"CoolProp {backend}, update(PT) per state", n_cp_open,
                         time_coolprop(backend, names, x, t_cp[:n_cp_open], p_cp[:n_cp_open], gas_phase=False,
                                       repeats=3 if n_cp_open == n_cp else 1)))
            rows.append((f"CoolProp {backend}, update(PT), phase given as gas", n_cp,
                         time_coolprop(backend, names, x, t_cp, p_cp, gas_phase=True)))
        for path, count, seconds in rows:
            us, rate = fmt_rate(seconds)
            print(f"{label:<16} {path:<50} {count:>9,} {us:>10} {rate:>14}")
            if not isinstance(seconds, str):
                measured[(label, path)] = seconds
        print()

    batch_pure = measured[("methane", "statepath PR, residual_batch + idealgas batch")]
    single_mix = measured[("natural gas (5)", "statepath PR, single_phase_state (one at a time)")]
    print(f"targets (load average {os.getloadavg()[0]:.2f} at the end: other work on the machine slows every row)")
    verdict = lambda ok: "met" if ok else "NOT met"  # noqa: E731
    print(f"  batch, pure fluid:        {1.0 / batch_pure:14,.0f} states/s   target >= {BATCH_TARGET_STATES_PER_S:,}"
          f"   {verdict(1.0 / batch_pure >= BATCH_TARGET_STATES_PER_S)}")
    print(f"  one 5-component state:    {single_mix * 1e6:14.1f} us         target <= {SINGLE_MIXTURE_TARGET_US:.0f} us"
          f"      {verdict(single_mix * 1e6 <= SINGLE_MIXTURE_TARGET_US)}")


if __name__ == "__main__":
    main()
