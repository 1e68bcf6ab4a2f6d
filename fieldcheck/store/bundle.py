"""Transfer files between survey logs, and the SQLite side of the merge rules.

A bundle is two files side by side:

- ``NAME`` (e.g. ``field.fcbundle``): a fresh SQLite file (rollback journal, no WAL) holding only
  the rows to move, in tables of the same shape as the log's;
- ``NAME.json``: the manifest, written last (it is the commit point): format, firm id, sender
  device, schema version, row counts and a rows digest per table (``merge.RowsDigest``), the
  per-device seq ranges carried, the vector the sender assumed the receiver holds (``base``) and
  the sender's own vector, and the snapshot's size and sha256.

Both are written under a temporary name, fsynced, then renamed (snapshot first, manifest last),
so a shared folder or a USB stick never shows half a bundle under its real name.

The receiver checks everything before it opens its log for writing: manifest, schema, size,
sha256 (``read_bundle``), then counts and digests from a read-only connection to the snapshot
(``verify_rows``), then firm and ids held with other content from a read-only connection to the
log with the snapshot ATTACHed read-only (``file:...?mode=ro`` on a ``uri=True`` connection; never
``Database.attach()``, which treats a URI as a file name). Only then does it open a write
connection, ``BEGIN IMMEDIATE`` (retried while another sync holds the lock), insert what it lacks
with ``INSERT ... SELECT ... ON CONFLICT(id) DO NOTHING`` and commit once.
"""

from __future__ import annotations

import contextlib
import hashlib
import json
import os
import re
import sqlite3
import time
import urllib.parse
from collections.abc import Callable, Iterator, Mapping, Sequence
from dataclasses import dataclass
from pathlib import Path

from fieldcheck.store import signing
from fieldcheck.store.demo_rows import demo_site_ids, kept_out
from fieldcheck.store.merge import (
    SYNC_TABLES,
    MergeResult,
    Progress,
    RowsDigest,
    TransferHeader,
    TransferRefused,
    Vector,
    check_schema,
    delta,
    merge,
    prepare,
)
from fieldcheck.store.schema import SCHEMA_VERSION, TRANSFER_SCHEMA_VERSION
from fieldcheck.store.signing import Keyring

FORMAT = "fieldcheck-bundle"
FORMAT_VERSION = 1
SUFFIX = ".fcbundle"
BUSY_TIMEOUT_S = 5.0
LOCK_WAIT_S = 120.0  # how long an import waits for another sync holding the office
CHUNK = 20_000  # rows per INSERT ... SELECT (progress granularity; one transaction throughout)


def manifest_path(path: Path) -> Path:
    return path.with_name(path.name + ".json")


def snapshot_path(path: Path) -> Path:
    """The snapshot named by ``path`` (either the snapshot itself or its manifest)."""
    return (
        path.with_name(path.name[: -len(".json")]) if path.name.endswith(SUFFIX + ".json") else path
    )


def _uri(path: Path, mode: str) -> str:
    return f"file:{urllib.parse.quote(str(Path(path).resolve()))}?mode={mode}"


def connect_ro(
    path: Path, *, immutable: bool = False, query_only: bool = True
) -> sqlite3.Connection:
    uri = _uri(path, "ro") + ("&immutable=1" if immutable else "")
    conn = sqlite3.connect(
        uri, uri=True, timeout=BUSY_TIMEOUT_S, isolation_level=None, check_same_thread=False
    )
    if query_only:
        conn.execute("PRAGMA query_only=ON")
    return conn


def connect_rw(path: Path) -> sqlite3.Connection:
    conn = sqlite3.connect(
        _uri(path, "rw"),
        uri=True,
        timeout=BUSY_TIMEOUT_S,
        isolation_level=None,
        check_same_thread=False,
    )
    conn.execute("PRAGMA synchronous=FULL")
    conn.execute("PRAGMA foreign_keys=ON")
    conn.execute("PRAGMA cache_size=-65536")
    return conn


def _tables(conn: sqlite3.Connection, schema: str = "main") -> set[str]:
    return {
        r[0] for r in conn.execute(f"SELECT name FROM {schema}.sqlite_master WHERE type='table'")
    }


def _columns(conn: sqlite3.Connection, table: str, schema: str = "main") -> list[str]:
    return [r[1] for r in conn.execute(f"PRAGMA {schema}.table_info({table})")]


def vector(conn: sqlite3.Connection, schema: str = "main") -> Vector:
    """Per device, the highest device_seq held: index skip-scans over UNIQUE(device_id,
    device_seq), a few lookups per device whatever the row count."""
    have = _tables(conn, schema)
    out: Vector = {}
    for t in SYNC_TABLES:
        if not t.origin or t.name not in have:
            continue
        sql = (
            f"WITH RECURSIVE d(x) AS (SELECT min(device_id) FROM {schema}.{t.name} UNION ALL "
            f"SELECT (SELECT min(device_id) FROM {schema}.{t.name} WHERE device_id > d.x) FROM d "
            "WHERE d.x IS NOT NULL) "
            f"SELECT x, (SELECT max(device_seq) FROM {schema}.{t.name} WHERE device_id = d.x) "
            "FROM d WHERE x IS NOT NULL"
        )
        for dev, seq in conn.execute(sql):
            if seq is not None and seq > out.get(dev, 0):
                out[dev] = int(seq)
    return out


def read_meta(conn: sqlite3.Connection) -> dict[str, str]:
    if "meta" not in _tables(conn):
        return {}
    return dict(conn.execute("SELECT key, value FROM meta").fetchall())


def _fsync_path(path: Path) -> None:
    fd = os.open(path, os.O_RDONLY)
    try:
        os.fsync(fd)
    finally:
        os.close(fd)


def _sha256(path: Path) -> tuple[str, int]:
    h = hashlib.sha256()
    size = 0
    with path.open("rb") as fh:
        for chunk in iter(lambda: fh.read(1 << 20), b""):
            h.update(chunk)
            size += len(chunk)
    return h.hexdigest(), size


def _digests(conn: sqlite3.Connection, schema: str) -> dict[str, dict]:
    """Per table: row count and ``merge.RowsDigest`` of the ids (a covering-index scan)."""
    out: dict[str, dict] = {}
    have = _tables(conn, schema)
    for t in SYNC_TABLES:
        if t.name not in have:
            continue
        d = RowsDigest()
        cur = conn.execute(f"SELECT id FROM {schema}.{t.name} ORDER BY id")
        while batch := cur.fetchmany(10_000):
            d.update_ids([r[0] for r in batch])
        out[t.name] = {"rows": d.rows, "ids_sha256": d.hexdigest()}
    return out


def _in_ranges(conn: sqlite3.Connection, schema: str, table: str, ranges: Mapping) -> int:
    """Rows of ``table`` inside the seq ranges (UNIQUE(device_id, device_seq) index)."""
    return sum(
        conn.execute(
            f"SELECT count(*) FROM {schema}.{table} WHERE device_id = ? "
            "AND device_seq BETWEEN ? AND ?",
            [dev, int(r[0]), int(r[1])],
        ).fetchone()[0]
        for dev, r in ranges.items()
    )


# ----------------------------------------------------------------------------- writing


def write_bundle(
    src: Path,
    out: Path,
    *,
    base: Mapping[str, int] | None,
    progress: Progress | None = None,
    stage: str = "packing",
    skip_empty: bool = False,
    ring: Keyring | None = None,
) -> dict | None:
    """Snapshot of the rows of the log at ``src`` that a receiver holding ``base`` lacks (all of
    them when ``base`` is None), plus its manifest, written atomically. Returns the manifest, or
    None when ``skip_empty`` and there is nothing to send. Reads ``src`` read-only. The manifest
    is signed with ``ring`` (default: this computer's office key, ``signing.required()``)."""
    src, out = Path(src), Path(out)
    ring = ring or signing.required()
    conn = connect_ro(src, query_only=False)  # read-only file; only the attached output is written
    tmp = out.with_name(f".{out.name}.{os.getpid()}.part")
    tmp.unlink(missing_ok=True)
    try:
        meta = read_meta(conn)
        ours = vector(conn)
        ranges = delta(ours, base or {})  # bounded ranges: rows written after this stay out
        if skip_empty and not ranges:
            conn.close()
            return None
        conn.execute("ATTACH DATABASE ? AS out", [_uri(tmp, "rwc")])
        conn.execute("PRAGMA out.journal_mode=OFF")  # a fresh file we fsync ourselves
        conn.execute("PRAGMA out.synchronous=OFF")
        conn.execute("BEGIN")  # one read snapshot of the log for everything below
        have = _tables(conn)
        # the invented demo, where an older version wrote it into this log: never sent
        demo = "sites" in have and bool(demo_site_ids(conn))
        totals = {}
        for t in SYNC_TABLES:
            if t.name not in have:
                continue
            sql = conn.execute(
                "SELECT sql FROM main.sqlite_master WHERE type='table' AND name=?", [t.name]
            ).fetchone()[0]
            conn.execute(re.sub(r"^CREATE TABLE\s+", "CREATE TABLE out.", sql, count=1))
            if t.origin:
                counts = [
                    conn.execute(
                        f"SELECT count(*) FROM main.{t.name} WHERE device_id = ? AND device_seq "
                        f"BETWEEN ? AND ?{kept_out(t.name) if demo else ''}",
                        [dev, lo, hi],
                    ).fetchone()[0]
                    for dev, (lo, hi) in ranges.items()
                ]
                totals[t.name] = sum(counts)
        total = sum(totals.values())
        done = 0
        if progress:
            progress(0, total, stage)
        for t in SYNC_TABLES:
            if not t.origin or t.name not in have:
                continue
            for dev, (lo, hi) in ranges.items():
                conn.execute(
                    f"INSERT INTO out.{t.name} SELECT * FROM main.{t.name} "
                    f"WHERE device_id = ? AND device_seq BETWEEN ? AND ?"
                    f"{kept_out(t.name) if demo else ''} ORDER BY device_seq",
                    [dev, lo, hi],
                )
                done += conn.execute("SELECT changes()").fetchone()[0]
                if progress:
                    progress(done, total, stage)
        if "ratings" in have and "engine_stamps" in have:
            conn.execute(
                "INSERT INTO out.engine_stamps SELECT * FROM main.engine_stamps "
                "WHERE id IN (SELECT DISTINCT stamp_id FROM out.ratings)"
            )
        tables = _digests(conn, "out")
        conn.execute("COMMIT")
        conn.execute("DETACH DATABASE out")
    except BaseException:
        with contextlib.suppress(sqlite3.Error):
            conn.execute("ROLLBACK")
        conn.close()
        tmp.unlink(missing_ok=True)
        raise
    conn.close()
    _fsync_path(tmp)
    sha, size = _sha256(tmp)
    manifest = {
        "format": FORMAT,
        "format_version": FORMAT_VERSION,
        "firm_id": meta.get("firm_id", ""),
        "sender_device": meta.get("device_id", ""),
        "schema_version": TRANSFER_SCHEMA_VERSION,  # what the rows' tables need of a reader
        "created_at": time.strftime("%Y-%m-%dT%H:%M:%S%z"),
        "snapshot": out.name,
        "snapshot_bytes": size,
        "snapshot_sha256": sha,
        "tables": tables,
        "ranges": {d: list(r) for d, r in sorted(ranges.items())},
        "base": dict(sorted((base or {}).items())),
        "vector": dict(sorted(ours.items())),
    }
    manifest = signing.sign(manifest, ring)
    mtmp = manifest_path(tmp)
    with mtmp.open("w", encoding="utf-8") as fh:
        json.dump(manifest, fh, indent=1, sort_keys=True)
        fh.write("\n")
        fh.flush()
        os.fsync(fh.fileno())
    os.replace(tmp, out)
    os.replace(mtmp, manifest_path(out))  # the commit point: the manifest names a complete file
    with contextlib.suppress(OSError):
        _fsync_path(out.parent)
    return manifest


# ----------------------------------------------------------------------------- reading


@dataclass(frozen=True)
class Bundle:
    """A bundle whose manifest, size and sha256 have been checked."""

    snapshot: Path
    manifest: dict

    @property
    def header(self) -> TransferHeader:
        m = self.manifest
        return TransferHeader(
            firm_id=str(m.get("firm_id", "")),
            sender_device=str(m["sender_device"]),
            schema_version=int(m["schema_version"]),
            ranges={d: (int(r[0]), int(r[1])) for d, r in m["ranges"].items()},
            row_counts={t: int(v["rows"]) for t, v in m["tables"].items()},
        )

    @property
    def rows(self) -> int:
        return sum(int(v["rows"]) for v in self.manifest["tables"].values())


def read_manifest(path: Path) -> tuple[Path, dict]:
    """(snapshot path, manifest) for a bundle named by its snapshot or its manifest."""
    snap = snapshot_path(Path(path))
    mpath = manifest_path(snap)
    name = snap.name
    try:
        text = mpath.read_text(encoding="utf-8")
    except FileNotFoundError:
        raise TransferRefused(
            f"the bundle {name} has no manifest ({mpath.name} is missing); copy both files of the "
            "bundle, nothing was changed"
        ) from None
    except (OSError, UnicodeDecodeError) as exc:
        raise TransferRefused(
            f"the manifest of bundle {name} cannot be read ({exc}); nothing was changed"
        ) from None
    m = parse_manifest(text, name)
    return snap, m


MANIFEST_MAX_BYTES = 16 << 20  # a manifest lists tables and devices: kilobytes, never megabytes
_HEX64 = re.compile(r"^[0-9a-f]{64}$")


def _is_int(v: object) -> bool:
    return isinstance(v, int) and not isinstance(v, bool)


def _manifest_problem(m: object) -> str | None:
    """What is wrong with a manifest's shape (every field and type), or None."""
    if not isinstance(m, dict):
        return "not a JSON object"
    if m.get("format") != FORMAT:
        return "not a fieldcheck bundle manifest"
    if not _is_int(m.get("format_version", 0)):
        return "format_version is not a whole number"
    for key in ("sender_device", "snapshot_sha256", "tables", "ranges", "vector"):
        if key not in m:
            return f"no {key}"
    for key in ("schema_version", "snapshot_bytes"):
        if not _is_int(m.get(key)) or m[key] < 0:
            return f"{key} is not a whole number"
    for key in ("sender_device", "firm_id", "created_at", "snapshot"):
        if key in m and not isinstance(m[key], str):
            return f"{key} is not text"
    if not isinstance(m["snapshot_sha256"], str) or not _HEX64.match(m["snapshot_sha256"]):
        return "snapshot_sha256 is not a sha256"
    known = {t.name for t in SYNC_TABLES}
    tables = m["tables"]
    if not isinstance(tables, dict):
        return "tables is not an object"
    for t, v in tables.items():
        if t not in known:
            return f"tables names an unknown table {t[:40]!r}"
        if not isinstance(v, dict) or not _is_int(v.get("rows")) or v["rows"] < 0:
            return f"tables.{t} has no whole row count"
        if not isinstance(v.get("ids_sha256"), str):
            return f"tables.{t} has no ids digest"
    ranges = m["ranges"]
    if not isinstance(ranges, dict):
        return "ranges is not an object"
    for r in ranges.values():
        if not (isinstance(r, list) and len(r) == 2 and all(_is_int(x) for x in r)):
            return "a range is not two whole numbers"
        if not 1 <= r[0] <= r[1] < 2**63:
            return "a range is empty or out of bounds"
    for key in ("vector", "base"):
        v = m.get(key, {})
        if not isinstance(v, dict) or not all(_is_int(x) and 0 <= x < 2**63 for x in v.values()):
            return f"{key} is not an object of whole numbers"
    if "signature" in m and not isinstance(m["signature"], dict):
        return "signature is not an object"
    return None


def parse_manifest(text: str, name: str) -> dict:
    """A manifest's JSON, checked field by field (TransferRefused, one sentence)."""
    if len(text) > MANIFEST_MAX_BYTES:
        raise TransferRefused(
            f"the manifest of bundle {name} is {len(text):,} bytes, far larger than any "
            "fieldcheck writes; it was refused, nothing was changed"
        )
    try:
        m = json.loads(text)
    except RecursionError:
        problem = "nested too deeply"
    except ValueError as exc:
        problem = f"not JSON: {str(exc)[:60]}"
    else:
        problem = _manifest_problem(m)
    if problem is not None:
        raise TransferRefused(
            f"the manifest of bundle {name} is damaged or truncated ({problem}); copy the bundle "
            "again, nothing was changed"
        )
    if m.get("format_version", 0) > FORMAT_VERSION:
        raise TransferRefused(
            f"the bundle {name} was written by a newer fieldcheck (bundle format "
            f"{m['format_version']}); update fieldcheck and sync again, nothing was changed"
        )
    return m


def read_bundle(path: Path, ring: Keyring | None = None) -> Bundle:
    """Check manifest, office-key signature (``ring``, default this computer's office key),
    schema version, size and sha256 (refuse with TransferRefused)."""
    snap, m = read_manifest(path)
    name = snap.name
    signing.verify(m, ring or signing.required(), name)
    check_schema(int(m["schema_version"]), SCHEMA_VERSION)
    if not snap.is_file():
        raise TransferRefused(
            f"the bundle {name} is missing beside its manifest; nothing was changed"
        )
    size = snap.stat().st_size
    if size != int(m["snapshot_bytes"]):
        raise TransferRefused(
            f"the bundle {name} is truncated or incomplete ({size} bytes, the manifest says "
            f"{m['snapshot_bytes']}); copy it again, nothing was changed"
        )
    sha, _ = _sha256(snap)
    if sha != m["snapshot_sha256"]:
        raise TransferRefused(
            f"the bundle {name} does not match its checksum (tampered or damaged in transit); "
            "copy it again from the sender, nothing was changed"
        )
    return Bundle(snap, m)


def verify_rows(bundle: Bundle) -> None:
    """Row counts and per-table digests of the snapshot against the manifest."""
    name = bundle.snapshot.name
    try:
        conn = connect_ro(bundle.snapshot, immutable=True)
    except sqlite3.Error as exc:
        raise TransferRefused(
            f"the bundle {name} cannot be opened ({exc}); nothing was changed"
        ) from None
    try:
        found = _digests(conn, "main")
        for t in SYNC_TABLES:  # every row inside the seq ranges the manifest declares
            if t.origin and t.name in found:
                found[t.name]["in_ranges"] = _in_ranges(
                    conn, "main", t.name, bundle.manifest["ranges"]
                )
    except sqlite3.Error as exc:
        raise TransferRefused(
            f"the bundle {name} cannot be read ({exc}); nothing was changed"
        ) from None
    finally:
        conn.close()
    origin = {t.name for t in SYNC_TABLES if t.origin}
    for table, want in bundle.manifest["tables"].items():
        got = found.get(table)
        if (
            got is None
            or got["rows"] != int(want["rows"])
            or got["ids_sha256"] != want.get("ids_sha256")
        ):
            raise TransferRefused(
                f"the bundle {name} does not match its manifest in table {table} (tampered or "
                "damaged); copy it again from the sender, nothing was changed"
            )
        if table in origin and got.get("in_ranges") != got["rows"]:
            raise TransferRefused(
                f"the bundle {name} holds {table} rows outside the device ranges its manifest "
                "declares (tampered or damaged); nothing was changed"
            )


# ----------------------------------------------------------------------------- the SQLite target


class AttachedSource:
    """A verified snapshot ATTACHed read-only to the receiver's connection."""

    def __init__(self, conn: sqlite3.Connection, schema: str = "bundle"):
        self.conn = conn
        self.schema = schema

    def batches(self, table: str, columns: Sequence[str], size: int) -> Iterator[list[tuple]]:
        cur = self.conn.execute(f"SELECT {','.join(columns)} FROM {self.schema}.{table}")
        while batch := cur.fetchmany(size):
            yield batch


class SqliteTarget:
    """``merge.MergeTarget`` over one SQLite connection (rows come from an ATTACHed snapshot, so
    they move inside SQLite; ``batches`` is there for targets that cannot attach)."""

    def __init__(self, conn: sqlite3.Connection, *, office: bool, source_schema: str = "bundle"):
        self.conn = conn
        self.office = office
        self.schema_version = SCHEMA_VERSION
        self.src = source_schema
        self._cols: dict[str, list[str] | None] = {}

    def firm_id(self) -> str:
        return read_meta(self.conn).get("firm_id", "")

    def columns(self, table: str) -> list[str] | None:
        if table not in self._cols:
            mine = _columns(self.conn, table)
            theirs = set(_columns(self.conn, table, self.src))
            # a column a later schema added with no value required (observations.merges,
            # reviews.action) is simply absent from an older sender's rows: it stays NULL
            optional = {
                r[1]
                for r in self.conn.execute(f"PRAGMA main.table_info({table})")
                if not r[3] and r[4] is None and not r[5]
            }
            if mine and set(mine) - theirs and set(mine) - theirs <= optional:
                mine = [c for c in mine if c in theirs]
            if not mine:
                self._cols[table] = None
            elif not set(mine) <= theirs:
                raise TransferRefused(
                    f"the bundle's {table} table lacks columns this log has "
                    f"({', '.join(sorted(set(mine) - theirs))}); nothing was changed"
                )
            else:
                self._cols[table] = mine
        return self._cols[table]

    def mismatched(self, table: str, columns: Sequence[str], source) -> int:
        same = " AND ".join(f"m.{c} IS b.{c}" for c in columns)
        return self.conn.execute(
            f"SELECT count(*) FROM {self.src}.{table} b JOIN main.{table} m ON m.id = b.id "
            f"WHERE NOT ({same})"
        ).fetchone()[0]

    @contextlib.contextmanager
    def transaction(self) -> Iterator[None]:
        begin_immediate(self.conn)
        try:
            self.conn.execute("PRAGMA defer_foreign_keys=ON")  # parents and children in any order
            yield
            self.conn.execute("COMMIT")
        except BaseException:
            if self.conn.in_transaction:
                self.conn.execute("ROLLBACK")
            raise

    def insert_missing(
        self, table: str, columns: Sequence[str], source, progress: Callable[[int], None]
    ) -> int:
        cols = ",".join(columns)
        src = f"{self.src}.{table}"
        inserted = 0
        last = None  # chunks by the rowids present (keyset): work follows the rows, not the range
        while True:
            after = "" if last is None else "WHERE rowid > ? "
            args = [] if last is None else [last]
            row = self.conn.execute(
                f"SELECT rowid FROM {src} {after}ORDER BY rowid LIMIT 1 OFFSET {CHUNK - 1}", args
            ).fetchone()
            hi = row[0] if row else None
            where = ["rowid > ?"] * (last is not None) + ["rowid <= ?"] * (hi is not None)
            params = [x for x in (last, hi) if x is not None]
            before = self.conn.total_changes
            self.conn.execute(  # upsert after SELECT needs a WHERE (SQLite's parsing rule)
                f"INSERT INTO main.{table} ({cols}) SELECT {cols} FROM {src} "
                f"WHERE {' AND '.join(where) or 'true'} ORDER BY rowid ON CONFLICT(id) DO NOTHING",
                params,
            )
            inserted += self.conn.total_changes - before
            if hi is None:
                progress(
                    self.conn.execute(
                        f"SELECT count(*) FROM {src}"
                        + (" WHERE rowid > ?" if last is not None else ""),
                        [last] if last is not None else [],
                    ).fetchone()[0]
                )
                return inserted
            progress(CHUNK)
            last = hi

    def set_firm(self, firm_id: str) -> None:
        self.conn.execute(
            "INSERT OR REPLACE INTO meta (key, value) VALUES ('firm_id', ?)", [firm_id]
        )

    def record_received(self, sender: str, ranges: Mapping[str, Sequence[int]]) -> None:
        stamp = time.strftime("%Y-%m-%dT%H:%M:%S%z")
        self.conn.executemany(
            "INSERT INTO sync_state (peer_id, direction, device_id, high_water_seq, updated_at) "
            "VALUES (?, 'received', ?, ?, ?) ON CONFLICT (peer_id, direction, device_id) DO UPDATE "
            "SET high_water_seq = max(high_water_seq, excluded.high_water_seq), "
            "updated_at = excluded.updated_at",
            [(sender, dev, int(r[1]), stamp) for dev, r in ranges.items()],
        )

    def conflicts(self) -> list[str]:
        """Members in conflict, from what is new since the last look (kept in the log's meta
        when inside the merge's write transaction)."""
        from fieldcheck.store.conflicts import open_conflicts

        return open_conflicts(self.conn, store=self.conn.in_transaction)


def begin_immediate(conn: sqlite3.Connection, wait_s: float = LOCK_WAIT_S) -> None:
    """BEGIN IMMEDIATE, retried while another writer (another sync) holds the log."""
    deadline = time.monotonic() + wait_s
    delay = 0.05
    while True:
        try:
            conn.execute("BEGIN IMMEDIATE")
            return
        except sqlite3.OperationalError as exc:
            msg = str(exc).lower()
            if ("locked" not in msg and "busy" not in msg) or time.monotonic() > deadline:
                raise
            time.sleep(delay)
            delay = min(delay * 2, 1.0)


def _refuse_own_device(db_path: Path, bundle: Bundle, own_device: str | None) -> None:
    """A bundle may not carry rows of the receiver's own device: only the receiver writes them
    (a restored or copied log takes a new device id before it writes)."""
    conn = connect_ro(db_path)
    try:
        mine = {own_device, read_meta(conn).get("device_id")} - {None, ""}
    finally:
        conn.close()
    claimed = sorted(mine & set(bundle.manifest["ranges"]))
    if claimed:
        raise TransferRefused(
            f"the bundle {bundle.snapshot.name} carries rows in the name of this log's own device "
            f"({claimed[0][:36]}), which only this log writes; it was refused, nothing was changed"
        )


def import_into(
    db_path: Path,
    bundle: Bundle,
    *,
    office: bool,
    progress: Progress | None = None,
    stage: str = "merging",
    own_device: str | None = None,
) -> MergeResult:
    """Take a bundle (``read_bundle`` done) into the log file at ``db_path``: rows verified and
    merge checks made on read-only connections, then one write transaction."""
    verify_rows(bundle)
    header = bundle.header
    _refuse_own_device(db_path, bundle, own_device)
    snap_uri = _uri(bundle.snapshot, "ro")
    # 1. checks that need the log: read-only connection, snapshot attached read-only
    ro = connect_ro(db_path)
    try:
        ro.execute("ATTACH DATABASE ? AS bundle", [snap_uri])
        ro.execute("BEGIN")
        adopt = prepare(SqliteTarget(ro, office=office), header, AttachedSource(ro))
        ro.execute("COMMIT")
    except sqlite3.Error as exc:
        raise TransferRefused(
            f"the bundle {bundle.snapshot.name} cannot be compared with the log ({exc}); nothing "
            "was changed"
        ) from None
    finally:
        ro.close()
    # 2. the one write transaction
    conn = connect_rw(db_path)
    try:
        conn.execute("ATTACH DATABASE ? AS bundle", [snap_uri])
        try:
            have = vector(conn)
            return merge(
                SqliteTarget(conn, office=office),
                header,
                AttachedSource(conn),
                have,
                progress,
                stage,
                prepared=(adopt,),
            )
        except sqlite3.IntegrityError as exc:
            text = str(exc)
            if "FOREIGN KEY" in text:
                raise TransferRefused(
                    f"the bundle {bundle.snapshot.name} refers to rows neither it nor this log "
                    "holds (an earlier bundle is missing); take the earlier bundle first, nothing "
                    "was changed"
                ) from None
            raise TransferRefused(
                f"the bundle {bundle.snapshot.name} clashes with this log ({text}: two logs use "
                "one device id); nothing was changed"
            ) from None
        finally:
            with contextlib.suppress(sqlite3.Error):
                conn.execute("DETACH DATABASE bundle")
    finally:
        conn.close()
