"""How fast the terminal app answers, on the demo sheets (flowsheets/*.toml).

Measured headless through Textual's test driver, per sheet:

* start to first solved table: from a fresh Python process importing the app
  to the stream table filled with solved values ("filled"), and to the first
  frame drawn after that ("drawn"); best and median of several processes, and
  the CPU time the process had used by then (a busy machine stretches the
  wall time, not the CPU time); and "from spawn", the drawn time counted from
  the parent starting the process, so the interpreter's start is included as
  the engineer typing ``statepath open`` feels it. Target: under 1 s.
* edit to updated table: from an edit of a feed temperature (typed as text,
  checked, written into the document) to the table showing the re-solved
  values, and to the frame that draws them; each edit made on a settled
  screen, as an engineer makes them. Also the median of the same edits made
  back to back, each starting while the last one is still being drawn.
  Target: under 100 ms.

Run: ``.venv/bin/python benchmarks/bench_app.py [SHEET ...]``. A script that
prints numbers, not a timed test. "drawn" hooks ``App._display`` (a private
method of Textual's, where a composed frame goes to the terminal driver).
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
STARTS = 5
EDITS = 15


def _environ(folder: str) -> dict:
    return {"XDG_CONFIG_HOME": os.path.join(folder, "config"), "XDG_STATE_HOME": os.path.join(folder, "state"),
            "HOME": folder}


def _cpu_s() -> float:
    times = os.times()
    return times.user + times.system


def _timed_app_class():
    from tui.app import StatepathApp

    class TimedApp(StatepathApp):
        """Notes when each frame goes to the driver, and the first frame after
        each solve came back."""

        CSS_PATH = str(Path(sys.modules[StatepathApp.__module__].__file__).parent / StatepathApp.CSS_PATH)
        frames = 0
        frame_after_solve: float | None = None

        def _solved(self, *args) -> None:
            self.frame_after_solve = None
            super()._solved(*args)

        def _display(self, screen, renderable) -> None:
            super()._display(screen, renderable)
            if renderable is not None:
                self.frames += 1
                if self.frame_after_solve is None and self.solves_finished:
                    self.frame_after_solve = time.perf_counter()

    return TimedApp


async def _frame_after_solve(app, timeout: float = 2.0) -> float:
    waited = time.perf_counter()
    while app.frame_after_solve is None:
        if time.perf_counter() - waited > timeout:
            return float("nan")
        await asyncio.sleep(0.0005)
    return app.frame_after_solve


def _start_once(sheet: str, spawned_at: float) -> None:
    """Child process: time from before the import to the first solved table,
    and from the moment the parent spawned it (wall clock, so the
    interpreter's own start is counted as an engineer would feel it)."""
    started = time.perf_counter()
    since_spawn = time.time() - spawned_at
    app_class = _timed_app_class()
    from tui.widgets.stream_table import StreamTable

    async def main() -> dict:
        with tempfile.TemporaryDirectory() as folder:
            # A copy: a recovery file left beside the demo would add its dialog.
            copy = os.path.join(folder, os.path.basename(sheet))
            Path(copy).write_text(Path(sheet).read_text("utf-8"), "utf-8")
            app = app_class(copy, environ=_environ(folder))
            async with app.run_test(size=(120, 40)):
                table = app.main_screen.query_one(StreamTable)
                while app.solves_finished == 0 or table.row_count == 0:
                    await asyncio.sleep(0.0005)
                filled, cpu = time.perf_counter() - started, _cpu_s()
                drawn = await _frame_after_solve(app) - started
                return {"filled_s": filled, "drawn_s": drawn, "cpu_s": cpu,
                        "spawn_to_drawn_s": drawn + since_spawn}

    print(json.dumps(asyncio.run(main())))


def _first_feed_temperature(document: dict) -> tuple[tuple, float] | None:
    for name, table in (document.get("streams") or {}).items():
        text = table.get("temperature") if isinstance(table, dict) else None
        if isinstance(text, str) and text.split()[-1] in ("degC", "K"):
            return ("streams", name, "temperature"), float(text.split()[0])
    return None


async def _settle(app) -> None:
    """Until no solve runs and nothing more is drawn for a moment."""
    while True:
        await app.workers.wait_for_complete()
        frames = app.frames
        await asyncio.sleep(0.05)
        if frames == app.frames and not app.solve_running:
            return


async def _edits(sheet: str) -> dict | str:
    from tui.widgets.stream_table import StreamTable

    app_class = _timed_app_class()
    with tempfile.TemporaryDirectory() as folder:
        copy = os.path.join(folder, os.path.basename(sheet))
        Path(copy).write_text(Path(sheet).read_text("utf-8"), "utf-8")
        app = app_class(copy, environ=_environ(folder))
        async with app.run_test(size=(120, 40)):
            while app.solves_finished == 0:
                await asyncio.sleep(0.001)
            found = _first_feed_temperature(app.document)
            if found is None:
                return "no feed temperature in degC or K to edit"
            key_path, value = found
            unit = app.document["streams"][key_path[1]]["temperature"].split()[-1]
            table = app.main_screen.query_one(StreamTable)
            filled, drawn, back_to_back = [], [], []
            step = 0  # alternates the value, so that every edit changes the sheet
            for settled in (True, False):
                for _ in range(EDITS):
                    step += 1
                    if settled:
                        await _settle(app)
                    done = app.solves_finished
                    started = time.perf_counter()
                    error = app.edit_field(key_path, "temperature", f"{value + 0.5 * (step % 2 + 1)} {unit}")
                    if error:
                        return f"edit refused: {error}"
                    while app.solves_finished == done:
                        await asyncio.sleep(0.0005)
                    assert table.row_count > 0
                    ended = time.perf_counter()
                    if settled:
                        filled.append(ended - started)
                        drawn.append(await _frame_after_solve(app) - started)
                    else:
                        back_to_back.append(ended - started)
            await app.workers.wait_for_complete()  # the recovery file is written by a thread
            return {"filled": filled, "drawn": drawn, "back_to_back": back_to_back}


def _ms(value: float) -> str:
    return f"{value * 1000:.0f}"


def main(argv: list[str]) -> int:
    if argv and argv[0] == "--start-once":
        _start_once(argv[1], float(argv[2]))
        return 0
    sheets = argv or sorted(glob.glob(str(ROOT / "flowsheets" / "*.toml")))
    if not sheets:
        sheets = [str(ROOT / "tests" / "app" / "sheets" / "letdown.toml")]
        print("no demo sheets in flowsheets/ yet; measuring the app's test sheet")
    print("start to first solved table (ms): filled best/median, drawn best/median, CPU by then (median),")
    print("  drawn counted from the process spawn, interpreter start included (median)")
    print("edit to updated table (ms), settled screen: filled median/worst, drawn median/worst; back to back: median")
    for sheet in sheets:
        starts = []
        for _ in range(STARTS):
            child = subprocess.run([sys.executable, __file__, "--start-once", sheet, repr(time.time())], capture_output=True,
                                   text=True, cwd=ROOT, env={**os.environ, "PYTHONPATH": str(ROOT)})
            lines = [line for line in child.stdout.splitlines() if line.startswith("{")]
            if child.returncode or not lines:
                print(f"{Path(sheet).name:24} start failed: {child.stderr.strip().splitlines()[-1:]}")
                break
            starts.append(json.loads(lines[-1]))
        name = Path(sheet).name
        if starts:
            filled = [s["filled_s"] for s in starts]
            drawn = [s["drawn_s"] for s in starts]
            cpu = statistics.median(s["cpu_s"] for s in starts)
            spawn = statistics.median(s["spawn_to_drawn_s"] for s in starts)
            print(f"{name:24} start  filled {_ms(min(filled)):>5}/{_ms(statistics.median(filled)):>5}  "
                  f"drawn {_ms(min(drawn)):>5}/{_ms(statistics.median(drawn)):>5}  cpu {_ms(cpu):>5}  "
                  f"from spawn {_ms(spawn):>5}")
        edits = asyncio.run(_edits(sheet))
        if isinstance(edits, str):
            print(f"{name:24} edit   {edits}")
            continue
        print(f"{name:24} edit   filled {_ms(statistics.median(edits['filled'])):>5}/{_ms(max(edits['filled'])):>5}  "
              f"drawn {_ms(statistics.median(edits['drawn'])):>5}/{_ms(max(edits['drawn'])):>5}  "
              f"back to back {_ms(statistics.median(edits['back_to_back'])):>5}")
    print("targets: start under 1000 ms, edit under 100 ms")
    return 0


if __name__ == "__main__":
    sys.path.insert(0, str(ROOT))
    raise SystemExit(main(sys.argv[1:]))
