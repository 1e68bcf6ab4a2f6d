"""Rows a long job keeps on the side, in a private temporary database (never the survey log).

    rows = ScratchRows(("seq", "tag", "action"))   # Log.scratch(columns) gives one
    rows.add([(0, "P1", 2), ...])                   # a chunk at a time
    rows.count(action=2) -> int
    for row in rows.read(order=("-action", "tag", "seq"), action=2): ...   # streamed tuples
    rows.close()

The database is SQLite's temporary one (an empty file name): its pages stay in a small cache and
spill to a file the operating system removes on close, so a million rows cost disk, not memory.
Text is kept as UTF-8 bytes (lone surrogates passed through), so it sorts exactly as Python
sorts str and reads back as the same str; a float NaN reads back as None (SQLite has no NaN).
"""

from __future__ import annotations

import re
import sqlite3
from collections.abc import Iterable, Iterator, Sequence

_NAME = re.compile(r"[a-z_][a-z0-9_]*\Z")
# pages kept in memory (KiB, SQLite's negative cache_size): the rest lives in the temporary file
CACHE_KIB = 16_384
READ_CHUNK = 4096  # rows fetched at a time by read()


def _enc(v):
    return v.encode("utf-8", "surrogatepass") if isinstance(v, str) else v


def _dec(v):
    return v.decode("utf-8", "surrogatepass") if isinstance(v, bytes) else v


class ScratchRows:
    """One table of plain values (int, float, str, None), added in chunks and read back in any
    order (no SQL outside the store: an order is column names, "-name" for descending; a filter
    is equality on columns, None matching a missing value)."""

    def __init__(self, columns: Sequence[str]):
        bad = [c for c in columns if not _NAME.match(c)]
        if bad or not columns:
            raise ValueError(f"scratch columns: {bad or 'none'} are not plain lower-case names")
        self.columns = tuple(columns)
        self._conn = sqlite3.connect("", check_same_thread=False)
        self._conn.execute(f"PRAGMA cache_size = -{CACHE_KIB}")
        self._conn.execute("PRAGMA temp_store = FILE")  # its sorts spill to files too
        self._conn.execute("PRAGMA journal_mode = OFF")
        self._conn.execute("PRAGMA synchronous = OFF")
        self._conn.execute(f"CREATE TABLE rows ({', '.join(self.columns)})")
        marks = ", ".join("?" * len(self.columns))
        self._insert = f"INSERT INTO rows VALUES ({marks})"

    def add(self, rows: Iterable[Sequence]) -> None:
        with self._conn:
            self._conn.executemany(self._insert, (tuple(map(_enc, r)) for r in rows))

    def _where(self, eq: dict) -> tuple[str, list]:
        for c in eq:
            self._col(c)
        if not eq:
            return "", []
        return " WHERE " + " AND ".join(f"{c} IS ?" for c in eq), [_enc(v) for v in eq.values()]

    def _col(self, name: str) -> str:
        if name not in self.columns:
            raise ValueError(f"scratch column {name!r} is not one of {', '.join(self.columns)}")
        return name

    def count(self, **eq) -> int:
        where, params = self._where(eq)
        return int(self._conn.execute(f"SELECT count(*) FROM rows{where}", params).fetchone()[0])

    def read(self, order: Sequence[str] = (), **eq) -> Iterator[tuple]:
        """The rows (those whose columns equal ``eq``), sorted by ``order`` (then as added),
        streamed ``READ_CHUNK`` at a time."""
        keys = [
            f"{self._col(k[1:])} DESC" if k.startswith("-") else self._col(k) for k in order
        ] + ["rowid"]
        where, params = self._where(eq)
        cur = self._conn.execute(f"SELECT * FROM rows{where} ORDER BY {', '.join(keys)}", params)
        try:
            while part := cur.fetchmany(READ_CHUNK):
                for row in part:
                    yield tuple(map(_dec, row))
        finally:
            cur.close()

    def close(self) -> None:
        self._conn.close()

    def __enter__(self) -> ScratchRows:
        return self

    def __exit__(self, *exc) -> None:
        self.close()
