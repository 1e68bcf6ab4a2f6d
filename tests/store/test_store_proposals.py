"""Remedies as proposals: the post as found stays what it is rated as; a proposal is linked to
that revision; recording the post as remedied is a new revision with a date; the three states
are told apart and travel with sync."""

from __future__ import annotations

import pytest

from fieldcheck.store import Log
from fieldcheck.store.sync import sync

SIX_BY_SIX = {  # an invented post, over-loaded as found
    "tag": "B3",
    "size": "6x6",
    "height": "12ft",
    "species": "douglas-fir-larch",
    "grade": "no2",
    "load": "30000 lbf",
}


def test_a_proposal_leaves_the_post_as_found_and_rated_as_found(log, visit):
    found = log.save_post(visit.id, SIX_BY_SIX)
    before = log.posts(visit.id)[0]
    p = log.propose_remedy(
        found.id,
        kind="replace",
        description="replace it with a new 8x8 douglas-fir-larch No.2",
        changes={"size": "8x8"},
        ratio=0.7,
    )
    after = log.posts(visit.id)[0]
    assert after.observation_id == found.id  # no revision was made by proposing
    assert after.record["size"] == "6x6" and after.ratio == before.ratio
    assert len(log.history(found.member_id)) == 1
    state = log.remedy_states(visit.id)[found.member_id]
    assert state.state == "proposed" and state.proposals[0].id == p.id
    assert log.counts_by_remedy(visit.id) == {"as found": 0, "proposed": 1, "as remedied": 0}
    assert log.proposals(found.member_id)[0].observation_id == found.id


def test_recording_the_post_as_remedied_is_a_new_dated_revision(log, visit):
    found = log.save_post(visit.id, SIX_BY_SIX)
    p = log.propose_remedy(
        found.id, kind="replace", description="replace it with an 8x8", changes={"size": "8x8"}
    )
    done = log.record_remedied(found.member_id, visit.id, proposal_id=p.id, done_on="2026-03-14")
    hist = log.history(found.member_id)
    assert [o.record["size"] for o in hist] == ["6x6", "8x8"]  # the as-found revision is kept
    state = log.remedy_states()[found.member_id]
    assert state.state == "as remedied" and state.done_on == "2026-03-14"
    assert state.remedy == "replace it with an 8x8"
    assert log.posts()[0].observation_id == done.id
    assert log.proposals(found.member_id, open_only=True) == []
    with pytest.raises(ValueError, match="already recorded"):
        log.record_remedied(found.member_id, visit.id, proposal_id=p.id)
    with pytest.raises(ValueError, match="year-month-day"):
        log.record_remedied(found.member_id, visit.id, done_on="last Tuesday")


def test_a_later_revision_as_found_after_a_remedy_is_as_found_again(log, visit):
    found = log.save_post(visit.id, SIX_BY_SIX)
    log.record_remedied(found.member_id, visit.id, record={**SIX_BY_SIX, "size": "8x8"})
    log.save_post(visit.id, {**SIX_BY_SIX, "size": "8x8", "notes": "split seen"}, found.member_id)
    assert log.remedy_states()[found.member_id].state == "as found"


def test_proposals_and_remedies_travel_with_sync(log, visit, tmp_path):
    found = log.save_post(visit.id, SIX_BY_SIX)
    p = log.propose_remedy(found.id, kind="brace-weak", description="brace it", changes={})
    log.record_remedied(found.member_id, visit.id, proposal_id=p.id, done_on="2026-03-14")
    first = sync(log, tmp_path / "office.db")
    assert first.sent["proposals"] == 1 and first.sent["remedied"] == 1
    with Log.open(tmp_path / "office.db", readonly=True) as office:
        state = office.remedy_states()[found.member_id]
        assert state.state == "as remedied" and state.remedy == "brace it"
    assert sync(log, tmp_path / "office.db").moved == 0


def test_the_invented_demo_is_marked_and_never_synced(tmp_path):
    from fieldcheck.store import seed_demo
    from fieldcheck.store.demo import is_demo
    from fieldcheck.store.sync import TransferRefused, export_bundle

    with Log.open(tmp_path / "demo.fieldcheck") as demo:
        seed_demo(demo)
        assert is_demo(demo)
        with pytest.raises(TransferRefused, match="invented demo"):
            sync(demo, tmp_path / "office.db")
        with pytest.raises(TransferRefused, match="invented demo"):
            export_bundle(demo, tmp_path / "out.bundle")
    assert not (tmp_path / "office.db").exists()


def test_marked_only_states_are_the_full_states_that_are_not_as_found(log, visit):
    from fieldcheck.store import proposals

    a = log.save_post(visit.id, SIX_BY_SIX)
    b = log.save_post(visit.id, {**SIX_BY_SIX, "tag": "B4"})
    log.save_post(visit.id, {**SIX_BY_SIX, "tag": "B5"})  # stays as found
    log.propose_remedy(a.id, kind="replace", description="an 8x8", changes={"size": "8x8"})
    p = log.propose_remedy(b.id, kind="replace", description="an 8x8", changes={"size": "8x8"})
    log.record_remedied(b.member_id, visit.id, proposal_id=p.id, done_on="2026-03-14")
    full = log.remedy_states(visit.id)
    marked = proposals.states(log, visit.id, marked_only=True)
    assert marked == {m: s for m, s in full.items() if s.state != "as found"}
    assert set(marked) == {a.member_id, b.member_id}


def test_a_replacement_recorded_as_remedied_rates_as_it_was_offered(log, visit):
    # the engine's replacement, proposed and carried out the way the interface does it: the new
    # revision is a sound new post (the old post's decay cleared) and rates as offered; the post
    # as found keeps its decay (nothing found on site is overwritten)
    from fieldcheck.engine import explain
    from fieldcheck.engine.rating import rate
    from fieldcheck.records import parse_records

    decayed = {**SIX_BY_SIX, "load": "12000 lbf", "decay_wide": "1.5 in", "decay_narrow": "1 in"}
    decayed |= {"cap_species": "douglas-fir-larch", "sill_species": "douglas-fir-larch"}
    found = log.save_post(visit.id, decayed)
    offered = explain.summary(rate(parse_records([found.record]).batch), 0)["remedies"]
    rep = next(x for x in offered if x["kind"] == "replace")
    p = log.propose_remedy(
        found.id,
        kind=rep["kind"],
        description=rep["description"],
        changes=rep["record_changes"],
        ratio=rep["ratio"],
    )
    log.record_remedied(found.member_id, visit.id, proposal_id=p.id)
    first, now = log.history(found.member_id)
    assert first.record["decay_wide"] == "1.5 in"
    assert "decay_wide" not in now.record and "decay_narrow" not in now.record
    post = log.posts(visit.id)[0]
    assert post.ratio == pytest.approx(rep["ratio"], abs=5e-5)
    assert post.action_label == rep["action"]
