"""Connecting to the hub and making sure it is one: errors as one sentence, schema created on
first use (if the role may), migrated, or refused when newer."""

from __future__ import annotations

import contextlib
import os
from dataclasses import dataclass

import psycopg
from psycopg import errors as pgerr

from fieldcheck.store.hub.schema import (
    HUB_SCHEMA_VERSION,
    LOCK_KEY,
    MIGRATIONS,
    SCHEMA,
    migration_sql,
)
from fieldcheck.store.hub.url import HubError, redact, scrub

CONNECT_TIMEOUT_S = 10


@dataclass(frozen=True)
class HubInfo:
    hub_id: str
    firm_id: str
    schema_version: int
    user: str


def _password(url: str) -> str | None:
    with contextlib.suppress(Exception):
        return psycopg.conninfo.conninfo_to_dict(url).get("password") or os.environ.get(
            "PGPASSWORD"
        )
    return os.environ.get("PGPASSWORD")


def explain(exc: BaseException, url: str, doing: str = "") -> HubError:
    """One sentence for a driver or server error, with the password taken out."""
    raw = str(exc) or type(exc).__name__
    msg = scrub(raw, url, _password(url))
    where = redact(url)
    low = raw.lower()
    if "password authentication failed" in low or "no password supplied" in low:
        return HubError(
            f"the hub {where} refused the user name or password ({msg}); check the user and the "
            "password (PGPASSWORD or ~/.pgpass), nothing was changed"
        )
    if isinstance(exc, pgerr.InsufficientPrivilege):
        return HubError(
            f"the hub {where} does not let this user {doing or 'do that'} ({msg}); ask the "
            "administrator for the fieldcheck_inspector or fieldcheck_reviewer role, nothing was "
            "changed"
        )
    if isinstance(exc, psycopg.OperationalError):
        if doing:
            return HubError(
                f"the connection to the hub {where} was lost while {doing} ({msg}); nothing was "
                "half-taken: run the sync again"
            )
        return HubError(
            f"cannot reach the hub {where} ({msg}); check the address and that the server is "
            "running, nothing was changed"
        )
    return HubError(f"the hub {where} refused the sync ({msg}); nothing was changed")


def connect(url: str) -> psycopg.Connection:
    """A connection in autocommit mode (every transaction is an explicit block)."""
    kw: dict[str, object] = {"autocommit": True, "application_name": "fieldcheck"}
    if "connect_timeout" not in url and "PGCONNECT_TIMEOUT" not in os.environ:
        kw["connect_timeout"] = CONNECT_TIMEOUT_S
    try:
        return psycopg.connect(url, **kw)
    except psycopg.Error as exc:
        raise explain(exc, url) from None


_OTHER_TABLES = """
SELECT count(*) FROM pg_class c JOIN pg_namespace n ON n.oid = c.relnamespace
WHERE c.relkind IN ('r', 'p', 'v', 'm', 'f') AND n.nspname NOT IN ('pg_catalog',
    'information_schema') AND n.nspname NOT LIKE 'pg\\_toast%' AND n.nspname NOT LIKE 'pg\\_temp%'
"""


# a catalog query, not to_regclass(): it reads with the statement's snapshot, so after waiting for
# the advisory lock it sees the schema another sync has just created (the relation cache may not)
_HUB_EXISTS = (
    "SELECT count(*) FROM pg_class c JOIN pg_namespace n ON n.oid = c.relnamespace "
    f"WHERE n.nspname = '{SCHEMA}' AND c.relname = 'hub_meta'"
)

# both questions in one statement, so one snapshot answers them: asked one after the other, a
# first sync committing in between made an empty database look like one holding other tables
_HUB_AND_OTHERS = f"SELECT ({_HUB_EXISTS}), ({_OTHER_TABLES})"


def _not_a_hub(where: str) -> HubError:
    return HubError(
        f"the database at {where} is not a fieldcheck hub (it holds other tables and no "
        "fieldcheck schema); give a hub or an empty database, nothing was changed"
    )


def _meta(conn: psycopg.Connection) -> dict[str, str]:
    return dict(conn.execute(f"SELECT key, value FROM {SCHEMA}.hub_meta").fetchall())


def ensure_hub(conn: psycopg.Connection, url: str) -> HubInfo:
    """The hub's identity, after creating its schema in an empty database or migrating an older
    one (with an advisory lock, so concurrent first syncs create it once). Refuses a database
    holding other tables, and a hub of a newer schema."""
    where = redact(url)
    try:
        hub, others = conn.execute(_HUB_AND_OTHERS).fetchone()
        if not hub:
            if others:
                raise _not_a_hub(where)
            _migrate(conn, url, 0)
        meta = _meta(conn)
        version = int(meta.get("schema_version", "0") or 0)
        if version > HUB_SCHEMA_VERSION:
            raise HubError(
                f"the hub {where} was set up by a newer fieldcheck (hub schema version {version}, "
                f"this one knows up to {HUB_SCHEMA_VERSION}); update fieldcheck and sync again, "
                "nothing was changed"
            )
        if version < HUB_SCHEMA_VERSION:
            _migrate(conn, url, version)
            meta = _meta(conn)
        user = conn.execute("SELECT current_user").fetchone()[0]
    except HubError:
        raise
    except psycopg.Error as exc:
        raise explain(exc, url, "reading the hub") from None
    return HubInfo(meta["hub_id"], meta.get("firm_id", ""), int(meta["schema_version"]), user)


def _migrate(conn: psycopg.Connection, url: str, have: int) -> None:
    try:
        with conn.transaction():
            conn.execute("SELECT pg_advisory_xact_lock(%s)", [LOCK_KEY])
            exists, others = conn.execute(_HUB_AND_OTHERS).fetchone()
            if not exists and others:  # tables appeared while this sync waited for the lock
                raise _not_a_hub(redact(url))
            now = int(_meta(conn).get("schema_version", "0")) if exists else 0
            for v in sorted(MIGRATIONS):
                if v > now:
                    conn.execute(migration_sql(v))
    except (pgerr.InsufficientPrivilege, pgerr.InvalidSchemaName) as exc:
        what = "create the hub in this empty database" if have == 0 else "upgrade the hub schema"
        raise HubError(
            f"the user may not {what} at {redact(url)} ({scrub(str(exc), url, _password(url))}); "
            "ask the administrator to run the SQL that `fieldcheck hub-sql` prints, nothing was "
            "changed"
        ) from None
