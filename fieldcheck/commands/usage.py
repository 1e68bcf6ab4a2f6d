"""What the CLI and every command share about errors the user can fix: one sentence, exit 2."""

from __future__ import annotations

import sys


class UsageError(Exception):
    """A problem with what the user asked for: printed as one sentence, exit code 2."""


def is_sqlite_error(exc: BaseException) -> bool:
    """Whether ``exc`` is an sqlite3.Error, without importing sqlite3 (start-up speed: a command
    that never opened a database cannot have raised one)."""
    sqlite3 = sys.modules.get("sqlite3")
    return sqlite3 is not None and isinstance(exc, sqlite3.Error)


def store_error_sentence(exc: Exception, db: str) -> str:
    """A database or file error (sqlite3.Error or OSError) named for what it is (busy, full disk,
    read-only, damaged)."""
    from fieldcheck.store.faults import os_sentence, sqlite_sentence

    if is_sqlite_error(exc):
        return sqlite_sentence(exc, db)
    return os_sentence(exc, getattr(exc, "filename", None) or "a file")


def clean(message: object) -> str:
    """One line, values shortened, terminal escapes and control characters removed."""
    from fieldcheck import units

    return units.clean_message(str(message))


def set_message_units(system: str | None) -> None:
    """Ranges in messages in the user's units: the option, else the config file, else US."""
    from fieldcheck import units

    if system is None:
        try:
            from fieldcheck.config import load

            system = load().units
        except Exception:  # a broken config file is reported by the command that reads it
            system = None
    units.set_message_system(system)


def db_path(args) -> str:
    """The survey log named by --db (or the default), for naming it in a message."""
    try:
        from pathlib import Path

        from fieldcheck.store.paths import default_log_path

        db = getattr(args, "db", None)
        return str(Path(db).expanduser() if db else default_log_path())
    except Exception:  # only for naming the file
        return "the survey log"
