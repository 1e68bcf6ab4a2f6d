"""What a sync reports (SyncSummary) and the log's lock and WAL checkpoint around it: shared by
the file and folder sync (store.sync) and the hub sync (store.hub.sync)."""

from __future__ import annotations

import contextlib
from dataclasses import dataclass, field


def fmt_tables(counts: dict[str, int]) -> str:
    parts = [f"{t} {n:,}" for t, n in counts.items() if n]
    return ", ".join(parts)


@dataclass
class SyncSummary:
    office: str
    mode: str  # "file", "folder" or "hub"
    sent: dict[str, int] = field(default_factory=dict)
    received: dict[str, int] = field(default_factory=dict)
    conflicts: list[str] = field(
        default_factory=list
    )  # open, in the office (file) or here (folder)
    new_conflicts: list[str] = field(default_factory=list)
    refused: list[str] = field(default_factory=list)
    skipped: list[str] = field(default_factory=list)  # files in a shared folder left alone
    firm_id: str = ""
    seconds: float = 0.0
    bundles_written: list[str] = field(default_factory=list)

    @property
    def rows_sent(self) -> int:
        return sum(self.sent.values())

    @property
    def rows_received(self) -> int:
        return sum(self.received.values())

    @property
    def moved(self) -> int:
        return self.rows_sent + self.rows_received

    def sentence(self) -> str:
        if self.moved == 0 and not self.bundles_written and self.refused:
            s = f"Nothing moved between this log and {self.office}"
        elif self.moved == 0 and not self.bundles_written:
            s = f"Already in step with {self.office}: nothing to move"
        else:
            s = f"Sent {self.rows_sent:,} rows"
            if self.sent:
                s += f" ({fmt_tables(self.sent)})"
            s += f" and took back {self.rows_received:,}"
            if self.received:
                s += f" ({fmt_tables(self.received)})"
        if self.conflicts:
            s += (
                f"; {_n(len(self.conflicts), 'post')} revised in two places without seeing each "
                f"other await review ({len(self.new_conflicts)} new)"
            )
        if self.refused:
            s += f"; {_n(len(self.refused), 'bundle')} refused"
        if self.skipped:
            s += f"; {_n(len(self.skipped), 'file')} in the folder skipped (see the warnings)"
        return s + "."


@contextlib.contextmanager
def locked(log):
    lock = getattr(log, "_lock", None)
    if lock is None:
        yield
    else:
        with lock:
            yield


def checkpoint(log) -> None:
    with contextlib.suppress(Exception), locked(log):
        if not getattr(log, "readonly", False):
            log.db.execute("PRAGMA wal_checkpoint(PASSIVE)")


def _n(n: int, noun: str) -> str:
    return f"{n} {noun if n == 1 else noun + 's'}"
