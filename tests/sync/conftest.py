"""Fixtures for the sync tests: field logs with distinct devices, an office path, sound records,
and a canonical dump of the rows a log holds (sorted by id, bookkeeping left out)."""

from __future__ import annotations

import contextlib
import hashlib
import sqlite3
from pathlib import Path

import pytest

from fieldcheck.store import Log
from fieldcheck.store.merge import TABLE_NAMES


@pytest.fixture
def make_log(tmp_path):
    opened: list[Log] = []

    def make(name: str, device: str | None = None) -> Log:
        lg = Log.open(tmp_path / f"{name}.db", author=name, device=device or f"dev-{name}")
        opened.append(lg)
        return lg

    yield make
    for lg in opened:
        with contextlib.suppress(Exception):
            lg.close()


def dump(path: Path, skip_devices: tuple[str, ...] = ()) -> list[tuple]:
    """Every synced row of a log, table by table, sorted by id (for comparing logs)."""
    conn = sqlite3.connect(f"file:{path}?mode=ro", uri=True)
    try:
        out = []
        for t in TABLE_NAMES:
            for row in conn.execute(f"SELECT * FROM {t} ORDER BY id"):
                if t != "engine_stamps" and skip_devices and row[-4] in skip_devices:
                    continue
                out.append((t, *row))
        return out
    finally:
        conn.close()


def file_state(path: Path) -> tuple[str, bytes]:
    """sha256 of the main file and the -wal content (missing = empty)."""
    wal = Path(str(path) + "-wal")
    return (
        hashlib.sha256(Path(path).read_bytes()).hexdigest(),
        wal.read_bytes() if wal.exists() else b"",
    )


@pytest.fixture
def canon():
    return dump


@pytest.fixture
def state():
    return file_state
