"""Speed of the PH flash on a five-component natural gas, beside CoolProp's
SRK backend measured in the same run.

    .venv/bin/python benchmarks/bench_flash.py [--repeat N]

Prints a table of CPU times per flash (best of several rounds, and the
median, in milliseconds), with the machine's load average beside them. Targets: single-phase PH (stability test included) <= 0.3 ms,
two-phase PH <= 3 ms. CoolProp is a test-only dependency; this script is not
part of the test suite, and nothing in thermo/ imports it.

The natural gas (mole fractions) is the benchmark's own invented composition:
methane 0.85, ethane 0.07, propane 0.04, n-butane 0.02, nitrogen 0.02.
"""

from __future__ import annotations

import argparse
import os
import statistics
import sys
import time
from pathlib import Path

import numpy as np

sys.path.insert(0, str(Path(__file__).resolve().parents[1]))

from thermo.flash import flash_ph, flash_tp  # noqa: E402
from thermo.mixture import make_mixture  # noqa: E402
from thermo.models import make_model  # noqa: E402

NAMES = ["methane", "ethane", "propane", "n-butane", "nitrogen"]
COOLPROP_NAMES = "Methane&Ethane&Propane&n-Butane&Nitrogen"
GAS = np.array([0.85, 0.07, 0.04, 0.02, 0.02])
# (label, T used to make the enthalpy target (K), P (Pa), target ms)
CASES = [
    ("single-phase, 300 K 50 bar", 300.0, 50e5, 0.3),
    ("single-phase, 250 K 5 bar", 250.0, 5e5, 0.3),
    ("two-phase, 220 K 30 bar", 220.0, 30e5, 3.0),
    ("two-phase, 200 K 50 bar", 200.0, 50e5, 3.0),
    ("two-phase, 150 K 10 bar", 150.0, 10e5, 3.0),
]


def timed(call, rounds: int, per_round: int) -> tuple[float, float]:
    """Best and median time per call, ms of this process's CPU time (the
    machine may be shared; CPU time is what the flash itself costs)."""
    samples = []
    for _ in range(rounds):
        start = time.process_time()
        for _ in range(per_round):
            call()
        samples.append((time.process_time() - start) / per_round * 1e3)
    return min(samples), statistics.median(samples)


def coolprop_case(backend: str, temperature: float, pressure: float, rounds: int, per_round: int):
    """CoolProp's own PH flash at the enthalpy of its own TP state."""
    try:
        import CoolProp.CoolProp as CP
    except ImportError:
        return None, "CoolProp not installed"
    state = CP.AbstractState(backend, COOLPROP_NAMES)
    state.set_mole_fractions(GAS.tolist())
    try:
        state.update(CP.PT_INPUTS, pressure, temperature)
        h = state.hmolar()
        state.update(CP.HmolarP_INPUTS, h, pressure)
        note = f"T = {state.T():.2f} K, Q = {state.Q():.3f}"
    except ValueError as error:
        return None, f"failed: {str(error)[:60]}"

    def call():
        state.update(CP.HmolarP_INPUTS, h, pressure)

    return timed(call, rounds, per_round), note


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--rounds", type=int, default=15)
    parser.add_argument("--per-round", type=int, default=20)
    parser.add_argument("--coolprop-rounds", type=int, default=3)
    args = parser.parse_args()
    model = make_model("peng-robinson", make_mixture(NAMES))
    srk = make_model("soave-redlich-kwong", make_mixture(NAMES))
    print(f"PH flash, natural gas {dict(zip(NAMES, GAS.tolist()))}")
    load = os.getloadavg()[0] if hasattr(os, "getloadavg") else float("nan")
    print(f"best and median of {args.rounds} rounds x {args.per_round} flashes, CPU ms per flash; "
          f"load average {load:.2f} on {os.cpu_count()} CPUs\n")
    header = f"{'case':30} {'phase (vapor fr.)':22} {'PR best':>8} {'median':>8} {'SRK best':>9} {'target':>7} {'met':>4}   CoolProp SRK best / median"
    print(header)
    print("-" * len(header))
    for label, temperature, pressure, target in CASES:
        start = flash_tp(model, temperature, pressure, GAS)
        h = start.enthalpy
        found = flash_ph(model, pressure, h, GAS)
        assert abs(found.temperature - temperature) < 1e-6, "PH flash did not return its TP state"
        best, median = timed(lambda: flash_ph(model, pressure, h, GAS), args.rounds, args.per_round)
        h_srk = flash_tp(srk, temperature, pressure, GAS).enthalpy
        best_srk, _ = timed(lambda: flash_ph(srk, pressure, h_srk, GAS), args.rounds, args.per_round)
        # CoolProp's cubic PH flash takes tens to hundreds of milliseconds: fewer calls
        cp_times, cp_note = coolprop_case("SRK", temperature, pressure, args.coolprop_rounds, 1)
        cp_text = f"{cp_times[0]:.3f} / {cp_times[1]:.3f}  ({cp_note})" if cp_times else cp_note
        phase = f"{start.phase} ({start.vapor_fraction:.3f})"
        met = "yes" if best <= target else "no"
        print(f"{label:30} {phase:22} {best:8.3f} {median:8.3f} {best_srk:9.3f} {target:7.1f} {met:>4}   {cp_text}")


if __name__ == "__main__":
    main()
