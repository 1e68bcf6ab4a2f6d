"""`fieldcheck import`: add posts from a CSV file (the `rate --batch` columns) to a survey log."""

from __future__ import annotations

import argparse
import sys

from fieldcheck.commands.csv_option import add_csv_options, derived_columns, open_posts
from fieldcheck.commands.log_option import add_db_option, open_log

DESCRIPTION = (
    "Add posts from a CSV file to a survey log, into a site and visit named by options (created "
    "when new). The columns are those of `fieldcheck rate --batch`; a row with a bad value is "
    "reported by row and column and left out, the others are imported in one transaction."
)


def add_arguments(p: argparse.ArgumentParser) -> None:
    add_db_option(p)
    p.add_argument("csv", metavar="IN.csv", nargs="?", help="posts, one per row (- : stdin)")
    p.add_argument("--site", help="site name (created if new), e.g. '14 Alder Row'")
    p.add_argument("--visit", help="visit name (created if new), e.g. 'Basement survey'")
    p.add_argument(
        "--inspector", help="who inspected (default: the config file's inspector, else your login)"
    )
    p.add_argument("--json", action="store_true", help="print one JSON object")
    p.add_argument("--quiet", action="store_true", help="no progress bar")
    p.add_argument(
        "--bundle", metavar="IN", help="take a sync bundle (IN and IN.json) instead of a CSV"
    )
    add_csv_options(p)


def run(args: argparse.Namespace) -> int:
    from fieldcheck.commands.usage import UsageError

    if args.bundle:
        from fieldcheck.commands.bundle_option import run_import_bundle

        return run_import_bundle(args)
    if not args.csv:
        raise UsageError(
            "import: give the CSV file to import, e.g. fieldcheck import --db survey.db posts.csv "
            "--site 'Alder Row' --visit 'Basement'"
        )
    if not args.site or not args.visit:
        raise UsageError(
            "import: give --site NAME and --visit NAME for the imported posts, e.g. "
            "--site '14 Alder Row' --visit 'Basement survey'"
        )
    from fieldcheck.commands.progress import counted, progress_bar
    from fieldcheck.config import load
    from fieldcheck.engine.result import ACTIONS
    from fieldcheck.records.csv_file import CsvProblem

    # what fieldcheck itself wrote beside the records (an export's or a rated batch's columns:
    # old ratings, derived) is never kept as part of what was found on site
    derived = derived_columns()

    inspector = args.inspector or load().inspector or None
    with (
        open_posts(args, args.csv) as table,
        open_log(args) as log,
        progress_bar(args.quiet) as bar,
    ):
        site = log.find_site(args.site)
        existed = site is not None and log.find_visit(site.id, args.visit) is not None
        # streamed: the rows go to the log as they are read (memory flat in the file size); a
        # problem found on a later line leaves the log as it was (one transaction)
        try:
            result = log.import_rows(
                counted(table.records(drop=derived), bar, "importing"),
                args.site,
                args.visit,
                inspector=inspector,
                kept=True,  # blank cells and the columns only an export writes left out
            )
        except CsvProblem as exc:
            raise UsageError(str(exc)) from None
        if args.json:
            import json

            out = {
                "log": str(log.path),
                "site": result.site.name,
                "visit": result.visit.name,
                "read": result.read,
                "imported": result.imported,
                # the imported posts by action, not rated (load missing) included
                "actions": dict(zip(ACTIONS, result.actions, strict=True)),
                "errors": [
                    {"row": e.row + 1, "column": e.column, "message": e.message}
                    for e in result.errors
                ],
            }
            print(json.dumps(out, ensure_ascii=False, indent=1))
            return 0 if not result.errors else 1
        for err in result.errors:
            print(f"fieldcheck: {err}", file=sys.stderr)
        bad = len({e.row for e in result.errors})
        print(
            f"Imported {result.imported} of {result.read} posts into {result.site.name!r}, visit "
            f"{result.visit.name!r} ({log.path})"
            + (
                f"; {bad} row{'s' if bad > 1 else ''} left out: correct "
                f"{'them' if bad > 1 else 'it'} and import a file of the header and "
                f"{'those rows' if bad > 1 else 'that row'} alone (the whole file again would add "
                "its other posts a second time)."
                if bad
                else "."
            )
        )
        if existed and result.imported:  # into a visit that held posts: imported twice?
            n, tags = log.repeated_tags(result.visit.id)
            if n:
                print(
                    f"fieldcheck: {n} tag{'s are' if n > 1 else ' is'} now held by more than one "
                    f"post of visit {result.visit.name!r} (e.g. {', '.join(tags)}): if this file "
                    "was imported before, withdraw the older posts (w in the visit list).",
                    file=sys.stderr,
                )
        # what needs attention, worst first: a post not rated is never passed over in silence
        n = result.actions
        said = [
            f"{n[a]} {word}"
            for a, word in (
                (4, "not rated (load missing: give it)"),
                (3, "make safe now"),
                (2, "repair or brace"),
                (1, "monitor"),
            )
            if n[a]
        ]
        if said:
            print("Of those: " + ", ".join(said) + " (fieldcheck report or export lists them).")
    return 0 if not result.errors else 1
