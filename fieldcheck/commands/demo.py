"""`fieldcheck demo`: write the invented demo survey into its own log, without the interface.

Without --db the demo goes to its own file beside your survey log, never into the log itself; a
log holding the demo is marked invented and sync refuses it."""

from __future__ import annotations

import argparse
import sys

from fieldcheck.commands.log_option import add_db_option, open_log

DESCRIPTION = (
    "Write the demo survey (an invented renovation: basement posts and a run of temporary shores, "
    "one of them overloaded) into a log of its own (default: demo-invented.fieldcheck beside your "
    "survey log), so you can try the interface, reports and exports. It is never synced."
)


def add_arguments(p: argparse.ArgumentParser) -> None:
    add_db_option(p)
    p.add_argument(
        "--force", action="store_true", help="add the demo even if the log already holds sites"
    )


def run(args: argparse.Namespace) -> int:
    from fieldcheck.commands.usage import UsageError
    from fieldcheck.store import Log, seed_demo
    from fieldcheck.store.demo import default_demo_path

    if getattr(args, "db", None):
        opened = open_log(args)
    else:
        path = default_demo_path()
        path.parent.mkdir(parents=True, exist_ok=True)
        opened = Log.open(path)
    with opened as log:
        if not log.is_empty() and not args.force:
            raise UsageError(
                f"the survey log {log.path} already holds sites; use a new file with --db PATH "
                "or add --force to add the demo anyway"
            )
        site, visits = seed_demo(log)
        counts = log.counts_by_action()
        print(
            f"Demo survey written to {log.path}: site {site.name!r}, {len(visits)} visits, "
            f"{len(log.posts(site_id=site.id))} posts."
        )
        print("  " + ", ".join(f"{k} {v}" for k, v in counts.items() if v))
        print(
            "Invented data for trying fieldcheck; it describes no real building.", file=sys.stderr
        )
    return 0
