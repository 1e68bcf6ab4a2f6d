"""Sync speed: move N observations (with their members and ratings) from a field log into an
empty office log, then repeat the sync (nothing to move), and measure peak Python memory.

Peak memory is tracemalloc's peak during the first sync (rows stream inside SQLite and in
fixed-size batches, so it must not grow with N); a second, smaller run shows it side by side.
Prints one JSON object on its last line: {"rows", "first_seconds", "repeat_seconds", "peak_mb",
...}. Targets (issue 8): first sync under 5 s, repeat under 0.5 s. Then 10 new posts synced from
a log of 1,000,000 posts the office already holds (``incremental_1e6_seconds``, target under
0.2 s: the cost follows what is new; building that log takes about a minute, and
``--incremental 100000`` gives ``incremental_1e5_seconds`` sooner).
"""

from __future__ import annotations

import argparse
import json
import sys
import tempfile
import time
import tracemalloc
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parent.parent))

from bench.store import synthetic
from fieldcheck.store import Log
from fieldcheck.store.sync import sync


def run(n: int) -> dict:
    with tempfile.TemporaryDirectory() as tmp:
        t = time.perf_counter()
        with Log.open(Path(tmp) / "field.db", author="bench", device="bench-field") as log:
            log.import_rows(synthetic(n), "Bench site", "Bench visit")
        build_s = time.perf_counter() - t
        office = Path(tmp) / "office.db"
        Log.open(office, author="office").close()
        with Log.open(Path(tmp) / "field.db") as log:
            t = time.perf_counter()
            first = sync(log, office)
            first_s = time.perf_counter() - t
            t = time.perf_counter()
            again = sync(log, office)
            repeat_s = time.perf_counter() - t
            # memory on its own run (tracemalloc slows every allocation): a second empty office
            office2 = Path(tmp) / "office2.db"
            Log.open(office2, author="office").close()
            tracemalloc.start()
            sync(log, office2)
            peak = tracemalloc.get_traced_memory()[1]
            tracemalloc.stop()
        with Log.open(office, readonly=True) as off:
            got = off.db.conn.execute("SELECT count(*) FROM observations").fetchone()[0]
    assert got == n, (got, n)
    assert again.moved == 0, again.sentence()
    return {
        "rows": n,
        "first_seconds": round(first_s, 3),
        "repeat_seconds": round(repeat_s, 3),
        "peak_mb": round(peak / 2**20, 2),
        "rows_moved": first.rows_sent,
        "build_seconds": round(build_s, 2),
    }


def incremental(n: int, new: int = 10) -> dict:
    """Sync ``new`` new posts from a field log of ``n`` posts already held by the office: the
    cost must follow what is new, not the size of the log. The floor is a sync that moves
    nothing, taken in the same run."""
    with tempfile.TemporaryDirectory() as tmp:
        field, office = Path(tmp) / "field.db", Path(tmp) / "office.db"
        t = time.perf_counter()
        with Log.open(field, author="bench", device="bench-field") as log:
            log.import_rows(synthetic(n), "Bench site", "Bench visit")
            sync(log, office)  # the first sync: every row moves (not timed)
            build_s = time.perf_counter() - t
            t = time.perf_counter()
            sync(log, office)  # nothing new: the floor (each side's conflict list now kept)
            nothing_s = time.perf_counter() - t
            visit = log.visits()[0]
            for row in synthetic(new, start=n):
                log.save_post(visit.id, row)
            t = time.perf_counter()
            res = sync(log, office)
            inc_s = time.perf_counter() - t
        assert res.sent.get("observations") == new, res.sentence()
    return {
        f"incremental_{n:.0e}_seconds".replace("+0", ""): round(inc_s, 3),
        "incremental_posts": new,
        "nothing_new_seconds": round(nothing_s, 3),
        "incremental_build_seconds": round(build_s, 1),
    }


def main() -> None:
    ap = argparse.ArgumentParser()
    ap.add_argument("--rows", type=int, default=100_000)
    ap.add_argument("--small", type=int, default=10_000)
    ap.add_argument(
        "--incremental",
        type=int,
        default=1_000_000,
        help="log size for the 10-new-posts sync (default 1000000: incremental_1e6_seconds)",
    )
    a = ap.parse_args()
    inc = incremental(a.incremental)
    print(json.dumps(inc))
    small = run(a.small)
    print(json.dumps(small))
    big = run(a.rows)
    big["small_rows"] = small["rows"]
    big["small_peak_mb"] = small["peak_mb"]
    big["small_first_seconds"] = small["first_seconds"]
    big.update(inc)
    print(json.dumps(big))


if __name__ == "__main__":
    main()
