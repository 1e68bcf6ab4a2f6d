"""Open conflicts found from what is new agree with a scan of the whole log, step by step."""

from __future__ import annotations

import random
import sqlite3

from fieldcheck.store import Log
from fieldcheck.store.conflicts import MARK_KEY
from fieldcheck.store.repo import HEAD, new_id


def _scan(conn: sqlite3.Connection) -> list[str]:
    return sorted(
        r[0]
        for r in conn.execute(
            f"SELECT member_id FROM observations o WHERE {HEAD} "
            "GROUP BY member_id HAVING count(*) > 1"
        )
    )


def _revise(conn, obs_id: str, *, merges: str | None = None, seq: int) -> None:
    """A revision of ``obs_id`` written as another device would (no head check: forks too)."""
    conn.execute(
        "INSERT INTO observations (id, member_id, visit_id, supersedes, merges, withdrawn, "
        "reason, record_json, device_id, device_seq, author, created_at) "
        "SELECT ?, member_id, visit_id, id, ?, 0, '', record_json, 'device-B', ?, 'b', "
        "created_at FROM observations WHERE id = ?",
        [new_id(), merges, seq, obs_id],
    )


def test_incremental_conflicts_match_a_full_scan(log, visit, shore):
    rnd = random.Random(7)
    members = [log.save_post(visit.id, {**shore, "tag": f"P{i}"}).member_id for i in range(30)]
    conn = log.db.conn
    seq = 0
    for step in range(40):
        with conn:  # one writer's transaction of a few revisions
            for _ in range(rnd.randint(1, 4)):
                mid = rnd.choice(members)
                revs = [
                    r[0]
                    for r in conn.execute("SELECT id FROM observations WHERE member_id = ?", [mid])
                ]
                heads = [
                    r[0]
                    for r in conn.execute(
                        f"SELECT id FROM observations o WHERE member_id = ? AND {HEAD}", [mid]
                    )
                ]
                seq += 1
                if len(heads) > 1 and rnd.random() < 0.3:  # settle: supersede one, merge one
                    _revise(conn, heads[0], merges=heads[1], seq=seq)
                else:  # a revision of any earlier one: a fork when it is not a head
                    _revise(conn, rnd.choice(revs), seq=seq)
        if step % 3 == 0 or step == 39:
            assert log.conflicts() == _scan(conn), step
    assert _scan(conn), "the walk made some conflicts"
    # a mark that is not the row at its rowid (a rebuilt or replaced file): a full scan
    with conn:
        conn.execute("UPDATE meta SET value = '1 not-this-row' WHERE key = ?", [MARK_KEY])
    assert log.conflicts() == _scan(conn)


def test_a_read_only_log_finds_new_conflicts_without_writing(tmp_path, shore):
    path = tmp_path / "survey.db"
    with Log.open(path, author="a", device="device-A") as lg:
        site = lg.add_site("S")
        v = lg.add_visit(site.id)
        obs = lg.save_post(v.id, shore)
        assert lg.conflicts() == []  # mark kept
        with lg.db.conn as conn:
            _revise(conn, obs.id, seq=1)
            _revise(conn, obs.id, seq=2)
    with Log.open(path, readonly=True) as ro:
        assert ro.conflicts() == [obs.member_id]
