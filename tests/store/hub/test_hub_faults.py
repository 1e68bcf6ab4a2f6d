"""Faults: the server stopped in the middle of a sync, and several first syncs into one empty
database at once."""

from __future__ import annotations

from concurrent.futures import ThreadPoolExecutor

import psycopg
import pytest

from fieldcheck.store import Log
from fieldcheck.store.hub.url import HubError
from fieldcheck.store.merge import SYNC_TABLES
from fieldcheck.store.sync import sync

pytestmark = pytest.mark.slow  # a real server, stopped and started


def _rows(url) -> dict[str, int]:
    with psycopg.connect(url) as conn:
        out = {}
        for t in SYNC_TABLES:
            n, distinct = conn.execute(
                f"SELECT count(*), count(DISTINCT id) FROM fieldcheck.{t.name}"
            ).fetchone()
            assert n == distinct, t.name  # nothing duplicated
            out[t.name] = n
        return out


def test_server_stopped_mid_sync_then_rerun_completes(tmp_path, pg_cluster, hub_url, shore):
    path = tmp_path / "field.db"
    rows = [dict(shore, tag=f"P{i}", height=f"{6 + i % 5}ft") for i in range(3000)]
    with Log.open(path, author="ann", device="dev-ann") as log:
        log.import_rows(rows, "Mill Lane", "first visit")
        before = log.posts()
    stopped = []

    def stop_midway(done: int, total: int, stage: str) -> None:
        if not stopped and stage.startswith("send") and 0 < done < total:
            pg_cluster.stop("immediate")  # the server dies with the COPY under way
            stopped.append(done)

    try:
        with Log.open(path) as log, pytest.raises(HubError) as err:
            sync(log, hub_url, progress=stop_midway)
        assert stopped
        msg = str(err.value)
        assert "\n" not in msg and pg_cluster.password not in msg and "run the sync again" in msg
    finally:
        pg_cluster.start()
    assert _rows(hub_url)["observations"] == 0  # the sync was one transaction: nothing half-taken
    with Log.open(path) as log:
        assert log.posts() == before  # the field log is unchanged
        s = sync(log, hub_url)
        assert s.sent["observations"] == 3000
        assert sync(log, hub_url).moved == 0
    got = _rows(hub_url)
    assert got["observations"] == 3000 and got["members"] == 3000 and got["ratings"] == 3000


def test_first_syncs_at_once_create_the_hub_once(tmp_path, hub_url, shore):
    paths = []
    for k in range(6):
        p = tmp_path / f"f{k}.db"
        with Log.open(p, author=f"i{k}", device=f"dev-{k}") as log:
            v = log.add_visit(log.add_site(f"site {k}").id, f"i{k}")
            log.save_post(v.id, dict(shore, tag=f"T{k}"))
        paths.append(p)

    def one(p):
        with Log.open(p) as log:
            return sync(log, hub_url)

    with ThreadPoolExecutor(6) as pool:
        results = list(pool.map(one, paths))
    assert all(r.mode == "hub" for r in results)
    assert _rows(hub_url)["observations"] == 6
    firms = set()
    for p in paths:
        with Log.open(p) as log:
            sync(log, hub_url)
            firms.add(log.meta()["firm_id"])
            assert len(log.posts()) == 6
    assert len(firms) == 1  # one firm, adopted by every log
