"""Blocks of posts and every trick that keeps block arithmetic cheap, in one place.

A large batch is rated in blocks of ``BLOCK`` posts (the arrays stay in the CPU cache) on the
calling thread and one helper. Inside a block, a value that is the same for every post is one
cached, read-only array (:func:`filled` for results, :func:`constant` for a field's part of a
block), recognised again by identity (:func:`distinct`, :func:`is_one`, :func:`absent`), so that
a block-level test looks at one value and a factor of exactly 1.0 is skipped. Stages use these
helpers and never test identities or strides themselves.

Every helper here gives the same numbers as the plain arithmetic it stands for; they only skip
work (tests/engine/test_block_skips_exact.py compares both paths).
"""

from __future__ import annotations

import threading
from collections.abc import Callable, Iterable
from typing import Any

import numpy as np

BLOCK = 1 << 16  # posts per block

_SHARED: dict[tuple, np.ndarray] = {}  # read-only arrays of one value, by (value, n, kind)
_SHARED_IDS: set[int] = set()  # their ids (kept alive by the dict, so the ids are stable)


def _shared(value, n: int, contiguous: bool) -> np.ndarray:
    """n copies of one value, read-only and cached: blocks of one size reuse them."""
    v = np.asarray(value)
    key = (v.dtype.str, v.tobytes(), n, contiguous)
    arr = _SHARED.get(key)
    if arr is None:
        if len(_SHARED) > 4096:  # many odd lengths: start again rather than grow
            _SHARED.clear()
            _SHARED_IDS.clear()
        if contiguous:
            arr = np.full(n, v, dtype=v.dtype)
            arr.flags.writeable = False
        else:
            arr = np.broadcast_to(v, (n,))
        arr = _SHARED.setdefault(key, arr)
        _SHARED_IDS.add(id(arr))
    return arr


def constant(value: np.generic, n: int) -> np.ndarray:
    """A block's part of a field holding one value: contiguous (numpy's fast loops want it)."""
    return _shared(value, n, contiguous=True)


def filled(value, n: int) -> np.ndarray:
    """n copies of one value as a broadcast view (np.broadcast_to is slow to call for every
    block). For results that do not apply anywhere in a block (NaN, 0, False, a factor 1.0)."""
    return _shared(value, n, contiguous=False)


def broadcast(a: np.ndarray) -> bool:
    """``a`` is one value broadcast over its length (a field nobody gave, or a filled result)."""
    return a.strides == (0,) and a.size > 0


def distinct(a: np.ndarray) -> np.ndarray:
    """``a``, or just its first element when every element is known to be the same (a field
    nobody gave, or a filled result): block-level tests such as ``distinct(a).any()`` then
    look at one value instead of a block of them."""
    if a.size and (a.strides == (0,) or id(a) in _SHARED_IDS):
        return a[:1]
    return a


def is_one(f: np.ndarray) -> bool:
    """``f`` is the shared ``filled(1.0, n)``: a factor that changes nothing."""
    return f is filled(1.0, f.shape[0])


def absent(a: np.ndarray) -> bool:
    """A check not made anywhere in a block: one NaN broadcast over it."""
    return broadcast(a) and bool(np.isnan(a[0]))


def prod(first: np.ndarray, *factors: np.ndarray) -> np.ndarray:
    """first x every factor, skipping the ones that are filled(1.0, n) (exactly 1.0)."""
    out = first
    for f in factors:
        if not is_one(f):
            out = out * f
    return out if out is not first else first.copy()


def scaled(x: np.ndarray, f) -> np.ndarray:
    """x * f, or x itself where f is exactly 1.0 for every post (a factor nobody gave: its one
    value is looked at once, see :func:`distinct`); ``f`` an array or one value."""
    f = np.asarray(f)
    return x if bool((distinct(f) == 1.0).all()) else x * f


def set_bits(flags: np.ndarray, bit: int, where: np.ndarray) -> None:
    """OR the flag value ``bit`` into ``flags`` where ``where`` holds (in place).

    A product of the mask, not a ufunc masked with ``where=``: numpy's masked loops are about
    ten times slower on a mixed mask, and the flags are set some forty times per block.
    """
    if where.any():
        flags |= np.multiply(where, bit, dtype=np.int64)


def at_least(act: np.ndarray, level: int, where: np.ndarray) -> None:
    """act = max(act, level) where ``where`` holds (int8, in place; a product, no masked loop)."""
    if np.any(where):
        np.maximum(act, np.multiply(where, level, dtype=np.int8), out=act)


def memo(b: Any, key: str, make: Callable[[], Any]) -> Any:
    """A value computed once per batch (block) and kept on it, e.g. 'any section loss here'."""
    store = b.__dict__
    value = store.get(key)
    if value is None:
        value = store[key] = make()
    return value


def share_blocks(work: Callable[[int], None], starts: Iterable[int]) -> None:
    """Run work(start) for every block start on this thread and one helper thread.

    This thread takes part rather than waiting on a pool of two: its memory arena keeps the
    block's freed temporaries for the next block, where fresh pool threads handed memory back
    to the system and faulted it in again (measured by bench/engine.py: a third slower).
    """
    todo = iter(starts)
    lock = threading.Lock()
    errors: list[BaseException] = []

    def run() -> None:
        while not errors:
            with lock:
                start = next(todo, None)
            if start is None:
                return
            try:
                work(start)
            except BaseException as exc:  # raised again on the calling thread
                errors.append(exc)

    helper = threading.Thread(target=run, name="fieldcheck-rate", daemon=True)
    helper.start()
    run()
    helper.join()
    if errors:
        raise errors[0]
