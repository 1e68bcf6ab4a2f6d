"""Open conflicts of a log, kept up to date by what is new (the cost follows the new rows).

A conflict is a member with more than one head (a revision nobody supersedes or merges):
revised in two places without either seeing the other (``fieldcheck.store.merge``). Finding
them from scratch reads every revision of the log. Instead the log keeps, in ``meta``
(bookkeeping, never synced), the list it found and the last observation it had looked at
(rowid and id). A later call looks only at the observations written since: their members, and
the members of the revisions they supersede or merge, are the only ones whose heads can have
changed, and each is counted again through the member index. Rows written by any program
(another fieldcheck, a sync, an older version that keeps no list) are caught the same way,
because the mark is a row of the table itself, not a promise every writer keeps.

The full scan runs when no list is kept yet, or when the marked row is no longer the row at
that rowid (a file rebuilt by VACUUM, or replaced).
"""

from __future__ import annotations

import json
import sqlite3

from fieldcheck.store.rows import HEAD  # the one definition of a head (alias o)

MARK_KEY = "conflicts:through"  # "<rowid> <id>" of the newest observation looked at
LIST_KEY = "conflicts:members"  # JSON list of the members in conflict at that mark


def _head(alias: str) -> str:
    return HEAD.replace("= o.id", f"= {alias}.id")


def _all(conn: sqlite3.Connection) -> set[str]:
    return {
        r[0]
        for r in conn.execute(
            f"SELECT member_id FROM main.observations o WHERE {_head('o')} "
            "GROUP BY member_id HAVING count(*) > 1"
        )
    }


def among(conn: sqlite3.Connection, members: list[str]) -> set[str]:
    """Those of ``members`` with more than one head (member index: a few rows each). A
    member's heads change only with a revision of its own, so a reader that takes in new
    revisions asks this for their members alone."""
    return {
        r[0]
        for r in conn.execute(
            "SELECT o.member_id FROM json_each(?) j JOIN main.observations o "
            f"ON o.member_id = j.value WHERE {_head('o')} "
            "GROUP BY o.member_id HAVING count(*) > 1",
            [json.dumps(members)],
        )
    }


def _touched(conn: sqlite3.Connection, after: int) -> list[str]:
    """Members whose heads may have changed since rowid ``after``: those of the new revisions
    and of the revisions they supersede or merge."""
    return [
        r[0]
        for r in conn.execute(
            "SELECT member_id FROM main.observations WHERE rowid > ?1 UNION "
            "SELECT p.member_id FROM main.observations n JOIN main.observations p "
            "ON p.id = n.supersedes OR p.id = n.merges WHERE n.rowid > ?1",
            [after],
        )
    ]


def _meta(conn: sqlite3.Connection) -> dict[str, str]:
    return dict(
        conn.execute(
            "SELECT key, value FROM main.meta WHERE key IN (?, ?)", [MARK_KEY, LIST_KEY]
        ).fetchall()
    )


def open_conflicts(conn: sqlite3.Connection, *, store: bool = False) -> list[str]:
    """Members in conflict, sorted. ``store``: keep the list and its mark in ``meta`` (the
    caller holds a write transaction, or none is open and one is tried without waiting)."""
    top = conn.execute(
        "SELECT rowid, id FROM main.observations ORDER BY rowid DESC LIMIT 1"
    ).fetchone()
    if top is None:
        return []
    meta = _meta(conn)
    mark = meta.get(MARK_KEY, "").split(" ")
    known: set[str] | None = None
    if len(mark) == 2 and mark[0].isdigit() and LIST_KEY in meta:
        at = conn.execute(
            "SELECT id FROM main.observations WHERE rowid = ?", [int(mark[0])]
        ).fetchone()
        if at is not None and at[0] == mark[1]:
            try:
                known = set(json.loads(meta[LIST_KEY]))
            except ValueError:
                known = None
    if known is None:
        members = _all(conn)
    elif int(mark[0]) >= top[0]:
        return sorted(known)
    else:
        touched = _touched(conn, int(mark[0]))
        members = (known - set(touched)) | among(conn, touched)
    if store:
        _store(conn, f"{top[0]} {top[1]}", sorted(members))
    return sorted(members)


def _store(conn: sqlite3.Connection, mark: str, members: list[str]) -> None:
    rows = [(MARK_KEY, mark), (LIST_KEY, json.dumps(members))]
    sql = "INSERT OR REPLACE INTO main.meta (key, value) VALUES (?, ?)"
    if conn.in_transaction:
        conn.executemany(sql, rows)
        return
    # bookkeeping only: never wait for another writer, never fail the caller's read
    (old,) = conn.execute("PRAGMA busy_timeout").fetchone()
    try:
        conn.execute("PRAGMA busy_timeout = 0")
        conn.execute("BEGIN IMMEDIATE")
        try:
            conn.executemany(sql, rows)
            conn.execute("COMMIT")
        except BaseException:
            conn.execute("ROLLBACK")
            raise
    except sqlite3.Error:
        pass
    finally:
        conn.execute(f"PRAGMA busy_timeout = {int(old)}")
