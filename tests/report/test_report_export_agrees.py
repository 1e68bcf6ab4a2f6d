"""`fieldcheck export --format csv` carries the same ratings as the report (demo survey)."""

from __future__ import annotations

import csv

from fieldcheck.cli import main
from fieldcheck.engine.rating import rate
from fieldcheck.engine.result import ACTIONS
from fieldcheck.records import parse_records
from fieldcheck.report.html import render_report
from fieldcheck.units import format_force


def test_export_csv_columns_equal_the_report(demo_log, tmp_path, parse_html):
    db = str(demo_log.path)
    out_csv = tmp_path / "export.csv"
    argv = ["export", "--db", db, "--format", "csv", "--out", str(out_csv), "--units", "metric"]
    assert main(argv) == 0
    with out_csv.open(newline="", encoding="utf-8") as fh:
        rows = list(csv.DictReader(fh))
    posts = demo_log.posts()
    assert [r["member_id"] for r in rows] == [p.member_id for p in posts]
    r = rate(parse_records([p.record for p in posts]).batch)
    cells = parse_html(render_report(demo_log)).cells
    for j, row in enumerate(rows):
        cap_n = float(row["capacity_kN"]) * 1000.0
        # the export rounds to 0.01 kN and a ratio to 0.001
        assert abs(cap_n - float(r.capacity_n[j])) <= 5.0, row["tag"]
        assert abs(float(row["ratio"]) - float(r.ratio[j])) <= 5e-4, row["tag"]
        assert abs(float(row["demand_kN"]) * 1000.0 - float(r.demand_n[j])) <= 5.0
        assert row["action"] == ACTIONS[int(r.action[j])]
        assert row["governing"] == r.governing_name(j)
        # and the report prints the exported numbers (rel 1e-6: iterative solves differ in the
        # last digits between a one-post save and a batch re-rating)
        assert cells[(row["member_id"], "capacity")][0] == format_force(r.capacity_n[j], "us")
        assert float(cells[(row["member_id"], "ratio")][0]) == float(row["ratio"])
