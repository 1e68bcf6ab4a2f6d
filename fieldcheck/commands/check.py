"""`fieldcheck check`: integrity of a survey log (exit 0 sound, 1 problems found, 2 usage)."""

from __future__ import annotations

import argparse

from fieldcheck.commands.log_option import add_db_option, log_path
from fieldcheck.commands.wording import count

DESCRIPTION = (
    "Check a survey log without changing it: SQLite's integrity and foreign-key checks, the "
    "schema version, every attached photo against its recorded sha256, every stored rating of "
    "this engine against its record, every record's shape, every engine stamp, and the seals "
    "over the history (rows changed by hand after they were written, named by post). Exit code "
    "0 when sound, 1 when problems are found."
)


def add_arguments(p: argparse.ArgumentParser) -> None:
    add_db_option(p)
    p.add_argument("--json", action="store_true", help="print one JSON object")


def run(args: argparse.Namespace) -> int:
    import sqlite3

    from fieldcheck.commands.usage import UsageError
    from fieldcheck.store import Log, LogError
    from fieldcheck.store.connection import damaged

    path = log_path(args)
    if not path.is_file():
        raise UsageError(
            f"the survey log {path} does not exist; give an existing log with --db PATH"
        )
    try:
        with Log.open(path, readonly=True) as log:
            report = log.integrity()
            older = log.older_rated()  # not a problem: said, with what brings them up to date
    except LogError as exc:
        return _refused(args, path, str(exc))
    except sqlite3.DatabaseError as exc:
        return _refused(args, path, damaged(path, exc))
    problems = report.problems()
    if getattr(args, "json", False):
        import json

        out = {
            "log": str(path),
            "schema_version": report.schema_version,
            "sound": not problems,
            "problems": problems,
            "conflicts": report.conflicts,
            "older_ratings": older,
        }
        print(json.dumps(out, ensure_ascii=False, indent=1))
        return 0 if not problems else 1
    print(
        f"{path}: schema version {report.schema_version}, "
        f"{'sound' if not problems else count(len(problems), 'problem')}"
        + (
            f", {count(report.conflicts, 'post')} with conflicting revisions"
            if report.conflicts
            else ""
        )
        + (
            f", {count(older, 'post')} rated by an older engine or older reference data "
            "(fieldcheck rerate rates them again, keeping the old ratings)"
            if older
            else ""
        )
    )
    for p in problems:
        print(f"  - {p}")
    return 0 if not problems else 1


def _refused(args: argparse.Namespace, path, sentence: str) -> int:
    if getattr(args, "json", False):
        import json

        out = {"log": str(path), "sound": False, "problems": [sentence], "conflicts": None}
        print(json.dumps(out, ensure_ascii=False, indent=1))
    else:
        print(f"fieldcheck: {sentence}")
    return 1
