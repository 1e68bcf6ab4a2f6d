"""`fieldcheck review`: the office engineer's review of posts and visits, recorded in the log."""

from __future__ import annotations

import argparse

from fieldcheck.commands.log_option import add_db_option, open_log
from fieldcheck.commands.wording import count

DESCRIPTION = (
    "Record the office engineer's review of a post (accept the rating, override the action with "
    "a reason, require a remedy, settle a conflict) or sign off a visit. Reviews are records "
    "like any other: append-only, with your name and the time; they sync back to the field, "
    "where the inspector sees them beside the post. Without an action, lists the posts awaiting "
    "review. --db may be a postgresql:// hub."
)


def add_arguments(p: argparse.ArgumentParser) -> None:
    add_db_option(p)
    p.add_argument(
        "post",
        metavar="POST",
        nargs="?",
        help="the post's tag, its id (or its start), or an untagged post's listed reference",
    )
    g = p.add_mutually_exclusive_group()
    g.add_argument("--accept", action="store_true", help="accept the rating as it stands")
    g.add_argument(
        "--override",
        metavar="ACTION",
        help="set the action (no-action, monitor, repair-or-brace, make-safe-now); needs --reason",
    )
    g.add_argument("--require-remedy", metavar="TEXT", help="the remedy required, in your words")
    g.add_argument(
        "--settle",
        metavar="REVISION",
        help="settle a conflict keeping this revision's record (its id or start); needs --reason",
    )
    g.add_argument("--note", metavar="TEXT", help="a note about the post")
    g.add_argument("--sign-off", metavar="VISIT", help="sign off a visit (its name or id)")
    p.add_argument("--reason", metavar="TEXT", default="", help="why (override, settle, sign-off)")
    p.add_argument("--site", metavar="NAME-or-id", help="look for POST or VISIT at this site only")


def _site_id(log, text):
    if not text:
        return None
    from fieldcheck.commands.log_option import find_site

    return find_site(log, text).id


def _find_post(log, text: str, site_id):
    from fieldcheck.commands.usage import UsageError

    posts = log.posts(site_id=site_id)
    # its tag, else its id (or the start of it), else the reference the list and the report give
    # an untagged post (the end of its id)
    found = [p for p in posts if p.tag == text] or [
        p for p in posts if p.member_id.startswith(text) or p.ref == text
    ]
    if len(found) == 1:
        return found[0]
    if found:
        ids = ", ".join(p.member_id for p in found[:5])
        raise UsageError(f"{len(found)} posts match {text!r} ({ids}); give the post's id or --site")
    raise UsageError(f"no post tagged or numbered {text!r} in this log; list them with `review`")


def run(args: argparse.Namespace) -> int:
    from fieldcheck.commands.log_option import find_visit
    from fieldcheck.commands.usage import UsageError

    acting = args.accept or args.override or args.require_remedy or args.settle or args.note
    with open_log(args, must_exist=True) as log:
        site_id = _site_id(log, args.site)
        if args.sign_off:
            visit = find_visit(log, args.sign_off, site_id)
            r = log.sign_off(visit.id, args.reason)
            print(f"Signed off visit {visit.name!r} as {r.author} on {r.created_at[:16]}.")
            return 0
        if not args.post:
            if acting:
                raise UsageError("give the POST to review (its tag or id)")
            states = log.review_states()
            waiting = [p for p in log.posts(site_id=site_id) if states[p.member_id].awaiting]
            for p in waiting:
                print(f"{p.ref}  {p.tag or '-':<10} {p.action_label:<16} awaiting review")
            print(f"{count(len(waiting), 'post')} await{'s' if len(waiting) == 1 else ''} review.")
            return 0
        post = _find_post(log, args.post, site_id)
        if args.settle:
            log.settle(post.member_id, args.settle, args.reason)
        elif args.accept:
            log.review_post(post.member_id, "accept", args.reason)
        elif args.override:
            log.review_post(post.member_id, "override", args.reason, args.override)
        elif args.require_remedy:
            log.review_post(post.member_id, "require-remedy", args.require_remedy)
        elif args.note:
            log.review_post(post.member_id, "note", args.note)
        else:
            st = log.review_states().get(post.member_id)
            print(f"{post.tag or post.member_id}: {st.line() if st else 'not current'}")
            return 0
        st = log.review_states()[post.member_id]
        print(f"{post.tag or post.member_id}: {st.line()}")
    return 0
