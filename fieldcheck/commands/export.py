"""`fieldcheck export`: the current posts of a survey log as CSV or JSON."""

from __future__ import annotations

import argparse
import csv
import json
import sys

from fieldcheck.commands.log_option import add_db_option, open_log

DESCRIPTION = (
    "Write the current posts of a survey log (each post's latest revision, as typed, with its "
    "latest rating) as CSV or JSON. An exported CSV can be imported again."
)


def add_arguments(p: argparse.ArgumentParser) -> None:
    add_db_option(p)
    p.add_argument("--format", choices=("csv", "json"), default="csv", help="output format (csv)")
    p.add_argument("--out", metavar="FILE", help="write here instead of the standard output")
    p.add_argument("--bundle", metavar="OUT", help="write a sync bundle (OUT and OUT.json) instead")


def run(args: argparse.Namespace) -> int:
    if args.bundle:
        from fieldcheck.commands.sync import run_export_bundle

        return run_export_bundle(args)
    with open_log(args, readonly=True, must_exist=True) as log:
        columns, rows = log.export_iter()
        written = []

        def write(out) -> None:
            written.append((write_json if args.format == "json" else write_csv)(out, columns, rows))

        if args.out:
            from fieldcheck.commands.out_file import write_atomically

            write_atomically(args.out, write)
        else:
            write(sys.stdout)
        n = written[0]
    if args.out:
        print(f"Exported {n} posts to {args.out}.", file=sys.stderr)
    return 0


def write_csv(out, columns: list[str], rows) -> int:
    """The rows (dicts in column order) as CSV, streamed; an empty value for None."""
    w = csv.writer(out)
    w.writerow(columns)
    n = 0
    for row in rows:
        w.writerow(["" if v is None else v for v in row.values()])
        n += 1
    return n


def write_json(out, columns: list[str], rows) -> int:
    """{"columns": [...], "posts": [{...}, ...]}, one post per line, streamed."""
    out.write('{"columns": ' + json.dumps(columns, ensure_ascii=False) + ',\n "posts": [')
    n = 0
    for row in rows:
        out.write(("\n  " if n == 0 else ",\n  ") + json.dumps(row, ensure_ascii=False))
        n += 1
    out.write("\n ]\n}\n")
    return n
