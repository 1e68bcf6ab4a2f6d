"""Sync a field log with the hub: the hub side of ``fieldcheck.store.merge``.

1. Send: the field log's rows the hub lacks (``merge.delta`` of the two vectors) are copied into
   temporary tables on the server (COPY), then ``merge.merge`` takes them through ``PgTarget``:
   the same checks as a bundle (schema, firm, ids held with other content), then
   ``INSERT ... SELECT ... ON CONFLICT (id) DO NOTHING`` table by table, parents first, all in
   ONE server transaction. Conflicts are looked for only among the posts this sync touched
   (indexed lookups), so the cost follows what is new, not the size of the hub.
   Engine stamps (content-addressed, shared by every inspector) go first in a short transaction
   of their own, so concurrent syncs do not queue behind one another on the same stamp row.
   A deadlock or serialization failure rolls back and the send is retried.
2. Receive: the hub's rows the field log lacks are read in one REPEATABLE READ snapshot into a
   temporary SQLite file shaped like the log, which the log takes through the SQLite side of the
   same merge (``bundle.SqliteTarget``) in one transaction.

A sync cut off anywhere leaves each side with whole transactions only; the rerun moves the rest.
"""

from __future__ import annotations

import contextlib
import os
import random
import shutil
import sqlite3
import tempfile
import time
from collections.abc import Iterator, Mapping, Sequence
from pathlib import Path

import psycopg
from psycopg import errors as pgerr
from psycopg.copy import QueuedLibpqWriter

from fieldcheck.store import bundle as bf
from fieldcheck.store.hub.schema import ROW_SECURITY, SCHEMA
from fieldcheck.store.hub.server import HubInfo, connect, ensure_hub, explain
from fieldcheck.store.hub.url import HubError, redact
from fieldcheck.store.merge import (
    SYNC_TABLES,
    Progress,
    TransferHeader,
    TransferRefused,
    Vector,
    delta,
    merge,
)
from fieldcheck.store.schema import SCHEMA_VERSION
from fieldcheck.store.sync_summary import locked

RETRIES = 30
CLASH_RETRIES = 3  # a unique (device_id, device_seq) race between two syncs of the same rows
_RETRY = (pgerr.SerializationFailure, pgerr.DeadlockDetected)


class _Again(Exception):
    """Another sync changed what this one was based on: roll back and start over."""


def hub_vector(conn: psycopg.Connection) -> Vector:
    """Per device, the highest device_seq the hub holds: a skip scan of UNIQUE(device_id,
    device_seq) per table, a few index lookups per device whatever the row count."""
    out: Vector = {}
    have = _hub_columns(conn)
    for t in SYNC_TABLES:
        if not t.origin or t.name not in have:
            continue
        tbl = f"{SCHEMA}.{t.name}"
        sql = (
            f"WITH RECURSIVE d(x) AS (SELECT min(device_id) FROM {tbl} UNION ALL "
            f"SELECT (SELECT min(device_id) FROM {tbl} WHERE device_id > d.x) FROM d "
            "WHERE d.x IS NOT NULL) "
            f"SELECT x, (SELECT max(device_seq) FROM {tbl} WHERE device_id = d.x) FROM d "
            "WHERE x IS NOT NULL"
        )
        for dev, seq in conn.execute(sql):
            if seq is not None and seq > out.get(dev, 0):
                out[dev] = int(seq)
    return out


def _sqlite_columns(conn: sqlite3.Connection, table: str, schema: str = "main") -> list[str]:
    return [r[1] for r in conn.execute(f"PRAGMA {schema}.table_info({table})")]


def _hub_columns(conn: psycopg.Connection) -> dict[str, list[str]]:
    return {t: list(cols) for t, cols in _hub_types(conn).items()}


def _hub_types(conn: psycopg.Connection) -> dict[str, dict[str, str]]:
    """table -> column -> PostgreSQL type name, in column order."""
    out: dict[str, dict[str, str]] = {}
    for table, col, typ in conn.execute(
        "SELECT table_name, column_name, data_type FROM information_schema.columns "
        "WHERE table_schema = %s ORDER BY table_name, ordinal_position",
        [SCHEMA],
    ):
        out.setdefault(table, {})[col] = typ
    return out


# ----------------------------------------------------------------------------- send


class PgTarget:
    """``merge.MergeTarget`` over the hub. The rows come straight from the field log by COPY:
    they are the ranges the hub's vector lacks, so an id the hub already holds can only be a
    clash (another row under that id), which the primary key refuses and the sync is refused
    with nothing changed.

    References need no per-row check here: the field log refuses a row whose parent it lacks
    (SQLite foreign keys), holds every row of each device up to its vector, and sends every
    range the hub lacks, so after the send the hub holds every row the field log holds, parents
    included; and nothing is ever deleted on either side."""

    office = True

    def __init__(self, conn, src: sqlite3.Connection, cols, types, ranges, touched, candidates):
        self.conn = conn
        self.src = src
        self.cols = cols  # table -> the field log's columns
        self.types = types  # table -> column -> declared SQLite type
        self.ranges = ranges
        self.touched = touched  # members the hub held already that this sync revises
        self.candidates = candidates  # those, and new members revised more than once here
        self._asked = False
        self.schema_version = SCHEMA_VERSION
        self._hub_types = _hub_types(conn)
        self._hub_cols = {t: list(c) for t, c in self._hub_types.items()}

    def firm_id(self) -> str:
        return _hub_firm(self.conn)

    def columns(self, table: str) -> list[str] | None:
        if table not in self._hub_cols:
            return None
        cols = self.cols[table]
        missing = [c for c in cols if c not in self._hub_cols[table]]
        if missing:
            raise TransferRefused(
                f"the hub's {table} table lacks columns this log has ({', '.join(missing)}): "
                "this fieldcheck is newer than the hub schema; nothing was changed"
            )
        return cols

    def mismatched(self, table: str, columns: Sequence[str], source) -> int:
        return 0  # see the class docstring: the primary key refuses a clash at COPY

    @contextlib.contextmanager
    def transaction(self) -> Iterator[None]:
        yield  # the caller holds the one server transaction

    def insert_missing(self, table: str, columns: Sequence[str], source, progress) -> int:
        if table in ROW_SECURITY:  # few rows, and COPY cannot pass a row-level policy
            return self._insert_rows(table, columns, progress)
        n = 0
        sql = f"COPY {SCHEMA}.{table} ({','.join(columns)}) FROM STDIN (FORMAT BINARY)"
        cur = self.conn.cursor()
        # the network and the server work on one batch while this thread reads the next
        with cur.copy(sql, writer=QueuedLibpqWriter(cur)) as cp:
            cp.set_types([self._hub_types[table][c] for c in columns])
            for batch in _field_batches(self.src, table, columns, self.ranges):
                for row in batch:
                    cp.write_row(row)
                n += len(batch)
                progress(len(batch))
        return n

    def _insert_rows(self, table: str, columns: Sequence[str], progress) -> int:
        sel = ",".join(columns)
        sql = f"INSERT INTO {SCHEMA}.{table} ({sel}) VALUES ({','.join(['%s'] * len(columns))})"
        n = 0
        keep = _not_demo(self.src, table)
        for dev, (lo, hi) in sorted(self.ranges.items()):
            rows = self.src.execute(
                f"SELECT {sel} FROM main.{table} WHERE device_id = ? "
                f"AND device_seq BETWEEN ? AND ?{keep} ORDER BY device_seq",
                [dev, lo, hi],
            ).fetchall()
            if rows:
                with self.conn.cursor() as cur:
                    cur.executemany(sql, rows)
                n += len(rows)
                progress(len(rows))
        return n

    def set_firm(self, firm_id: str) -> None:
        held = self.conn.execute(f"SELECT {SCHEMA}.adopt_firm(%s)", [firm_id]).fetchone()[0]
        if held != firm_id:
            raise _Again  # another first sync set the firm meanwhile: check again against it

    def record_received(self, sender: str, ranges: Mapping[str, Sequence[int]]) -> None:
        pass  # the hub's holdings are its rows (``hub_vector``): no bookkeeping to keep

    def conflicts(self) -> list[str]:
        """Members this sync touches with more than one head. merge() asks before the inserts
        (only members the hub held already can be in conflict then) and after them (those, and
        new members with more than one revision in this sync: a new member with one revision
        cannot have two heads). Index lookups per member, never a scan of the hub."""
        obs = f"{SCHEMA}.observations"
        heads = (
            f"NOT EXISTS (SELECT 1 FROM {obs} c WHERE c.supersedes = o.id) "
            f"AND NOT EXISTS (SELECT 1 FROM {obs} c WHERE c.merges = o.id) "
            "GROUP BY o.member_id HAVING count(*) > 1 ORDER BY o.member_id"
        )
        members = self.touched if not self._asked else self.candidates
        self._asked = True
        if not members:
            return []
        sql = f"SELECT o.member_id FROM {obs} o WHERE o.member_id = ANY(%s) AND {heads}"
        return [r[0] for r in self.conn.execute(sql, [members])]


def _not_demo(conn, table: str, schema: str = "main") -> str:
    """SQL leaving out the invented demo's rows where an older version wrote the demo into a log
    or a hub (``fieldcheck.store.demo_rows``): "" when it holds none."""
    from fieldcheck.store.demo_rows import demo_site_ids, kept_out

    return kept_out(table, schema) if demo_site_ids(conn, schema) else ""


def _field_batches(src, table: str, cols: Sequence[str], ranges) -> Iterator[list[tuple]]:
    """The field log's rows in ``ranges``, 20,000 at a time (never the demo's)."""
    sel = ",".join(cols)
    keep = _not_demo(src, table)
    for dev, (lo, hi) in sorted(ranges.items()):
        cur = src.execute(
            f"SELECT {sel} FROM main.{table} WHERE device_id = ? AND device_seq BETWEEN ? AND ?"
            f"{keep} ORDER BY device_seq",
            [dev, lo, hi],
        )
        while batch := cur.fetchmany(20_000):
            yield batch


def _send_stamps(conn: psycopg.Connection, src: sqlite3.Connection, ranges: Mapping) -> None:
    """The engine stamps the sent ratings name, in a short transaction of their own."""
    if "ratings" not in {r[0] for r in src.execute("SELECT name FROM sqlite_master")}:
        return
    ids = set()
    for dev, (lo, hi) in ranges.items():
        ids.update(
            r[0]
            for r in src.execute(
                "SELECT DISTINCT stamp_id FROM ratings WHERE device_id = ? AND device_seq "
                "BETWEEN ? AND ?",
                [dev, lo, hi],
            )
        )
    if not ids:
        return
    marks = ",".join("?" * len(ids))
    rows = src.execute(
        "SELECT id, engine_version, data_editions, created_at FROM engine_stamps "
        f"WHERE id IN ({marks}) ORDER BY id",
        sorted(ids),
    ).fetchall()
    for attempt in range(RETRIES):
        try:
            with conn.transaction(), conn.cursor() as cur:
                cur.executemany(
                    f"INSERT INTO {SCHEMA}.engine_stamps (id, engine_version, data_editions, "
                    "created_at) VALUES (%s, %s, %s, %s) ON CONFLICT (id) DO NOTHING",
                    rows,
                )
            return
        except _RETRY:
            _backoff(attempt)


def _backoff(attempt: int) -> None:
    time.sleep(min(2.0, 0.02 * (2**attempt)) * (0.5 + random.random()))


def _send(log, conn: psycopg.Connection, progress: Progress | None):
    """Field -> hub in one server transaction; returns the MergeResult (None: nothing to send)."""
    src = bf.connect_ro(Path(log.path))
    try:
        src.execute("BEGIN")  # one read snapshot of the field log for the whole send
        tables = {r[0] for r in src.execute("SELECT name FROM sqlite_master WHERE type='table'")}
        meta = bf.read_meta(src)
        ours = bf.vector(src)
        clashes = 0
        for attempt in range(RETRIES):
            try:
                return _send_once(conn, src, tables, meta, ours, progress)
            except (_Again, *_RETRY):
                _backoff(attempt)
            except pgerr.UniqueViolation:
                clashes += 1
                if clashes > CLASH_RETRIES:
                    raise TransferRefused(
                        "this log's rows clash with rows the hub holds under the same device "
                        "and sequence number but another id (two logs use one device id); "
                        "nothing was changed"
                    ) from None
                _backoff(attempt)
        raise HubError(
            "the hub stayed too busy with other syncs to take this one; nothing was changed, "
            "run the sync again"
        )
    finally:
        with contextlib.suppress(sqlite3.Error):
            src.execute("ROLLBACK")
        src.close()


def _touched(src, ranges) -> tuple[list[str], list[str]]:
    """(members the hub held already that ``ranges`` revise, those and the members revised more
    than once in ``ranges``): found in SQLite, few rows back even on a first sync."""
    old: set[str] = set()
    twice: set[str] = set()
    for dev, (lo, hi) in ranges.items():
        old.update(
            r[0]
            for r in src.execute(
                "SELECT DISTINCT member_id FROM observations WHERE device_id = ?1 "
                "AND device_seq BETWEEN ?2 AND ?3 AND member_id NOT IN (SELECT id FROM members "
                "WHERE device_id = ?1 AND device_seq BETWEEN ?2 AND ?3)",
                [dev, lo, hi],
            )
        )
    # revised more than once in this sync, counting across devices' ranges
    where = " OR ".join("(device_id = ? AND device_seq BETWEEN ? AND ?)" for _ in ranges)
    args = [v for dev, (lo, hi) in sorted(ranges.items()) for v in (dev, lo, hi)]
    twice.update(
        r[0]
        for r in src.execute(
            f"SELECT member_id FROM observations WHERE {where} "
            "GROUP BY member_id HAVING count(*) > 1",
            args,
        )
    )
    return sorted(old), sorted(old | twice)


def _send_once(conn, src, tables, meta, ours, progress):
    theirs = hub_vector(conn)
    ranges = delta(ours, theirs)
    if not ranges:
        return None
    _send_stamps(conn, src, ranges)
    cols: dict[str, list[str]] = {}
    types: dict[str, dict[str, str]] = {}
    counts: dict[str, int] = {}
    for t in SYNC_TABLES:
        if not t.origin or t.name not in tables:
            continue
        info = src.execute(f"PRAGMA main.table_info({t.name})").fetchall()
        cols[t.name] = [r[1] for r in info]
        types[t.name] = {r[1]: str(r[2]).upper() for r in info}
        n = bf._in_ranges(src, "main", t.name, ranges)
        if n:
            counts[t.name] = n
    touched, candidates = _touched(src, ranges)
    header = TransferHeader(
        firm_id=meta.get("firm_id", ""),
        sender_device=meta.get("device_id", ""),
        schema_version=SCHEMA_VERSION,
        ranges=dict(ranges),
        row_counts=counts,
    )
    with conn.transaction():
        target = PgTarget(conn, src, cols, types, ranges, touched, candidates)
        return merge(target, header, None, theirs, progress, "send to hub")


# ----------------------------------------------------------------------------- receive


def _receive(log, conn: psycopg.Connection, hub: HubInfo, progress: Progress | None):
    """Hub -> field: the hub's rows the log lacks, in one SQLite transaction."""
    field_path = Path(log.path)
    ro = bf.connect_ro(field_path)
    try:
        have = bf.vector(ro)
        tables = {
            r[0]: r[1] for r in ro.execute("SELECT name, sql FROM sqlite_master WHERE type='table'")
        }
        cols = {t.name: _sqlite_columns(ro, t.name) for t in SYNC_TABLES if t.name in tables}
    finally:
        ro.close()
    on_hub = _hub_columns(conn)
    tables = {t: sql for t, sql in tables.items() if t in on_hub}
    # beside the log, like the folder sync's (never in $TMPDIR: a log may be big and /tmp small);
    # a killed sync's folder is removed by the next one (its process is gone)
    _remove_stale_scratch(field_path.parent)
    with tempfile.TemporaryDirectory(
        prefix=f"{SCRATCH_PREFIX}{os.getpid()}-", dir=field_path.parent
    ) as tmp:
        snap = Path(tmp) / "from-hub.sqlite"
        out = sqlite3.connect(str(snap), isolation_level=None)
        try:
            out.execute("PRAGMA journal_mode=OFF")
            out.execute("PRAGMA synchronous=OFF")
            out.execute("BEGIN")
            with conn.transaction():
                conn.execute("SET TRANSACTION ISOLATION LEVEL REPEATABLE READ, READ ONLY")
                ranges = delta(hub_vector(conn), have)
                if not ranges:
                    return None
                counts = _pull(conn, out, tables, cols, ranges)
            out.execute("COMMIT")
        finally:
            out.close()
        header = TransferHeader(
            firm_id=_hub_firm(conn),  # adopted by this sync's send, perhaps
            sender_device=f"hub:{hub.hub_id}",
            schema_version=SCHEMA_VERSION,
            ranges=dict(ranges),
            row_counts=counts,
        )
        with locked(log):
            rw = bf.connect_rw(field_path)
            try:
                rw.execute("ATTACH DATABASE ? AS bundle", [bf._uri(snap, "ro")])
                try:
                    return merge(
                        bf.SqliteTarget(rw, office=False),
                        header,
                        bf.AttachedSource(rw),
                        bf.vector(rw),
                        progress,
                        "take from hub",
                    )
                finally:
                    with contextlib.suppress(sqlite3.Error):
                        rw.execute("DETACH DATABASE bundle")
            finally:
                rw.close()


SCRATCH_PREFIX = ".fieldcheck-hub-"


def _gone(pid: int) -> bool:
    """No such process (another user's process counts as alive)."""
    try:
        os.kill(pid, 0)
    except ProcessLookupError:
        return True
    except OSError:
        return False
    return False


def _remove_stale_scratch(folder: Path) -> None:
    for old in folder.glob(f"{SCRATCH_PREFIX}*"):
        pid = old.name.removeprefix(SCRATCH_PREFIX).split("-", 1)[0]
        if pid.isdigit() and _gone(int(pid)):
            shutil.rmtree(old, ignore_errors=True)


def _hub_firm(conn: psycopg.Connection) -> str:
    row = conn.execute(f"SELECT value FROM {SCHEMA}.hub_meta WHERE key = 'firm_id'").fetchone()
    return row[0] if row else ""


def _pull(conn, out: sqlite3.Connection, tables, cols, ranges) -> dict[str, int]:
    counts: dict[str, int] = {}
    for t in SYNC_TABLES:
        if t.name not in tables:
            continue
        out.execute(tables[t.name])  # the log's own table, so the SQLite merge sees its shape
        if not t.origin:
            continue
        sel = ",".join(cols[t.name])
        ins = f"INSERT INTO {t.name} ({sel}) VALUES ({','.join('?' * len(cols[t.name]))})"
        n = 0
        keep = _not_demo(conn, t.name, SCHEMA).replace("%", "%%")  # a hub that took the demo
        for dev, (lo, hi) in sorted(ranges.items()):
            with conn.cursor() as cur:
                cur.execute(
                    f"SELECT {sel} FROM {SCHEMA}.{t.name} WHERE device_id = %s AND device_seq "
                    f"BETWEEN %s AND %s{keep} ORDER BY device_seq",
                    [dev, lo, hi],
                )
                while batch := cur.fetchmany(10_000):
                    out.executemany(ins, batch)
                    n += len(batch)
        if n:
            counts[t.name] = n
    if "engine_stamps" in tables and counts.get("ratings"):
        ids = [r[0] for r in out.execute("SELECT DISTINCT stamp_id FROM ratings")]
        ec = ",".join(cols["engine_stamps"])
        rows = conn.execute(
            f"SELECT {ec} FROM {SCHEMA}.engine_stamps WHERE id = ANY(%s)", [ids]
        ).fetchall()
        marks = ",".join("?" * len(cols["engine_stamps"]))
        out.executemany(f"INSERT INTO engine_stamps ({ec}) VALUES ({marks})", rows)
        counts["engine_stamps"] = len(rows)
    return counts


# ----------------------------------------------------------------------------- sync


def sync_hub(log, url: str, progress: Progress | None = None):
    """Send the field log's new rows to the hub, then take the hub's new rows back."""
    from fieldcheck.store.sync_summary import SyncSummary, checkpoint

    if getattr(log, "readonly", False):
        raise TransferRefused(
            f"the survey log {log.path} was opened read-only; open it for writing to sync"
        )
    t0 = time.perf_counter()
    summary = SyncSummary(redact(url), "hub")
    checkpoint(log)
    conn = connect(url)
    stage = "connecting"
    got = None
    try:
        stage = "checking the hub"
        hub = ensure_hub(conn, url)
        stage = "sending to the hub"
        sent = _send(log, conn, progress)
        if sent is not None:
            summary.sent = {k: v for k, v in sent.inserted.items() if v}
            summary.new_conflicts = list(sent.new_conflicts)
        stage = "taking rows back from the hub"
        got = _receive(log, conn, hub, progress)
        if got is not None:
            summary.received = {k: v for k, v in got.inserted.items() if v}
        firm = _hub_firm(conn)
        if firm and not log.meta().get("firm_id"):  # nothing came back, but the firm must
            log.set_firm(firm)
    except psycopg.Error as exc:
        raise explain(exc, url, stage) from None
    finally:
        with contextlib.suppress(Exception):
            conn.close()
    # the field log's open conflicts change only by what it takes in: the merge of what came
    # back counted them before and after; nothing came back, they are as they were
    if got is not None:
        summary.conflicts = list(got.conflicts)
        new = set(got.new_conflicts)
    else:
        summary.conflicts, new = log.conflicts(), set()
    summary.new_conflicts = sorted(set(summary.new_conflicts) | new)
    summary.firm_id = log.meta().get("firm_id", "")
    summary.seconds = time.perf_counter() - t0
    return summary
