"""The office engineer's review: append-only, attributed, timed records about a revision."""

from __future__ import annotations

import pytest

from fieldcheck.store import Log
from fieldcheck.store.reviews import ACCEPTED, AWAITING, OVERRIDDEN, REMEDY_REQUIRED, SETTLED


def test_accept_override_remedy_and_awaiting_again(log, visit, shore):
    a = log.save_post(visit.id, dict(shore, tag="A"))
    b = log.save_post(visit.id, dict(shore, tag="B"))
    c = log.save_post(visit.id, dict(shore, tag="C"))
    assert {s.state for s in log.review_states().values()} == {AWAITING}
    log.review_post(a.member_id, "accept")
    log.review_post(b.member_id, "override", "shore re-wedged, judged sound", "monitor")
    log.review_post(c.member_id, "require-remedy", "add a 4x4 shore beside it by Friday")
    st = log.review_states()
    assert st[a.member_id].state == ACCEPTED and st[a.member_id].by == "tester"
    assert st[b.member_id].state == OVERRIDDEN and st[b.member_id].action_label == "monitor"
    assert "reviewed by tester, on " in st[c.member_id].line()
    assert st[c.member_id].state == REMEDY_REQUIRED
    # a new revision after the review awaits review again; the old review stays
    log.save_post(visit.id, dict(shore, tag="A", height="9ft"), a.member_id)
    assert log.review_states()[a.member_id].state == AWAITING
    assert len(log.reviews(a.member_id)) == 1


def test_review_needs_its_reason(log, visit, shore):
    a = log.save_post(visit.id, shore)
    with pytest.raises(ValueError, match="reason"):
        log.review_post(a.member_id, "override", "", "monitor")
    with pytest.raises(ValueError, match="action"):
        log.review_post(a.member_id, "override", "why", "sometimes")
    with pytest.raises(ValueError, match="remedy"):
        log.review_post(a.member_id, "require-remedy", " ")
    assert log.reviews() == []


def test_reviews_are_append_only(log, visit, shore):
    import sqlite3

    a = log.save_post(visit.id, shore)
    log.review_post(a.member_id, "accept")
    with pytest.raises(sqlite3.DatabaseError, match="append-only"):
        log.db.execute("UPDATE reviews SET kind = 'override'")


def test_settle_is_a_revision_with_both_parents(tmp_path, shore):
    from fieldcheck.store.sync import sync

    office = tmp_path / "office.db"
    ann = Log.open(tmp_path / "ann.db", author="ann", device="dev-ann")
    v = ann.add_visit(ann.add_site("Mill Lane").id, "ann")
    mid = ann.save_post(v.id, shore).member_id
    sync(ann, office)
    ben = Log.open(tmp_path / "ben.db", author="ben", device="dev-ben")
    sync(ben, office)
    ann.save_post(v.id, dict(shore, height="9ft"), mid)
    ben.save_post(v.id, dict(shore, height="7ft"), mid)
    sync(ann, office)
    sync(ben, office)
    assert ben.conflicts() == [mid]
    with pytest.raises(ValueError, match="settle the conflict first"):
        ben.review_post(mid, "accept")
    keep = next(o for o in ben.history(mid) if o.record.get("height") == "7ft")
    ben.settle(mid, keep.id[:20], "7 ft measured twice")
    assert ben.conflicts() == []
    head = ben.head(mid)
    assert head.supersedes == keep.id and head.merges and head.merges != keep.id
    assert head.record["height"] == "7ft" and ben.rating_for(head.id) is not None
    assert ben.review_states()[mid].state == SETTLED
    sync(ben, office)
    sync(ann, office)  # the settlement reaches the other field log too
    assert ann.conflicts() == [] and ann.head(mid).id == head.id
    assert ann.review_states()[mid].state == SETTLED
    ann.close()
    ben.close()


def test_sign_off_a_visit(log, visit):
    r = log.sign_off(visit.id, "all posts reviewed")
    assert log.sign_offs(visit.id) == [r] and r.author == "tester"


def test_review_command(tmp_path, shore, capsys):
    from fieldcheck.cli import main

    db = tmp_path / "r.db"
    with Log.open(db, author="ben", device="dev-ben") as lg:
        v = lg.add_visit(lg.add_site("Mill Lane").id, "ann", name="first visit")
        lg.save_post(v.id, dict(shore, tag="P1"))
    assert main(["review", "--db", str(db)]) == 0
    assert "1 post awaits review" in capsys.readouterr().out
    assert main(["review", "--db", str(db), "P1", "--override", "monitor"]) == 2
    assert "reason" in capsys.readouterr().err
    assert main(["review", "--db", str(db), "P1", "--require-remedy", "add a shore"]) == 0
    assert "remedy required: reviewed by " in capsys.readouterr().out
    assert main(["review", "--db", str(db), "--sign-off", "first visit"]) == 0
    with Log.open(db, readonly=True) as lg:
        assert [r.kind for r in lg.reviews()] == ["require-remedy", "sign-off"]


def test_one_post_state_matches_the_list(log, visit, shore):
    a = log.save_post(visit.id, dict(shore, tag="A"))
    b = log.save_post(visit.id, dict(shore, tag="B"))
    log.review_post(a.member_id, "override", "braced since", "no-action")
    every = log.review_states()
    for m in (a.member_id, b.member_id):
        assert log.review_state(m) == every[m]
