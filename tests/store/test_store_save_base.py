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
