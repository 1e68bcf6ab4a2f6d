"""`fieldcheck attach`: attach a photo, with a caption, to a post's current revision."""

from __future__ import annotations

import argparse
import sys

from fieldcheck.commands.log_option import add_db_option, open_log

DESCRIPTION = (
    "Attach a photo to a post: the file is copied into the survey log's photo folder (named by "
    "its SHA-256, which is recorded with the caption), so sync carries it to the office and the "
    "report shows a reduced copy. The original file is left as it is."
)


def add_arguments(p: argparse.ArgumentParser) -> None:
    add_db_option(p)
    p.add_argument("photo", metavar="PHOTO", help="the photo file, e.g. ~/DCIM/P1040231.jpg")
    p.add_argument("--post", required=True, metavar="TAG-or-id", help="the post, e.g. S4")
    p.add_argument(
        "--visit", metavar="NAME-or-id", help="the visit, when tags repeat across visits"
    )
    p.add_argument("--caption", default="", help="what the photo shows, e.g. 'crushing at the cap'")


def _find_post(log, tag: str, visit: str | None):
    from fieldcheck.commands.usage import UsageError

    posts = log.posts()
    if visit:
        vids = {v.id for v in log.visits() if visit in (v.id, v.name)}
        if not vids:
            raise UsageError(f"--visit: no visit named or numbered {visit!r}")
        posts = [p for p in posts if p.visit_id in vids]
    found = [p for p in posts if tag in (p.tag, p.member_id)]
    if len(found) == 1:
        return found[0]
    if found:
        raise UsageError(
            f"--post: {len(found)} posts are tagged {tag!r}; give the visit with --visit NAME"
        )
    tags = ", ".join(sorted({p.tag for p in posts if p.tag})[:20]) or "none"
    raise UsageError(f"--post: no current post tagged {tag!r}; posts: {tags}")


def run(args: argparse.Namespace) -> int:
    with open_log(args, must_exist=True) as log:
        post = _find_post(log, args.post, args.visit)
        a = log.attach_photo(post.observation_id, args.photo, args.caption)
    print(
        f"Attached {args.photo} to post {post.tag or args.post} (sha256 {a.sha256[:16]}...).",
        file=sys.stderr,
    )
    return 0
