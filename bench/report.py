"""Report speed: write the HTML survey report of a log holding 1,000 synthetic posts.

Prints one JSON object on its last line: {"posts", "seconds", "bytes", "per_post_ms", ...}.
Target (issue 10): under 3 s for 1,000 posts (one engine call for the ratings, one for every
post's capacity curve).
"""

from __future__ import annotations

import argparse
import json
import sys
import tempfile
import time
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parent.parent))

from fieldcheck.report.html import write_report
from fieldcheck.store import Log


def synthetic(n: int) -> list[dict[str, str]]:
    """Posts as typed: a few sizes, heights, species, ends and loads repeated (invented)."""
    sizes = ("4x4", "4x6", "6x6", "6x8", "8x8")
    heights = ("7ft", "7ft 6in", "8ft", "8ft 4in", "9ft", "10ft", "2.4 m", "2700 mm")
    species = ("douglas-fir-larch", "southern-pine", "hem-fir", "unknown")
    grades = ("no1", "no2", "select-structural", "unknown")
    ends = ("pinned", "pinned", "fixed")
    loads = ("2000lbf", "3000lbf", "4500lbf", "6000lbf", "12 kN", "25 kN", "8000lbf", "14000lbf")
    return [
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
    ]


def main() -> None:
    ap = argparse.ArgumentParser()
    ap.add_argument("--posts", type=int, default=1000)
    ap.add_argument("--units", choices=("us", "metric"), default="us")
    a = ap.parse_args()
    with tempfile.TemporaryDirectory() as tmp:
        with Log.open(Path(tmp) / "bench.db", author="bench") as log:
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
    print(
        json.dumps(
            {
                "posts": res.imported,
                "seconds": round(seconds, 3),
                "bytes": size,
                "per_post_ms": round(1000 * seconds / max(res.imported, 1), 3),
            }
        )
    )


if __name__ == "__main__":
    main()
