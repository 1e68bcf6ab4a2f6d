"""Interface speed: time to first screen against a bare Textual app, and keystroke to repaint.

1. First screen: each app runs headless in a fresh subprocess; the time from the start of the
   process (before Textual is imported) to ``on_ready`` (first screen composed and mounted).
   Several alternating runs, medians, ratio ours / bare (target <= 1.5).
2. Keystroke: in the post editor, alternate typing a digit into the height field and deleting it
   (both valid, so every key re-rates); the time from sending the key to the rating panel being
   painted again, median over 100 keystrokes (target < 16 ms).

Prints one JSON object on its last line.
"""

from __future__ import annotations

import asyncio
import json
import statistics
import subprocess
import sys
import tempfile
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
RUNS = 7

BARE = """
import time; t0 = time.perf_counter()
from textual.app import App
from textual.widgets import Label
class Bare(App):
    def compose(self):
        yield Label("hello")
    def on_ready(self):
        print("READY", time.perf_counter() - t0, flush=True)
        self.exit()
Bare().run(headless=True)
"""

OURS = """
import time; t0 = time.perf_counter()
import sys
from fieldcheck.tui.app import FieldcheckApp
class Timed(FieldcheckApp):
    def on_ready(self):
        print("READY", time.perf_counter() - t0, flush=True)
        self.exit()
Timed(db=sys.argv[1], demo=True).run(headless=True)
"""


def first_screen(code: str, db: str) -> float:
    out = subprocess.run(
        [sys.executable, "-c", code, db], cwd=ROOT, capture_output=True, text=True, timeout=120
    )
    for line in out.stdout.splitlines():
        if line.startswith("READY"):
            return float(line.split()[1])
    raise RuntimeError(f"no READY line: {out.stdout[-500:]} {out.stderr[-2000:]}")


async def keystrokes(db: str, n: int = 100) -> list[float]:
    sys.path.insert(0, str(ROOT))
    from textual.widgets import Input

    from fieldcheck.tui.app import FieldcheckApp

    app = FieldcheckApp(db=db, demo=True)
    samples: list[float] = []
    async with app.run_test(size=(120, 40)) as pilot:
        for key in ("enter", "o"):
            for _ in range(3):
                await pilot.pause()
                await app.workers.wait_for_complete()
            await pilot.press(key)
        for _ in range(3):
            await pilot.pause()
            await app.workers.wait_for_complete()
        editor = app.screen
        panel = editor.query_one("#rating-head")  # capacity, demand, ratio bar, action
        painted: list[float] = []
        original = panel.render_lines

        def render_lines(crop):  # the compositor asks the panel for its lines: it is repainting
            painted.append(time.perf_counter())
            return original(crop)

        panel.render_lines = render_lines  # type: ignore[method-assign]
        inp = editor.query_one("#f-height", Input)
        inp.focus()
        await pilot.pause()
        inp.value = "8.5 ft"  # "8.55 ft" and "8.5 ft": both valid, so every key re-rates
        inp.cursor_position = 3
        await pilot.pause(0.1)
        for k in range(n):
            key = "5" if k % 2 == 0 else "backspace"
            painted.clear()
            t0 = time.perf_counter()
            await pilot.press(key)
            deadline = time.perf_counter() + 1.0
            while not painted and time.perf_counter() < deadline:
                await asyncio.sleep(0.001)
            if painted:
                samples.append((painted[0] - t0) * 1000.0)
            await pilot.pause()
        assert editor.record["height"] in ("8.5 ft", "8.55 ft"), editor.record["height"]
    return samples


def main() -> None:
    with tempfile.TemporaryDirectory() as tmp:
        db = str(Path(tmp) / "bench.fieldcheck")
        first_screen(OURS, db)  # makes and seeds the log once; warms the OS file cache
        first_screen(BARE, db)
        ours, bare = [], []
        for _ in range(RUNS):
            bare.append(first_screen(BARE, db))
            ours.append(first_screen(OURS, db))
        keys = asyncio.run(keystrokes(db))
    result = {
        "first_screen_ratio": round(statistics.median(ours) / statistics.median(bare), 3),
        "keystroke_ms_median": round(statistics.median(keys), 2),
        "first_screen_seconds": round(statistics.median(ours), 3),
        "bare_first_screen_seconds": round(statistics.median(bare), 3),
        "keystroke_ms_p90": round(sorted(keys)[int(0.9 * len(keys))], 2),
        "keystrokes": len(keys),
        "runs": RUNS,
    }
    print(json.dumps(result))


if __name__ == "__main__":
    main()
