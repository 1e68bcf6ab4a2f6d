"""One SQLite connection per log, set up for a laptop whose battery may die at any moment.

Every connection gets the same PRAGMAs (they are per connection, except journal_mode and
page_size which the file keeps): WAL, synchronous=FULL (a commit that returned survives a power
cut), foreign keys on. A new log is made with 16 KiB pages (``PAGE_SIZE``); an existing one keeps
the page size it was made with. sqlite-utils sits on our own sqlite3 connection in the legacy
transaction mode (sqlite-utils 4 refuses ``autocommit=`` connections); every user action is one
``db.atomic()`` block.
"""

from __future__ import annotations

import sqlite3
from pathlib import Path
from urllib.parse import quote

from sqlite_utils import Database

# "fchk" as a 32-bit integer: marks the file as a fieldcheck survey log (PRAGMA application_id).
APPLICATION_ID = 0x6663686B
BUSY_TIMEOUT_S = 5.0
# A new log's page size. An import or re-rate writes three rows and a dozen index entries per
# post in one transaction: 16 KiB pages hold four times the rows of SQLite's default 4 KiB, so
# a bulk write splits, spills and commits fewer pages (measured: the log's own tables written
# about a tenth faster, the commit about half). A save of one post writes a few pages more to
# the WAL. Only a file with no table yet takes it; an existing log keeps its own.
PAGE_SIZE = 16384


class LogError(ValueError):
    """The survey log cannot be used as it is (corrupted, foreign, newer): one sentence."""


def damaged(path: Path | str, exc: BaseException) -> LogError:
    """The one sentence for an SQLite error on the log, named for what it is: only a file SQLite
    cannot read as a database is called damaged (see ``faults``)."""
    from fieldcheck.store.faults import sqlite_sentence

    if isinstance(exc, sqlite3.Error):
        return LogError(sqlite_sentence(exc, path))
    return LogError(
        f"the survey log {path} cannot be read ({exc}); it may be truncated or corrupted: keep "
        "the file and any -wal file beside it untouched, and restore from a backup or the "
        "office copy"
    )


def _wal_empty(path: Path) -> bool:
    wal = Path(str(path) + "-wal")
    try:
        return not wal.exists() or wal.stat().st_size == 0
    except OSError:
        return False


def _connect_ro(path: Path) -> sqlite3.Connection:
    """Read-only: ``mode=ro``; a log on a read-only disk or in a folder the user cannot write
    (SQLite cannot make the -shm file beside it) is opened ``immutable`` when no -wal content is
    waiting (Log.close checkpoints it away), so check, export and report still read it."""
    uri = f"file:{quote(path.resolve().as_posix())}?mode=ro"
    conn = sqlite3.connect(uri, uri=True, timeout=BUSY_TIMEOUT_S, check_same_thread=False)
    try:
        conn.execute("PRAGMA schema_version").fetchone()
        return conn
    except sqlite3.OperationalError as exc:
        conn.close()
        text = str(exc).lower()
        if not ("unable to open" in text or "readonly" in text) or not _wal_empty(path):
            raise
    conn = sqlite3.connect(
        uri + "&immutable=1", uri=True, timeout=BUSY_TIMEOUT_S, check_same_thread=False
    )
    return conn


def connect(path: Path | str, *, readonly: bool = False, inspect=None) -> Database:
    """Open ``path`` (created when missing unless ``readonly``) with the field PRAGMAs.

    ``inspect(db)`` runs after the file is known to be SQLite and before anything is written
    (journal mode included), so a foreign or newer file can be refused untouched.
    """
    from fieldcheck.store.faults import os_sentence

    path = Path(path)
    try:
        if readonly:
            if not path.exists():
                raise LogError(
                    f"the survey log {path} does not exist; give an existing file with --db"
                )
            conn = _connect_ro(path)
        else:
            path.parent.mkdir(parents=True, exist_ok=True)
            conn = sqlite3.connect(str(path), timeout=BUSY_TIMEOUT_S, check_same_thread=False)
    except OSError as exc:
        raise LogError(os_sentence(exc, exc.filename or path, "open")) from None
    except sqlite3.Error as exc:
        raise damaged(path, exc) from None
    try:
        db = Database(conn, execute_plugins=False)  # no third-party plugin on a survey log
        # a file that is not SQLite at all fails on the first read
        conn.execute("PRAGMA schema_version").fetchone()
        if inspect is not None:
            inspect(db)
        if not readonly:
            conn.execute(f"PRAGMA page_size={PAGE_SIZE}")  # a no-op unless the file is new
            mode = conn.execute("PRAGMA journal_mode=WAL").fetchone()[0]
            if str(mode).lower() != "wal":
                raise LogError(
                    f"the survey log {path} cannot use write-ahead logging (journal mode {mode}); "
                    "keep survey logs on a local disk, not a network share"
                )
        conn.execute("PRAGMA synchronous=FULL")
        conn.execute("PRAGMA foreign_keys=ON")
        conn.execute("PRAGMA cache_size=-65536")  # 64 MiB: bulk imports touch big indexes
    except sqlite3.DatabaseError as exc:
        conn.close()
        raise damaged(path, exc) from exc
    except BaseException:
        conn.close()
        raise
    return db


def pragma(db: Database, name: str) -> object:
    """One PRAGMA value (first column of the first row)."""
    row = db.conn.execute(f"PRAGMA {name}").fetchone()
    return None if row is None else row[0]
