"""The ``--db PATH`` option shared by the survey-log subcommands, and opening the log it names."""

from __future__ import annotations

import argparse
from pathlib import Path


def add_db_option(p: argparse.ArgumentParser) -> None:
    # SUPPRESS: when not given here, the main parser's `fieldcheck --db PATH demo` value stands
    p.add_argument(
        "--db",
        metavar="PATH",
        default=argparse.SUPPRESS,
        help="survey log file (default: your data folder, or $FIELDCHECK_DB)",
    )


def log_path(args: argparse.Namespace) -> Path:
    """The log file --db names (a hub URL: its mirror file, see fieldcheck.store.hub.mirror)."""
    from fieldcheck.store.hub.url import is_hub_url
    from fieldcheck.store.paths import default_log_path

    db = getattr(args, "db", None)
    if is_hub_url(db):
        from fieldcheck.store.hub.mirror import mirror_path

        return mirror_path(db)
    return Path(db).expanduser() if db else default_log_path()


def open_log(args: argparse.Namespace, *, readonly: bool = False, must_exist: bool = False):
    """Open the log named by --db; a missing file is a usage error when it must exist."""
    from fieldcheck.commands.usage import UsageError
    from fieldcheck.store import Log
    from fieldcheck.store.hub.url import is_hub_url

    db = getattr(args, "db", None)
    if is_hub_url(db):  # the office hub: its mirror, synced on open (and on close when written)
        from fieldcheck.store.hub.mirror import open_hub_log

        return open_hub_log(db, readonly=readonly)
    path = log_path(args)
    if must_exist and not path.exists():
        raise UsageError(
            f"the survey log {path} does not exist; give an existing log with --db PATH"
        )
    import sys

    log = Log.open(path, readonly=readonly)
    for notice in log.notices:
        print(f"fieldcheck: {notice}.", file=sys.stderr)
    return log


def find_site(log, text: str):
    from fieldcheck.commands.usage import UsageError

    for s in log.sites():
        if text in (s.id, s.name):
            return s
    names = ", ".join(repr(s.name) for s in log.sites()) or "none"
    raise UsageError(f"--site: no site named or numbered {text!r} in this log; sites: {names}")


def find_visit(log, text: str, site_id: str | None):
    from fieldcheck.commands.usage import UsageError

    found = [v for v in log.visits(site_id) if text in (v.id, v.name)]
    if len(found) == 1:
        return found[0]
    if len(found) > 1:
        raise UsageError(
            f"--visit: {len(found)} visits are named {text!r}; give the site with "
            "--site or the visit's id"
        )
    names = ", ".join(repr(v.name) for v in log.visits(site_id)) or "none"
    raise UsageError(f"--visit: no visit named or numbered {text!r}; visits: {names}")
