"""The report's chunked reads: ``iter_posts`` gives the posts of ``posts()`` in the same order,
and the per-chunk photos, reviews, review and remedy states equal the whole log's, so a reader
that holds one chunk at a time sees what a reader of the whole log sees."""

from __future__ import annotations

import math

import pytest

from fieldcheck.store import Log, seed_demo


@pytest.fixture
def log(tmp_path, shore):
    lg = Log.open(tmp_path / "c.db", author="tester", device="device-C")
    seed_demo(lg)  # the demo's site is shown (a fresh log's own demo)
    rows = [{**shore, "tag": f"P{i}", "load": f"{2000 + 100 * i}lbf"} for i in range(11)]
    lg.import_rows(rows, "Other site", "V1")
    posts = lg.posts()
    lg.review_post(posts[0].member_id, "accept")
    lg.review_post(posts[3].member_id, "override", "checked", action="make-safe-now")
    lg.review_post(posts[12].member_id, "note", "looked at it")
    lg.sign_off(lg.visits()[0].id, "done")
    lg.propose_remedy(posts[4].observation_id, kind="brace", description="brace", changes={})
    for k in (2, 2, 11):
        photo = tmp_path / f"photo{k}.jpg"
        photo.write_bytes(b"not really a photo %d" % k)
        lg.attach(posts[k].observation_id, photo, f"photo of {k}")
    yield lg
    lg.close()


@pytest.mark.parametrize("chunk", [1, 5])
@pytest.mark.parametrize("scope", ["all", "visit", "site"])
def test_iter_posts_is_posts_in_chunks(log, chunk, scope):
    kw = {
        "all": {},
        "visit": {"visit_id": log.visits()[-1].id},
        "site": {"site_id": log.sites()[0].id},
    }[scope]
    chunks = list(log.iter_posts(chunk=chunk, **kw))
    assert all(len(c) == chunk for c in chunks[:-1]) and 0 < len(chunks[-1]) <= chunk
    whole = log.posts(kw.get("visit_id"), site_id=kw.get("site_id"))
    assert [p for c in chunks for p in c] == whole
    assert log.count_posts(kw.get("visit_id"), site_id=kw.get("site_id")) == len(whole)


def test_chunk_of_zero_is_refused_in_a_sentence(log):
    with pytest.raises(ValueError, match="chunk: 0 posts"):
        next(log.iter_posts(chunk=0))


def test_side_reads_of_a_chunk_equal_the_whole_logs(log):
    every_att = log.attachments()
    assert len(every_att) == 3
    every_rev = log.reviews()
    review_states, remedy_states = log.review_states(), log.remedy_states()
    for views in log.iter_posts(chunk=4):
        mids = {v.member_id for v in views}
        att = log.attachments_of(views)
        revs = log.reviews_of(views)
        assert att == {
            m: [a for a in every_att if a.member_id == m]
            for m in mids
            if any(a.member_id == m for a in every_att)
        }
        assert revs == {
            m: [r for r in every_rev if r.member_id == m]
            for m in mids
            if any(r.member_id == m for r in every_rev)
        }
        assert log.review_states_of(views, revs) == {m: review_states[m] for m in mids}
        assert log.review_states_of(views) == {m: review_states[m] for m in mids}
        assert log.remedy_states_of(views) == {m: remedy_states[m] for m in mids}


def test_reviews_of_one_kind(log):
    assert [r.text for r in log.reviews(kind="sign-off")] == ["done"]
    assert {r.kind for r in log.reviews(kind="note")} == {"note"}
    assert log.sign_offs() == [r for r in log.reviews() if r.kind == "sign-off"]


def test_scratch_rows_sort_as_python_and_keep_text_and_numbers(log):
    # text sorts by code point as Python's str does (accents, astral, a lone surrogate)
    tags = ["b", "a", "\u00e9", "Z", "\U0001f600", "a\ud800", "", "10", "9", "a"]
    rows = [(t, k % 3, float(k) if k != 4 else math.nan) for k, t in enumerate(tags)]
    with log.scratch(("tag", "grp", "x")) as t:
        t.add(rows[:4])
        t.add(rows[4:])
        got = list(t.read(("-grp", "tag")))
        assert got == [
            (a, b, None if isinstance(c, float) and math.isnan(c) else c)
            for a, b, c in sorted(rows, key=lambda r: (-r[1], r[0]))  # stable: as added
        ]
        assert list(t.read()) == [r if r[0] != "\U0001f600" else (r[0], r[1], None) for r in rows]
        assert t.count(grp=1) == 3 and t.count(grp=None) == 0
        assert [r[0] for r in t.read(("tag",), grp=0)] == sorted(r[0] for r in rows[::3])
        with pytest.raises(ValueError, match="scratch column 'nope'"):
            t.count(nope=1)
    with pytest.raises(ValueError, match="plain lower-case names"):
        log.scratch(("ok", "drop table"))
