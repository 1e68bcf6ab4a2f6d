"""The office hub: many field logs syncing with one PostgreSQL server (psycopg 3).

Same meaning as the folder sync (``fieldcheck.store.sync``) and the same merge rules
(``fieldcheck.store.merge``): rows are inserted where missing and never changed, a sync is one
transaction on the server, two revisions of one post made apart are both kept and listed. The
field log stays the SQLite file; it needs the server only while it syncs.

    from fieldcheck.store.hub import is_hub_url, sync_hub, HubError

    is_hub_url(text) -> bool            # postgresql://... or postgres://...
    sync_hub(log, url, progress=None) -> SyncSummary   # fieldcheck.store.sync.SyncSummary
    HubError                            # a ValueError: one sentence, never the password

The connection takes every libpq form: a URL, the ``PG*`` environment variables
(``postgresql:///survey`` takes host, user and password from them), a password file
(``~/.pgpass``). The schema (``fieldcheck`` in the database) is versioned; the administrator's
one-time SQL with least-privilege roles is ``fieldcheck hub-sql`` (``hub.schema.admin_sql``).
"""

from __future__ import annotations

from typing import Any

from fieldcheck.store.hub.url import HubError, is_hub_url, redact

__all__ = ["HubError", "is_hub_url", "redact", "sync_hub"]


def __getattr__(name: str) -> Any:  # lazy: psycopg is imported only when a hub is used
    if name == "sync_hub":
        from fieldcheck.store.hub.sync import sync_hub

        return sync_hub
    raise AttributeError(name)
