"""`fieldcheck export`: the current posts of a survey log as CSV or JSON (the office format)."""

from __future__ import annotations

import argparse
import sys

from fieldcheck.commands.log_option import add_db_option, open_log
from fieldcheck.commands.wording import count

DESCRIPTION = (
    "Write the current posts of a survey log (each post's latest revision, as typed, with its "
    "latest rating) as CSV or JSON with a fixed set of columns (schema version 1: see "
    "fieldcheck/report/export_format.py): the text as typed beside numbers in your units "
    "(height_in, load_lbf or height_mm, load_kN), the due date, rounded values. Cells a "
    "spreadsheet would run as a formula are written as text. An exported CSV can be imported "
    "again."
)


def add_arguments(p: argparse.ArgumentParser) -> None:
    add_db_option(p)
    p.add_argument("--format", choices=("csv", "json"), default="csv", help="output format (csv)")
    p.add_argument(
        "--out", metavar="FILE", help="write here instead of the standard output (- : stdout)"
    )
    p.add_argument(
        "--units",
        choices=("us", "metric"),
        default=argparse.SUPPRESS,
        help="units of the numeric columns (default: your config file, else us)",
    )
    p.add_argument(
        "--bom", action="store_true", help="start the CSV with a byte-order mark (for Excel)"
    )
    p.add_argument("--quiet", action="store_true", help="no progress bar")
    p.add_argument("--bundle", metavar="OUT", help="write a sync bundle (OUT and OUT.json) instead")


def run(args: argparse.Namespace) -> int:
    if args.bundle:
        from fieldcheck.commands.bundle_option import run_export_bundle

        return run_export_bundle(args)
    from fieldcheck.commands.progress import progress_bar
    from fieldcheck.config import load
    from fieldcheck.report import export_format as ef

    units = getattr(args, "units", None) or load().units
    to_file = bool(args.out) and args.out != "-"
    with open_log(args, readonly=True, must_exist=True) as log:
        cols, rows = ef.rows(log, units, spreadsheet_safe=args.format == "csv")
        total = log.count_members()  # for the progress bar: quick, never a pass over the posts
        written = []

        with progress_bar(args.quiet) as bar:
            prog = None if bar is None else (lambda n, _t, s: bar(n, max(total, n), s))

            def write(out) -> None:
                if args.format == "json":
                    written.append(ef.write_json(out, cols, rows, units=units, progress=prog))
                else:
                    written.append(ef.write_csv(out, cols, rows, bom=args.bom, progress=prog))

            if to_file:
                from fieldcheck.commands.out_file import write_atomically

                write_atomically(args.out, write)
            else:
                write(sys.stdout)
        n = written[0]
    if to_file:
        print(f"Exported {count(n, 'post')} to {args.out}.", file=sys.stderr)
    return 0
