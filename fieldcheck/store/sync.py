"""Sync a field survey log with the office: the Python API behind `fieldcheck sync`.

    from fieldcheck.store.sync import sync, export_bundle, import_bundle, open_conflicts

    summary = sync(log, office, progress=None) -> SyncSummary
        # office: an office log FILE (merged directly, through bundles in a temporary folder;
        # created when missing) or a shared FOLDER (bundles are dropped there as files and the
        # bundles other logs dropped are taken) or a PostgreSQL hub URL (postgresql://... or
        # postgres://..., see fieldcheck.store.hub). The field log sends every row the office lacks
        # and takes back every row it lacks (the office's review notes and sign-offs, sites and
        # visits assigned, other inspectors' posts). Repeating a sync moves nothing.
        # progress(done, total, stage) is called from the thread that runs sync().
    summary.sentence() -> str; .sent / .received: {table: rows}; .conflicts (open, member ids);
        .new_conflicts; .refused: [sentence, ...] (folder mode: bundles skipped); .firm_id
    export_bundle(log, out_path, since=None) -> Path    # since: a vector {device: seq} the
        # receiver holds (None: everything); writes OUT and OUT.json atomically
    import_bundle(log, bundle_path, progress=None) -> ImportSummary   # verify, then one transaction
    open_conflicts(log) -> list[Conflict]                 # for the interface and the report

A refused transfer raises ``TransferRefused`` (a ValueError, one sentence) and leaves the
receiving log byte for byte unchanged: everything is checked before it is opened for writing.
Firm ids: see ``fieldcheck.store.merge`` (a log without one adopts the office's on first sync).
"""

from __future__ import annotations

import contextlib
import json
import os
import shutil
import time
from dataclasses import dataclass, field
from pathlib import Path

from fieldcheck.store import bundle as bf
from fieldcheck.store import signing
from fieldcheck.store.merge import (
    MergeResult,
    Progress,
    TransferRefused,
    Vector,
    covered,
    delta,
    floor,
)
from fieldcheck.store.sync_summary import SyncSummary, checkpoint, fmt_tables, locked

__all__ = [
    "Conflict",
    "ImportSummary",
    "SyncSummary",
    "TransferRefused",
    "export_bundle",
    "import_bundle",
    "open_conflicts",
    "sync",
]


@dataclass
class ImportSummary:
    bundle: str
    sender_device: str
    rows_in_bundle: int
    inserted: dict[str, int] = field(default_factory=dict)
    conflicts: list[str] = field(default_factory=list)
    new_conflicts: list[str] = field(default_factory=list)
    adopted_firm: str | None = None
    gaps: list[str] = field(default_factory=list)

    @property
    def rows(self) -> int:
        return sum(self.inserted.values())

    def sentence(self) -> str:
        moved = fmt_tables(self.inserted)
        s = f"Took {self.rows:,} new rows of {self.rows_in_bundle:,} from {self.bundle}"
        s += f" ({moved})" if moved else ""
        if self.new_conflicts:
            s += f"; {len(self.new_conflicts)} new conflicts to review"
        return s + "."


@dataclass(frozen=True)
class Conflict:
    """A member with more than one head: every head kept, none chosen."""

    member_id: str
    tag: str
    heads: list  # list[fieldcheck.store.repo.Observation], oldest first


def open_conflicts(log) -> list[Conflict]:
    """Members revised in two places without either seeing the other, with their heads."""
    out = []
    for mid in log.conflicts():
        hist = log.history(mid)
        superseded = {o.supersedes for o in hist if o.supersedes}
        heads = [o for o in hist if o.id not in superseded]
        tag = next((o.record.get("tag", "") for o in reversed(heads) if o.record.get("tag")), "")
        out.append(Conflict(mid, tag, heads))
    return out


# ----------------------------------------------------------------------------- by hand


def _refuse_demo(log) -> None:
    """The invented demo survey never travels: not to an office, not into anyone's log."""
    from fieldcheck.store.demo import is_demo

    if is_demo(log):
        raise TransferRefused(
            f"{log.path} is the invented demo survey; it is never synced or sent to an office "
            "(start your own survey to sync), nothing was changed"
        )


def export_bundle(
    log, out_path, since: dict[str, int] | None = None, progress: Progress | None = None
) -> Path:
    """Write the rows of ``log`` a receiver holding ``since`` lacks (None: all) as a bundle."""
    _refuse_demo(log)
    out = Path(out_path)
    if out.is_dir():
        out = out / f"{log.device_id}-{int(time.time())}{bf.SUFFIX}"
    checkpoint(log)
    bf.write_bundle(Path(log.path), out, base=since, progress=progress, ring=signing.required())
    return out


def import_bundle(log, bundle_path, progress: Progress | None = None) -> ImportSummary:
    """Verify a bundle, then take the rows ``log`` lacks in one transaction."""
    if getattr(log, "readonly", False):
        raise TransferRefused(
            f"the survey log {log.path} was opened read-only; nothing was changed"
        )
    _refuse_demo(log)
    b = bf.read_bundle(Path(bundle_path), signing.required())
    with locked(log):
        res = bf.import_into(
            Path(log.path), b, office=_is_office(log), progress=progress, own_device=log.device_id
        )
    return _import_summary(b, res)


def _import_summary(b: bf.Bundle, res: MergeResult) -> ImportSummary:
    return ImportSummary(
        b.snapshot.name,
        b.header.sender_device,
        b.rows,
        res.inserted,
        res.conflicts,
        res.new_conflicts,
        res.adopted_firm,
        res.gaps,
    )


def _is_office(log) -> bool:
    # a log receiving by hand or as OFFICE in sync() mints a firm id when neither side has one;
    # a field log never does (it adopts the office's)
    return getattr(log, "_sync_role", "office") == "office"


WORK_PREFIX = ".fieldcheck-sync-"


def _pid_alive(pid: int) -> bool:
    try:
        os.kill(pid, 0)
    except ProcessLookupError:
        return False
    except OSError:
        return True  # another user's process: alive
    return True


@contextlib.contextmanager
def _work_folder(field_path: Path):
    """The temporary folder of one sync, beside the field log (never in $TMPDIR): a killed sync
    leaves it there, and the next sync of that log removes it (its process is gone)."""
    parent = Path(field_path).resolve().parent
    for old in parent.glob(f"{WORK_PREFIX}*"):
        pid = old.name.removeprefix(WORK_PREFIX)
        if pid.isdigit() and not _pid_alive(int(pid)):
            shutil.rmtree(old, ignore_errors=True)
    work = parent / f"{WORK_PREFIX}{os.getpid()}"
    shutil.rmtree(work, ignore_errors=True)
    work.mkdir()
    try:
        yield work
    finally:
        shutil.rmtree(work, ignore_errors=True)


def _remove_stale_parts(folder: Path, mine: str) -> None:
    """Half-written bundles of this device (``.NAME.PID.part``) whose process is gone."""
    for part in folder.glob(f".{mine}-*.part*"):
        pid = part.name.removesuffix(".json").removesuffix(".part").rsplit(".", 1)[-1]
        if pid.isdigit() and not _pid_alive(int(pid)):
            with contextlib.suppress(OSError):
                part.unlink()


def _vector_of(path: Path) -> tuple[Vector, dict[str, str]]:
    conn = bf.connect_ro(path)
    try:
        return bf.vector(conn), bf.read_meta(conn)
    finally:
        conn.close()


def _stage(progress: Progress | None, prefix: str) -> Progress | None:
    if progress is None:
        return None
    return lambda done, total, stage: progress(done, total, f"{prefix}: {stage}")


# ----------------------------------------------------------------------------- sync


def sync(log, office_path, progress: Progress | None = None) -> SyncSummary:
    """Sync ``log`` (a field log) with an office log file or a shared folder (see module doc)."""
    from fieldcheck.store.hub.url import is_hub_url, is_other_url, redact

    if is_hub_url(office_path):  # a PostgreSQL hub: never a folder named "postgresql:"
        from fieldcheck.store.hub.sync import sync_hub

        return sync_hub(log, str(office_path), progress)
    if is_other_url(office_path):
        raise TransferRefused(
            f"{redact(str(office_path))} is a URL fieldcheck cannot sync with; give an office log "
            "file, a shared folder or a postgresql:// URL"
        )
    if getattr(log, "readonly", False):
        raise TransferRefused(
            f"the survey log {log.path} was opened read-only; open it for writing to sync"
        )
    _refuse_demo(log)
    office = Path(office_path).expanduser()
    t0 = time.perf_counter()
    if office.is_dir():
        summary = _sync_folder(log, office, progress)
    else:
        summary = _sync_file(log, office, progress)
    summary.seconds = time.perf_counter() - t0
    if summary.received:
        log.wrote = True  # rows taken: sealed when the log is closed
    return summary


def _sync_file(log, office: Path, progress: Progress | None) -> SyncSummary:
    from fieldcheck.store import Log

    if Path(log.path).resolve() == office.resolve():
        raise TransferRefused(
            "the field log and the office log are the same file; give the office log"
        )
    if not office.exists():
        Log.open(office, author="office").close()  # a new, empty office log
    # the office as it stands: refuses a newer, foreign or damaged file before anything else
    with Log.open(office, readonly=True) as probe:
        office_version = probe.schema_version
    if office_version < bf.SCHEMA_VERSION:
        Log.open(office).close()  # upgrade after a backup copy (store's rules)
    summary = SyncSummary(str(office), "file")
    field_path = Path(log.path)
    checkpoint(log)
    ring = signing.Keyring.ephemeral()  # these bundles never leave this process
    with _work_folder(field_path) as tmp:
        # 1. field -> office: every row the office lacks
        office_vec, _ = _vector_of(office)
        out = Path(tmp) / f"to-office{bf.SUFFIX}"
        with locked(log):
            m = bf.write_bundle(
                field_path,
                out,
                base=office_vec,
                skip_empty=True,
                progress=_stage(progress, "send"),
                ring=ring,
            )
        if m is not None:
            b = bf.read_bundle(out, ring)
            res = bf.import_into(office, b, office=True, progress=_stage(progress, "send"))
            summary.sent = res.inserted
            summary.new_conflicts = res.new_conflicts
        # 2. office -> field: every row the field lacks (reviews, assignments, other inspectors)
        field_vec, _ = _vector_of(field_path)
        back = Path(tmp) / f"from-office{bf.SUFFIX}"
        m = bf.write_bundle(
            office,
            back,
            base=field_vec,
            skip_empty=True,
            progress=_stage(progress, "receive"),
            ring=ring,
        )
        if m is not None:
            b = bf.read_bundle(back, ring)
            with locked(log):
                res = bf.import_into(
                    field_path,
                    b,
                    office=False,
                    progress=_stage(progress, "receive"),
                    own_device=log.device_id,
                )
            summary.received = res.inserted
    conn = bf.connect_ro(office)
    try:
        target = bf.SqliteTarget(conn, office=True)
        summary.conflicts = target.conflicts()
        summary.firm_id = target.firm_id()
    finally:
        conn.close()
    return summary


def _sync_folder(log, folder: Path, progress: Progress | None) -> SyncSummary:
    """Take every other log's bundle in ``folder`` we lack, then drop ours (rows the other logs,
    as their latest manifests advertise, lack), replacing our older bundles."""
    summary = SyncSummary(str(folder), "folder")
    mine = log.device_id
    field_path = Path(log.path)
    ring = signing.required()
    _remove_stale_parts(folder, mine)
    own: list[tuple[Path, dict]] = []
    peers: list[tuple[Path, dict]] = []
    have, _ = _vector_of(field_path)
    for mpath in sorted(folder.glob(f"*{bf.SUFFIX}.json")):
        try:  # a junk, unsigned or forged file is skipped with a warning, never stops the sync
            snap, m = bf.read_manifest(mpath)
            signing.verify(m, ring, snap.name)
        except TransferRefused as exc:
            summary.skipped.append(str(exc))
            continue
        if m["sender_device"] == mine:
            own.append((snap, m))
        elif int(m["vector"].get(mine, 0)) > int(have.get(mine, 0)):
            summary.skipped.append(
                f"the bundle {snap.name} says its sender holds rows of this log's device that "
                "this log never wrote (a log restored or copied under this device id); skipped"
            )
        else:
            peers.append((snap, m))
    peers.sort(key=lambda sm: (str(sm[1].get("created_at", "")), sum(sm[1]["vector"].values())))
    before_conflicts = set(log.conflicts())
    for snap, m in peers:
        if covered(have, m["ranges"]):
            continue
        try:
            b = bf.read_bundle(snap, ring)
            with locked(log):
                res = bf.import_into(
                    field_path,
                    b,
                    office=False,
                    progress=_stage(progress, "receive"),
                    own_device=log.device_id,
                )
        except TransferRefused as exc:
            summary.refused.append(str(exc))
            continue
        for t, n in res.inserted.items():
            summary.received[t] = summary.received.get(t, 0) + n
        have, _ = _vector_of(field_path)
    # what every other log holds, by the newest manifest of each
    latest: dict[str, dict] = {}
    for _, m in peers:
        dev = m["sender_device"]
        if dev not in latest or sum(m["vector"].values()) >= sum(latest[dev]["vector"].values()):
            latest[dev] = m
    base = floor({d: int(s) for d, s in m["vector"].items()} for m in latest.values())
    checkpoint(log)
    ours, _ = _vector_of(field_path)
    ranges = delta(ours, base)
    prev = max(own, key=lambda sm: sum(sm[1]["vector"].values()), default=None)
    already = prev is not None and all(
        d in prev[1]["ranges"]
        and int(prev[1]["ranges"][d][0]) <= lo
        and int(prev[1]["ranges"][d][1]) >= hi
        for d, (lo, hi) in ranges.items()
    )
    if ranges and not already:
        name = f"{mine}-{sum(ours.values()):012d}-{os.getpid()}{bf.SUFFIX}"
        out = folder / name
        with locked(log):
            m = bf.write_bundle(
                field_path, out, base=base, progress=_stage(progress, "send"), ring=ring
            )
        summary.sent = {t: int(v["rows"]) for t, v in m["tables"].items() if int(v["rows"])}
        summary.bundles_written.append(name)
        for snap, _ in own:  # our older bundles: the new one carries everything they did
            with contextlib.suppress(OSError):
                bf.manifest_path(snap).unlink()
                snap.unlink()
    summary.conflicts = log.conflicts()
    summary.new_conflicts = sorted(set(summary.conflicts) - before_conflicts)
    summary.firm_id = log.meta().get("firm_id", "")
    return summary


def summary_json(s: SyncSummary) -> str:
    return json.dumps(
        {
            "office": s.office,
            "mode": s.mode,
            "sent": s.sent,
            "received": s.received,
            "conflicts": s.conflicts,
            "new_conflicts": s.new_conflicts,
            "refused": s.refused,
            "seconds": round(s.seconds, 3),
        }
    )
