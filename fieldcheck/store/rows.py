"""The log's rows as Python values, and what makes them: ids, time stamps, JSON text, the
column lists of the ratings and reviews tables. Shared by the log (repo.py) and the modules that
write reviews and proposals into it (reviews.py, proposals.py).
"""

from __future__ import annotations

import datetime as _dt
import itertools
import json
import operator
import os
import re
import threading
import time
from collections.abc import Mapping
from dataclasses import dataclass

import numpy as np

from fieldcheck.store import rated

# a revision no other revision supersedes or merges: a head of its member (observations alias o)
HEAD = (
    "NOT EXISTS (SELECT 1 FROM observations c WHERE c.supersedes = o.id) "
    "AND NOT EXISTS (SELECT 1 FROM observations c WHERE c.merges = o.id)"
)
ORIGIN_COLS = ("device_id", "device_seq", "author", "created_at")
RATING_COLS = (
    "id",
    "observation_id",
    "engine_version",
    "stamp_id",
    *rated.RATING_COLUMNS,
    *ORIGIN_COLS,
)

REVIEW_COLS = (
    "id",
    "member_id",
    "observation_id",
    "visit_id",
    "kind",
    "text",
    "action",
    *ORIGIN_COLS,
)


def now() -> str:
    """Wall time with its zone, ISO-8601 (for people only: order comes from device_seq)."""
    return _dt.datetime.now().astimezone().isoformat(timespec="milliseconds")


_id_state = [0, 0]  # last millisecond used, 42-bit counter within it
_id_lock = threading.Lock()
_HEX = np.frombuffer(b"0123456789abcdef", dtype=np.uint8)


def new_ids(n: int) -> list[str]:
    """n UUIDs version 7 made here: 48-bit milliseconds, a 42-bit counter (RFC 9562 §6.2 method
    1, spread over rand_a and the top of rand_b) and 32 random bits. Unique without coordination
    like uuid4, but increasing, so bulk inserts append to the indexes instead of scattering."""
    with _id_lock:
        ms = time.time_ns() // 1_000_000
        if ms <= _id_state[0]:
            ms, start = _id_state[0], _id_state[1] + 1
        else:
            start = 0
        if start + n > (1 << 42):  # counter exhausted: move to the next millisecond
            ms, start = ms + 1, 0
        _id_state[0], _id_state[1] = ms, start + n - 1
    c = np.arange(start, start + n, dtype=np.uint64)
    hi = (np.uint64(ms) << np.uint64(16)) | np.uint64(0x7000) | (c >> np.uint64(30))
    rnd = np.frombuffer(os.urandom(4 * n), dtype=np.uint32).astype(np.uint64)
    lo = (np.uint64(0b10) << np.uint64(62)) | ((c & np.uint64(0x3FFF_FFFF)) << np.uint64(32)) | rnd
    raw = np.empty((n, 16), dtype=np.uint8)
    raw[:, :8] = hi.astype(">u8").view(np.uint8).reshape(n, 8)
    raw[:, 8:] = lo.astype(">u8").view(np.uint8).reshape(n, 8)
    hexed = np.empty((n, 32), dtype=np.uint8)
    hexed[:, 0::2] = _HEX[raw >> 4]
    hexed[:, 1::2] = _HEX[raw & 15]
    txt = np.full((n, 36), ord("-"), dtype=np.uint8)
    for a, b, o in ((0, 8, 0), (8, 12, 9), (12, 16, 14), (16, 20, 19), (20, 32, 24)):
        txt[:, o : o + b - a] = hexed[:, a:b]
    flat = txt.tobytes().decode("ascii")
    return [flat[k : k + 36] for k in range(0, 36 * n, 36)]


def new_id() -> str:
    return new_ids(1)[0]


REF_DIGITS = 12  # hex digits of an id's short reference (short_ref)


def short_ref(member_id: str) -> str:
    """A short reference that tells posts (visits, devices) apart: the id's last 12 hex digits.
    Its head is the time it was made (new_ids), the same for every post saved or imported in the
    same minute, so a prefix names them all alike; the tail is the counter's low bits and 32
    random bits (random throughout in a uuid4 id)."""
    return member_id[-REF_DIGITS:]


def post_label(tag: str, member_id: str) -> str:
    """What a person calls a post: its tag, else "untagged" and its reference (short_ref)."""
    return tag or f"untagged {short_ref(member_id)}"


# what json.dumps(obj, ensure_ascii=False, separators=(",", ":")) gives, without building an
# encoder per call (a bulk import writes one record text per post)
_ENCODE = json.JSONEncoder(ensure_ascii=False, separators=(",", ":")).encode
# the string encoder of that JSONEncoder (ensure_ascii=False): what it writes for each text
_QUOTE = json.encoder.encode_basestring


def dumps(obj) -> str:
    return _ENCODE(obj)


def record_texts(records: list[dict[str, str]]) -> list[str]:
    """``dumps`` of each record (text keys and values, as ``clean_record`` makes them), written
    column-wise: the records that share their columns, in order, share one template; values
    with nothing to escape (no quote, backslash or control character: one search over them
    all) are put in as they are, others quoted by the encoder ``dumps`` itself uses."""
    shapes = list(map(tuple, records))
    if len(dict.fromkeys(shapes)) == 1:
        return _texts(shapes[0], records)
    groups: dict[tuple, list[int]] = {}
    for i, names in enumerate(shapes):
        groups.setdefault(names, []).append(i)
    out: list[str] = [""] * len(records)
    for names, idx in groups.items():
        for i, text in zip(idx, _texts(names, list(map(records.__getitem__, idx))), strict=True):
            out[i] = text
    return out


_ESCAPED = re.compile(r'["\\\x00-\x1f]')  # what that encoder escapes (ensure_ascii=False)


def _texts(names: tuple, records: list[dict[str, str]]) -> list[str]:
    """``dumps`` of records that share their columns (``names``, in order)."""
    if not names:
        return ["{}"] * len(records)
    try:
        keys = [_QUOTE(k).replace("%", "%%") for k in names]
        if len(names) == 1:
            cells = [(r[names[0]],) for r in records]
        else:
            cells = list(map(operator.itemgetter(*names), records))
        plain = _ESCAPED.search("".join(itertools.chain.from_iterable(cells))) is None
        if plain:
            template = "{" + ",".join(k + ':"%s"' for k in keys) + "}"
            return list(map(template.__mod__, cells))
        template = "{" + ",".join(k + ":%s" for k in keys) + "}"
        quoted = zip(*(map(_QUOTE, col) for col in zip(*cells, strict=True)), strict=True)
        return list(map(template.__mod__, quoted))
    except TypeError:  # a key or value that is not text: the encoder's own way
        return list(map(dumps, records))


def clean_record(
    record: Mapping[str, object], drop: frozenset[str] = frozenset()
) -> dict[str, str]:
    """The record as typed, minus cells left empty (an empty cell means "not given") and the
    columns in ``drop`` (an import leaves out the columns only an export writes)."""
    out: dict[str, str] = {}
    for k, v in record.items():
        if v is None or k in drop:
            continue
        s = v if isinstance(v, str) else str(v)
        if s.strip():
            out[str(k)] = s
    return out


@dataclass(frozen=True)
class Observation:
    """One revision of a member's inputs, as typed on a visit."""

    id: str
    member_id: str
    visit_id: str
    supersedes: str | None
    withdrawn: bool
    reason: str
    record: dict[str, str]
    device_id: str
    device_seq: int
    author: str
    created_at: str
    merges: str | None = None  # second parent: a revision that settles a conflict


@dataclass(frozen=True)
class Review:
    id: str
    kind: str
    text: str
    member_id: str | None
    observation_id: str | None
    visit_id: str | None
    author: str
    created_at: str
    action: int | None = None  # the action an override sets (0-3), else None
