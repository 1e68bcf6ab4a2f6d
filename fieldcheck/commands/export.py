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
        table = log.export_rows()

    def write(out) -> None:
        if args.format == "json":
            json.dump(
                {"columns": table.columns, "posts": table.rows}, out, ensure_ascii=False, indent=1
            )
            out.write("\n")
        else:
            w = csv.DictWriter(out, fieldnames=table.columns, extrasaction="ignore")
            w.writeheader()
            for row in table.rows:
                w.writerow({k: "" if v is None else v for k, v in row.items()})

    if args.out:
        from fieldcheck.commands.out_file import write_atomically

        write_atomically(args.out, write)
    else:
        write(sys.stdout)
    if args.out:
        print(f"Exported {len(table.rows)} posts to {args.out}.", file=sys.stderr)
    return 0
