"""Posts nobody tagged are named apart, in the report and wherever a person picks one.

A post's id begins with the time it was made (UUID version 7, RFC 9562 §5.7), so every post of
one import shares its first digits; the reference the report, the interface and `fieldcheck
review` give an untagged post is the end of its id instead. A report that names two posts alike
cannot be acted on (judgement).
"""

from __future__ import annotations

import re

from fieldcheck.cli import main
from fieldcheck.report.html import render_report
from fieldcheck.store.rows import new_ids, short_ref

POST = {"size": "4x4", "height": "8ft", "species": "dfl", "grade": "no2", "load": "2000lbf"}


def test_ids_made_together_have_distinct_references():
    ids = new_ids(5000)
    assert len({i[:13] for i in ids}) < 5  # the head is the time: shared
    assert len({short_ref(i) for i in ids}) == 5000


def _untagged(empty_log, n=3):
    empty_log.import_rows([dict(POST) for _ in range(n)], site="Site", visit="Walk 1")
    return empty_log.posts()


def test_untagged_posts_are_named_apart_in_the_report(empty_log):
    posts = _untagged(empty_log)
    labels = [p.label for p in posts]
    assert len(set(labels)) == 3 and all(x.startswith("untagged ") for x in labels)
    text = re.sub(r"<[^>]+>", " ", render_report(empty_log))
    for p in posts:
        assert f"untagged {p.ref}" in text
        assert p.member_id[:8] not in text.replace(p.member_id, "")  # never the shared head


def test_review_lists_the_reference_and_takes_it(empty_log, capsys):
    posts = _untagged(empty_log, n=2)
    path = str(empty_log.path)
    empty_log.close()
    assert main(["review", "--db", path]) == 0
    listed = capsys.readouterr().out
    assert all(p.ref in listed for p in posts)
    assert main(["review", "--db", path, posts[1].ref, "--accept"]) == 0
    capsys.readouterr()
    assert main(["review", "--db", path, posts[1].ref]) == 0
    assert "accepted" in capsys.readouterr().out
