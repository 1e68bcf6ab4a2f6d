"""The survey log's repository API: plain methods in, frozen dataclasses out, no SQL outside.

See the package docstring (``fieldcheck.store``) for the whole API in one place.
"""

from __future__ import annotations

import contextlib
import datetime as _dt
import gc
import getpass
import hashlib
import itertools
import json
import os
import shutil
import sqlite3
import threading
from collections import Counter
from collections.abc import Iterable, Iterator, Mapping, Sequence
from dataclasses import dataclass, field
from itertools import repeat
from pathlib import Path

from sqlite_utils import Database

from fieldcheck.row_error import RowError
from fieldcheck.store import rated
from fieldcheck.store.connection import APPLICATION_ID, LogError, connect, damaged, pragma
from fieldcheck.store.demo_rows import DEMO_KEPT_OUT, DEMO_META, DEMO_TOLD, demo_site_ids
from fieldcheck.store.paths import default_log_path
from fieldcheck.store.rated import action_label
from fieldcheck.store.rows import (
    HEAD,
    ORIGIN_COLS,
    RATING_COLS,
    REVIEW_COLS,
    Observation,
    Review,
    clean_record,
    dumps,
    new_id,
    new_ids,
    now,
    post_label,
    record_texts,
    short_ref,
)
from fieldcheck.store.schema import (
    MIGRATION_NAMES,
    MIGRATION_SET,
    REVIEW_KINDS,
    SCHEMA_VERSION,
    migrations,
)

STORE_CHUNK = 16_384  # rows per chunk of the bulk paths (import, re-rate, export)
VISIT_LEVELS = ("minimum", "standard", "detailed")  # how much was measured (judgement)
# columns that export adds beside the record; import drops them so an export re-imports
EXPORT_ONLY_COLUMNS = (
    "site",
    "visit",
    "member_id",
    "observation_id",
    "revised_at",
    "revised_by",
    "ratio",
    "action",
    "office_action",
    "capacity_kN",
    "demand_kN",
    "governing",
    "engine_version",
)


def lock_wait_s() -> float:
    """How long a write waits for another program holding the log: $FIELDCHECK_LOCK_WAIT_S,
    else ``faults.LOCK_WAIT_S``."""
    from fieldcheck.store.faults import LOCK_WAIT_S

    try:
        return max(0.0, float(os.environ.get("FIELDCHECK_LOCK_WAIT_S", LOCK_WAIT_S)))
    except ValueError:
        return LOCK_WAIT_S


@contextlib.contextmanager
def _cyclic_gc_paused() -> Iterator[None]:
    """Python's cyclic garbage collector paused for a bulk loop (import, re-rate), on again
    after, whatever happens. Each chunk makes tens of thousands of records (dicts) that die
    with the chunk by reference counting, yet every 700 of them set off a collection that walks
    the young objects, and now and then all of them (measured, 100,000 posts, min of 5 runs
    alternated: re-rate 1.70 -> 1.54 CPU-s, import 2.50 -> 2.38). The loops make no cycle that
    outlives a chunk (peak memory of a 1,000,000-post re-rate the same, 168 MB); a collector
    already paused by the caller stays paused."""
    was = gc.isenabled()
    gc.disable()
    try:
        yield
    finally:
        if was:
            gc.enable()


def _loads(text: str | None):
    return None if text is None else json.loads(text)


def _loads_many(texts: list[str]) -> list:
    """Decode many JSON texts in one call (one array)."""
    return json.loads("[" + ",".join(texts) + "]")


# ----------------------------------------------------------------------------- dataclasses


@dataclass(frozen=True)
class Site:
    id: str
    name: str
    address: str
    notes: str
    device_id: str
    author: str
    created_at: str


@dataclass(frozen=True)
class Visit:
    id: str
    site_id: str
    name: str
    inspector: str
    started_at: str
    level: str
    instruments: tuple[str, ...]
    notes: str
    device_id: str
    author: str
    created_at: str


@dataclass(frozen=True)
class StoredRating:
    """A rating as the engine gave it then, with the engine version and data editions used."""

    id: str
    observation_id: str
    engine_version: str
    data_editions: dict[str, str]
    capacity_n: float | None
    demand_n: float | None
    ratio: float | None
    action: int | None
    action_label: str
    governing: str
    flags: int
    summary: dict | None
    created_at: str


@dataclass(frozen=True)
class PostView:
    """The current revision of one member with its latest rating (one row of the posts table)."""

    member_id: str
    observation_id: str
    visit_id: str
    site_id: str
    tag: str
    location: str
    record: dict[str, str]
    ratio: float | None
    action: int | None
    action_label: str
    capacity_n: float | None
    demand_n: float | None
    governing: str
    engine_version: str | None
    revised_at: str
    revised_by: str
    conflict: bool  # more than one head: two revisions made without seeing each other
    # the action an office override in force sets, above the rating's (OFFICE_ACTION), else None
    office_action: int | None = None
    # the stored rating was made by another engine version or other reference data
    older: bool = False

    @property
    def ref(self) -> str:
        """The short reference that tells this post from the others (rows.short_ref)."""
        return short_ref(self.member_id)

    @property
    def label(self) -> str:
        """What a person calls the post (rows.post_label)."""
        return post_label(self.tag, self.member_id)


@dataclass(frozen=True)
class Attachment:
    id: str
    observation_id: str | None
    member_id: str
    path: str
    sha256: str
    size_bytes: int
    caption: str
    created_at: str


@dataclass(frozen=True)
class AttachmentProblem:
    attachment: Attachment
    problem: str  # "missing" or "changed"

    def sentence(self) -> str:
        if self.problem == "missing":
            return (
                f"photo {self.attachment.path} is missing (recorded {self.attachment.created_at})"
            )
        return (
            f"photo {self.attachment.path} has changed since it was attached "
            f"(sha256 no longer {self.attachment.sha256[:12]}...)"
        )


@dataclass(frozen=True)
class RerateResult:
    rated: int
    unrated: int  # current records the engine now refuses (kept, with their old ratings)
    engine_version: str
    errors: list[RowError] = field(default_factory=list)


@dataclass(frozen=True)
class ImportResult:
    imported: int
    errors: list[RowError]
    site: Site
    visit: Visit
    read: int = 0  # rows read (imported + left out)
    # imported posts by action (0 no action .. 4 not rated: load missing): what needs attention
    actions: tuple[int, ...] = (0, 0, 0, 0, 0)


@dataclass(frozen=True)
class ExportTable:
    columns: list[str]
    rows: list[dict[str, object]]


@dataclass(frozen=True)
class IntegrityReport:
    path: str
    schema_version: int
    integrity: list[str]  # PRAGMA integrity_check lines ("ok" when sound)
    foreign_keys: list[str]
    attachments: list[AttachmentProblem]
    conflicts: int
    content: list[str] = field(default_factory=list)  # store.content: ratings, records, seals

    @property
    def ok(self) -> bool:
        return not self.problems()

    def problems(self) -> list[str]:
        out: list[str] = []
        if self.integrity != ["ok"]:
            out += [f"SQLite integrity check: {line}" for line in self.integrity]
        out += [f"foreign key: {line}" for line in self.foreign_keys]
        out += [p.sentence() for p in self.attachments]
        out += self.content
        if self.schema_version != SCHEMA_VERSION:
            out.append(
                f"schema version {self.schema_version}, this fieldcheck writes {SCHEMA_VERSION} "
                "(opening the log for writing upgrades it after a backup copy)"
            )
        return out


# ----------------------------------------------------------------------------- the log


class Log:
    """One survey log file: one writer connection, one transaction per user action."""

    def __init__(self, db: Database, path: Path, device_id: str, author: str, readonly: bool):
        self.db = db
        self.path = path
        self.device_id = device_id
        self.author = author
        self.readonly = readonly
        self._lock = threading.RLock()
        self.backup_path: Path | None = None  # set when open() upgraded the file
        self.lock_wait_s = lock_wait_s()
        self.notices: list[str] = []  # sentences for the user from opening (e.g. a new device)
        self.wrote = False  # a transaction committed (or rows taken by sync): seal at close
        self._demo_sites: tuple[str, ...] | None = None  # see demo_kept_out

    # ---- opening

    @classmethod
    def open(
        cls,
        path: Path | str | None = None,
        *,
        author: str | None = None,
        device: str | None = None,
        readonly: bool = False,
    ) -> Log:
        """Open (or create) a log; an older schema is upgraded after a backup copy beside it, a
        newer or foreign file is refused with one sentence (LogError, a ValueError)."""
        path = Path(path) if path is not None else default_log_path()
        if path.exists() and path.is_dir():
            raise LogError(
                f"the survey log {path} is a folder; give a file name such as {path}/survey.db"
            )
        if not readonly and path.is_file() and not os.access(path, os.W_OK):
            raise LogError(
                f"the survey log {path} is read-only for you: check, export and report read it as "
                "it is; to change it, make it writable (e.g. chmod u+w) or work on a copy"
            )
        if not readonly and path.is_file() and not os.access(path.parent, os.W_OK):
            raise LogError(
                f"the folder of the survey log {path} is read-only for you (SQLite writes a -wal "
                "file beside the log): check, export and report read it as it is; to change it, "
                "make the folder writable or move the log"
            )
        found: dict[str, int] = {}

        def inspect(db: Database) -> None:
            found["app"] = int(pragma(db, "application_id") or 0)
            found["version"] = int(pragma(db, "user_version") or 0)
            # sqlite-utils creates its migrations table before the first migration commits: a
            # file holding only that table is our own creation, interrupted
            found["tables"] = int(
                db.conn.execute(
                    "SELECT count(*) FROM sqlite_master WHERE tbl_name != '_sqlite_migrations'"
                ).fetchone()[0]
            )
            if found["app"] not in (0, APPLICATION_ID) or (found["app"] == 0 and found["tables"]):
                raise LogError(
                    f"{path} is an SQLite file but not a fieldcheck survey log; give a survey log "
                    "or a new file name with --db"
                )
            if found["version"] > SCHEMA_VERSION:
                raise LogError(
                    f"the survey log {path} was written by a newer fieldcheck (schema version "
                    f"{found['version']}, this one reads up to {SCHEMA_VERSION}); update "
                    "fieldcheck to open it, the file is left unchanged"
                )

        db = connect(path, readonly=readonly, inspect=inspect)
        try:
            version = found["version"]
            backup = None
            if not readonly:
                if 0 < version < SCHEMA_VERSION:
                    backup = _backup_copy(db, path, version)
                migrations.apply(db)
                _check_migrations(db, path)
                meta = _ensure_meta(db)
            else:
                meta = _read_meta(db)
            dev = device or meta.get("device_id") or "unknown-device"
            who = author or meta.get("author") or _default_author()
            notices: list[str] = []
            if not readonly and device is None:
                dev = _own_device(db, path, dev, notices)
        except sqlite3.DatabaseError as exc:
            db.close()
            raise damaged(path, exc) from exc
        except BaseException:
            db.close()
            raise
        log = cls(db, path, dev, who, readonly)
        log.backup_path = backup
        log.notices = notices if not readonly else []
        if not readonly and log.demo_kept_out and not meta.get(DEMO_TOLD):
            log.notices.append(DEMO_KEPT_OUT)  # said once: the next opening is quiet
            with log._write():
                db.execute("INSERT OR REPLACE INTO meta VALUES (?, ?)", [DEMO_TOLD, now()])
        return log

    def close(self) -> None:
        with self._lock:
            if not self.readonly:
                with contextlib.suppress(Exception):
                    from fieldcheck.store import devices

                    devices.remember(self.device_id, self.path, self._seq_now())
                if self.wrote:  # a log only read (or refused a transfer) stays byte for byte
                    self._seal()
            with contextlib.suppress(sqlite3.Error):
                if not self.readonly:  # best effort: never wait on another writer to close
                    self.db.execute("PRAGMA busy_timeout = 0")
                    self.db.execute("PRAGMA wal_checkpoint(TRUNCATE)")
            self.db.close()

    def __enter__(self) -> Log:
        return self

    def __exit__(self, *exc) -> None:
        self.close()

    @property
    def demo_kept_out(self) -> tuple[str, ...]:
        """The invented demo's sites, where an older version wrote the demo into this log
        (``fieldcheck.store.demo_rows``): kept in the file, left out of ``sites()``,
        ``visits()``, ``posts()``, the counts and the exports. Empty in most logs, and in the
        demo's own file (there the demo is the survey)."""
        if self._demo_sites is None:
            own_file = bool(self.meta().get(DEMO_META))
            self._demo_sites = () if own_file else tuple(demo_site_ids(self.db.conn))
        return self._demo_sites

    @property
    def schema_version(self) -> int:
        return int(pragma(self.db, "user_version") or 0)

    def meta(self) -> dict[str, str]:
        return _read_meta(self.db)

    def next_report_revision(self, scope: str) -> int:
        """The revision of the report of ``scope`` (a visit, site or whole-log key) issued now: 0
        the first time, one more each time it is reissued. Kept in this log's meta table."""
        key = f"report_revision:{scope}"
        with self._write():
            row = self._one("SELECT value FROM meta WHERE key = ?", [key])
            rev = 0 if row is None else int(row["value"]) + 1
            self.db.execute("INSERT OR REPLACE INTO meta VALUES (?, ?)", [key, str(rev)])
        return rev

    def set_firm(self, firm_id: str) -> None:
        with self._write():
            self.db.execute("INSERT OR REPLACE INTO meta VALUES ('firm_id', ?)", [firm_id])

    # ---- internals

    @contextlib.contextmanager
    def _write(self, *, refs_made_here: bool = False) -> Iterator[None]:
        """One user action = one transaction (and one thread at a time). The write lock is
        taken at the start (BEGIN IMMEDIATE), waiting up to ``lock_wait_s`` for another program
        writing the same log; SQLite errors leave as LogError sentences named for what they are
        (busy, full disk, read-only), never as "damaged" unless the file is.

        ``refs_made_here``: every row the transaction writes refers only to rows the same code
        found or wrote in it (a bulk import: the site, the visit, the engine stamp, and the
        members and revisions it has just written; a re-rate: the revisions it read in this
        transaction and the stamp). SQLite's per-row foreign-key check (about 0.2 CPU-s per
        100,000 imported posts) is then off for that transaction (PRAGMA foreign_keys cannot
        change inside one) and on again after, whatever happens; the import's and the
        re-rate's tests run PRAGMA foreign_key_check on what they wrote. Nothing else may ask
        for it."""
        if self.readonly:
            raise LogError(f"the survey log {self.path} was opened read-only")
        with self._lock:
            conn = self.db.conn
            if conn.in_transaction:  # nested: a savepoint inside the caller's transaction
                with self.db.atomic():
                    yield
                return
            if refs_made_here:
                conn.execute("PRAGMA foreign_keys=OFF")
            try:
                self._begin()
                try:
                    yield
                    conn.execute("COMMIT")
                    self.wrote = True
                except BaseException as exc:
                    if conn.in_transaction:
                        with contextlib.suppress(sqlite3.Error):
                            conn.execute("ROLLBACK")
                    if isinstance(exc, sqlite3.Error) and not isinstance(
                        exc, sqlite3.IntegrityError
                    ):
                        raise damaged(self.path, exc) from exc
                    raise
            finally:
                if refs_made_here:  # outside any transaction now: never left off
                    conn.execute("PRAGMA foreign_keys=ON")

    def _begin(self) -> None:
        """BEGIN IMMEDIATE, SQLite's busy handler waiting up to ``lock_wait_s`` for another
        writer; then one sentence saying who holds the log."""
        from fieldcheck.store.connection import BUSY_TIMEOUT_S
        from fieldcheck.store.faults import locked_sentence

        conn = self.db.conn
        conn.execute(f"PRAGMA busy_timeout = {int(self.lock_wait_s * 1000)}")
        try:
            conn.execute("BEGIN IMMEDIATE")
        except sqlite3.OperationalError as exc:
            text = str(exc).lower()
            if "locked" in text or "busy" in text:
                raise LogError(locked_sentence(self.path, self.lock_wait_s)) from None
            raise damaged(self.path, exc) from exc
        finally:
            conn.execute(f"PRAGMA busy_timeout = {int(BUSY_TIMEOUT_S * 1000)}")

    def _seal(self) -> None:
        """Extend the history's seals over the rows written since (store.content); best
        effort: a log busy with another writer is sealed at a later close."""
        from fieldcheck.store.content import seal

        conn = self.db.conn
        with contextlib.suppress(sqlite3.Error):
            if conn.in_transaction:
                return
            conn.execute("PRAGMA busy_timeout = 200")
            conn.execute("BEGIN IMMEDIATE")
            try:
                seal(conn)
                conn.execute("COMMIT")
            except BaseException:
                conn.execute("ROLLBACK")
                raise

    def _seq_now(self) -> int:
        row = self.db.conn.execute(
            "SELECT value FROM meta WHERE key = ?", [f"seq:{self.device_id}"]
        ).fetchone()
        return int(row[0]) if row else 0

    def _seqs(self, n: int) -> range:
        """Allocate n per-device sequence numbers inside the current transaction."""
        assert self.db.conn.in_transaction
        key = f"seq:{self.device_id}"
        row = self.db.conn.execute("SELECT value FROM meta WHERE key = ?", [key]).fetchone()
        last = int(row[0]) if row else 0
        self.db.conn.execute("INSERT OR REPLACE INTO meta VALUES (?, ?)", [key, str(last + n)])
        return range(last + 1, last + n + 1)

    def _insert(self, table: str, columns: tuple[str, ...], rows: Iterable[tuple]) -> None:
        """Bulk insert inside the open transaction (executemany: the fast path for 100k rows;
        sqlite-utils' own ``atomic()`` owns the transaction)."""
        assert self.db.conn.in_transaction
        marks = ",".join("?" * len(columns))
        self.db.conn.executemany(
            f"INSERT INTO {table} ({','.join(columns)}) VALUES ({marks})", rows
        )

    def _ensure_stamp(self) -> None:
        """The engine stamp row this process rates with (content-addressed, written once)."""
        stamp, version, editions = rated.engine_stamp()
        self.db.conn.execute(
            "INSERT OR IGNORE INTO engine_stamps (id, engine_version, data_editions, created_at) "
            "VALUES (?, ?, ?, ?)",
            [stamp, version, editions, now()],
        )

    def _origin(self, seq: int, created: str) -> tuple:
        return (self.device_id, seq, self.author, created)

    def _one(self, sql: str, params: list) -> dict | None:
        rows = list(self.db.query(sql, params))
        return rows[0] if rows else None

    # ---- sites and visits

    def add_site(self, name: str, address: str = "", notes: str = "") -> Site:
        name = name.strip()
        if not name:
            raise ValueError("site name is empty; give a name such as '14 Alder Row'")
        with self._write():
            (seq,) = self._seqs(1)
            site = Site(new_id(), name, address, notes, self.device_id, self.author, now())
            self._insert(
                "sites",
                _SITE_COLS,
                [(site.id, name, address, notes, *self._origin(seq, site.created_at))],
            )
        return site

    def sites(self) -> list[Site]:
        hidden = set(self.demo_kept_out)
        return [
            s
            for s in (_site(r) for r in self.db.query("SELECT * FROM sites ORDER BY rowid"))
            if s.id not in hidden
        ]

    def site(self, site_id: str) -> Site:
        r = self._one("SELECT * FROM sites WHERE id = ?", [site_id])
        if r is None:
            raise ValueError(f"site {site_id} is not in this log; list sites with the interface")
        return _site(r)

    def find_site(self, name: str) -> Site | None:
        """The first site of that name, never the invented demo's (``demo_kept_out``): a new
        visit or an import named like it makes a site of the user's own."""
        hidden = list(self.demo_kept_out)
        r = self._one(
            "SELECT * FROM sites WHERE name = ? "
            f"AND id NOT IN ({','.join('?' * len(hidden))}) ORDER BY rowid LIMIT 1",
            [name, *hidden],
        )
        return None if r is None else _site(r)

    def add_visit(
        self,
        site_id: str,
        inspector: str | None = None,
        level: str = "minimum",
        *,
        name: str | None = None,
        instruments: Iterable[str] = (),
        notes: str = "",
        started_at: str | None = None,
    ) -> Visit:
        if level not in VISIT_LEVELS:
            raise ValueError(
                f"visit level {level!r} is not known; use one of {', '.join(VISIT_LEVELS)}, "
                "e.g. minimum"
            )
        inspector = (inspector or self.author).strip() or self.author
        started = started_at or now()
        name = (name or f"{started[:10]} {inspector}").strip()
        with self._write():
            self.site(site_id)
            (seq,) = self._seqs(1)
            v = Visit(
                new_id(),
                site_id,
                name,
                inspector,
                started,
                level,
                tuple(instruments),
                notes,
                self.device_id,
                self.author,
                now(),
            )
            self._insert(
                "visits",
                _VISIT_COLS,
                [
                    (
                        v.id,
                        site_id,
                        name,
                        inspector,
                        started,
                        dumps(list(v.instruments)),
                        level,
                        notes,
                        *self._origin(seq, v.created_at),
                    )
                ],
            )
        return v

    def visits(self, site_id: str | None = None) -> list[Visit]:
        if site_id is None:
            rows = self.db.query("SELECT * FROM visits ORDER BY rowid")
        else:
            rows = self.db.query("SELECT * FROM visits WHERE site_id = ? ORDER BY rowid", [site_id])
        hidden = set(self.demo_kept_out) - {site_id}
        return [v for v in (_visit(r) for r in rows) if v.site_id not in hidden]

    def visit(self, visit_id: str) -> Visit:
        r = self._one("SELECT * FROM visits WHERE id = ?", [visit_id])
        if r is None:
            raise ValueError(f"visit {visit_id} is not in this log; choose a visit of a site")
        return _visit(r)

    def repeated_tags(self, visit_id: str, limit: int = 5) -> tuple[int, list[str]]:
        """Tags held by more than one current post of the visit (a file imported twice, a copy
        not renamed): how many, and the first ``limit`` of them in natural order."""
        rows = self.db.conn.execute(
            f"""SELECT json_extract(o.record_json, '$.tag') AS tag FROM members m
            JOIN observations o ON o.rowid = {HEAD_ROWID_OF}
            WHERE m.id IN (SELECT member_id FROM observations WHERE visit_id = ?)
            AND o.withdrawn = 0 AND tag IS NOT NULL AND tag <> ''
            GROUP BY tag HAVING count(*) > 1 ORDER BY length(tag), tag""",
            [visit_id],
        ).fetchall()
        return len(rows), [r[0] for r in rows[:limit]]

    def find_visit(self, site_id: str, name: str) -> Visit | None:
        r = self._one(
            "SELECT * FROM visits WHERE site_id = ? AND name = ? ORDER BY rowid LIMIT 1",
            [site_id, name],
        )
        return None if r is None else _visit(r)

    # ---- posts: revisions and ratings

    def save_post(
        self,
        visit_id: str,
        record: Mapping[str, object],
        member_id: str | None = None,
        *,
        allow_errors: bool = False,
        base: str | None = None,
    ) -> Observation:
        """Store a post as typed: a new member (member_id None) or a new revision superseding the
        member's current head; rated in the same transaction. A record the engine refuses
        raises ValueError (its first field error) unless ``allow_errors`` (then stored unrated).

        ``base``: the revision the record was edited from (the interface's form). The new
        revision supersedes it, not whatever is the head by then: when another program (or a
        sync) wrote a revision of the post since, the post now has two heads, a conflict kept
        and flagged for the office (``in_conflict``), never one of them written over in
        silence."""
        rec = clean_record(record)
        result = rated.rate([rec])
        if result.errors and not allow_errors:
            raise ValueError(result.errors[0].message)
        stamp, version, _ = rated.engine_stamp()
        with self._write():
            self._ensure_stamp()
            visit = self.visit(visit_id)
            row = result.rows[0]
            # exactly one seq per row written: the per-device sequence stays gap-free
            seqs = iter(self._seqs((member_id is None) + 1 + (row is not None)))
            created = now()
            head = None
            if member_id is None:
                member_id = new_id()
                self._insert(
                    "members",
                    _MEMBER_COLS,
                    [
                        (
                            member_id,
                            visit.site_id,
                            rec.get("tag", ""),
                            *self._origin(next(seqs), created),
                        )
                    ],
                )
            elif base is not None:
                head = self._one("SELECT * FROM observations WHERE id = ?", [base])
                if head is None or head["member_id"] != member_id:
                    raise ValueError(
                        f"revision {base} is not a revision of post {member_id} in this log"
                    )
                head = _observation(head)
            else:
                head = self._head(member_id)
                if head is None:
                    raise ValueError(f"post {member_id} is not in this log; save it as a new post")
            obs = Observation(
                new_id(),
                member_id,
                visit_id,
                head.id if head else None,
                False,
                "",
                rec,
                self.device_id,
                next(seqs),
                self.author,
                created,
            )
            self._insert("observations", _OBS_COLS, [_obs_row(obs)])
            if row is not None:
                self._insert(
                    "ratings",
                    RATING_COLS,
                    [(new_id(), obs.id, version, stamp, *row, *self._origin(next(seqs), created))],
                )
        return obs

    def withdraw(self, member_id: str, visit_id: str, reason: str) -> Observation:
        """Remove a post from the current view: a revision marked withdrawn (history kept)."""
        with self._write():
            self.visit(visit_id)
            head = self._head(member_id)
            if head is None:
                raise ValueError(f"post {member_id} is not in this log")
            if head.withdrawn:
                raise ValueError("this post is already withdrawn; save it again to restore it")
            (seq,) = self._seqs(1)
            obs = Observation(
                new_id(),
                member_id,
                visit_id,
                head.id,
                True,
                reason,
                head.record,
                self.device_id,
                seq,
                self.author,
                now(),
            )
            self._insert("observations", _OBS_COLS, [_obs_row(obs)])
        return obs

    def _head(self, member_id: str) -> Observation | None:
        r = self._one(
            "SELECT * FROM observations o WHERE member_id = ? AND " + HEAD + " "
            f"ORDER BY {HEAD_ORDER.format(h='o')} LIMIT 1",
            [member_id],
        )
        return None if r is None else _observation(r)

    def head(self, member_id: str) -> Observation | None:
        """The current revision of a member (withdrawn or not; of heads in conflict, the one
        HEAD_ORDER shows); None if unknown."""
        return self._head(member_id)

    def history(self, member_id: str) -> list[Observation]:
        """Every revision of a member, oldest first (a revision always follows its parent)."""
        return [
            _observation(r)
            for r in self.db.query(
                "SELECT * FROM observations WHERE member_id = ? ORDER BY rowid", [member_id]
            )
        ]

    def observation(self, observation_id: str) -> Observation:
        r = self._one("SELECT * FROM observations WHERE id = ?", [observation_id])
        if r is None:
            raise ValueError(f"observation {observation_id} is not in this log")
        return _observation(r)

    @staticmethod
    def rate_records(records: list[dict[str, str]]):
        """The records parsed and rated in one engine call, as a report reads them:
        (fieldcheck.records.Parsed, the engine's Rating of its batch, or None when no record
        parses)."""
        return rated.parse_and_rate(records)

    @staticmethod
    def record_columns() -> tuple[str, ...]:
        """Every record column the engine rates, in the registry's order."""
        return tuple(_registry_columns())

    def rating_for(self, observation_id: str) -> StoredRating | None:
        """The latest stored rating of a revision, exactly as it was stored."""
        r = self._one(
            _RATING_SQL + " WHERE r.observation_id = ? ORDER BY r.rowid DESC LIMIT 1",
            [observation_id],
        )
        return None if r is None else _rating(r)

    def ratings_for(self, observation_id: str) -> list[StoredRating]:
        """Every rating of a revision, oldest first (one per engine run)."""
        return [
            _rating(r)
            for r in self.db.query(
                _RATING_SQL + " WHERE r.observation_id = ? ORDER BY r.rowid", [observation_id]
            )
        ]

    def posts(
        self,
        visit_id: str | None = None,
        *,
        site_id: str | None = None,
        include_withdrawn: bool = False,
    ) -> list[PostView]:
        """Current revision of each member (seen on ``visit_id`` / at ``site_id`` / all), in the
        order the members were first recorded, with the latest rating of that revision."""
        where, params = _member_filter(visit_id, site_id, self.demo_kept_out)
        sql = _POSTS_SQL.format(
            filter=where, withdrawn="" if include_withdrawn else "AND o.withdrawn = 0"
        )
        try:
            return [_post_view(r) for r in self.db.query(sql, params)]
        except BadRecord as exc:
            raise exc.in_log(self.path) from None

    def iter_posts(
        self,
        visit_id: str | None = None,
        *,
        site_id: str | None = None,
        chunk: int = STORE_CHUNK,
    ) -> Iterator[list[PostView]]:
        """The posts of ``posts(visit_id, site_id=site_id)`` in the same order, ``chunk`` at a
        time, from one cursor (one read of the log per pass; consume it before closing the log):
        for a reader that must not hold every post (the report)."""
        if chunk < 1:
            raise ValueError(f"chunk: {chunk} posts; give 1 or more, e.g. 4096")
        where, params = _member_filter(visit_id, site_id, self.demo_kept_out)
        cur = self.db.conn.execute(
            _POSTS_SQL.format(filter=where, withdrawn="AND o.withdrawn = 0"), params
        )
        names = [d[0] for d in cur.description]
        try:
            while rows := cur.fetchmany(chunk):
                try:
                    yield [_post_view(dict(zip(names, r, strict=True))) for r in rows]
                except BadRecord as exc:
                    raise exc.in_log(self.path) from None
        finally:
            cur.close()

    def count_posts(self, visit_id: str | None = None, *, site_id: str | None = None) -> int:
        """How many posts ``iter_posts`` (and ``posts``) give, counted in SQLite."""
        where, params = _member_filter(visit_id, site_id, self.demo_kept_out)
        sql = (
            f"SELECT count(*) FROM members m JOIN observations o ON o.rowid = {HEAD_ROWID_OF} "
            f"WHERE o.withdrawn = 0 {where}"
        )
        return int(self.db.conn.execute(sql, params).fetchone()[0])

    def attachments_of(self, views: Sequence[PostView]) -> dict[str, list[Attachment]]:
        """member id -> the attachments of these posts, oldest first (one query)."""
        out: dict[str, list[Attachment]] = {}
        sql = f"SELECT * FROM attachments WHERE member_id {_IN_JSON} ORDER BY rowid"
        for r in self.db.query(sql, [_member_ids(views)]):
            a = _attachment(r)
            out.setdefault(a.member_id, []).append(a)
        return out

    def reviews_of(self, views: Sequence[PostView]) -> dict[str, list[Review]]:
        """member id -> the reviews of these posts, oldest first (one query)."""
        out: dict[str, list[Review]] = {}
        sql = f"SELECT * FROM reviews WHERE member_id {_IN_JSON} ORDER BY rowid"
        for r in self.db.query(sql, [_member_ids(views)]):
            rv = _review(r)
            out.setdefault(rv.member_id, []).append(rv)
        return out

    def review_states_of(self, views: Sequence[PostView], reviews: dict | None = None):
        """member id -> ReviewState of these posts, as ``review_states()`` gives them
        (``reviews``: their ``reviews_of``, when already read)."""
        from fieldcheck.store import reviews as rv

        return rv.states_of(views, self.reviews_of(views) if reviews is None else reviews)

    def remedy_states_of(self, views: Sequence[PostView]):
        """member id -> RemedyState of these posts, as ``remedy_states()`` gives them."""
        from fieldcheck.store import proposals

        return proposals.states_of(self, views)

    @staticmethod
    def scratch(columns: Sequence[str]):
        """A private temporary table (store/scratch.py ScratchRows) for rows a long job keeps
        on the side: on disk, not in memory; close it when done."""
        from fieldcheck.store.scratch import ScratchRows

        return ScratchRows(columns)

    def in_conflict(self, member_id: str) -> bool:
        """The member has more than one head (revisions made without seeing each other)."""
        from fieldcheck.store.conflicts import among

        with self._lock:
            return bool(among(self.db.conn, [member_id]))

    def conflicts(self) -> list[str]:
        """Members with more than one head (revisions made without seeing each other), sorted;
        found from the revisions written since the last call (``fieldcheck.store.conflicts``)."""
        from fieldcheck.store.conflicts import open_conflicts

        with self._lock:
            return open_conflicts(self.db.conn, store=not self.readonly)

    def counts_by_action(self, visit_id: str | None = None) -> dict[str, int]:
        """{action label: number of current posts}, every label present (for the first screen)."""
        out = {action_label(a): 0 for a in range(len(rated.ACTION_LABELS))}
        out[action_label(None)] = 0
        where, params = _member_filter(visit_id, None, self.demo_kept_out)
        # counted in SQLite (no post held in memory), each post under the action in force
        sql = _EXPORT_SQL.format(filter=where, office=office_action_sql(self.db.conn))
        for act, n in self.db.conn.execute(
            f"SELECT coalesce(e.office_action, e.action), count(*) FROM ({sql}) e GROUP BY 1",
            params,
        ):
            label = action_label(act)
            out[label] = out.get(label, 0) + n
        return out

    def older_rated(self, visit_id: str | None = None) -> int:
        """Current posts whose latest stored rating was made by another engine version or other
        reference data (``older_stamp_sql``): their stored action may not be this fieldcheck's
        (``rerate_all`` brings them up to date, keeping the old ratings)."""
        older = older_stamp_sql(self.db.conn)
        if older is None:
            return 0
        where, params = _member_filter(visit_id, None, self.demo_kept_out)
        sql = f"""SELECT count(*) FROM members m
            JOIN observations o ON o.rowid = {HEAD_ROWID_OF}
            JOIN ratings r ON r.rowid = (SELECT max(rowid) FROM ratings
                                         WHERE observation_id = o.id)
            WHERE o.withdrawn = 0 AND {older} {where}"""
        return int(self.db.conn.execute(sql, params).fetchone()[0])

    def count_members(self) -> int:
        """Members recorded (withdrawn ones too): a quick upper bound of the current posts."""
        return int(self.db.conn.execute("SELECT count(*) FROM members").fetchone()[0])

    def rerate_all(self, *, chunk: int = STORE_CHUNK) -> RerateResult:
        """Re-rate every current revision and store the new ratings (with this engine's version
        and data editions) in ONE transaction; old ratings are kept. The heads stream from
        SQLite in chunks of ``chunk`` (memory flat in the size of the log), each chunk decoded in
        one call, parsed column-wise (the distinct parses kept from chunk to chunk) and rated in
        one engine call."""
        stamp, version, _ = rated.engine_stamp()
        cache: dict = {}  # the records layer's distinct parses, kept from chunk to chunk
        errors: list[RowError] = []
        n = good_n = 0
        # every rating written refers to a revision read in this transaction and to the stamp
        # found or made here: no per-row foreign-key check (see _write)
        with self._write(refs_made_here=True), _cyclic_gc_paused():
            self._ensure_stamp()
            created = now()
            dev, who = self.device_id, self.author
            with self._reading_records():
                cur = self.db.conn.execute(
                    "SELECT id, record_json FROM observations o WHERE withdrawn = 0 AND "
                    + HEAD
                    + " ORDER BY rowid"
                )
            while heads := self._fetch_records(cur, chunk):
                oids, texts = zip(*heads, strict=True)
                del heads
                try:
                    records = _loads_many(texts)
                    if len(records) != len(texts) or not all(isinstance(r, dict) for r in records):
                        raise ValueError("a record is not an object")
                except (ValueError, TypeError):
                    raise self._bad_record() from None
                del texts
                result = rated.rate_columns(records, summaries=False, cache=cache)
                errors.extend(e.at(n + e.row) for e in result.errors)
                ok = result.ok
                k = len(ok)
                if k:
                    first = self._seqs(k).start
                    self._insert(
                        "ratings",
                        RATING_COLS,
                        zip(
                            new_ids(k),
                            oids if k == len(oids) else [oids[i] for i in ok],
                            repeat(version),
                            repeat(stamp),
                            *result.columns,
                            repeat(dev),
                            range(first, first + k),
                            repeat(who),
                            repeat(created),
                        ),
                    )
                n += len(records)
                good_n += k
        return RerateResult(good_n, n - good_n, version, errors)

    def _fetch_records(self, cur: sqlite3.Cursor, n: int) -> list:
        """The next rows of a cursor reading record JSON in SQLite (see ``_reading_records``)."""
        with self._reading_records():
            return cur.fetchmany(n)

    @contextlib.contextmanager
    def _reading_records(self) -> Iterator[None]:
        """A record SQLite cannot read as JSON is named as a sentence (BadRecord)."""
        try:
            yield
        except sqlite3.OperationalError as exc:
            if "json" not in str(exc).lower():
                raise
            raise self._bad_record() from None

    def _bad_record(self) -> LogError:
        """The first stored record that is not a JSON object of text, as a sentence (slow scan:
        only after a bulk read failed on one)."""
        cur = self.db.conn.execute("SELECT id, member_id, record_json FROM observations")
        for oid, mid, text in cur:
            try:
                _record({"id": oid, "member_id": mid, "record_json": text})
            except BadRecord as exc:
                return exc.in_log(self.path)
        return LogError(f"the survey log {self.path} holds a record that cannot be read")

    # ---- bulk import and export

    def import_rows(
        self,
        rows: Iterable[Mapping[str, object]],
        site: str,
        visit: str,
        inspector: str | None = None,
        *,
        chunk: int = STORE_CHUNK,
        kept: bool = False,
    ) -> ImportResult:
        """Add many posts in ONE transaction: the site and visit are found by name (or created);
        rows the records layer refuses are reported (0-based row, column, message) and left
        out, the others imported as new members. ``rows`` may be any iterable (a file read as
        it goes): it is taken ``chunk`` rows at a time, one engine call each, the distinct
        records' parses kept from chunk to chunk, so memory stays flat in the number of rows.
        ``kept``: the rows are already records as the log keeps them (text values, no blank
        cell, no EXPORT_ONLY_COLUMNS: ``PostsFile.records``), taken as they are."""
        stamp, version, _ = rated.engine_stamp()
        source = iter(rows)
        cache: dict = {}
        errors: list[RowError] = []
        read = imported = 0
        actions: dict[int, int] = {}
        # every id written refers to the site, visit and stamp found or made here, or to the
        # members and revisions written just before it: no per-row foreign-key check
        with self._write(refs_made_here=True), _cyclic_gc_paused():
            self._ensure_stamp()
            s = self.find_site(site) or self.add_site(site)
            v = self.find_visit(s.id, visit) or self.add_visit(s.id, inspector, name=visit)
            created = now()
            dev, who = self.device_id, self.author
            while batch := list(itertools.islice(source, chunk)):
                records = batch if kept else [clean_record(r, _EXPORT_ONLY) for r in batch]
                del batch
                result = rated.rate_columns(records, summaries=False, cache=cache)
                errors.extend(e.at(read + e.row) for e in result.errors)
                ok = result.ok
                k = len(ok)
                if k:
                    good = records if k == len(records) else [records[i] for i in ok]
                    # rows built column by column (zip): no per-post Python frame
                    first = self._seqs(3 * k).start
                    ids = new_ids(3 * k)
                    member_ids, obs_ids = ids[0::3], ids[1::3]
                    tags = [r.get("tag", "") for r in good]
                    self._insert(
                        "members",
                        _MEMBER_COLS,
                        zip(
                            member_ids,
                            repeat(s.id),
                            tags,
                            repeat(dev),
                            range(first, first + k),
                            repeat(who),
                            repeat(created),
                        ),
                    )
                    self._insert(
                        "observations",
                        _OBS_COLS,
                        zip(
                            obs_ids,
                            member_ids,
                            repeat(v.id),
                            repeat(None),
                            repeat(0),
                            repeat(""),
                            record_texts(good),
                            repeat(dev),
                            range(first + k, first + 2 * k),
                            repeat(who),
                            repeat(created),
                        ),
                    )
                    self._insert(
                        "ratings",
                        RATING_COLS,
                        zip(
                            ids[2::3],
                            obs_ids,
                            repeat(version),
                            repeat(stamp),
                            *result.columns,
                            repeat(dev),
                            range(first + 2 * k, first + 3 * k),
                            repeat(who),
                            repeat(created),
                        ),
                    )
                    for a, n in Counter(result.columns[_ACTION_AT]).items():
                        actions[a] = actions.get(a, 0) + n
                read += len(records)
                imported += k
        return ImportResult(
            imported, errors, s, v, read, tuple(actions.get(a, 0) for a in range(5))
        )

    def export_rows(self, visit_id: str | None = None) -> ExportTable:
        """Current posts as flat rows, all in memory (see ``export_iter`` for a large log)."""
        columns, rows = self.export_iter(visit_id)
        return ExportTable(columns, list(rows))

    def export_iter(
        self,
        visit_id: str | None = None,
        *,
        chunk: int = STORE_CHUNK,
        record_columns: bool = True,
    ) -> tuple[list[str], Iterator[dict[str, object]]]:
        """Current posts as flat rows, streamed: (columns, iterator of one dict per post, keys in
        column order). The record columns (registry order, then any others) and the rating
        columns (EXPORT_ONLY_COLUMNS); an exported CSV imports again. ``record_columns=False``
        skips the pass over the log that finds the record columns (a caller with its own fixed
        columns): each row then holds its record's own keys before the rating columns. The rows
        come from SQLite ``chunk`` at a time: consume them before closing the log."""
        if not record_columns:  # a fixed column set: each row holds its record's keys only
            return list(EXPORT_ONLY_COLUMNS), self._export_rows([], visit_id, chunk)
        seen = self._record_keys(*_member_filter(visit_id, None, self.demo_kept_out))
        order = [c for c in _registry_columns() if c in seen]
        known = set(order)
        cols = order + [c for c in seen if c not in known]
        return cols + list(EXPORT_ONLY_COLUMNS), self._export_rows(cols, visit_id, chunk)

    def _record_keys(self, where: str, params: list) -> dict[str, None]:
        """Every key of the current records (in order of first appearance), found in SQLite."""
        sql = _EXPORT_SQL.format(filter=where, office="NULL")
        with self._reading_records():
            keys = self.db.conn.execute(
                f"SELECT DISTINCT j.key FROM ({sql}) e, json_each(e.record_json) j", params
            ).fetchall()
        return dict.fromkeys(k for (k,) in keys)

    def export_chunks(
        self, visit_id: str | None = None, *, chunk: int = STORE_CHUNK
    ) -> Iterator[list[tuple[dict, tuple]]]:
        """Current posts (withdrawn ones left out) in member order, ``chunk`` at a time, as pairs
        (record dict, row) where row holds EXPORT_FIELDS in order; the rating fields are None
        where the revision has no rating, ``office_action`` None unless an office override in
        force raises the rating's action (OFFICE_ACTION). The bulk path under every export:
        consume it before closing the log."""
        where, params = _member_filter(visit_id, None, self.demo_kept_out)
        sql = _EXPORT_SQL.format(filter=where, office=office_action_sql(self.db.conn))
        cur = self.db.conn.execute(sql, params)
        while rows := cur.fetchmany(chunk):
            try:
                recs = _loads_many([r[0] for r in rows])
                if not all(isinstance(r, dict) for r in recs):
                    raise ValueError("a record is not an object")
            except (ValueError, TypeError):
                raise self._bad_record() from None
            yield list(zip(recs, rows, strict=True))

    def _export_rows(
        self, cols: list[str], visit_id: str | None, chunk: int
    ) -> Iterator[dict[str, object]]:
        blank = dict.fromkeys(cols, "")
        sites = dict(self.db.conn.execute("SELECT id, name FROM sites").fetchall())
        visits = dict(self.db.conn.execute("SELECT id, name FROM visits").fetchall())
        for part in self.export_chunks(visit_id, chunk=chunk):
            for rec, fields in part:
                _, site, visit, mid, oid, at, by, ratio, act, cap, dem, gov, ev, office = fields
                row: dict[str, object] = {**blank, **rec} if blank else rec  # column order
                row["site"] = sites.get(site, "")
                row["visit"] = visits.get(visit, "")
                row["member_id"] = mid
                row["observation_id"] = oid
                row["revised_at"] = at
                row["revised_by"] = by
                row["ratio"] = ratio
                row["action"] = action_label(act)
                row["office_action"] = "" if office is None else action_label(office)
                row["capacity_kN"] = None if cap is None else cap / 1000.0
                row["demand_kN"] = None if dem is None else dem / 1000.0
                row["governing"] = gov or ""
                row["engine_version"] = ev
                yield row

    # ---- attachments

    def attach(self, observation_id: str, photo_path: Path | str, caption: str = "") -> Attachment:
        """Record a photo of a revision by path and sha256 (the file itself stays where it is)."""
        p = Path(photo_path).expanduser()
        if not p.is_file():
            raise ValueError(
                f"photo {p} is not a file; give the path of a photo, e.g. ~/photos/P1.jpg"
            )
        digest, size = _sha256(p)
        with self._write():
            obs = self.observation(observation_id)
            (seq,) = self._seqs(1)
            a = Attachment(
                new_id(), obs.id, obs.member_id, str(p.resolve()), digest, size, caption, now()
            )
            self._insert(
                "attachments",
                _ATT_COLS,
                [
                    (
                        a.id,
                        a.observation_id,
                        a.member_id,
                        a.path,
                        digest,
                        size,
                        caption,
                        *self._origin(seq, a.created_at),
                    )
                ],
            )
        return a

    def attach_photo(self, observation_id: str, photo: Path | str, caption: str = "") -> Attachment:
        """Copy a photo into this log's photo folder (named by its sha256) and record it; the
        interface and `fieldcheck attach` call this (fieldcheck.store.photos)."""
        from fieldcheck.store.photos import attach_photo

        return attach_photo(self, observation_id, photo, caption)

    def photo_file(self, attachment: Attachment) -> Path | None:
        """The photo's file if its sha256 is the recorded one (photo folder, else its path)."""
        from fieldcheck.store.photos import photo_file

        return photo_file(self, attachment)

    def attachments(self, member_id: str | None = None) -> list[Attachment]:
        if member_id is None:
            rows = self.db.query("SELECT * FROM attachments ORDER BY rowid")
        else:
            rows = self.db.query(
                "SELECT * FROM attachments WHERE member_id = ? ORDER BY rowid", [member_id]
            )
        return [_attachment(r) for r in rows]

    def check_attachments(self) -> list[AttachmentProblem]:
        """Every attachment whose file is missing or whose sha256 differs from the recorded one."""
        out = []
        for a in self.attachments():
            p = Path(a.path)
            if not p.is_file():
                out.append(AttachmentProblem(a, "missing"))
            elif _sha256(p)[0] != a.sha256:
                out.append(AttachmentProblem(a, "changed"))
        return out

    # ---- office review notes and sign-offs

    def add_review(
        self,
        kind: str,
        text: str,
        *,
        member_id: str | None = None,
        observation_id: str | None = None,
        visit_id: str | None = None,
        action: int | None = None,
    ) -> Review:
        """Record one review (append-only, attributed, timed); ``fieldcheck.store.reviews``
        holds the rules of each kind and calls this."""
        if kind not in REVIEW_KINDS:
            raise ValueError(
                f"review kind {kind!r} is not known; use one of {', '.join(REVIEW_KINDS)}"
            )
        with self._write():
            (seq,) = self._seqs(1)
            r = Review(
                new_id(),
                kind,
                text,
                member_id,
                observation_id,
                visit_id,
                self.author,
                now(),
                action,
            )
            self._insert(
                "reviews",
                REVIEW_COLS,
                [
                    (
                        r.id,
                        member_id,
                        observation_id,
                        visit_id,
                        kind,
                        text,
                        action,
                        *self._origin(seq, r.created_at),
                    )
                ],
            )
        return r

    def reviews(self, member_id: str | None = None, *, kind: str | None = None) -> list[Review]:
        """Reviews (of one post, of one kind, or all), oldest first."""
        where = [(c, v) for c, v in (("member_id", member_id), ("kind", kind)) if v is not None]
        sql = "SELECT * FROM reviews"
        if where:
            sql += " WHERE " + " AND ".join(f"{c} = ?" for c, _ in where)
        return [_review(r) for r in self.db.query(sql + " ORDER BY rowid", [v for _, v in where])]

    # ---- the office engineer's review (fieldcheck.store.reviews holds the rules)

    def review_post(
        self, member_id: str, kind: str, text: str = "", action: int | str | None = None
    ) -> Review:
        """accept | override (action, reason) | require-remedy (text) | note, about the post's
        current revision."""
        from fieldcheck.store import reviews

        return reviews.review_post(self, member_id, kind, text, action)

    def settle(self, member_id: str, keep: str, reason: str, visit_id: str | None = None):
        """Settle a conflict: a revision with both parents keeping head ``keep``'s record."""
        from fieldcheck.store import reviews

        return reviews.settle(self, member_id, keep, reason, visit_id)

    def sign_off(self, visit_id: str, text: str = "") -> Review:
        from fieldcheck.store import reviews

        return reviews.sign_off(self, visit_id, text)

    def review_states(self, visit_id: str | None = None):
        """member id -> ReviewState (.state, .by, .on, .instruction, .action, .line())."""
        from fieldcheck.store import reviews

        return reviews.states(self, visit_id)

    def review_state(self, member_id: str):
        """The ReviewState of one post (see review_states)."""
        from fieldcheck.store import reviews

        return reviews.state(self, member_id)

    def sign_offs(self, visit_id: str | None = None) -> list[Review]:
        from fieldcheck.store import reviews

        return reviews.sign_offs(self, visit_id)

    # ---- remedies as proposals (fieldcheck.store.proposals holds the rules)

    def propose_remedy(self, observation_id: str, **kw):
        """A remedy proposed for the revision ``observation_id``; the post is not changed."""
        from fieldcheck.store import proposals

        return proposals.propose(self, observation_id, **kw)

    def proposals(self, member_id: str | None = None, *, open_only: bool = False):
        from fieldcheck.store import proposals

        return proposals.proposals(self, member_id, open_only=open_only)

    def record_remedied(self, member_id: str, visit_id: str, **kw) -> Observation:
        """A new revision recording the post as remedied on a date (see store.proposals)."""
        from fieldcheck.store import proposals

        return proposals.record_remedied(self, member_id, visit_id, **kw)

    def remedy_states(self, visit_id: str | None = None):
        """member id -> RemedyState (as found, proposed, as remedied) of the current posts."""
        from fieldcheck.store import proposals

        return proposals.states(self, visit_id)

    def counts_by_remedy(self, visit_id: str | None = None) -> dict[str, int]:
        from fieldcheck.store import proposals

        return proposals.counts(self, visit_id)

    # ---- integrity

    def integrity(self) -> IntegrityReport:
        """SQLite's integrity and foreign-key checks, attachment hashes, schema version."""
        with self._lock:
            lines = [r[0] for r in self.db.conn.execute("PRAGMA integrity_check").fetchall()]
            fks = [
                f"{r[0]} row {r[1]} refers to a missing {r[2]} row"
                for r in self.db.conn.execute("PRAGMA foreign_key_check").fetchall()
            ]
            has_att = "attachments" in self.db.table_names()
            problems = self.check_attachments() if has_att else []
            conflicts = len(self.conflicts()) if "observations" in self.db.table_names() else 0
            from fieldcheck.store.content import check_content

            content = check_content(self.db.conn) if lines == ["ok"] else []
        return IntegrityReport(
            str(self.path), self.schema_version, lines, fks, problems, conflicts, content
        )

    def is_empty(self) -> bool:
        return self.db.conn.execute("SELECT count(*) FROM sites").fetchone()[0] == 0


# ----------------------------------------------------------------------------- helpers

_SITE_COLS = ("id", "name", "address", "notes", *ORIGIN_COLS)
_VISIT_COLS = (
    "id",
    "site_id",
    "name",
    "inspector",
    "started_at",
    "instruments",
    "level",
    "notes",
    *ORIGIN_COLS,
)
_MEMBER_COLS = ("id", "site_id", "tag", *ORIGIN_COLS)
_OBS_COLS = (
    "id",
    "member_id",
    "visit_id",
    "supersedes",
    "withdrawn",
    "reason",
    "record_json",
    *ORIGIN_COLS,
)


_ATT_COLS = (
    "id",
    "observation_id",
    "member_id",
    "path",
    "sha256",
    "size_bytes",
    "caption",
    *ORIGIN_COLS,
)
_EXPORT_ONLY = frozenset(EXPORT_ONLY_COLUMNS)
_ACTION_AT = rated.RATING_COLUMNS.index("action")  # in RatedColumns.columns
_RATING_SQL = (
    "SELECT r.*, s.data_editions FROM ratings r LEFT JOIN engine_stamps s ON s.id = r.stamp_id"
)

# heads: revisions nobody supersedes; one head per member (HEAD_ORDER; never by clock).
# Members are walked in rowid order and each one's head found through the member and supersedes
# indexes, so the rows stream (no sort, no window over the whole log) and a page or a visit
# costs what it returns.
_HEAD_H = HEAD.replace("= o.id", "= h.id")
# Which head a member shows while it has more than one (a conflict, until the office settles it):
# a head still standing before a withdrawn one, then the most urgent by its latest rating (make
# safe now, not rated, repair, monitor, no action: the report's order), then the larger
# device_seq. A withdrawal made on one laptop never hides a post revised on another, and the
# lists, the export and the report show the worse of two revisions (judgement), never the one a
# device counter happens to favour (device_seq is per device: across devices it means nothing).
_URGENCY_OF = (
    f"coalesce((SELECT {rated.urgency_sql('r.action')} FROM ratings r "
    "WHERE r.observation_id = {h}.id ORDER BY r.rowid DESC LIMIT 1), "
    f"{rated.URGENCY.index('not rated')})"
)
HEAD_ORDER = "{h}.withdrawn, " + _URGENCY_OF + ", {h}.device_seq DESC, {h}.id DESC"
# A member with one head (nearly every one) takes it without the order's rating lookups: the
# first query answers only then (coalesce stops at it); the ordered one runs for a conflict.
_HEAD_OF = """coalesce(
    (SELECT h.{col} FROM observations h WHERE h.member_id = m.id AND {head}
        GROUP BY h.member_id HAVING count(*) = 1),
    (SELECT h.{col} FROM observations h WHERE h.member_id = m.id AND {head}
        ORDER BY {order} LIMIT 1))"""
HEAD_OF = _HEAD_OF.format(col="id", head=_HEAD_H, order=HEAD_ORDER.format(h="h"))
# the same head by rowid (a join on it skips the id index)
HEAD_ROWID_OF = _HEAD_OF.format(col="rowid", head=_HEAD_H, order=HEAD_ORDER.format(h="h"))
NHEADS = f"""(SELECT count(*) FROM observations h WHERE h.member_id = m.id AND {_HEAD_H})"""
_POSTS_SQL = f"""
SELECT o.id, o.member_id, o.visit_id, o.record_json, {NHEADS} AS nheads, o.created_at,
    o.author, m.site_id, r.capacity_n, r.demand_n, r.ratio, r.action, r.governing,
    r.engine_version, r.stamp_id
FROM members m
JOIN observations o ON o.rowid = {HEAD_ROWID_OF}
LEFT JOIN ratings r ON r.rowid = (SELECT max(rowid) FROM ratings WHERE observation_id = o.id)
WHERE 1 {{filter}} {{withdrawn}}
ORDER BY m.rowid
"""
# the export's rows: as _POSTS_SQL without the head count (site and visit names are looked up
# in Python: a join per row costs a third of the query)
EXPORT_FIELDS = (
    "record_json",
    "site_id",
    "visit_id",
    "member_id",
    "observation_id",
    "revised_at",
    "revised_by",
    "ratio",
    "action",
    "capacity_n",
    "demand_n",
    "governing",
    "engine_version",
    "office_action",
)
# The action an office override sets where it is in force and raises the rating's (store/reviews.py
# rules: the post's latest accept / override / require-remedy / settle decides, and only when it is
# about the current revision and the post is not in conflict; an override never lowers a rating,
# and a post not rated stays not rated). NULL otherwise. Looked up only for posts rated below
# make-safe-now (nothing is above it), by the member's reviews (reviews_member index).
OFFICE_ACTION = f"""CASE WHEN r.action BETWEEN 0 AND 2 THEN (
    SELECT rv.action FROM reviews rv
    WHERE rv.rowid = (SELECT max(x.rowid) FROM reviews x WHERE x.member_id = m.id
        AND x.kind IN ('accept', 'override', 'require-remedy', 'settle'))
    AND rv.kind = 'override' AND rv.observation_id = o.id AND rv.action > r.action
    AND {NHEADS} = 1) END"""
_EXPORT_SQL = f"""
SELECT o.record_json, m.site_id, o.visit_id, o.member_id, o.id, o.created_at, o.author,
    r.ratio, r.action, r.capacity_n, r.demand_n, r.governing, r.engine_version,
    {{office}} AS office_action
FROM members m
JOIN observations o ON o.rowid = {HEAD_ROWID_OF}
LEFT JOIN ratings r ON r.rowid = (SELECT max(rowid) FROM ratings WHERE observation_id = o.id)
WHERE o.withdrawn = 0 {{filter}}
ORDER BY m.rowid
"""


def office_action_sql(conn) -> str:
    """OFFICE_ACTION, or NULL when the log holds no override at all (most logs: a list or an
    export then costs no lookup per post)."""
    row = conn.execute("SELECT EXISTS (SELECT 1 FROM main.reviews WHERE kind = 'override')")
    return OFFICE_ACTION if row.fetchone()[0] else "NULL"


def older_stamp_sql(conn) -> str | None:
    """SQL true for a rating (alias ``r``) made by another engine version or other reference
    data than this fieldcheck's (its stamp differs), or None when the log holds no rating of
    another stamp (the usual case: one small query of the stamps table)."""
    stamp = rated.engine_stamp()[0]  # a hex digest: safe as a literal
    other = conn.execute(
        "SELECT EXISTS (SELECT 1 FROM main.engine_stamps WHERE id != ?)", [stamp]
    ).fetchone()[0]
    return f"(r.stamp_id IS NOT NULL AND r.stamp_id != '{stamp}')" if other else None


# ids passed to SQLite as one JSON array (any number, one parameter)
_IN_JSON = "IN (SELECT value FROM json_each(?))"


def _member_ids(views: Sequence[PostView]) -> str:
    return json.dumps([v.member_id for v in views])


def _member_filter(
    visit_id: str | None, site_id: str | None, hidden: Sequence[str] = ()
) -> tuple[str, list]:
    """SQL (``AND ...``) and parameters keeping the members seen on a visit / at a site, and
    none at the ``hidden`` sites (the demo's, see ``Log.demo_kept_out``) unless asked for."""
    where, params = "", []
    hidden = [h for h in hidden if h != site_id]
    if hidden:
        where += f" AND m.site_id NOT IN ({','.join('?' * len(hidden))})"
        params.extend(hidden)
    if visit_id is not None:
        where += " AND m.id IN (SELECT member_id FROM observations WHERE visit_id = ?)"
        params.append(visit_id)
    if site_id is not None:
        where += " AND m.site_id = ?"
        params.append(site_id)
    return where, params


def _obs_row(o: Observation) -> tuple:
    return (
        o.id,
        o.member_id,
        o.visit_id,
        o.supersedes,
        int(o.withdrawn),
        o.reason,
        dumps(o.record),
        o.device_id,
        o.device_seq,
        o.author,
        o.created_at,
    )


class BadRecord(LogError):
    """A stored record that is not a JSON object of strings (edited by hand, or damaged)."""

    def __init__(self, observation_id: str, member_id: str, why: str):
        self.observation_id, self.member_id, self.why = observation_id, member_id, why
        super().__init__(
            f"post {member_id} (revision {observation_id}) holds a damaged record ({why}); "
            "restore that post from the office copy or save it again in the interface"
        )

    def in_log(self, path) -> LogError:
        return LogError(f"the survey log {path}: {self}")


def _record(r: Mapping) -> dict[str, str]:
    """The record of an observation row, checked: a JSON object whose values are strings."""
    text = r["record_json"]
    try:
        rec = json.loads(text)
    except (TypeError, ValueError):
        raise BadRecord(r["id"], r["member_id"], "not JSON") from None
    if not isinstance(rec, dict):
        raise BadRecord(r["id"], r["member_id"], f"a JSON {type(rec).__name__}, not an object")
    if not all(isinstance(v, str) for v in rec.values()):
        raise BadRecord(r["id"], r["member_id"], "a value that is not text")
    return rec


def _site(r: dict) -> Site:
    return Site(
        r["id"], r["name"], r["address"], r["notes"], r["device_id"], r["author"], r["created_at"]
    )


def _visit(r: dict) -> Visit:
    return Visit(
        r["id"],
        r["site_id"],
        r["name"],
        r["inspector"],
        r["started_at"],
        r["level"],
        tuple(json.loads(r["instruments"])),
        r["notes"],
        r["device_id"],
        r["author"],
        r["created_at"],
    )


def _observation(r: dict) -> Observation:
    return Observation(
        r["id"],
        r["member_id"],
        r["visit_id"],
        r["supersedes"],
        bool(r["withdrawn"]),
        r["reason"],
        _record(r),
        r["device_id"],
        r["device_seq"],
        r["author"],
        r["created_at"],
        r.get("merges"),
    )


def _rating(r: dict) -> StoredRating:
    return StoredRating(
        r["id"],
        r["observation_id"],
        r["engine_version"],
        json.loads(r["data_editions"] or "{}"),
        r["capacity_n"],
        r["demand_n"],
        r["ratio"],
        r["action"],
        action_label(r["action"]),
        r["governing"],
        r["flags"],
        _loads(r["summary_json"]),
        r["created_at"],
    )


def _post_view(r: dict) -> PostView:
    rec = _record(r)
    return PostView(
        r["member_id"],
        r["id"],
        r["visit_id"],
        r["site_id"],
        rec.get("tag", ""),
        rec.get("location", ""),
        rec,
        r["ratio"],
        r["action"],
        action_label(r["action"]),
        r["capacity_n"],
        r["demand_n"],
        r["governing"] or "",
        r["engine_version"],
        r["created_at"],
        r["author"],
        r["nheads"] > 1,
        older=r.get("stamp_id") not in (None, rated.engine_stamp()[0]),
    )


def _attachment(r: dict) -> Attachment:
    return Attachment(
        r["id"],
        r["observation_id"],
        r["member_id"],
        r["path"],
        r["sha256"],
        r["size_bytes"],
        r["caption"],
        r["created_at"],
    )


def _review(r: dict) -> Review:
    return Review(
        r["id"],
        r["kind"],
        r["text"],
        r["member_id"],
        r["observation_id"],
        r["visit_id"],
        r["author"],
        r["created_at"],
        r.get("action"),
    )


def _sha256(p: Path) -> tuple[str, int]:
    h = hashlib.sha256()
    size = 0
    with p.open("rb") as fh:
        for chunk in iter(lambda: fh.read(1 << 20), b""):
            h.update(chunk)
            size += len(chunk)
    return h.hexdigest(), size


def _default_author() -> str:
    try:
        return getpass.getuser() or "inspector"
    except (OSError, KeyError):
        return "inspector"


def _registry_columns() -> list[str]:
    """Record columns in the registry's order (fieldcheck.records.columns)."""
    from fieldcheck.records.columns import COLUMNS  # here: opening a log loads no records layer

    return list(COLUMNS)


def _read_meta(db: Database) -> dict[str, str]:
    if "meta" not in db.table_names():
        return {}
    return {r["key"]: r["value"] for r in db.query("SELECT key, value FROM meta")}


def _ensure_meta(db: Database) -> dict[str, str]:
    meta = _read_meta(db)
    if "device_id" not in meta:
        with db.atomic():
            db.execute("INSERT OR IGNORE INTO meta VALUES ('device_id', ?)", [new_id()])
            db.execute("INSERT OR IGNORE INTO meta VALUES ('firm_id', '')")
            db.execute("INSERT OR IGNORE INTO meta VALUES ('created_at', ?)", [now()])
        meta = _read_meta(db)
    if meta.get("schema_version") != str(SCHEMA_VERSION):
        db.execute(
            "INSERT OR REPLACE INTO meta VALUES ('schema_version', ?)", [str(SCHEMA_VERSION)]
        )
        meta["schema_version"] = str(SCHEMA_VERSION)
    return meta


def _own_device(db: Database, path: Path, dev: str, notices: list[str]) -> str:
    """The device id this log writes as: a new one when it was restored or copied (see
    ``fieldcheck.store.devices``), with one sentence in ``notices``."""
    from fieldcheck.store import devices

    row = db.conn.execute("SELECT value FROM meta WHERE key = ?", [f"seq:{dev}"]).fetchone()
    seq = int(row[0]) if row else 0
    why = devices.why_new_device(dev, path, seq)
    if why is None:
        devices.remember(dev, path, seq)
        return dev
    new = new_id()
    former = json.loads(_read_meta(db).get("former_device_ids", "[]"))
    with db.atomic():
        db.execute("INSERT OR REPLACE INTO meta VALUES ('device_id', ?)", [new])
        db.execute(
            "INSERT OR REPLACE INTO meta VALUES ('former_device_ids', ?)",
            [json.dumps([*former, dev])],
        )
    devices.remember(new, path, 0)
    notices.append(
        f"the survey log {path} writes as a new device from now on (...{short_ref(new)}, was "
        f"...{short_ref(dev)}) because {why}; its earlier posts keep their place and nothing "
        "clashes when it syncs"
    )
    return new


def _check_migrations(db: Database, path: Path) -> None:
    """A migration we do not know means a newer fieldcheck wrote this file (belt and braces)."""
    applied = {m.name for m in migrations.applied(db)}
    unknown = applied - set(MIGRATION_NAMES)
    if unknown:
        raise LogError(
            f"the survey log {path} has migrations this fieldcheck does not know "
            f"({', '.join(sorted(unknown))} in set {MIGRATION_SET}); update fieldcheck to open it"
        )


def _backup_copy(db: Database, path: Path, version: int) -> Path:
    """A consistent copy beside the log before upgrading it: survey.db.v1-backup-<time>."""
    stamp = _dt.datetime.now().strftime("%Y%m%dT%H%M%S")
    dest = path.with_name(f"{path.name}.v{version}-backup-{stamp}")
    n = 1
    while dest.exists():
        n += 1
        dest = path.with_name(f"{path.name}.v{version}-backup-{stamp}-{n}")
    tmp = dest.with_name(dest.name + ".part")
    target = sqlite3.connect(str(tmp))
    try:
        db.conn.backup(target)
    finally:
        target.close()
    shutil.move(str(tmp), str(dest))
    return dest
