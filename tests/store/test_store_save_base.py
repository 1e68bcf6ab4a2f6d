"""Log.save_post(base=): a revision supersedes the revision it was edited from, so a revision
written elsewhere meanwhile is kept beside it as a conflict (judgement: two revisions made
without seeing each other are both kept and flagged, never one written over the other)."""

from __future__ import annotations

import pytest

from fieldcheck.store import Log

POST = {"tag": "C1", "size": "6x6", "height": "9ft", "species": "dfl", "grade": "no1"}


def test_a_save_from_the_current_revision_is_no_conflict(tmp_path):
    with Log.open(tmp_path / "a.fieldcheck") as log:
        site = log.add_site("Yard")
        visit = log.add_visit(site.id, None, name="Pour 1")
        first = log.save_post(visit.id, {**POST, "load": "8000lbf"})
        second = log.save_post(
            visit.id, {**POST, "load": "9000lbf"}, first.member_id, base=first.id
        )
        assert second.supersedes == first.id and not log.in_conflict(first.member_id)


def test_a_save_from_an_older_revision_keeps_both_as_a_conflict(tmp_path):
    with Log.open(tmp_path / "a.fieldcheck") as log:
        site = log.add_site("Yard")
        visit = log.add_visit(site.id, None, name="Pour 1")
        first = log.save_post(visit.id, {**POST, "load": "8000lbf"})
        theirs = log.save_post(visit.id, {**POST, "load": "30000lbf"}, first.member_id)
        mine = log.save_post(
            visit.id, {**POST, "load": "8000lbf", "height": "10ft"}, first.member_id, base=first.id
        )
        assert mine.supersedes == first.id  # not theirs: their load is not taken as read
        assert log.in_conflict(first.member_id)
        assert first.member_id in log.conflicts()
        assert {o.id for o in log.history(first.member_id)} == {first.id, theirs.id, mine.id}
        other = log.save_post(visit.id, {**POST, "tag": "C2", "load": "1000lbf"})
        with pytest.raises(ValueError, match="not a revision of post"):
            log.save_post(visit.id, POST, first.member_id, base=other.id)


def test_of_two_heads_the_lists_show_the_more_urgent_and_never_a_withdrawal(tmp_path):
    # judgement: while two revisions stand side by side (a conflict, until the office settles
    # it) every list, the export and the report show the more urgent one, whichever device
    # wrote last; a withdrawal made apart never hides a revision still standing
    with Log.open(tmp_path / "a.fieldcheck") as log:
        site = log.add_site("Yard")
        visit = log.add_visit(site.id, None, name="Pour 1")
        first = log.save_post(visit.id, {**POST, "load": "8000lbf"})
        m = first.member_id
        heavy = log.save_post(visit.id, {**POST, "load": "90000lbf"}, m, base=first.id)
        light = log.save_post(visit.id, {**POST, "load": "1000lbf"}, m, base=first.id)
        assert light.device_seq > heavy.device_seq and log.in_conflict(m)
        (p,) = log.posts()
        assert p.observation_id == heavy.id and p.action_label == "make-safe-now" and p.conflict
        assert log.head(m).id == heavy.id
        # a withdrawal beside a revision still standing: the post stays listed
        second = log.save_post(visit.id, {**POST, "tag": "C2", "load": "1000lbf"})
        m2 = second.member_id
        log.withdraw(m2, visit.id, "duplicate entry")
        kept = log.save_post(visit.id, {**POST, "tag": "C2", "load": "9000lbf"}, m2, base=second.id)
        listed = {q.member_id: q for q in log.posts()}
        assert m2 in listed and listed[m2].observation_id == kept.id
