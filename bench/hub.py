"""Hub speed: sync a field log of N observations (with members and ratings) into an empty
PostgreSQL hub, repeat the sync (nothing new), and let 20 inspectors with 5,000 posts each sync
at once (separate processes, as on twenty laptops). The folder sync of the same log into an
empty shared folder is measured in the same run, for the ratio.

The server: FIELDCHECK_BENCH_HUB (a URL of an empty database, e.g. a test server), or else a
throwaway cluster started like the hub tests' (tests/store/hub/pgcluster.py).
Prints one JSON object on its last line: {"rows", "first_seconds", "repeat_seconds",
"concurrent_inspectors", "concurrent_seconds", "folder_first_seconds", ...}.
Targets: first <= 2x folder_first, repeat < 0.5 s, every concurrent sync completes.
"""

from __future__ import annotations

import argparse
import json
import os
import shutil
import subprocess
import sys
import tempfile
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parent.parent
sys.path.insert(0, str(ROOT))
sys.path.insert(0, str(ROOT / "tests" / "store" / "hub"))

from bench.store import synthetic  # noqa: E402
from fieldcheck.store import Log  # noqa: E402
from fieldcheck.store.sync import sync  # noqa: E402


def _server():
    url = os.environ.get("FIELDCHECK_BENCH_HUB")
    if url:
        return None, lambda name: url
    from pgcluster import Cluster, find_bindir

    bindir = find_bindir()
    if bindir is None:
        sys.exit("bench/hub.py: no PostgreSQL server binaries and no FIELDCHECK_BENCH_HUB")
    cluster = Cluster(bindir)
    return cluster, lambda name: cluster.url(cluster.new_database(name))


def _office_key(tmp: Path) -> None:
    """The folder sync signs its bundles: a throwaway office key, and a state folder of its own."""
    from fieldcheck.store import signing

    key = signing.write_keys([signing.new_key_line()], tmp / "office.key")
    os.environ["FIELDCHECK_OFFICE_KEY_FILE"] = str(key)
    os.environ["FIELDCHECK_STATE_DIR"] = str(tmp / "state")


def run(n: int, inspectors: int, per: int) -> dict:
    cluster, new_hub = _server()
    try:
        with tempfile.TemporaryDirectory() as tmp:
            tmp = Path(tmp)
            _office_key(tmp)
            t = time.perf_counter()
            field = tmp / "field.db"
            with Log.open(field, author="bench", device="bench-field") as log:
                log.import_rows(synthetic(n), "Bench site", "Bench visit")
            build_s = time.perf_counter() - t
            shutil.copy(field, tmp / "field-folder.db")
            folder = tmp / "shared"
            folder.mkdir()
            with Log.open(tmp / "field-folder.db") as log:
                t = time.perf_counter()
                sync(log, folder)
                folder_s = time.perf_counter() - t
            url = new_hub("bench_first")
            with Log.open(field) as log:
                t = time.perf_counter()
                first = sync(log, url)
                first_s = time.perf_counter() - t
                t = time.perf_counter()
                again = sync(log, url)
                repeat_s = time.perf_counter() - t
            assert first.sent.get("observations") == n, first.sentence()
            assert again.moved == 0, again.sentence()
            # twenty laptops at once, each with its own posts, into one fresh hub
            url2 = new_hub("bench_many")
            logs = []
            for k in range(inspectors):
                p = tmp / f"insp{k}.db"
                with Log.open(p, author=f"insp{k}", device=f"bench-{k:02d}") as log:
                    log.import_rows(synthetic(per, k * per), f"Site {k}", "Visit 1")
                logs.append(p)
            env = dict(os.environ, PYTHONPATH=str(ROOT))
            t = time.perf_counter()
            procs = [
                subprocess.Popen(
                    [sys.executable, "-m", "fieldcheck", "sync", "--quiet", "--db", str(p), url2],
                    env=env,
                    stdout=subprocess.DEVNULL,
                    stderr=subprocess.PIPE,
                    text=True,
                )
                for p in logs
            ]
            codes = [(p.wait(), p.stderr.read()) for p in procs]
            conc_s = time.perf_counter() - t
            failed = [err for rc, err in codes if rc != 0]
            assert not failed, failed[:3]
            import psycopg

            with psycopg.connect(url2) as conn:
                held = conn.execute("SELECT count(*) FROM fieldcheck.observations").fetchone()[0]
            assert held == inspectors * per, (held, inspectors * per)
    finally:
        if cluster is not None:
            cluster.close()
    return {
        "rows": n,
        "first_seconds": round(first_s, 3),
        "repeat_seconds": round(repeat_s, 3),
        "concurrent_inspectors": inspectors,
        "concurrent_seconds": round(conc_s, 2),
        "folder_first_seconds": round(folder_s, 3),
        "first_over_folder": round(first_s / folder_s, 2),
        "rows_moved": first.rows_sent,
        "concurrent_rows_held": held,
        "build_seconds": round(build_s, 2),
    }


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__)
    ap.add_argument("--rows", type=int, default=100_000)
    ap.add_argument("--inspectors", type=int, default=20)
    ap.add_argument("--per", type=int, default=5_000)
    a = ap.parse_args()
    print(json.dumps(run(a.rows, a.inspectors, a.per)))


if __name__ == "__main__":
    main()
