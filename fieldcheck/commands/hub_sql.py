"""`fieldcheck hub-sql`: the SQL an office administrator runs once to set up a PostgreSQL hub."""

from __future__ import annotations

import argparse

DESCRIPTION = (
    "Print the SQL that sets up an office hub on a PostgreSQL server, to run once as the "
    "database owner or a superuser: the hub schema (version and tables, append-only), and "
    "least-privilege roles: fieldcheck_inspector (adds observations, never changes or deletes "
    "a row) and fieldcheck_reviewer (also records reviews). Example: fieldcheck hub-sql | psql "
    "-v ON_ERROR_STOP=1 -d survey. A one-person office needs none of this: the first sync into "
    "an empty database creates the hub."
)


def add_arguments(p: argparse.ArgumentParser) -> None:
    pass


def run(args: argparse.Namespace) -> int:
    from fieldcheck.store.hub.schema import admin_sql

    print(admin_sql(), end="")
    return 0
