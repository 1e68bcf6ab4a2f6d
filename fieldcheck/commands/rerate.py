"""`fieldcheck rerate`: re-rate every current post of a log with this engine, in one pass."""

from __future__ import annotations

import argparse

from fieldcheck.commands.log_option import add_db_option, open_log
from fieldcheck.commands.wording import count

DESCRIPTION = (
    "Re-rate every current post of a survey log through the batch engine in one pass, after an "
    "engine or reference-table update. The new ratings are added beside the old ones (nothing is "
    "overwritten), each with this engine's version and the reference-data editions."
)


def add_arguments(p: argparse.ArgumentParser) -> None:
    add_db_option(p)
    p.add_argument("--json", action="store_true", help="print one JSON object")
    p.add_argument("--quiet", action="store_true", help="no progress display")


def run(args: argparse.Namespace) -> int:
    from fieldcheck.commands.progress import working

    with open_log(args, must_exist=True) as log:
        with working("re-rating", args.quiet):
            res = log.rerate_all()
        if args.json:
            import json

            out = {
                "log": str(log.path),
                "rated": res.rated,
                "unrated": res.unrated,
                "engine_version": res.engine_version,
                "errors": [
                    {"row": e.row, "column": e.column, "message": e.message} for e in res.errors
                ],
            }
            print(json.dumps(out, ensure_ascii=False, indent=1))
            return 0 if not res.unrated else 1
        print(
            f"Re-rated {count(res.rated, 'post')} in {log.path} with engine {res.engine_version}"
            + (
                f"; {res.unrated} could not be rated (fix their fields in the interface)."
                if res.unrated
                else "."
            )
        )
        for err in res.errors[:20]:
            print(f"  {err}")
    return 0 if not res.unrated else 1
