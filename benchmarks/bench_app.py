"""How fast the terminal app answers, on the demo sheets (flowsheets/*.toml).

Two numbers per sheet, each measured headless through Textual's test driver:

* start to first solved table: from a fresh Python process importing the app
  to the stream table filled with solved values (target under 1 s);
* edit to updated table: from an edit of a feed temperature (typed as text,
  checked, written into the document) to the table showing the re-solved
  values (target under 100 ms), median and worst of several edits.

Run: ``.venv/bin/python benchmarks/bench_app.py [SHEET ...]``. A script that
prints numbers, not a timed test.
"""

from __future__ import annotations

import asyncio
import glob
import json
import os
import statistics
import subprocess
import sys
import tempfile
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
EDITS = 10


def _environ(folder: str) -> dict:
    return {"XDG_CONFIG_HOME": os.path.join(folder, "config"), "XDG_STATE_HOME": os.path.join(folder, "state"),
            "HOME": folder}


def _start_once(sheet: str) -> None:
    """Child process: time from before the import to the first solved table."""
    started = time.perf_counter()
    from tui.app import StatepathApp
    from tui.widgets.stream_table import StreamTable

    async def main() -> float:
        with tempfile.TemporaryDirectory() as folder:
            app = StatepathApp(sheet, environ=_environ(folder))
            async with app.run_test(size=(120, 40)):
                while app.solves_finished == 0 or app.main_screen.query_one(StreamTable).row_count == 0:
                    await asyncio.sleep(0.001)
                return time.perf_counter() - started

    print(json.dumps({"start_s": asyncio.run(main())}))


def _first_feed_temperature(document: dict) -> tuple[tuple, float] | None:
    for name, table in (document.get("streams") or {}).items():
        text = table.get("temperature") if isinstance(table, dict) else None
        if isinstance(text, str) and text.split()[-1] in ("degC", "K"):
            return ("streams", name, "temperature"), float(text.split()[0])
    return None


async def _edits(sheet: str) -> list[float] | str:
    from tui.app import StatepathApp
    from tui.widgets.stream_table import StreamTable

    with tempfile.TemporaryDirectory() as folder:
        copy = os.path.join(folder, os.path.basename(sheet))
        Path(copy).write_text(Path(sheet).read_text("utf-8"), "utf-8")
        app = StatepathApp(copy, environ=_environ(folder))
        async with app.run_test(size=(120, 40)):
            while app.solves_finished == 0:
                await asyncio.sleep(0.001)
            found = _first_feed_temperature(app.document)
            if found is None:
                return "no feed temperature in degC or K to edit"
            key_path, value = found
            unit = app.document["streams"][key_path[1]]["temperature"].split()[-1]
            table = app.main_screen.query_one(StreamTable)
            times = []
            for step in range(EDITS):
                done = app.solves_finished
                started = time.perf_counter()
                error = app.edit_field(key_path, "temperature", f"{value + 0.5 * (step % 2 + 1)} {unit}")
                if error:
                    return f"edit refused: {error}"
                while app.solves_finished == done:
                    await asyncio.sleep(0.0005)
                assert table.row_count > 0
                times.append(time.perf_counter() - started)
            return times


def main(argv: list[str]) -> int:
    if argv and argv[0] == "--start-once":
        _start_once(argv[1])
        return 0
    sheets = argv or sorted(glob.glob(str(ROOT / "flowsheets" / "*.toml")))
    if not sheets:
        sheets = [str(ROOT / "tests" / "app" / "sheets" / "letdown.toml")]
        print("no demo sheets in flowsheets/ yet; measuring the app's test sheet")
    print(f"{'sheet':34} {'start to solved table':>22} {'edit to table: median':>22} {'worst':>8}")
    for sheet in sheets:
        starts = []
        for _ in range(3):
            child = subprocess.run([sys.executable, __file__, "--start-once", sheet], capture_output=True,
                                   text=True, cwd=ROOT, env={**os.environ, "PYTHONPATH": str(ROOT)})
            lines = [line for line in child.stdout.splitlines() if line.startswith("{")]
            if child.returncode or not lines:
                print(f"{Path(sheet).name:34} failed: {child.stderr.strip().splitlines()[-1:]}")
                break
            starts.append(json.loads(lines[-1])["start_s"])
        edits = asyncio.run(_edits(sheet))
        start_text = f"{min(starts) * 1000:.0f} ms (best of {len(starts)})" if starts else "-"
        if isinstance(edits, str):
            print(f"{Path(sheet).name:34} {start_text:>22} {edits}")
        else:
            print(f"{Path(sheet).name:34} {start_text:>22} {statistics.median(edits) * 1000:>19.1f} ms "
                  f"{max(edits) * 1000:>5.1f} ms")
    print("targets: start under 1000 ms, edit under 100 ms")
    return 0


if __name__ == "__main__":
    sys.path.insert(0, str(ROOT))
    raise SystemExit(main(sys.argv[1:]))
