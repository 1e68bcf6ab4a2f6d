"""`fieldcheck report`: the survey report as one self-contained HTML file."""

from __future__ import annotations

import argparse
import os
import sys

from fieldcheck.commands.log_option import add_db_option, find_site, find_visit, log_path, open_log
from fieldcheck.commands.progress import progress_bar
from fieldcheck.commands.wording import count

DESCRIPTION = (
    "Write the survey report (a client summary in plain words and the technical record: inputs, "
    "assumptions, every check, the working, remedies, photos) as one HTML file that needs no "
    "network and prints a page per post. The posts are re-rated by this engine for the report."
)


def add_arguments(p: argparse.ArgumentParser) -> None:
    add_db_option(p)
    p.add_argument("--site", metavar="NAME-or-id", help="only this site (name or id)")
    p.add_argument("--visit", metavar="NAME-or-id", help="only the posts seen on this visit")
    p.add_argument(
        "--out", metavar="FILE.html", required=True, help="the HTML file to write (- : stdout)"
    )
    p.add_argument(
        "--summary-only",
        action="store_true",
        help="the cover, client summary and tables without each post's technical record "
        "(for very large sites)",
    )
    p.add_argument("--quiet", action="store_true", help="no progress bar")
    t = p.add_argument_group(
        "title block (each defaults to the config file: see `fieldcheck config`)"
    )
    t.add_argument("--firm", help="the firm issuing the report")
    t.add_argument("--engineer", help="the engineer responsible")
    t.add_argument("--client", help="who the report is for")
    t.add_argument("--job", metavar="NUMBER", help="the job number")
    t.add_argument("--number", metavar="REPORT-NO", help="the report number")
    t.add_argument(
        "--draft",
        action="store_true",
        help="a draft: the revision is not counted up (otherwise each report written for the "
        "same visit, site or log is the next revision)",
    )
    # SUPPRESS: `fieldcheck --units metric report ...` (the main option) stands when not given here
    p.add_argument(
        "--units",
        choices=("us", "metric"),
        default=argparse.SUPPRESS,
        help="unit system for the numbers (us)",
    )


def run(args: argparse.Namespace) -> int:
    from fieldcheck.commands.usage import UsageError
    from fieldcheck.config import load
    from fieldcheck.report.html import write_report
    from fieldcheck.report.model import issue_info

    cfg = load()
    units = getattr(args, "units", None) or cfg.units
    path = log_path(args)
    # an issued report counts its revision in the log; a read-only log can only give a draft
    draft = args.draft or not (os.access(path, os.W_OK) and os.access(path.parent, os.W_OK))
    with open_log(args, readonly=draft, must_exist=True) as log:
        site = find_site(log, args.site) if args.site else None
        visit = find_visit(log, args.visit, site.id if site else None) if args.visit else None
        sid, vid = (site.id if site else None), (visit.id if visit else None)
        info = issue_info(
            log,
            sid,
            vid,
            issue=not draft,
            config=cfg,
            firm=args.firm,
            engineer=args.engineer,
            client=args.client,
            job=args.job,
            number=args.number,
        )
        try:
            with progress_bar(args.quiet) as bar:
                path = write_report(
                    log,
                    args.out,
                    sid,
                    vid,
                    units,
                    info,
                    summary_only=args.summary_only,
                    progress=bar,
                )
        except OSError as exc:
            raise UsageError(f"report: cannot write {args.out} ({exc.strerror or exc})") from None
        n = log.count_posts(vid, site_id=None if vid else sid)  # counted in SQLite
    rev = f"revision {info.revision}"
    if draft:
        why = "" if args.draft else "; the log is read-only"
        rev = f"a draft of revision {info.revision}, not counted{why}"
    print(f"Wrote the report of {count(n, 'post')} to {path} ({rev}).", file=sys.stderr)
    return 0
