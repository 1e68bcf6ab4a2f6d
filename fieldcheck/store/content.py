"""`fieldcheck check` looks at content, not only at SQLite's pages: every stored rating against its
record and engine stamp, every record's shape, every engine stamp against its own content
address, and the seals over the history (a hash per block of rows, per device and table, kept in
the local table ``seals`` and extended when a log is closed after writing).

    problems = check_content(log)   # sentences, by post where a post is concerned
    seal(log)                       # extend the seals over rows written since (Log.close does it)

A rating is re-rated only when it carries this engine's stamp (same engine version and data
editions): an older stamp's numbers are history, kept as they were.
"""

from __future__ import annotations

import hashlib
import json
import math
import sqlite3

from fieldcheck.store.merge import SYNC_TABLES
from fieldcheck.store.rows import post_label, short_ref

BLOCK = 16  # rows per sealed block: an alteration is placed within 16 rows of one device
REL_TOL = 1e-6  # the engine's iterative solves may differ in the last digits between batches
_SEALED = tuple(t.name for t in SYNC_TABLES if t.origin)
_SEALS_SQL = """CREATE TABLE IF NOT EXISTS seals (
    tbl TEXT NOT NULL,
    device_id TEXT NOT NULL,
    block INTEGER NOT NULL,
    first_seq INTEGER NOT NULL,
    last_seq INTEGER NOT NULL,
    cols TEXT NOT NULL,
    hash TEXT NOT NULL,
    PRIMARY KEY (tbl, device_id, block)) WITHOUT ROWID"""


def _tables(conn: sqlite3.Connection) -> set[str]:
    return {r[0] for r in conn.execute("SELECT name FROM sqlite_master WHERE type='table'")}


def _hash(rows: list[tuple]) -> str:
    """A block's hash: sha256 over the rows' Python repr (exact for text, integers, floats and
    NULL; the same on every machine)."""
    return hashlib.sha256(repr(rows).encode()).hexdigest()[:32]


def _select(cols: list[str], table: str, where: str) -> str:
    return (
        f"SELECT {','.join(cols)} FROM {table} WHERE device_id = ? AND {where} ORDER BY device_seq"
    )


def _blocks(conn, table: str, device: str, cols: list[str], from_seq: int):
    """(first seq, last seq, hash) per block of BLOCK rows from ``from_seq`` on (the rows
    fetched a few hundred blocks at a time: one fetch per block cost as much as the hashing)."""
    cur = conn.execute(_select(cols, table, "device_seq >= ?"), [device, from_seq])
    k = cols.index("device_seq")
    while rows := cur.fetchmany(256 * BLOCK):
        for i in range(0, len(rows), BLOCK):
            part = rows[i : i + BLOCK]
            yield part[0][k], part[-1][k], _hash(part)


# ----------------------------------------------------------------------------- sealing


SEAL_BUDGET = 100_000  # rows sealed per close at most: a big import is sealed over a few closes
# the devices that wrote a table, in order, one index seek each on (device_id, device_seq) where
# SELECT DISTINCT reads every entry of that index: a close after a write seals, and in a log of
# 100,000 posts the three bulk tables' DISTINCT cost 0.04 CPU-s (measured), growing with the log
_DEVICES = """WITH RECURSIVE d(id) AS (
    SELECT min(device_id) FROM {t}
    UNION ALL SELECT (SELECT min(device_id) FROM {t} WHERE device_id > d.id) FROM d
    WHERE d.id IS NOT NULL)
SELECT id FROM d WHERE id IS NOT NULL"""


def seal(conn: sqlite3.Connection, budget: int = SEAL_BUDGET) -> int:
    """Extend the seals over rows written since the last seal (inside the caller's write
    transaction), at most about ``budget`` rows. Returns the blocks newly sealed."""
    have = _tables(conn)
    conn.execute(_SEALS_SQL)
    done = 0
    for table in _SEALED:
        if table not in have:
            continue
        cols = [r[1] for r in conn.execute(f"PRAGMA table_info({table})")]
        devices = conn.execute(_DEVICES.format(t=table)).fetchall()
        for (device,) in devices:
            last = conn.execute(
                "SELECT block, first_seq, last_seq, cols, hash FROM seals WHERE tbl = ? AND "
                "device_id = ? ORDER BY block DESC LIMIT 1",
                [table, device],
            ).fetchone()
            top = conn.execute(
                f"SELECT max(device_seq) FROM {table} WHERE device_id = ?", [device]
            ).fetchone()[0]
            if last is not None and last[2] >= top:
                continue
            # the last block again (it may be partial), with the columns it was sealed with
            block, start = (last[0], last[1]) if last else (0, 1)
            use = json.loads(last[3]) if last else cols
            named = json.dumps(use)
            rows = []
            for first, lastseq, h in _blocks(conn, table, device, use, start):
                rows.append((table, device, block, first, lastseq, named, h))
                block += 1
                done += 1
                if done * BLOCK >= budget:
                    break
            conn.executemany("INSERT OR REPLACE INTO seals VALUES (?, ?, ?, ?, ?, ?, ?)", rows)
            if done * BLOCK >= budget:
                return done
    return done


def check_seals(conn: sqlite3.Connection) -> list[tuple[str, str, int, int]]:
    """(table, device, first seq, last seq) of every sealed block whose rows changed."""
    if "seals" not in _tables(conn):
        return []
    out = []
    groups = conn.execute("SELECT DISTINCT tbl, device_id FROM seals").fetchall()
    for table, device in groups:
        seals = conn.execute(
            "SELECT block, first_seq, last_seq, cols, hash FROM seals WHERE tbl = ? AND "
            "device_id = ? ORDER BY block",
            [table, device],
        ).fetchall()
        if not seals:
            continue
        cols = json.loads(seals[0][3])
        found = {}
        try:
            for first, lastseq, h in _blocks_between(conn, table, device, cols, seals):
                found[first] = (lastseq, h)
        except sqlite3.Error:
            found = {}
        for _, first, lastseq, _, h in seals:
            if found.get(first) != (lastseq, h):
                out.append((table, device, first, lastseq))
    return out


def _blocks_between(conn, table: str, device: str, cols: list[str], seals: list[tuple]):
    """The rows of each sealed block's seq range, hashed as sealed (one pass over the rows)."""
    cur = conn.execute(_select(cols, table, "device_seq >= ?"), [device, seals[0][1]])
    k = cols.index("device_seq")
    pending: list[tuple] = []
    for _, first, last, _, _ in seals:
        rows = [r for r in pending if first <= r[k] <= last]
        pending = [r for r in pending if r[k] > last]
        while not pending:
            batch = cur.fetchmany(4 * BLOCK)
            if not batch:
                break
            for r in batch:
                (rows if r[k] <= last else pending).append(r)
        yield first, last, _hash([r for r in rows if r[k] >= first])


# ----------------------------------------------------------------------------- the checks


def _post_names(conn, member_ids) -> dict[str, str]:
    out = {}
    for mid in member_ids:
        row = conn.execute("SELECT tag FROM members WHERE id = ?", [mid]).fetchone()
        out[mid] = f"post {row[0]}" if row and row[0] else post_label("", mid)  # untagged <ref>
    return out


def _members_in(conn, table: str, device: str, lo: int, hi: int) -> list[str]:
    sel = {
        "members": "SELECT id FROM members",
        "observations": "SELECT member_id FROM observations",
        "ratings": "SELECT o.member_id FROM ratings t JOIN observations o ON o.id = "
        "t.observation_id",
        "attachments": "SELECT member_id FROM attachments",
        "reviews": "SELECT member_id FROM reviews",
    }.get(table)
    if sel is None:
        return []
    alias = "t." if table == "ratings" else ""
    try:
        rows = conn.execute(
            f"{sel} WHERE {alias}device_id = ? AND {alias}device_seq BETWEEN ? AND ?",
            [device, lo, hi],
        ).fetchall()
    except sqlite3.Error:
        return []
    return sorted({r[0] for r in rows if r[0]})


def _bad_records(conn) -> tuple[list[str], set[str]]:
    out, bad = [], set()
    for oid, mid, text in conn.execute("SELECT id, member_id, record_json FROM observations"):
        try:
            rec = json.loads(text)
            ok = isinstance(rec, dict) and all(isinstance(v, str) for v in rec.values())
            why = "" if ok else "not an object of text values"
        except (TypeError, ValueError):
            ok, why = False, "not valid JSON"
        if not ok:
            bad.add(oid)
            name = _post_names(conn, [mid])[mid]
            out.append(f"{name}: revision {oid} holds a record that is {why} (edited by hand?)")
    return out, bad


def _close(a, b) -> bool:
    if a is None or b is None:
        return a is None and b is None
    if isinstance(a, float) or isinstance(b, float):
        return math.isclose(float(a), float(b), rel_tol=REL_TOL, abs_tol=1e-9)
    return a == b


def _stamps(conn) -> tuple[list[str], set[str]]:
    """Engine stamps whose id is not the hash of their content (edited), and the good ids."""
    out, good = [], set()
    for sid, version, eds in conn.execute(
        "SELECT id, engine_version, data_editions FROM engine_stamps"
    ):
        want = hashlib.sha256(f"{version}\n{eds}".encode()).hexdigest()[:32]
        if want == sid:
            good.add(sid)
        else:
            out.append(
                f"engine stamp {sid[:8]}... does not match its engine version and data "
                "editions (edited by hand?)"
            )
    return out, good


def _ratings(conn, skip: set[str]) -> list[str]:
    from fieldcheck.store import rated

    stamp, version, _ = rated.engine_stamp()
    rows = conn.execute(
        "SELECT r.id, r.observation_id, o.member_id, o.record_json, r.capacity_n, r.demand_n, "
        "r.ratio, r.action, r.governing, r.flags FROM ratings r JOIN observations o ON "
        "o.id = r.observation_id WHERE r.stamp_id = ?",
        [stamp],
    ).fetchall()
    rows = [r for r in rows if r[1] not in skip]
    if not rows:
        return []
    records = [{k: v for k, v in json.loads(r[3]).items() if v} for r in rows]
    fresh = rated.rate(records, summaries=False).rows
    names = ("capacity", "demand", "ratio", "action", "governing check", "flags")
    out = []
    for r, new in zip(rows, fresh, strict=True):
        stored = r[4:10]
        if new is None:
            diff = ["the record no longer rates"]
        else:
            diff = [n for n, a, b in zip(names, stored, new[:6], strict=True) if not _close(a, b)]
        if diff:
            name = _post_names(conn, [r[2]])[r[2]]
            out.append(
                f"{name}: stored rating ...{short_ref(r[0])} does not match its record rated by "
                f"this engine ({version}, same data editions): {', '.join(diff)} differ (edited by "
                "hand?)"
            )
    return out


def check_content(conn: sqlite3.Connection) -> list[str]:
    """Every content problem as a sentence (see the module docstring)."""
    have = _tables(conn)
    if "observations" not in have:
        return []
    out, bad = _bad_records(conn)
    stamp_problems, _ = _stamps(conn) if "engine_stamps" in have else ([], set())
    out += stamp_problems
    if "ratings" in have:
        out += _ratings(conn, bad)
    for table, device, lo, hi in check_seals(conn):
        posts = _members_in(conn, table, device, lo, hi)
        who = ", ".join(_post_names(conn, posts).values()) if posts else "no post"
        out.append(
            f"{table} rows {lo} to {hi} of device ...{short_ref(device)} changed after they were "
            f"written ({who}); compare with the office copy"
        )
    return out
