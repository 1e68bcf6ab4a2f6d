"""CSV import (bad rows reported by row and column, the rest imported in one transaction),
export round trip, the demo survey and the commands around them."""

from __future__ import annotations

import csv
import json
import sqlite3

import pytest

from fieldcheck.cli import main
from fieldcheck.store import Log, seed_demo


def test_import_rows_reports_bad_rows_and_imports_the_rest(log, shore):
    rows = [shore, {**shore, "tag": "S2", "height": "tall"}, {**shore, "tag": "S3"}]
    res = log.import_rows(rows, "Alder Row", "Shoring")
    assert res.imported == 2
    assert [(e.row, e.column) for e in res.errors] == [(1, "height")]
    assert [p.tag for p in log.posts(res.visit.id)] == ["S1", "S3"]
    assert all(p.ratio is not None for p in log.posts())
    # same site and visit found by name on a second import
    res2 = log.import_rows([{**shore, "tag": "S4"}], "Alder Row", "Shoring")
    assert res2.visit == res.visit and len(log.posts(res.visit.id)) == 3


def _fk_problems(log) -> list:
    return log.db.conn.execute("PRAGMA foreign_key_check").fetchall()


def test_import_writes_no_dangling_reference_and_leaves_the_check_on(log, shore):
    # an import writes without SQLite's per-row foreign-key check (its ids refer to rows it
    # found or wrote itself): what it wrote must pass the full check (judgement)
    rows = [{**shore, "tag": f"S{i}"} for i in range(40)] + [{**shore, "height": "tall"}]
    log.import_rows(rows, "Alder Row", "Shoring", chunk=16)  # a new site and visit
    log.import_rows(rows[:5], "Alder Row", "Shoring", chunk=16)  # found by name
    other = log.add_site("Birch Lane")
    log.import_rows(rows[:3], "Birch Lane", "Props")  # an existing site, a new visit
    assert other.id in {s.id for s in log.sites()}
    assert log.db.conn.execute("SELECT count(*) FROM ratings").fetchone()[0] == 48
    assert _fk_problems(log) == []
    assert log.db.conn.execute("PRAGMA foreign_keys").fetchone()[0] == 1
    # the check is back for every other write
    with pytest.raises(sqlite3.IntegrityError, match="FOREIGN KEY"), log._write():
        log.db.conn.execute(
            "INSERT INTO members (id, site_id, tag, device_id, device_seq, author, created_at) "
            "VALUES ('m-x', 'no-such-site', 'X', 'd', 999999, 'a', '2026-06-01T09:00:00Z')"
        )


def test_rerate_writes_no_dangling_reference_and_leaves_the_check_on(log, shore):
    # a re-rate too writes without the per-row check (its ratings refer to revisions it read
    # in the same transaction and the stamp it found or made): the full check passes (judgement)
    log.import_rows([{**shore, "tag": f"S{i}"} for i in range(20)], "Alder Row", "Shoring")
    post = log.posts()[0]
    log.save_post(post.visit_id, {**shore, "tag": "S0", "height": "7 ft"}, member_id=post.member_id)
    res = log.rerate_all(chunk=8)
    assert res.rated == 20
    assert log.db.conn.execute("SELECT count(*) FROM ratings").fetchone()[0] == 41
    assert _fk_problems(log) == []
    assert log.db.conn.execute("PRAGMA foreign_keys").fetchone()[0] == 1


def test_an_import_that_fails_part_way_writes_nothing_and_leaves_the_check_on(log, shore):
    def rows():
        yield from ({**shore, "tag": f"S{i}"} for i in range(20))
        raise OSError("the file went away")

    before = log.db.conn.execute("SELECT count(*) FROM observations").fetchone()[0]
    with pytest.raises(OSError, match="went away"):
        log.import_rows(rows(), "Alder Row", "Shoring", chunk=8)
    assert log.db.conn.execute("SELECT count(*) FROM observations").fetchone()[0] == before
    assert log.db.conn.execute("PRAGMA foreign_keys").fetchone()[0] == 1


def test_the_garbage_collector_is_paused_only_while_a_bulk_write_runs(log, shore):
    # import and re-rate pause Python's cyclic collector for their loops (a speed measure): it
    # must be on again after them, also after an import that fails part way, and one the
    # caller paused stays paused (common practice, no source)
    import gc

    seen = []

    def rows(fail: bool):
        for i in range(20):
            seen.append(gc.isenabled())
            yield {**shore, "tag": f"S{i}"}
        if fail:
            raise OSError("the file went away")

    assert gc.isenabled()
    log.import_rows(rows(False), "Alder Row", "Shoring", chunk=8)
    assert seen and not any(seen) and gc.isenabled()
    with pytest.raises(OSError, match="went away"):
        log.import_rows(rows(True), "Alder Row", "Shoring", chunk=8)
    assert gc.isenabled()
    assert log.rerate_all(chunk=8).rated == 20 and gc.isenabled()
    gc.disable()
    try:
        log.rerate_all(chunk=8)
        assert not gc.isenabled()
    finally:
        gc.enable()


def test_export_round_trip_through_csv(log, shore, tmp_path):
    seed_demo(log)
    table = log.export_rows()
    out = tmp_path / "out.csv"
    with out.open("w", newline="") as fh:
        w = csv.DictWriter(fh, table.columns)
        w.writeheader()
        w.writerows({k: "" if v is None else v for k, v in r.items()} for r in table.rows)
    with out.open(newline="") as fh:
        rows = list(csv.DictReader(fh))
    with Log.open(tmp_path / "second.db") as other:
        res = other.import_rows(rows, "Copy", "Copy")
        assert res.errors == [] and res.imported == len(table.rows)
        again = other.export_rows()
    numeric = ("ratio", "capacity_kN", "demand_kN")
    same = [
        c
        for c in table.columns
        if c
        not in (
            "site",
            "visit",
            "member_id",
            "observation_id",
            "revised_at",
            "revised_by",
            *numeric,
        )
    ]
    assert [{k: str(r[k] or "") for k in same} for r in again.rows] == [
        {k: str(r[k] or "") for k in same} for r in table.rows
    ]
    # the engine's iterative solves may differ in the last digits between batches
    for a, b in zip(again.rows, table.rows, strict=True):
        for k in numeric:
            assert (a[k] is None) == (b[k] is None)
            if a[k] is not None:
                assert float(a[k]) == pytest.approx(float(b[k]), rel=1e-6)


def test_demo_has_sound_posts_and_one_to_make_safe(log):
    site, visits = seed_demo(log)
    assert site.name == "14 Alder Row" and len(visits) == 2
    posts = log.posts(site_id=site.id)
    tags = [p.tag for p in posts]
    assert tags[:4] == ["B1", "B2", "B3", "B4"] and "S6" not in tags  # S6 withdrawn
    actions = {p.tag: p.action_label for p in posts}
    assert actions["S4"] == "make-safe-now"
    assert sum(a == "no-action" for a in actions.values()) >= 4
    s3 = next(p for p in posts if p.tag == "S3")
    assert len(log.history(s3.member_id)) == 2  # the correction is kept as history


def test_commands_demo_import_export(tmp_path, capsys):
    db = str(tmp_path / "survey.db")
    assert main(["demo", "--db", db]) == 0
    assert main(["demo", "--db", db]) == 2  # the log already holds sites
    assert main(["--db", db, "demo", "--force"]) == 0  # main-parser --db is honoured too
    capsys.readouterr()
    src = tmp_path / "in.csv"
    src.write_text(
        "tag,size,height,species,grade,load\n"
        "P1,4x4,8ft,douglas-fir-larch,no2,3000lbf\n"
        "P2,4x4,eight feet,douglas-fir-larch,no2,3000lbf\n"
        "P3,6x6,9ft,southern-pine,no1,6000lbf\n"
    )
    rc = main(
        ["import", "--db", db, str(src), "--site", "Yard", "--visit", "Day 1", "--inspector", "K"]
    )
    err = capsys.readouterr().err
    assert rc == 1 and "row 2: height: " in err and "height: height" not in err
    out = tmp_path / "out.json"
    assert main(["export", "--db", db, "--format", "json", "--out", str(out)]) == 0
    data = json.loads(out.read_text())
    assert {"P1", "P3"} <= {p["tag"] for p in data["posts"]}
    assert "ratio" in data["columns"] and "engine_version" in data["columns"]
    assert main(["export", "--db", db, "--format", "csv"]) == 0
    text = capsys.readouterr().out
    assert text.splitlines()[0].startswith("tag,") and "14 Alder Row" in text
    assert main(["import", "--db", db, str(src)]) == 2  # --site and --visit are required
    assert main(["export", "--db", str(tmp_path / "none.db")]) == 2
