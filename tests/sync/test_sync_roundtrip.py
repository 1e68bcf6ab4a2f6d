"""sync(): rows move once each way, a repeat moves nothing, conflicts are kept and listed."""

from __future__ import annotations

import json

from fieldcheck.store import Log
from fieldcheck.store.connection import connect
from fieldcheck.store.merge import (
    SYNC_TABLES,
    check_schema,
    conflicted,
    covered,
    delta,
    firm_after,
    floor,
)
from fieldcheck.store.schema import TRANSFER_SCHEMA_VERSION, migrations
from fieldcheck.store.sync import export_bundle, import_bundle, open_conflicts, sync


def test_first_sync_sends_everything_and_repeat_moves_nothing(make_log, shore, tmp_path):
    field = make_log("ann")
    site = field.add_site("Alder Row")
    visit = field.add_visit(site.id, "ann")
    field.save_post(visit.id, shore)
    office = tmp_path / "office.db"
    first = sync(field, office)
    assert first.sent["observations"] == 1  # common practice, no source
    assert first.sent["members"] == 1
    again = sync(field, office)
    assert again.moved == 0 and "nothing to move" in again.sentence()
    with Log.open(office, readonly=True) as off:
        assert [p.tag for p in off.posts()] == ["S1"]


def test_office_review_comes_back_and_firm_is_shared(make_log, shore, tmp_path):
    field = make_log("ann")
    site = field.add_site("Alder Row")
    obs = field.save_post(field.add_visit(site.id, "ann").id, shore)
    office_path = tmp_path / "office.db"
    sync(field, office_path)
    with Log.open(office_path, author="engineer") as off:
        off.add_review("sign-off", "checked, fine", member_id=obs.member_id)
        firm = off.meta()["firm_id"]
    back = sync(field, office_path)
    assert back.received == {"reviews": 1}
    assert [r.text for r in field.reviews(obs.member_id)] == ["checked, fine"]
    assert firm and field.meta()["firm_id"] == firm  # adopted on first sync (our rule)


def test_two_revisions_made_apart_are_both_kept_and_listed(make_log, shore, tmp_path):
    a, b = make_log("ann"), make_log("bob")
    office = tmp_path / "office.db"
    site = a.add_site("Alder Row")
    obs = a.save_post(a.add_visit(site.id, "ann").id, shore)
    sync(a, office)
    sync(b, office)  # bob takes the post
    a.save_post(obs.visit_id, dict(shore, load="5000lbf"), member_id=obs.member_id)
    b.save_post(obs.visit_id, dict(shore, load="4000lbf"), member_id=obs.member_id)
    sync(a, office)
    s = sync(b, office)
    assert s.conflicts == [obs.member_id] and s.new_conflicts == [obs.member_id]
    with Log.open(office, readonly=True) as off:
        (c,) = open_conflicts(off)
        assert sorted(h.record["load"] for h in c.heads) == ["4000lbf", "5000lbf"]
        assert c.tag == "S1"


def test_bundles_by_hand(make_log, shore, tmp_path):
    a = make_log("ann")
    site = a.add_site("Alder Row")
    a.save_post(a.add_visit(site.id, "ann").id, shore)
    out = export_bundle(a, tmp_path / "a.fcbundle")
    assert out.exists() and (tmp_path / "a.fcbundle.json").exists()
    office = make_log("office")
    first = import_bundle(office, out)
    assert first.inserted["observations"] == 1
    assert import_bundle(office, out).rows == 0  # idempotent
    assert len(office.posts()) == 1


def test_folder_mode_moves_each_row_once(make_log, shore, tmp_path):
    folder = tmp_path / "share"
    folder.mkdir()
    a, off = make_log("ann"), make_log("office")
    site = a.add_site("Alder Row")
    obs = a.save_post(a.add_visit(site.id, "ann").id, shore)
    s1 = sync(a, folder)
    assert s1.sent["observations"] == 1 and len(s1.bundles_written) == 1
    assert sync(a, folder).bundles_written == []  # nothing new: no new bundle
    s2 = sync(off, folder)
    assert s2.received["observations"] == 1
    off.add_review("note", "brace it", member_id=obs.member_id)
    sync(off, folder)
    s3 = sync(a, folder)
    assert s3.received == {"reviews": 1}
    assert sync(off, folder).received == {}


def test_merge_rules_without_sqlite():
    # vectors and ranges (judgement)
    assert delta({"a": 5, "b": 2}, {"a": 3}) == {"a": (4, 5), "b": (1, 2)}
    assert covered({"a": 5}, {"a": (4, 5)}) and not covered({"a": 4}, {"a": (4, 5)})
    assert floor([{"a": 5, "b": 1}, {"a": 3}]) == {"a": 3}
    # conflicts = more than one head
    revs = [("o1", "m", None), ("o2", "m", "o1"), ("o3", "m", "o1"), ("p1", "n", None)]
    assert conflicted(revs) == ["m"]
    # firm: adopt, keep, refuse
    assert firm_after("", "F", office=False) == "F"
    assert firm_after("F", "", office=True) is None
    assert firm_after("", "", office=False) is None and firm_after("", "", office=True)
    import pytest

    from fieldcheck.store.merge import TransferRefused

    with pytest.raises(TransferRefused, match="another firm"):
        firm_after("F", "G", office=True)


def test_a_bundle_names_the_version_of_its_tables_so_an_older_reader_takes_it(
    make_log, shore, tmp_path
):
    # schema 6 changed an index, no synced table: a bundle names 5, the last version that
    # changed a synced table's columns, and a log at 5 has the same columns (judgement: a
    # reader up to 5 takes rows of tables it has; merge.check_schema refuses only newer)
    field = make_log("ann")
    site = field.add_site("Alder Row")
    field.save_post(field.add_visit(site.id, "ann").id, shore)
    export_bundle(field, tmp_path / "a.fcbundle")
    manifest = json.loads((tmp_path / "a.fcbundle.json").read_text())
    assert manifest["schema_version"] == TRANSFER_SCHEMA_VERSION == 5
    check_schema(manifest["schema_version"], 5)  # a fieldcheck reading up to 5: not refused
    old = connect(tmp_path / "v5.db")
    migrations.apply(old, stop_before="0006_lean_indexes")
    for t in SYNC_TABLES:
        cols = f"PRAGMA table_info({t.name})"
        assert old.conn.execute(cols).fetchall() == field.db.conn.execute(cols).fetchall()
    old.close()
