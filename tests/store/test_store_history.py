"""Append-only history: revisions, current view, withdraw, ratings stored with their stamp."""

from __future__ import annotations

import json
import sqlite3
import uuid

import pytest

from fieldcheck.store.schema import APPEND_ONLY


def test_save_post_stores_record_as_typed_and_rates_it(log, visit, shore):
    obs = log.save_post(visit.id, {**shore, "notes": "", "moisture": " 19 % "})
    # stored verbatim, empty cells dropped (audit; common practice, no source)
    assert log.observation(obs.id).record == {**shore, "moisture": " 19 % "}
    assert uuid.UUID(obs.id).version == 7
    assert obs.device_id == "device-A" and obs.author == "tester"
    assert obs.created_at[10] == "T" and ("+" in obs.created_at[19:] or "Z" in obs.created_at)
    r = log.rating_for(obs.id)
    assert r is not None and r.capacity_n > 0 and r.ratio is not None
    assert r.engine_version and r.data_editions  # engine version + reference editions
    assert r.summary["governing_check"] == r.governing
    (post,) = log.posts(visit.id)
    assert post.tag == "S1" and post.ratio == pytest.approx(r.ratio) and not post.conflict


@pytest.mark.parametrize("table", APPEND_ONLY)
def test_revision_tables_refuse_update_and_delete(log, visit, shore, table, tmp_path):
    obs = log.save_post(visit.id, shore)
    photo = tmp_path / "p.jpg"
    photo.write_bytes(b"jpeg")
    log.attach(obs.id, photo)
    log.add_review("note", "looks fine", member_id=obs.member_id)
    prop = log.propose_remedy(obs.id, kind="brace-weak", description="brace it", changes={})
    log.record_remedied(obs.member_id, visit.id, proposal_id=prop.id)
    for sql in (f"UPDATE {table} SET created_at = created_at", f"DELETE FROM {table}"):
        with pytest.raises(sqlite3.IntegrityError, match="append-only"):
            log.db.execute(sql)


def test_correction_is_a_new_revision_and_history_keeps_both(log, visit, shore):
    first = log.save_post(visit.id, shore)
    second = log.save_post(visit.id, {**shore, "height": "9ft"}, member_id=first.member_id)
    assert second.supersedes == first.id and second.device_seq > first.device_seq
    hist = log.history(first.member_id)
    assert [o.id for o in hist] == [first.id, second.id]
    assert hist[0].record["height"] == "8ft"  # earlier value kept
    (post,) = log.posts(visit.id)
    assert post.observation_id == second.id and post.record["height"] == "9ft"
    # a taller post carries less (Euler: capacity falls with length; NDS 2018 §3.7.1)
    assert log.rating_for(second.id).capacity_n < log.rating_for(first.id).capacity_n


def test_withdraw_hides_from_current_view_but_keeps_history(log, visit, shore):
    a = log.save_post(visit.id, shore)
    b = log.save_post(visit.id, {**shore, "tag": "S2"})
    w = log.withdraw(a.member_id, visit.id, "tagged twice")
    assert w.withdrawn and w.supersedes == a.id and w.reason == "tagged twice"
    assert [p.tag for p in log.posts(visit.id)] == ["S2"]
    assert [p.tag for p in log.posts(visit.id, include_withdrawn=True)] == ["S1", "S2"]
    assert len(log.history(a.member_id)) == 2
    with pytest.raises(ValueError, match="already withdrawn"):
        log.withdraw(a.member_id, visit.id, "again")
    # saving again restores it
    log.save_post(visit.id, shore, member_id=a.member_id)
    assert sorted(p.tag for p in log.posts(visit.id)) == ["S1", "S2"]
    assert b.member_id != a.member_id


def test_bad_record_is_refused_with_one_sentence_or_stored_unrated(log, visit, shore):
    with pytest.raises(ValueError, match="height"):
        log.save_post(visit.id, {**shore, "height": "tall"})
    assert log.posts(visit.id) == []
    obs = log.save_post(visit.id, {**shore, "height": "tall"}, allow_errors=True)
    assert log.rating_for(obs.id) is None
    (post,) = log.posts(visit.id)
    assert post.ratio is None and post.action_label == "not rated"


def test_two_heads_are_flagged_as_a_conflict_not_resolved(log, visit, shore):
    first = log.save_post(visit.id, shore)
    # two revisions made without seeing each other: both supersede the same parent
    with log.db.atomic():
        for dev, h in (("device-B", "9ft"), ("device-C", "10ft")):
            log.db.execute(
                "INSERT INTO observations (id, member_id, visit_id, supersedes, record_json, "
                "device_id, device_seq, author, created_at) VALUES (?, ?, ?, ?, ?, ?, 1, 'x', ?)",
                [
                    str(uuid.uuid4()),
                    first.member_id,
                    visit.id,
                    first.id,
                    json.dumps({"tag": "S1", "height": h}),
                    dev,
                    "2026-01-01T00:00:00+00:00",
                ],
            )
    assert log.conflicts() == [first.member_id]
    (post,) = log.posts(visit.id)
    assert post.conflict
    assert len(log.history(first.member_id)) == 3


def test_counts_by_action_cover_every_band(log, visit, shore):
    log.save_post(visit.id, shore)
    log.save_post(visit.id, {**shore, "tag": "S9", "load": "40000lbf"})
    counts = log.counts_by_action(visit.id)
    assert set(counts) == {"no-action", "monitor", "repair-or-brace", "make-safe-now", "not rated"}
    assert sum(counts.values()) == 2 and counts["make-safe-now"] == 1


def test_rerate_all_adds_new_ratings_and_keeps_the_old(log, visit, shore):
    a = log.save_post(visit.id, shore)
    b = log.save_post(visit.id, {**shore, "tag": "S2", "height": "9ft"})
    w = log.save_post(visit.id, {**shore, "tag": "S3"})
    log.withdraw(w.member_id, visit.id, "removed")
    res = log.rerate_all()
    assert (res.rated, res.unrated) == (2, 0)
    for o in (a, b):
        old, new = log.ratings_for(o.id)
        assert new.capacity_n == pytest.approx(old.capacity_n)  # same engine, same answer
        assert new.engine_version == old.engine_version
    assert len(log.ratings_for(w.id)) == 1  # withdrawn: not re-rated


def test_rerate_all_rates_repeated_records_once_each_row_its_own(log, visit, shore):
    # a run of identical shores (only tag and location differ), a different post, and two rows
    # the engine refuses: every good row gets its own rating, each bad row its own error
    same = [
        log.save_post(visit.id, {**shore, "tag": f"R{i}", "location": f"bay {i}"}) for i in range(3)
    ]
    tall = log.save_post(visit.id, {**shore, "tag": "T", "height": "9ft"})
    bad = [
        log.save_post(visit.id, {**shore, "tag": f"B{i}", "height": "tall"}, allow_errors=True)
        for i in range(2)
    ]
    res = log.rerate_all()
    assert (res.rated, res.unrated) == (4, 2)
    assert sorted(e.row for e in res.errors) == [4, 5]  # rows in log order, one error each
    assert all(e.column == "height" for e in res.errors)
    caps = [log.ratings_for(o.id)[-1].capacity_n for o in same]
    assert caps[0] == caps[1] == caps[2]
    assert log.ratings_for(tall.id)[-1].capacity_n < caps[0]  # taller: less capacity (Euler)
    assert all(log.rating_for(o.id) is None for o in bad)


def test_sites_and_visits(log):
    s = log.add_site("14 Alder Row", "Millbrook")
    v = log.add_visit(s.id, "R. O.", "detailed", name="Basement", instruments=("tape", "awl"))
    assert log.sites() == [s] and log.visits(s.id) == [v] and log.visit(v.id) == v
    assert log.find_visit(s.id, "Basement") == v and log.find_site("14 Alder Row") == s
    with pytest.raises(ValueError, match="level"):
        log.add_visit(s.id, "x", "thorough")
    with pytest.raises(ValueError, match="site name"):
        log.add_site("  ")
    with pytest.raises(ValueError, match="not in this log"):
        log.add_visit("nope", "x")


def test_device_seq_is_per_device_and_gap_free(tmp_path, shore):
    from fieldcheck.store import Log

    with Log.open(tmp_path / "a.db", device="dev-1") as lg:
        s = lg.add_site("s")
        v = lg.add_visit(s.id, "x")
        o = lg.save_post(v.id, shore)
        lg.save_post(v.id, {**shore, "height": "tall"}, member_id=o.member_id, allow_errors=True)
        lg.import_rows([shore, {**shore, "load": "heavy"}], "s", "v2")
        seqs = sorted(
            r[0]
            for t in ("sites", "visits", "members", "observations", "ratings")
            for r in lg.db.conn.execute(f"SELECT device_seq FROM {t}")
        )
    # gap-free: a gap would tell the office that a transfer is missing
    assert seqs == list(range(1, len(seqs) + 1))
