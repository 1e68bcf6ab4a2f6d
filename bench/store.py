"""Survey-log speed: import 100,000 synthetic posts, then re-rate the whole log.

Prints one JSON object on its last line: {"posts", "import_seconds", "rerate_seconds", ...}.
Targets (issue 7): import under 10 s, re-rate under 2 s.
"""

from __future__ import annotations

import argparse
import json
import sys
import tempfile
import time
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parent.parent))

from fieldcheck.store import Log


def synthetic(n: int) -> list[dict[str, str]]:
    """Posts as an inspector would type them: a few sizes, heights, species and loads repeated."""
    sizes = ("4x4", "4x6", "6x6", "6x8", "8x8")
    heights = ("7ft", "7ft 6in", "8ft", "8ft 4in", "9ft", "10ft", "2.4 m", "2700 mm")
    species = ("douglas-fir-larch", "southern-pine", "hem-fir", "unknown")
    grades = ("no1", "no2", "select-structural", "unknown")
    ends = ("pinned", "pinned", "fixed")
    loads = ("2000lbf", "3000lbf", "4500lbf", "6000lbf", "12 kN", "25 kN", "8000lbf")
    rows = []
    for i in range(n):
        rows.append(
            {
                "tag": f"P{i + 1}",
                "location": f"grid {chr(65 + i % 8)}/{i % 13 + 1}",
                "size": sizes[i % 5],
                "height": heights[i % 8],
                "top": ends[i % 3],
                "bottom": "pinned",
                "species": species[(i // 5) % 4],
                "grade": grades[(i // 3) % 4],
                "load": loads[i % 7],
                "moisture": ("12%", "19%", "24%")[i % 3],
                "notes": "",
            }
        )
    return rows


def main() -> None:
    ap = argparse.ArgumentParser()
    ap.add_argument("--posts", type=int, default=100_000)
    a = ap.parse_args()
    rows = synthetic(a.posts)
    from fieldcheck.records import parse_records

    t = time.perf_counter()
    parse_records(rows)  # the records layer alone, for the split (it is inside both figures)
    parse_s = time.perf_counter() - t
    # time spent inside the records layer + engine (rate_records), to split the figures
    import fieldcheck.records as records

    inner = [0.0]
    real_rate_records = records.rate_records

    def timed_rate_records(rs):
        t = time.perf_counter()
        try:
            return real_rate_records(rs)
        finally:
            inner[0] += time.perf_counter() - t

    records.rate_records = timed_rate_records
    with tempfile.TemporaryDirectory() as tmp:
        with Log.open(Path(tmp) / "bench.db", author="bench") as log:
            t0 = time.perf_counter()
            res = log.import_rows(rows, "Bench site", "Bench visit")
            t1 = time.perf_counter()
            import_engine, inner[0] = inner[0], 0.0
            rr = log.rerate_all()
            t2 = time.perf_counter()
            rerate_engine = inner[0]
            posts = log.posts()
            t3 = time.perf_counter()
        size_mb = (Path(tmp) / "bench.db").stat().st_size / 1e6
    assert res.imported == a.posts and not res.errors, res.errors[:3]
    assert rr.rated == a.posts
    print(
        json.dumps(
            {
                "posts": a.posts,
                "import_seconds": round(t1 - t0, 3),
                "rerate_seconds": round(t2 - t1, 3),
                "import_store_seconds": round(t1 - t0 - import_engine, 3),
                "rerate_store_seconds": round(t2 - t1 - rerate_engine, 3),
                "rate_records_seconds": round(rerate_engine, 3),
                "records_parse_seconds": round(parse_s, 3),
                "posts_view_seconds": round(t3 - t2, 3),
                "current_posts": len(posts),
                "file_mb": round(size_mb, 1),
            }
        )
    )


if __name__ == "__main__":
    main()
