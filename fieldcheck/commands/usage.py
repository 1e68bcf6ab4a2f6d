"""What the CLI and every command share about errors the user can fix: one sentence, exit 2."""

from __future__ import annotations

import sqlite3


class UsageError(Exception):
    """A problem with what the user asked for: printed as one sentence, exit code 2."""


def store_error_sentence(exc: sqlite3.Error | OSError, db: str) -> str:
    """A database or file error named for what it is (busy, full disk, read-only, damaged)."""
    from fieldcheck.store.faults import os_sentence, sqlite_sentence

    if isinstance(exc, sqlite3.Error):
        return sqlite_sentence(exc, db)
    return os_sentence(exc, exc.filename or "a file")
