"""The merge rules of sync, independent of where rows are stored.

Nothing here knows about SQLite files: the rules work on plain values and row iterables, and a
store takes part through the small ``MergeTarget`` protocol (``fieldcheck.store.bundle`` has the
SQLite implementation; an office hub on a PostgreSQL server would be a second one). The rules:

- Identity: every row has a UUID made on the device that wrote it; a row is inserted where it is
  missing and never changed where it exists (``INSERT ... ON CONFLICT(id) DO NOTHING``). An id
  that exists with other content is refused, never overwritten.
- Order and "what does the other side lack": every row carries (device_id, device_seq), a
  per-device counter allocated in the writing transaction. A log holds, for every device, all
  rows up to some seq (each transfer carries whole ranges), so a log's holdings are one number
  per device: its *vector*. The rows to send are the ranges ``delta(ours, theirs)``. Clocks are
  never used for order.
- Conflicts: a member whose revisions have more than one head (a revision nobody supersedes) was
  revised in two places without either seeing the other. Both are kept and the member is listed
  until someone records a revision that settles it; nothing is resolved silently.
- Firm: every log names its firm in meta (``firm_id``). A transfer between two different firms is
  refused. A log with no firm adopts the sender's on its first sync; an office log with no firm
  that receives from a log with none mints one (the field log adopts it on the way back).
- Schema: a transfer written by a newer schema than the receiver's is refused.
"""

from __future__ import annotations

import hashlib
import uuid
from collections.abc import Callable, Iterable, Iterator, Mapping, Sequence
from dataclasses import dataclass, field
from typing import Protocol

Vector = dict[str, int]  # device id -> highest device_seq held (all lower ones held too)
Ranges = dict[str, tuple[int, int]]  # device id -> (first, last) device_seq, inclusive
Progress = Callable[[int, int, str], None]  # done, total, stage


class TransferRefused(ValueError):
    """A transfer the receiver will not take (truncated, tampered, foreign, newer): one sentence.
    The receiver is left unchanged."""


@dataclass(frozen=True)
class TableSpec:
    name: str
    origin: bool  # carries device_id/device_seq (engine_stamps is content-addressed instead)
    # columns that may differ between two copies of one row (each device stamps the engine
    # stamp it first rated with at its own time): left out of the "same id, other content" check
    local: tuple[str, ...] = ()


# parents before children; every table has a TEXT primary key ``id``
SYNC_TABLES: tuple[TableSpec, ...] = (
    TableSpec("engine_stamps", False, ("created_at",)),
    TableSpec("sites", True),
    TableSpec("visits", True),
    TableSpec("members", True),
    TableSpec("observations", True),
    TableSpec("ratings", True),
    TableSpec("attachments", True),
    TableSpec("reviews", True),
    TableSpec("proposals", True),
    TableSpec("remedied", True),
)
TABLE_NAMES = tuple(t.name for t in SYNC_TABLES)


# ----------------------------------------------------------------------------- vectors


def delta(ours: Mapping[str, int], theirs: Mapping[str, int]) -> Ranges:
    """The seq ranges we hold that ``theirs`` lacks (empty: nothing to send)."""
    out: Ranges = {}
    for dev, hi in ours.items():
        lo = int(theirs.get(dev, 0)) + 1
        if hi >= lo:
            out[dev] = (lo, int(hi))
    return out


def covered(vector: Mapping[str, int], ranges: Mapping[str, Sequence[int]]) -> bool:
    """True when every range is already held (a transfer that would move nothing)."""
    return all(int(vector.get(dev, 0)) >= int(r[1]) for dev, r in ranges.items())


def gaps(vector: Mapping[str, int], ranges: Mapping[str, Sequence[int]]) -> list[str]:
    """Devices whose incoming range starts past what we hold + 1: a transfer is missing between."""
    return sorted(dev for dev, r in ranges.items() if int(r[0]) > int(vector.get(dev, 0)) + 1)


def advance(vector: Mapping[str, int], ranges: Mapping[str, Sequence[int]]) -> Vector:
    """The vector after taking ``ranges`` (only contiguous ranges advance it)."""
    out = dict(vector)
    for dev, (lo, hi) in ranges.items():
        if int(lo) <= out.get(dev, 0) + 1:
            out[dev] = max(out.get(dev, 0), int(hi))
    return out


def floor(vectors: Iterable[Mapping[str, int]]) -> Vector:
    """What every one of several peers holds (per device, the least); no peers: nothing."""
    vs = list(vectors)
    if not vs:
        return {}
    devices = set().union(*[v.keys() for v in vs])
    out = {d: min(int(v.get(d, 0)) for v in vs) for d in devices}
    return {d: s for d, s in out.items() if s > 0}


# ----------------------------------------------------------------------------- firm and schema


def firm_after(receiver_firm: str, sender_firm: str, *, office: bool) -> str | None:
    """The receiver's firm id after taking a transfer: None when it keeps its own; raises
    TransferRefused for another firm's transfer."""
    if receiver_firm and sender_firm and receiver_firm != sender_firm:
        raise TransferRefused(
            f"this transfer belongs to another firm (firm {sender_firm[:8]}..., this log is firm "
            f"{receiver_firm[:8]}...); it was refused and nothing was changed"
        )
    if receiver_firm:
        return None
    if sender_firm:
        return sender_firm  # first sync: adopt the office's (or the first field log's) firm
    return str(uuid.uuid4()) if office else None


def check_schema(transfer_version: int, our_version: int) -> None:
    if transfer_version > our_version:
        raise TransferRefused(
            f"this transfer was written by a newer fieldcheck (schema version {transfer_version}, "
            f"this one reads up to {our_version}); update fieldcheck and sync again, nothing was "
            "changed"
        )


# ----------------------------------------------------------------------------- checksums


class RowsDigest:
    """Per-table digest of which rows a transfer holds: sha256 over the ids in ascending order,
    one per line (``id\n``). Each row is also bound to the transfer's per-device seq ranges
    (every row must lie inside one), and every byte of a snapshot file is covered by the file's
    sha256; this digest travels with the rows, so a hub that receives rows rather than files can
    check it too."""

    def __init__(self) -> None:
        self._h = hashlib.sha256()
        self.rows = 0

    def update_ids(self, ids: Sequence[str]) -> None:
        if ids:
            self._h.update(("\n".join(ids) + "\n").encode())
            self.rows += len(ids)

    def hexdigest(self) -> str:
        return self._h.hexdigest()


# ----------------------------------------------------------------------------- conflicts


def heads_by_member(revisions: Iterable[tuple[str, str, str | None]]) -> dict[str, list[str]]:
    """(id, member_id, supersedes) rows -> {member: ids nobody supersedes}."""
    revs = list(revisions)
    superseded = {s for _, _, s in revs if s}
    out: dict[str, list[str]] = {}
    for rid, mid, _ in revs:
        if rid not in superseded:
            out.setdefault(mid, []).append(rid)
    return out


def conflicted(revisions: Iterable[tuple[str, str, str | None]]) -> list[str]:
    """Members with more than one head: revised in two places without seeing each other."""
    return sorted(m for m, hs in heads_by_member(revisions).items() if len(hs) > 1)


# ----------------------------------------------------------------------------- the merge


@dataclass(frozen=True)
class TransferHeader:
    """What the receiver needs to know about a transfer before taking its rows."""

    firm_id: str
    sender_device: str
    schema_version: int
    ranges: dict[str, tuple[int, int]]
    row_counts: dict[str, int]


class RowSource(Protocol):
    """Rows of a verified transfer, table by table (batches of tuples in ``columns`` order)."""

    def batches(self, table: str, columns: Sequence[str], size: int) -> Iterator[list[tuple]]: ...


class MergeTarget(Protocol):
    """A store taking a transfer. ``transaction()`` is one all-or-nothing unit of work."""

    schema_version: int
    office: bool

    def firm_id(self) -> str: ...
    def columns(self, table: str) -> list[str] | None: ...  # None: table unknown here
    def mismatched(self, table: str, columns: Sequence[str], source: RowSource) -> int: ...
    def transaction(self): ...  # context manager
    def insert_missing(
        self, table: str, columns: Sequence[str], source: RowSource, progress: Callable[[int], None]
    ) -> int: ...
    def set_firm(self, firm_id: str) -> None: ...
    def record_received(self, sender: str, ranges: Mapping[str, Sequence[int]]) -> None: ...
    def conflicts(self) -> list[str]: ...


@dataclass
class MergeResult:
    inserted: dict[str, int] = field(default_factory=dict)
    new_conflicts: list[str] = field(default_factory=list)
    conflicts: list[str] = field(default_factory=list)
    adopted_firm: str | None = None
    gaps: list[str] = field(default_factory=list)


def prepare(target: MergeTarget, header: TransferHeader, source: RowSource) -> str | None:
    """Every check that needs no write: schema, firm, tables, ids held with other content.
    Returns the firm id the target adopts (or None). Raises TransferRefused."""
    check_schema(header.schema_version, target.schema_version)
    adopt = firm_after(target.firm_id(), header.firm_id, office=target.office)
    for t in SYNC_TABLES:
        if not header.row_counts.get(t.name):
            continue
        cols = target.columns(t.name)
        if cols is None:
            raise TransferRefused(
                f"this transfer holds {t.name} rows this log has no table for; update fieldcheck "
                "and sync again, nothing was changed"
            )
        bad = target.mismatched(t.name, [c for c in cols if c not in t.local], source)
        if bad:
            raise TransferRefused(
                f"this transfer holds {bad} {t.name} rows whose ids this log already has with "
                "other content (tampered or from a damaged log); it was refused and nothing was "
                "changed"
            )
    return adopt


def merge(
    target: MergeTarget,
    header: TransferHeader,
    source: RowSource,
    vector: Mapping[str, int],
    progress: Progress | None = None,
    stage: str = "merging",
    *,
    prepared: tuple[str | None] | None = None,
) -> MergeResult:
    """Take a verified transfer: checks first (nothing written; ``prepared=(adopt,)`` when the
    caller ran ``prepare`` already, e.g. on a read-only connection), then ONE transaction that
    inserts the rows the target lacks, table by table, parents first."""
    adopt = prepare(target, header, source) if prepared is None else prepared[0]
    total = sum(header.row_counts.values())
    done = 0
    res = MergeResult(adopted_firm=adopt, gaps=gaps(vector, header.ranges))
    if progress:
        progress(0, total, stage)
    with target.transaction():
        before = set(target.conflicts())
        for t in SYNC_TABLES:
            if not header.row_counts.get(t.name):
                continue
            cols = target.columns(t.name)
            assert cols is not None

            def step(n: int) -> None:
                nonlocal done
                done += n
                if progress:
                    progress(done, total, stage)

            res.inserted[t.name] = target.insert_missing(t.name, cols, source, step)
        if adopt:
            target.set_firm(adopt)
        target.record_received(header.sender_device, header.ranges)
        res.conflicts = target.conflicts()
        res.new_conflicts = sorted(set(res.conflicts) - before)
    if progress:
        progress(total, total, stage)
    return res
