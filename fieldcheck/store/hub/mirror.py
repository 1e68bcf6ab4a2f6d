"""The hub as a survey log: ``--db postgresql://...`` for the interface, report and review.

The office reads and reviews the hub through a *mirror*: a survey log file kept in the user's
data folder, one per hub, synced with the hub when it is opened (it takes every row it lacks, so
after the first time only what is new moves) and again when it is closed (the reviews recorded
meanwhile go up in one transaction). Everything else is the survey log's own API, so the hub
and the laptop's log meet one store contract: the same methods, the same dataclasses, the same
rules, and reviews made in the office reach the field logs at their next sync. The mirror is a
device of the firm like any laptop (its own device id): nothing in it is ever resolved silently.
"""

from __future__ import annotations

import contextlib
import getpass
import hashlib
import os
from pathlib import Path

from fieldcheck.store.hub.url import redact
from fieldcheck.store.repo import Log


def mirror_path(url: str) -> Path:
    """One mirror file per hub and user (the URL without its password names it)."""
    from fieldcheck.store.paths import default_log_path

    key = hashlib.sha256(redact(url).encode()).hexdigest()[:16]
    base = os.environ.get("FIELDCHECK_HUB_MIRRORS")
    folder = Path(base) if base else default_log_path().parent / "hubs"
    return folder / f"hub-{key}.db"


def hub_user(url: str) -> str:
    with contextlib.suppress(Exception):
        import psycopg

        user = psycopg.conninfo.conninfo_to_dict(url).get("user")
        if user:
            return str(user)
    try:
        return os.environ.get("PGUSER") or getpass.getuser()
    except (OSError, KeyError):
        return "office"


class HubLog(Log):
    """A survey log that is the hub's mirror: closing it sends what was recorded to the hub."""

    url: str = ""
    last_sync = None  # the SyncSummary of the latest sync

    def sync_now(self):
        from fieldcheck.store.hub.sync import sync_hub

        self.last_sync = sync_hub(self, self.url)
        return self.last_sync

    def close(self) -> None:
        try:
            if not self.readonly and self.url:
                self.sync_now()
        finally:
            super().close()

    def __repr__(self) -> str:
        return f"HubLog({redact(self.url)})"


def open_hub_log(url: str, *, readonly: bool = False, path: Path | None = None) -> Log:
    """The hub's mirror, synced now. ``readonly``: a read-only log after the sync (report,
    export); else a HubLog that syncs again when closed."""
    path = Path(path) if path is not None else mirror_path(url)
    log = HubLog.open(path, author=hub_user(url))
    log.url = url
    try:
        log.sync_now()
    except BaseException:
        log.url = ""  # nothing to send back: close without another attempt
        log.close()
        raise
    if not readonly:
        return log
    log.url = ""
    log.close()
    ro = Log.open(path, readonly=True)
    ro.hub_url = redact(url)
    return ro
