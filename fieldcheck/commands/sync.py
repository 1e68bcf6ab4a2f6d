"""`fieldcheck sync --db FIELD OFFICE`: send this log to the office and take back what is new."""

from __future__ import annotations

import argparse
import sys

from fieldcheck.commands.log_option import add_db_option, open_log

DESCRIPTION = (
    "Sync a survey log with the office. OFFICE is the office's survey log file (merged directly), "
    "a shared folder (bundles are dropped there and the office's are taken) or a PostgreSQL hub "
    "(postgresql://user@host/db; the password from PGPASSWORD or ~/.pgpass). Every row the "
    "other side lacks moves once; a repeated sync moves nothing. Posts revised in two places "
    "without seeing each other are kept both ways and listed for review."
)


def add_arguments(p: argparse.ArgumentParser) -> None:
    add_db_option(p)
    p.add_argument(
        "office",
        metavar="OFFICE",
        help="office survey log file, shared folder, or postgresql:// URL of the office hub",
    )
    p.add_argument("--quiet", action="store_true", help="no progress bar")
    p.add_argument("--json", action="store_true", help="print one JSON object")


def run(args: argparse.Namespace) -> int:
    from fieldcheck.commands.progress import progress_bar
    from fieldcheck.store.photos import sync_photos
    from fieldcheck.store.sync import sync

    with open_log(args, must_exist=True) as log, progress_bar(args.quiet) as bar:
        summary = sync(log, args.office, progress=bar)
        photos = sync_photos(log, args.office, progress=bar)
    if args.json:
        import json

        out = {
            "office": summary.office,
            "mode": summary.mode,
            "sent": summary.sent,
            "received": summary.received,
            "conflicts": summary.conflicts,
            "new_conflicts": summary.new_conflicts,
            "refused": summary.refused + photos.refused,
            "skipped": summary.skipped,
            "photos": {"sent": photos.sent, "received": photos.received},
            "seconds": round(summary.seconds, 3),
            "sentence": summary.sentence(),
        }
        print(json.dumps(out, ensure_ascii=False, indent=1))
        return 1 if summary.refused or photos.refused else 0
    print(summary.sentence())
    if photos.sent or photos.received or photos.refused:
        print(photos.sentence())
    for r in photos.refused:
        print(f"fieldcheck: {r}", file=sys.stderr)
    for table, n in summary.sent.items():
        print(f"  sent      {table:<14} {n:>9,}")
    for table, n in summary.received.items():
        print(f"  took back {table:<14} {n:>9,}")
    for c in summary.conflicts:
        print(f"  conflict: post {c} has two revisions made apart; review it in the office")
    for r in summary.skipped:
        print(f"fieldcheck: warning: {r}", file=sys.stderr)
    for r in summary.refused:
        print(f"fieldcheck: {r}", file=sys.stderr)
    return 1 if summary.refused or photos.refused else 0
