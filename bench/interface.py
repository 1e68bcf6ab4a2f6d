"""Interface speed: time to first screen against a bare Textual app, and keystroke to repaint.

1. First screen: each app runs headless in a fresh subprocess; the time from the start of the
   process (before Textual is imported) to ``on_ready`` (first screen composed and mounted).
   Several alternating runs, medians, ratio ours / bare (target <= 1.5).
2. Keystroke: in the post editor, alternate typing a digit into the height field and deleting it
   (both valid, so every key re-rates); the time from sending the key to the rating panel being
   painted again, median over 100 keystrokes (target < 16 ms).

3. A large visit (the post table pages from SQLite): in a fresh subprocess, the time from
   opening a visit of 10,000 posts to its table showing rows (``visit_10k_open_s``, target
   < 0.5 s), the time a filter keystroke takes to refill the table (``visit_10k_filter_key_ms``,
   median, target < 100 ms), and a visit of 100,000 posts opened the same way
   (``visit_100k_open_s``, target < 2 s; ``visit_100k_peak_mb``, the process's peak, < 300 MB).
   Then one post gets a revision while another screen covers the visit, and the time from
   leaving that screen to the table being filled again is ``visit_10k_return_ms`` /
   ``visit_100k_return_ms`` (the visit is never read again: only that post).
   ``--no-large`` leaves these out.

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


VISIT = """
import asyncio, json, resource, sys, time
from fieldcheck.store import Log
from fieldcheck.tui.app import FieldcheckApp
from fieldcheck.tui.visit import VisitScreen

db, name, keys = sys.argv[1], sys.argv[2], sys.argv[3]
with Log.open(db, readonly=True) as log:
    vid = next(v.id for v in log.visits() if v.name == name)

async def main():
    app = FieldcheckApp(db=db, demo=False)
    out = {}
    async with app.run_test(size=(120, 40)) as pilot:
        await pilot.pause()
        await app.workers.wait_for_complete()
        t0 = time.perf_counter()
        screen = VisitScreen(vid)
        await app.push_screen(screen)
        from textual.widgets import DataTable, Input
        table = screen.query_one("#posts", DataTable)
        while not table.row_count:
            await asyncio.sleep(0.002)
        await pilot.pause()
        out["open_s"] = time.perf_counter() - t0
        inp = screen.query_one("#filter", Input)
        inp.focus()
        await pilot.pause()
        filled = []
        real = screen._fill
        def timed(*a, **k):
            real(*a, **k)
            filled.append(time.perf_counter())
        screen._fill = timed
        samples = []
        for ch in keys:
            filled.clear()
            t = time.perf_counter()
            await pilot.press(ch)
            while not filled:
                await asyncio.sleep(0.001)
            samples.append((filled[0] - t) * 1000.0)
            await pilot.pause()
        out["filter_key_ms"] = sorted(samples)[len(samples) // 2] if samples else None
        out["shown"] = screen.shown
        out["peak_mb"] = resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024.0
        # back from a post: another screen over the visit while one post gets a revision, then
        # the time from leaving that screen to the visit's table being filled again
        from textual.screen import Screen
        await app.push_screen(Screen())
        await pilot.pause()
        with Log.open(db) as w:
            (mid,) = w.db.conn.execute(
                "SELECT member_id FROM observations WHERE visit_id = ? LIMIT 1", [vid]
            ).fetchone()
            w.save_post(vid, {**w.head(mid).record, "load": "1234 lbf"}, mid)
        filled.clear()
        t = time.perf_counter()
        await app.pop_screen()
        while not filled:
            await asyncio.sleep(0.001)
        out["return_ms"] = (filled[0] - t) * 1000.0
    print("VISIT", json.dumps(out), flush=True)

asyncio.run(main())
"""


def large_visits(tmp: Path) -> dict:
    """A log with visits of 10,000 and 100,000 posts (realistic, nearly every record distinct);
    each visit opened in a fresh subprocess."""
    sys.path.insert(0, str(ROOT))
    from bench.store import synthetic
    from fieldcheck.store import Log

    db = str(tmp / "large.fieldcheck")
    with Log.open(db, author="bench") as log:
        log.import_rows(synthetic(10_000), "Large site", "ten thousand")
        log.import_rows(synthetic(100_000, start=10_000), "Large site", "hundred thousand")

    def visit(name: str, keys: str) -> dict:
        out = subprocess.run(
            [sys.executable, "-c", VISIT, db, name, keys],
            cwd=ROOT,
            capture_output=True,
            text=True,
            timeout=600,
        )
        for line in out.stdout.splitlines():
            if line.startswith("VISIT"):
                return json.loads(line[6:])
        raise RuntimeError(f"no VISIT line: {out.stdout[-500:]} {out.stderr[-2000:]}")

    small = visit("ten thousand", "doug no1 P12")
    big = visit("hundred thousand", "")
    return {
        "visit_10k_open_s": round(small["open_s"], 3),
        "visit_10k_filter_key_ms": round(small["filter_key_ms"], 1),
        "visit_10k_return_ms": round(small["return_ms"], 1),
        "visit_100k_open_s": round(big["open_s"], 3),
        "visit_100k_return_ms": round(big["return_ms"], 1),
        "visit_100k_peak_mb": round(big["peak_mb"]),
        "visit_10k_peak_mb": round(small["peak_mb"]),
    }


def main() -> None:
    large = "--no-large" not in sys.argv
    with tempfile.TemporaryDirectory() as tmp:
        db = str(Path(tmp) / "bench.fieldcheck")
        first_screen(OURS, db)  # makes and seeds the log once; warms the OS file cache
        first_screen(BARE, db)
        ours, bare = [], []
        for _ in range(RUNS):
            bare.append(first_screen(BARE, db))
            ours.append(first_screen(OURS, db))
        keys = asyncio.run(keystrokes(db))
        visits = large_visits(Path(tmp)) if large else {}
    result = {
        "first_screen_ratio": round(statistics.median(ours) / statistics.median(bare), 3),
        "keystroke_ms_median": round(statistics.median(keys), 2),
        "first_screen_seconds": round(statistics.median(ours), 3),
        "bare_first_screen_seconds": round(statistics.median(bare), 3),
        "keystroke_ms_p90": round(sorted(keys)[int(0.9 * len(keys))], 2),
        "keystrokes": len(keys),
        "runs": RUNS,
        **visits,
    }
    print(json.dumps(result))


if __name__ == "__main__":
    main()
