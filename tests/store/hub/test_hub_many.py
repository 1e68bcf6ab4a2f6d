"""Many inspectors on one hub: concurrent syncs lose and duplicate nothing (the hub ends as the
same syncs one at a time leave it), and least-privilege roles hold."""

from __future__ import annotations

import shutil
from collections import Counter
from concurrent.futures import ThreadPoolExecutor

import psycopg
import pytest

from fieldcheck.store import Log
from fieldcheck.store.hub.schema import admin_sql
from fieldcheck.store.merge import SYNC_TABLES
from fieldcheck.store.sync import sync

pytestmark = pytest.mark.slow  # a real server and twenty logs

INSPECTORS = 20


def hub_rows(url: str) -> dict[str, list[tuple]]:
    out = {}
    with psycopg.connect(url) as conn:
        for t in SYNC_TABLES:
            rows = conn.execute(f"SELECT * FROM fieldcheck.{t.name} ORDER BY id").fetchall()
            if t.name == "engine_stamps":  # created_at: when each device first rated with it
                rows = [r[:-1] for r in rows]
            out[t.name] = rows
    return out


def _sync_path(path, url):
    with Log.open(path) as log:
        return sync(log, url)


def test_twenty_inspectors_at_once_equal_one_at_a_time(tmp_path, pg_cluster, shore):
    hub_a = pg_cluster.url(pg_cluster.new_database("many_a"))
    hub_b = pg_cluster.url(pg_cluster.new_database("many_b"))
    seed = tmp_path / "seed.db"
    with Log.open(seed, author="office", device="dev-office") as log:
        v = log.add_visit(log.add_site("Shared site").id, "office")
        for i in range(10):
            log.save_post(v.id, dict(shore, tag=f"common-{i}"))
        shared = [p.member_id for p in log.posts()]
        sync(log, hub_a)
    shutil.copy(seed, tmp_path / "seed_b.db")
    _sync_path(tmp_path / "seed_b.db", hub_b)
    logs = []
    for k in range(INSPECTORS):
        path = tmp_path / f"insp{k}.db"
        with Log.open(path, author=f"insp{k}", device=f"dev-{k:02d}") as log:
            sync(log, hub_a)  # takes the shared site and its posts
            visit = log.add_visit(log.sites()[0].id, f"insp{k}", name=f"visit {k}")
            for i in range(k % 4 + 1):  # new posts
                log.save_post(visit.id, dict(shore, tag=f"i{k}-{i}"))
            if k % 2:  # an edit of its own post
                own = next(p for p in log.posts() if p.tag.startswith(f"i{k}-"))
                log.save_post(visit.id, dict(shore, tag=own.tag, height="7ft"), own.member_id)
            if k % 3 == 0:  # an edit of a shared post that others edit too: conflicts
                mid = shared[k % 5]
                log.save_post(visit.id, dict(shore, tag="common", height=f"{6 + k % 3}ft"), mid)
        logs.append(path)
    copies = []
    for path in logs:
        c = path.with_name("b_" + path.name)
        shutil.copy(path, c)
        copies.append(c)
    with ThreadPoolExecutor(INSPECTORS) as pool:
        results = list(pool.map(lambda p: _sync_path(p, hub_a), logs))
    for path in copies:
        _sync_path(path, hub_b)
    assert all(r.mode == "hub" for r in results)
    a, b = hub_rows(hub_a), hub_rows(hub_b)
    for t in a:
        assert a[t] == b[t], t
        assert len({r[0] for r in a[t]}) == len(a[t])  # no duplicate ids
    # every row of every log reached the hub
    total_obs = sum(len(Log.open(p, readonly=True).history(m)) for p in [seed] for m in shared)
    assert len(a["observations"]) >= total_obs + INSPECTORS
    edits = Counter(k % 5 for k in range(INSPECTORS) if k % 3 == 0)
    conflicted = {shared[i] for i, n in edits.items() if n > 1}  # edited apart twice or more
    # a last sync of any log shows the same open conflicts as the hub holds
    last = _sync_path(logs[0], hub_a)
    assert set(last.conflicts) == conflicted, (edits, [shared.index(c) for c in last.conflicts])


@pytest.fixture
def roles_hub(pg_cluster):
    db = pg_cluster.new_database("roles")
    pg_cluster.sql(admin_sql(), db)
    for who, role in (("ann", "fieldcheck_inspector"), ("ben", "fieldcheck_reviewer")):
        pg_cluster.sql(
            f"DO $$ BEGIN IF NOT EXISTS (SELECT 1 FROM pg_roles WHERE rolname = '{who}') THEN "
            f"CREATE ROLE {who} LOGIN PASSWORD '{who}-pw' IN ROLE {role}; END IF; END $$"
        )
    return db


def test_inspector_adds_but_cannot_rewrite_history(tmp_path, pg_cluster, roles_hub, shore):
    url = pg_cluster.url(roles_hub, user="ann", password="ann-pw")
    with Log.open(tmp_path / "ann.db", author="ann", device="dev-ann") as log:
        v = log.add_visit(log.add_site("Mill Lane").id, "ann")
        log.save_post(v.id, shore)
        assert sync(log, url).sent["observations"] == 1
        log.add_review("note", "shores re-wedged at 10:00", visit_id=v.id)
        assert sync(log, url).sent["reviews"] == 1  # an inspector may leave notes
    with psycopg.connect(url, autocommit=True) as conn:
        for sql in (
            "UPDATE fieldcheck.observations SET reason = 'x'",
            "DELETE FROM fieldcheck.observations",
            "TRUNCATE fieldcheck.ratings",
            "UPDATE fieldcheck.hub_meta SET value = '9' WHERE key = 'schema_version'",
        ):
            with pytest.raises(psycopg.errors.InsufficientPrivilege):
                conn.execute(sql)
        with pytest.raises(psycopg.errors.InsufficientPrivilege):  # row-level security
            conn.execute(
                "INSERT INTO fieldcheck.reviews (id, kind, device_id, device_seq, author, "
                "created_at) VALUES ('r1', 'sign-off', 'dev-x', 1, 'ann', '2026-01-01T00:00:00')"
            )


def test_reviewer_may_record_reviews(tmp_path, pg_cluster, roles_hub):
    url = pg_cluster.url(roles_hub, user="ben", password="ben-pw")
    with psycopg.connect(url, autocommit=True) as conn:
        conn.execute(
            "INSERT INTO fieldcheck.reviews (id, kind, device_id, device_seq, author, created_at) "
            "VALUES ('r2', 'sign-off', 'dev-ben', 1, 'ben', '2026-01-01T00:00:00')"
        )
        with pytest.raises(psycopg.Error, match=r"append-only|permission denied"):
            conn.execute("DELETE FROM fieldcheck.reviews")


def test_role_that_may_not_create_the_hub_is_told_so(tmp_path, pg_cluster, shore, capsys):
    from fieldcheck.cli import main

    db = pg_cluster.new_database("nocreate")
    pg_cluster.sql(
        "DO $$ BEGIN IF NOT EXISTS (SELECT 1 FROM pg_roles WHERE rolname = 'cat') THEN "
        "CREATE ROLE cat LOGIN PASSWORD 'cat-pw'; END IF; END $$"
    )
    pg_cluster.sql(f'REVOKE CREATE ON DATABASE "{db}" FROM PUBLIC')
    path = tmp_path / "cat.db"
    with Log.open(path, author="cat", device="dev-cat") as log:
        v = log.add_visit(log.add_site("Mill Lane").id, "cat")
        log.save_post(v.id, shore)
    rc = main(["sync", "--quiet", "--db", str(path), pg_cluster.url(db, "cat", "cat-pw")])
    err = capsys.readouterr().err
    assert rc == 2 and "fieldcheck hub-sql" in err and "cat-pw" not in err
