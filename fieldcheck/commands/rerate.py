"""`fieldcheck rerate`: re-rate every current post of a log with this engine, in one pass."""

from __future__ import annotations

import argparse

from fieldcheck.commands.log_option import add_db_option, open_log

DESCRIPTION = (
    "Re-rate every current post of a survey log through the batch engine in one pass, after an "
    "engine or reference-table update. The new ratings are added beside the old ones (nothing is "
    "overwritten), each with this engine's version and the reference-data editions."
)


def add_arguments(p: argparse.ArgumentParser) -> None:
    add_db_option(p)


def run(args: argparse.Namespace) -> int:
    with open_log(args, must_exist=True) as log:
        res = log.rerate_all()
        print(
            f"Re-rated {res.rated} posts in {log.path} with engine {res.engine_version}"
            + (
                f"; {res.unrated} could not be rated (fix their fields in the interface)."
                if res.unrated
                else "."
            )
        )
        for err in res.errors[:20]:
            print(f"  {err}")
    return 0 if not res.unrated else 1
