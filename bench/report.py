"""Report speed: write the HTML survey report of a log holding 1,000 synthetic posts, then (in
a fresh process, so its peak memory is its own) of 10,000 posts.

Prints one JSON object on its last line: {"posts", "seconds", "bytes", "per_post_ms",
"posts_10k_seconds", "peak_mb", "bytes_10k"}. Targets: 1,000 posts under 3 s; 10,000 posts under
30 s; peak memory under 300 MB whatever the number of posts (the report reads and rates the log
chunk by chunk twice, keeps what its summary parts show on disk and streams the file, so time
grows linearly and memory stays flat: compare --posts-big 10000 with 40000 or 100000).
--posts-big N changes the second run; --summary-only writes it as a summary only (the first
pass alone: the way to see 1,000,000 posts in minutes, as the whole report of that many is
about 13 GB of HTML).
"""

from __future__ import annotations

import argparse
import json
import sys
import tempfile
import time
from collections.abc import Iterator
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parent.parent))

from fieldcheck.report.html import write_report
from fieldcheck.store import Log


def synthetic(n: int) -> Iterator[dict[str, str]]:
    """Posts as typed: a few sizes, heights, species, ends and loads repeated (invented); made
    as the import reads them, so a large run holds no list of them."""
    sizes = ("4x4", "4x6", "6x6", "6x8", "8x8")
    heights = ("7ft", "7ft 6in", "8ft", "8ft 4in", "9ft", "10ft", "2.4 m", "2700 mm")
    species = ("douglas-fir-larch", "southern-pine", "hem-fir", "unknown")
    grades = ("no1", "no2", "select-structural", "unknown")
    ends = ("pinned", "pinned", "fixed")
    loads = ("2000lbf", "3000lbf", "4500lbf", "6000lbf", "12 kN", "25 kN", "8000lbf", "14000lbf")
    return (
        {
            "tag": f"P{i + 1}",
            "location": f"grid {chr(65 + i % 8)}/{i % 13 + 1}",
            "size": sizes[i % 5],
            "height": heights[i % 8],
            "top": ends[i % 3],
            "bottom": "pinned",
            "species": species[(i // 5) % 4],
            "grade": grades[(i // 3) % 4],
            "load": loads[i % 8],
            "moisture": ("12%", "19%", "24%")[i % 3],
            "duration": ("permanent", "ten-years", "seven-days")[i % 3],
            "notes": f"synthetic post {i + 1} <as typed> & kept",
        }
        for i in range(n)
    )


def big(n: int, units: str, summary_only: bool = False) -> dict:
    """The 10,000-post run, in this (fresh) process: import, then time one report."""
    import resource

    with (
        tempfile.TemporaryDirectory() as tmp,
        Log.open(Path(tmp) / "big.db", author="bench") as log,
    ):
        log.import_rows(synthetic(n), "Bench site", "Bench visit")
        t, c = time.perf_counter(), time.process_time()
        path = write_report(log, Path(tmp) / "big.html", units=units, summary_only=summary_only)
        seconds, cpu = time.perf_counter() - t, time.process_time() - c
        size = path.stat().st_size
    peak_kb = resource.getrusage(resource.RUSAGE_SELF).ru_maxrss  # Linux: kilobytes
    return {
        "seconds": round(seconds, 2),
        "cpu_seconds": round(cpu, 2),
        "peak_mb": round(peak_kb / 1024, 1),
        "bytes": size,
    }


def main() -> None:
    ap = argparse.ArgumentParser()
    ap.add_argument("--posts", type=int, default=1000)
    ap.add_argument("--posts-big", type=int, default=10000)
    ap.add_argument("--units", choices=("us", "metric"), default="us")
    ap.add_argument("--summary-only", action="store_true", help="the --posts-big run only")
    ap.add_argument("--big-only", action="store_true", help=argparse.SUPPRESS)
    a = ap.parse_args()
    if a.big_only:
        print(json.dumps(big(a.posts_big, a.units, a.summary_only)))
        return
    with (
        tempfile.TemporaryDirectory() as tmp,
        Log.open(Path(tmp) / "bench.db", author="bench") as log,
    ):
        t = time.perf_counter()
        res = log.import_rows(synthetic(a.posts), "Bench site", "Bench visit")
        import_s = time.perf_counter() - t
        write_report(log, Path(tmp) / "warm.html", units=a.units)  # imports, table reads
        t = time.perf_counter()
        path = write_report(log, Path(tmp) / "report.html", units=a.units)
        seconds = time.perf_counter() - t
        size = path.stat().st_size
    print(
        f"imported {res.imported} posts in {import_s:.2f} s; report {size / 1e6:.1f} MB",
        file=sys.stderr,
    )
    import subprocess

    child = subprocess.run(
        [
            sys.executable,
            __file__,
            "--big-only",
            "--posts-big",
            str(a.posts_big),
            "--units",
            a.units,
            *(["--summary-only"] if a.summary_only else []),
        ],
        capture_output=True,
        text=True,
        check=True,
    )
    b = json.loads(child.stdout.strip().splitlines()[-1])
    print(
        json.dumps(
            {
                "posts": res.imported,
                "seconds": round(seconds, 3),
                "bytes": size,
                "per_post_ms": round(1000 * seconds / max(res.imported, 1), 3),
                "posts_big": a.posts_big,
                "summary_only": a.summary_only,
                "posts_10k_seconds": b["seconds"],
                "posts_10k_cpu_seconds": b["cpu_seconds"],
                "peak_mb": b["peak_mb"],
                "bytes_10k": b["bytes"],
            }
        )
    )


if __name__ == "__main__":
    main()
