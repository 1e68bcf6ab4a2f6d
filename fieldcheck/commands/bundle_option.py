"""``--bundle``: a sync bundle written by ``export`` and read by ``import`` (no command itself)."""

from __future__ import annotations

import argparse
import sys

from fieldcheck.commands.log_option import open_log
from fieldcheck.commands.progress import ProgressBar


def run_export_bundle(args: argparse.Namespace) -> int:
    """`fieldcheck export --bundle OUT`: every row of the log as a bundle (OUT and OUT.json)."""
    from fieldcheck.store.sync import export_bundle

    with open_log(args, readonly=True, must_exist=True) as log:
        out = export_bundle(log, args.bundle)
    print(
        f"Wrote bundle {out} and its manifest {out.name}.json; carry both files.", file=sys.stderr
    )
    return 0


def run_import_bundle(args: argparse.Namespace) -> int:
    """`fieldcheck import --bundle IN`: verify, then take what the log lacks in one transaction."""
    from fieldcheck.store.sync import import_bundle

    bar = None if not sys.stderr.isatty() else ProgressBar()
    with open_log(args) as log:
        try:
            summary = import_bundle(log, args.bundle, progress=bar)
        finally:
            if bar is not None:
                bar.close()
    print(summary.sentence())
    return 0
