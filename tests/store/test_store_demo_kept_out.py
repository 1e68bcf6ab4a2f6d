"""A log that an older version wrote the invented demo into: the demo's rows stay in the file
(append-only) but never reach the office, an export or the user's lists, and the user is told
once. The demo is recognised by its site (address "... (invented)", notes "Invented demo: ...")."""

from __future__ import annotations

import pytest

from fieldcheck.store import Log, seed_demo
from fieldcheck.store.demo_rows import DEMO_KEPT_OUT
from fieldcheck.store.sync import sync

POST = {"tag": "B1", "size": "6x6", "height": "8ft", "species": "hem-fir", "grade": "no1"}
POST["load"] = "6000 lbf"


def older_log(path, device: str = "device-A") -> dict[str, int]:
    """The user's log as an older version left it: the demo seeded into it without the demo's
    mark (those versions wrote none), then the user's own survey; the raw row counts."""
    with Log.open(path, author="tester", device=device) as log:
        seed_demo(log)
        demo_post = next(p for p in log.posts() if p.tag == "S3")
        log.add_review("note", "demo note", member_id=demo_post.member_id)  # on a demo post
        with log._write():
            log.db.execute("DELETE FROM meta WHERE key = 'demo'")  # as written before the mark
        site = log.add_site("9 Birch Lane", "9 Birch Lane, Eastfield")
        visit = log.add_visit(site.id, "J. Ortiz", "standard", name="cellar")
        obs = log.save_post(visit.id, POST)
        log.add_review("note", "check the base", member_id=obs.member_id)
        return raw_counts(log)


def raw_counts(log) -> dict[str, int]:
    tables = ("sites", "visits", "members", "observations", "ratings")
    return {t: log.db.conn.execute(f"SELECT count(*) FROM {t}").fetchone()[0] for t in tables}


def test_the_demo_stays_in_the_file_but_out_of_the_users_lists(tmp_path) -> None:
    path = tmp_path / "survey.fieldcheck"
    before = older_log(path)
    with Log.open(path) as log:
        assert [s.name for s in log.sites()] == ["9 Birch Lane"]
        assert [v.name for v in log.visits()] == ["cellar"]
        assert [p.tag for p in log.posts()] == ["B1"]
        assert sum(log.counts_by_action().values()) == 1
        assert [r["tag"] for r in log.export_rows().rows] == ["B1"]
        assert [rec["tag"] for part in log.export_chunks() for rec, _ in part] == ["B1"]
        assert raw_counts(log) == before  # nothing deleted or rewritten
        assert before["sites"] == 2 and before["members"] > 1


def test_the_user_is_told_once_in_plain_words(tmp_path) -> None:
    path = tmp_path / "survey.fieldcheck"
    older_log(path)
    with Log.open(path) as log:
        assert DEMO_KEPT_OUT in log.notices
        assert "invented demo" in DEMO_KEPT_OUT and "older version" in DEMO_KEPT_OUT
    with Log.open(path) as log:
        assert DEMO_KEPT_OUT not in log.notices


def test_sync_sends_the_survey_and_not_the_demo(tmp_path) -> None:
    path = tmp_path / "survey.fieldcheck"
    older_log(path)
    office = tmp_path / "office.fieldcheck"
    with Log.open(path) as log:
        first = sync(log, office)
        assert first.sent["sites"] == 1 and first.sent["observations"] == 1
        assert first.sent["reviews"] == 1
        assert sync(log, office).moved == 0
    with Log.open(office, readonly=True) as o:
        assert [s.name for s in o.sites()] == ["9 Birch Lane"]
        assert raw_counts(o)["sites"] == 1 and raw_counts(o)["observations"] == 1


def test_an_office_holding_the_demo_never_hands_it_to_a_field_log(tmp_path) -> None:
    # an office log that took the demo from an older version: a new inspector's log syncs
    office = tmp_path / "office.fieldcheck"
    older_log(office, device="device-O")
    field = tmp_path / "field.fieldcheck"
    with Log.open(field, author="new", device="device-B") as log:
        got = sync(log, office)
        assert got.received["sites"] == 1
        assert raw_counts(log)["sites"] == 1 and [p.tag for p in log.posts()] == ["B1"]


def test_the_demos_own_file_still_shows_the_demo(tmp_path) -> None:
    with Log.open(tmp_path / "demo-invented.fieldcheck") as demo:
        seed_demo(demo)
        assert demo.demo_kept_out == ()
        assert [s.name for s in demo.sites()] == ["14 Alder Row"] and demo.posts()


@pytest.mark.parametrize("table", ["visits", "observations", "ratings", "reviews", "remedied"])
def test_every_synced_table_has_a_rule_for_the_demos_rows(table) -> None:
    from fieldcheck.store.demo_rows import kept_out

    assert kept_out(table).startswith(" AND NOT (")


def test_a_site_named_like_the_demo_is_the_users_own(tmp_path) -> None:
    path = tmp_path / "survey.fieldcheck"
    older_log(path)
    with Log.open(path) as log:
        assert log.find_site("14 Alder Row") is None  # the demo's site is not offered
        mine = log.add_site("14 Alder Row", "14 Alder Row, Eastfield")
        assert log.find_site("14 Alder Row") == mine
        assert "14 Alder Row" in [s.name for s in log.sites()]
