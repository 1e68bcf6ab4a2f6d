"""`fieldcheck demo`: write the invented demo survey into a log, without the interface."""

from __future__ import annotations

import argparse
import sys

from fieldcheck.commands.log_option import add_db_option, open_log

DESCRIPTION = (
    "Write the demo survey (an invented renovation: basement posts and a run of temporary shores, "
    "one of them overloaded) into a survey log, so you can try the interface, reports and exports."
)


def add_arguments(p: argparse.ArgumentParser) -> None:
    add_db_option(p)
    p.add_argument(
        "--force", action="store_true", help="add the demo even if the log already holds sites"
    )


def run(args: argparse.Namespace) -> int:
    from fieldcheck.cli import UsageError
    from fieldcheck.store import seed_demo

    with open_log(args) as log:
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
