"""The full-length arrays of a large batch's rating, put together from its blocks' results.

A block's result for an array is one of: a block array of its own (copied into the full-length
array, made empty by the first block that has one), the same block array as a key put before it
in this block (checks sharing one demand), a slice of an array of the batch (its own load
column), one value (a check not made there: NaN), or an array made only when the full-length
array is asked for (:class:`Later`: a check's demand at its load combination). Only the first
kind is copied as the blocks come; the others are resolved at the end, and an array whose every
block is the same key, the same column of the batch or the same value is that key's array, that
column or one broadcast value: no copy and no page faults for it. The result equals the blocks'
results side by side.
"""

from __future__ import annotations

import threading
from collections.abc import Callable
from typing import Any

import numpy as np

from fieldcheck.engine.blocks import broadcast, filled

Key = tuple[str, str]


class Later:
    """A block's array made when the full-length array is first asked for: ``make()`` gives
    it, of ``dtype``."""

    def __init__(self, make: Callable[[], np.ndarray], dtype=np.float64) -> None:
        self.make, self.dtype = make, np.dtype(dtype)


class BlockResults:
    """Full-length arrays of n posts by key, put together block by block (thread-safe)."""

    def __init__(self, n: int, starts: range, block: int) -> None:
        self.n, self.starts, self.size = n, starts, block
        self.arrays: dict[Key, np.ndarray] = {}
        self.dtypes: dict[Key, np.dtype] = {}
        self.parts: dict[Key, dict[int, tuple[str, Any]]] = {}  # not copied: start -> source
        self.lock = threading.Lock()
        self.done: dict[Key, np.ndarray | None] = {}

    def block(self, start: int, columns: dict[int, np.ndarray]) -> Callable:
        """``put(key, value, fallback=None)`` for the block at ``start``. ``columns`` maps the id
        of a block array that is a slice of a full-length array of the batch to that array.
        ``value`` None: the key has no value of its own in this block; ``fallback(sl)`` gives
        it if another block has one (else the key stays None)."""
        sl = slice(start, min(start + self.size, self.n))
        seen: dict[int, tuple[Key, np.ndarray]] = {}  # the array kept: its id stays its own

        def put(key: Key, value: np.ndarray | None, fallback: Callable | None = None) -> None:
            with self.lock:
                parts = self.parts.setdefault(key, {})
                if value is None:
                    parts[start] = ("fallback", fallback)
                    return
                if isinstance(value, Later):
                    self.dtypes.setdefault(key, value.dtype)
                    parts[start] = ("later", value)
                    return
                value = np.asarray(value)
                self.dtypes.setdefault(key, value.dtype)
                source = seen.get(id(value))
                if source is not None:
                    parts[start] = ("key", source[0])
                    return
                seen[id(value)] = key, value
                column = columns.get(id(value))
                if column is not None:
                    parts[start] = ("column", column)
                    return
                if broadcast(value):
                    parts[start] = ("value", value[0])
                    return
                a = self.arrays.get(key)
                if a is None:
                    a = self.arrays[key] = np.empty(self.n, dtype=self.dtypes[key])
            a[sl] = value

        return put

    def get(self, key: Key) -> np.ndarray | None:
        """The full-length array of ``key`` (None: no block had a value of its own for it)."""
        if key in self.done:
            return self.done[key]
        parts = self.parts.get(key, {})
        a = self.arrays.get(key)
        if a is None:
            kinds = {kind for kind, _ in parts.values()}
            if kinds <= {"fallback"}:
                self.done[key] = None
                return None
            same = {_source(kind, src) for kind, src in parts.values()}
            if len(same) == 1 and len(parts) == len(self.starts):  # one source throughout
                kind, src = next(iter(parts.values()))
                if kind == "key":
                    a = self.get(src)
                elif kind == "column":
                    a = src
                else:
                    a = filled(np.asarray(src, dtype=self.dtypes[key]), self.n)
                self.done[key] = a
                return a
            a = self.arrays[key] = np.empty(self.n, dtype=self.dtypes[key])
        for start, (kind, src) in parts.items():
            sl = slice(start, min(start + self.size, self.n))
            if kind == "key":
                a[sl] = self.get(src)[sl]
            elif kind == "column":
                a[sl] = src[sl]
            elif kind == "value":
                a[sl] = src
            elif kind == "later":
                a[sl] = src.make()
            else:
                a[sl] = src(sl)
        self.done[key] = a
        self.parts.pop(key, None)  # made: what the blocks left (a Later's arrays) can go
        return a


def _source(kind: str, src: Any) -> tuple:
    """What a part is taken from, comparable across blocks (a value by its bytes: NaN too)."""
    if kind == "column":
        return kind, id(src)
    if kind == "value":
        return kind, np.asarray(src).tobytes()
    if kind == "later":  # each block's own
        return kind, id(src)
    return kind, src
