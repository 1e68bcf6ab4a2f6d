"""Schema versions: upgrade from version 1 after a backup, newer or foreign files refused,
damaged files reported in one sentence, the field PRAGMAs on every connection."""

from __future__ import annotations

import sqlite3

import pytest

from fieldcheck.store import Log, LogError, connection
from fieldcheck.store.connection import PAGE_SIZE, connect, pragma
from fieldcheck.store.schema import MIGRATION_NAMES, SCHEMA_VERSION, migrations


def _make_v1(path):
    """A log as the first schema version left it, with one post in it."""
    db = connect(path)
    migrations.apply(db, stop_before=MIGRATION_NAMES[1])
    origin = "'dev-old', {seq}, 'old author', '2026-06-01T09:00:00+01:00'"
    with db.atomic():
        db.execute("INSERT INTO meta VALUES ('device_id', 'dev-old')")
        db.execute(f"INSERT INTO sites VALUES ('s1', 'Old site', '', '', {origin.format(seq=1)})")
        db.execute(
            "INSERT INTO visits VALUES ('v1', 's1', 'June', 'A. B.', '2026-06-01T09:00:00+01:00', "
            f"'[]', 'minimum', '', {origin.format(seq=2)})"
        )
        db.execute(f"INSERT INTO members VALUES ('m1', 's1', 'P1', {origin.format(seq=3)})")
        db.execute(
            "INSERT INTO observations VALUES ('o1', 'm1', 'v1', NULL, 0, '', "
            '\'{"tag": "P1", "size": "4x4", "height": "8ft", "load": "2000lbf"}\', '
            f"{origin.format(seq=4)})"
        )
    assert pragma(db, "user_version") == 1
    db.close()


def test_every_connection_gets_the_field_pragmas(log):
    assert pragma(log.db, "journal_mode") == "wal"
    assert pragma(log.db, "synchronous") == 2  # FULL
    assert pragma(log.db, "foreign_keys") == 1
    assert pragma(log.db, "page_size") == PAGE_SIZE == 16384  # a new log; judgement
    strict = [
        r[0]
        for r in log.db.conn.execute(
            "SELECT name FROM sqlite_master WHERE type = 'table' AND sql LIKE '%STRICT'"
        )
    ]
    assert {
        "sites",
        "visits",
        "members",
        "observations",
        "ratings",
        "attachments",
        "reviews",
        "proposals",
        "remedied",
    } <= set(strict)
    assert log.schema_version == SCHEMA_VERSION


def test_strict_tables_refuse_wrong_types(log, visit):
    with pytest.raises(sqlite3.IntegrityError):
        log.db.execute(
            "INSERT INTO sync_state VALUES ('office', 'sent', 'd', 'many', '2026-01-01T00:00:00Z')"
        )


def test_upgrade_from_version_1_keeps_data_and_leaves_a_backup(tmp_path):
    path = tmp_path / "survey.db"
    _make_v1(path)
    with Log.open(path) as log:
        assert log.schema_version == SCHEMA_VERSION
        assert log.backup_path is not None and log.backup_path.name.startswith(
            "survey.db.v1-backup-"
        )
        (post,) = log.posts()
        assert post.tag == "P1" and post.record["load"] == "2000lbf" and post.ratio is None
        assert log.device_id == "dev-old"
        # the new tables work, and the old post re-rates through the engine
        log.add_review("sign-off", "checked in the office", member_id=post.member_id)
        assert log.rerate_all().rated == 1
        backup = log.backup_path
    old = sqlite3.connect(backup)
    assert old.execute("PRAGMA user_version").fetchone()[0] == 1
    assert old.execute("SELECT count(*) FROM observations").fetchone()[0] == 1
    assert old.execute("PRAGMA integrity_check").fetchone()[0] == "ok"
    old.close()
    # opening again upgrades nothing and makes no second backup
    with Log.open(path) as log:
        assert log.backup_path is None
    assert len(list(tmp_path.glob("survey.db.v1-backup-*"))) == 1


def test_an_older_log_keeps_its_page_size_and_upgrades(tmp_path, monkeypatch):
    # a log made before new logs took 16 KiB pages (SQLite's default then, 4 KiB)
    path = tmp_path / "survey.db"
    monkeypatch.setattr(connection, "PAGE_SIZE", 4096)
    _make_v1(path)
    monkeypatch.undo()
    with Log.open(path) as log:
        assert pragma(log.db, "page_size") == 4096  # SQLite cannot change it in WAL mode
        assert log.schema_version == SCHEMA_VERSION
        assert len(log.posts()) == 1
        assert log.rerate_all().rated == 1
        assert pragma(log.db, "integrity_check") == "ok"


def _make_v5(path):
    """A log as schema version 5 left it: post P1 revised once (o2 supersedes o1), P2 not."""
    db = connect(path)
    migrations.apply(db, stop_before="0006_lean_indexes")
    at = "'2026-06-01T09:00:00+01:00'"
    obs = "id, member_id, visit_id, supersedes, record_json, device_id, device_seq, author, "
    obs += "created_at"
    rec = '\'{"tag": "%s", "size": "4x4", "height": "8ft", "load": "%s"}\''
    with db.atomic():
        db.execute("INSERT INTO meta VALUES ('device_id', 'dev-old')")
        db.execute(f"INSERT INTO sites VALUES ('s1', 'Old site', '', '', 'dev-old', 1, 'a', {at})")
        db.execute(
            f"INSERT INTO visits VALUES ('v1', 's1', 'June', 'A. B.', {at}, '[]', 'minimum', '', "
            f"'dev-old', 2, 'a', {at})"
        )
        for seq, (mid, tag) in enumerate((("m1", "P1"), ("m2", "P2")), start=3):
            db.execute(
                f"INSERT INTO members VALUES ('{mid}', 's1', '{tag}', 'dev-old', {seq}, 'a', {at})"
            )
        for seq, (oid, mid, sup, tag, load) in enumerate(
            (
                ("o1", "m1", "NULL", "P1", "2000lbf"),
                ("o2", "m1", "'o1'", "P1", "3000lbf"),
                ("o3", "m2", "NULL", "P2", "1000lbf"),
            ),
            start=5,
        ):
            db.execute(
                f"INSERT INTO observations ({obs}) VALUES ('{oid}', '{mid}', 'v1', {sup}, "
                f"{rec % (tag, load)}, 'dev-old', {seq}, 'a', {at})"
            )
    assert pragma(db, "user_version") == 5
    db.close()


def _index_sql(log, name):
    return log.db.conn.execute(
        "SELECT sql FROM sqlite_master WHERE type = 'index' AND name = ?", [name]
    ).fetchone()[0]


def test_upgrade_from_version_5_keeps_the_heads_with_a_partial_supersedes_index(tmp_path):
    path = tmp_path / "survey.db"
    _make_v5(path)
    with Log.open(path) as log:
        assert log.schema_version == SCHEMA_VERSION == 6
        assert log.backup_path is not None
        assert _index_sql(log, "observations_supersedes").endswith("WHERE supersedes IS NOT NULL")
        # the heads are found as before: P1's revision, P2's first record
        assert {p.tag: p.record["load"] for p in log.posts()} == {"P1": "3000lbf", "P2": "1000lbf"}
        assert [o.id for o in log.history(log.posts()[0].member_id)] == ["o1", "o2"]
        # and the head query still reaches the revision it supersedes through the index
        plan = " ".join(
            r[3]
            for r in log.db.conn.execute(
                "EXPLAIN QUERY PLAN SELECT o.id FROM observations o WHERE NOT EXISTS "
                "(SELECT 1 FROM observations c WHERE c.supersedes = o.id)"
            )
        )
        assert "USING COVERING INDEX observations_supersedes" in plan
        assert pragma(log.db, "integrity_check") == "ok"


def test_a_version_5_log_missing_the_supersedes_index_still_upgrades(tmp_path):
    path = tmp_path / "survey.db"
    _make_v5(path)
    con = sqlite3.connect(path)
    con.execute("DROP INDEX observations_supersedes")  # edited by hand
    con.commit()
    con.close()
    with Log.open(path) as log:
        assert log.schema_version == SCHEMA_VERSION
        assert _index_sql(log, "observations_supersedes").endswith("WHERE supersedes IS NOT NULL")
        assert {p.tag: p.record["load"] for p in log.posts()} == {"P1": "3000lbf", "P2": "1000lbf"}


def test_a_new_log_indexes_only_the_revisions_that_supersede_one(log, visit, shore):
    first = log.save_post(visit.id, shore)
    log.save_post(visit.id, dict(shore, load="3000 lbf"), member_id=first.member_id)
    log.save_post(visit.id, dict(shore, tag="S2"))
    assert _index_sql(log, "observations_supersedes").endswith("WHERE supersedes IS NOT NULL")
    assert {p.tag: p.record["load"] for p in log.posts()} == {"S1": "3000 lbf", "S2": shore["load"]}


def test_newer_schema_is_refused_and_the_file_left_unchanged(tmp_path):
    path = tmp_path / "future.db"
    Log.open(path).close()
    con = sqlite3.connect(path)
    con.execute(f"PRAGMA user_version = {SCHEMA_VERSION + 1}")
    con.commit()
    con.close()
    before = path.read_bytes()
    with pytest.raises(
        LogError,
        match=rf"newer fieldcheck \(schema version {SCHEMA_VERSION + 1}, this one reads up to "
        rf"{SCHEMA_VERSION}\)",
    ):
        Log.open(path)
    assert path.read_bytes() == before


def test_foreign_sqlite_file_is_refused(tmp_path):
    path = tmp_path / "other.db"
    con = sqlite3.connect(path)
    con.execute("CREATE TABLE x (a)")
    con.commit()
    con.close()
    with pytest.raises(LogError, match="not a fieldcheck survey log"):
        Log.open(path)


def test_unknown_migration_is_refused(tmp_path):
    path = tmp_path / "s.db"
    with Log.open(path) as log:
        log.db.table("_sqlite_migrations").insert(
            {"migration_set": "fieldcheck", "name": "0099_future", "applied_at": "x"}
        )
    with pytest.raises(LogError, match="0099_future"):
        Log.open(path)


@pytest.mark.parametrize("damage", ["garbage", "truncated", "zeroed-pages"])
def test_damaged_file_is_reported_in_one_sentence(tmp_path, damage, shore):
    path = tmp_path / "s.db"
    with Log.open(path) as log:
        s = log.add_site("s")
        v = log.add_visit(s.id, "x")
        for i in range(3):
            log.save_post(v.id, {**shore, "tag": f"P{i}", "notes": "x" * 200})
        log.import_rows(
            [{**shore, "tag": f"Q{i}", "notes": "y" * 300} for i in range(400)], "s", "v"
        )
    data = path.read_bytes()
    if damage == "garbage":
        path.write_bytes(b"this is not a database at all" * 100)
    elif damage == "truncated":
        path.write_bytes(data[: len(data) // 3])
    else:
        page = 4096
        path.write_bytes(data[: 2 * page] + b"\xff" * (len(data) - 4 * page) + data[-2 * page :])
    try:
        with Log.open(path) as log:
            report = log.integrity()
            problems = report.problems()
            assert problems and not report.ok
    except LogError as exc:
        msg = str(exc)
        assert "cannot be read" in msg and "\n" not in msg and str(path) in msg


def test_creation_interrupted_before_the_first_migration_is_finished_on_open(tmp_path):
    # found by the kill test: sqlite-utils commits its migrations table (and index) before
    # migration 1; a kill in between must not make the file look foreign
    from sqlite_utils import Database

    path = tmp_path / "half.db"
    db = Database(sqlite3.connect(path))
    migrations.ensure_migrations_table(db)
    db.close()
    with Log.open(path) as log:
        assert log.schema_version == SCHEMA_VERSION and log.is_empty()
