"""How long the chart's phase envelope takes on the mixture demo sheets.

Per sheet: the time ``tui.envelope.envelope_for_result`` takes (bubble and
dew curves of the feed, enthalpy and entropy on them), best and median of
several runs in one process (the first run includes building the model and
its kernel), the points each curve got and whether a curve was cut short
near the critical point. The chart computes this in a worker thread after
its first frame; this is how long the dotted curves take to appear.

Run: ``.venv/bin/python benchmarks/bench_envelope.py [SHEET ...]`` (default:
flowsheets/gas-letdown.toml and flowsheets/compressor-train.toml). A script
that prints numbers, not a timed test.
"""

from __future__ import annotations

import statistics
import sys
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
sys.path.insert(0, str(ROOT))

from thermo.flowsheet import build_mixture, solve_sheet  # noqa: E402
from thermo.models import make_model  # noqa: E402
from thermo.sheetfile import load_sheet  # noqa: E402
from tui.envelope import envelope_for_result  # noqa: E402

RUNS = 7
DEFAULT_SHEETS = ("flowsheets/gas-letdown.toml", "flowsheets/compressor-train.toml")


def measure(path: str) -> str:
    sheet = load_sheet(path).sheet
    result = solve_sheet(sheet)
    connections = {name: (unit.inlet_streams, unit.outlet_streams) for name, unit in sheet.units.items()}
    times, envelope, note = [], None, None
    for _ in range(RUNS):
        started = time.perf_counter()
        # A fresh model each run, as the app's worker builds one.
        envelope, note = envelope_for_result(result, lambda: make_model(sheet.model, build_mixture(sheet)),
                                             connections)
        times.append((time.perf_counter() - started) * 1e3)
    if envelope is None:
        return f"{Path(path).name}: no envelope ({note})"
    return (f"{Path(path).name}: best {min(times):.0f} ms, median {statistics.median(times):.0f} ms; "
            f"bubble {len(envelope.bubble)} points, dew {len(envelope.dew)} points, "
            f"{'cut near the critical point' if envelope.cut else 'not cut'}; of {envelope.source}")


def main(argv: list[str]) -> int:
    for path in argv or DEFAULT_SHEETS:
        print(measure(str(path)))
    return 0


if __name__ == "__main__":
    raise SystemExit(main(sys.argv[1:]))
