"""The visit's posts as SQLite sorts, filters and pages them agree with Log.posts()."""

from __future__ import annotations

import math

from fieldcheck.store.visit_table import VisitTable


def _posts(shore, n: int) -> list[dict[str, str]]:
    loads = ("2000lbf", "9000lbf", "30 kN", "4500lbf")
    places = ("north bay", "east wall", "stair core", "lift pit", "west bay")
    return [
        {**shore, "tag": f"P{i}", "location": places[i % 5], "load": loads[i % 4]} for i in range(n)
    ]


def test_pages_sorts_and_filter_match_the_posts(log, shore):
    res = log.import_rows(_posts(shore, 57), "Site", "Visit")
    vt = VisitTable(log.path, res.visit.id, {})
    try:
        posts = log.posts(res.visit.id)
        assert vt.total() == len(posts) == 57

        def worst(p):  # the report's order of urgency, then the larger ratio
            urgency = {"make-safe-now": 0, "repair-or-brace": 2, "monitor": 3, "no-action": 4}
            r = p.ratio if p.ratio is not None and math.isfinite(p.ratio) else math.inf
            return (urgency.get(p.action_label, 1), -r)

        want = [p.member_id for p in sorted(posts, key=worst)]
        got = [p.member_id for k in range(0, 57, 10) for p in vt.page("worst", "", k, 10)]
        assert got == want
        by_tag = [p.tag for p in vt.page("tag", "", 0, 100)]
        assert by_tag == [f"P{i}" for i in range(57)]  # natural order: P2 before P10
        # a filter keeps the posts holding every word, any case
        hits = vt.page("tag", "CORE  stair", 0, 100)
        assert {p.tag for p in hits} == {p.tag for p in posts if p.location == "stair core"}
        assert vt.count("stair core") == len(hits) == 11
        assert vt.position("tag", "", by_tag and vt.page("tag", "", 5, 1)[0].member_id) == 5
        assert vt.page("worst", "no such words", 0, 10) == []
    finally:
        vt.close()


def test_refresh_reads_only_what_was_written_since(log, shore):
    res = log.import_rows(_posts(shore, 12), "Site", "Visit")
    vt = VisitTable(log.path, res.visit.id, {})
    try:
        assert vt.refresh() == []  # nothing new: nothing read
        one = next(p for p in log.posts(res.visit.id) if p.tag == "P3")
        log.save_post(res.visit.id, {**one.record, "load": "1000lbf"}, one.member_id)
        new = log.save_post(res.visit.id, {**shore, "tag": "P99"})
        log.withdraw(next(p for p in log.posts() if p.tag == "P5").member_id, res.visit.id, "x")
        touched = vt.refresh()
        assert len(touched) == 3
        assert vt.total() == 12  # one added, one withdrawn
        assert new.member_id in {p.member_id for p in vt.page("added", "", 0, 100)}
        p3 = next(p for p in vt.page("added", "", 0, 100) if p.tag == "P3")
        assert p3.record["load"] == "1000lbf"
        assert "P5" not in vt.tags()
    finally:
        vt.close()


def test_refresh_sees_a_conflict_made_since(log, shore):
    # a revision from another device made without seeing the current one forks the post: the
    # refresh that takes it in marks that post in conflict, and only that post
    from fieldcheck.store.repo import new_id

    res = log.import_rows(_posts(shore, 6), "Site", "Visit")
    vt = VisitTable(log.path, res.visit.id, {})
    try:
        p2 = next(p for p in log.posts(res.visit.id) if p.tag == "P2")
        log.save_post(res.visit.id, {**p2.record, "load": "1000lbf"}, p2.member_id)
        assert len(vt.refresh()) == 1
        with log.db.conn:  # device B revises the first revision, not knowing of the second
            log.db.conn.execute(
                "INSERT INTO observations (id, member_id, visit_id, supersedes, merges, "
                "withdrawn, reason, record_json, device_id, device_seq, author, created_at) "
                "SELECT ?, member_id, visit_id, id, NULL, 0, '', record_json, 'device-B', 1, "
                "'b', created_at FROM observations WHERE id = ?",
                [new_id(), p2.observation_id],
            )
        assert vt.refresh() == [p2.member_id]
        flagged = {p.tag for p in vt.page("added", "", 0, 100) if p.conflict}
        assert flagged == {"P2"} and log.conflicts() == [p2.member_id]
    finally:
        vt.close()


def test_counts_hold_every_post_not_rated_load_missing_and_field_errors_alike(log, shore):
    # a post with no load (action 4) and one saved with a field error (no rating) are both
    # "not rated": the visit's counts add up to its posts (judgement: a post nobody could rate
    # is never left out of the count the inspector reads)
    res = log.import_rows(_posts(shore, 3), "Site", "Visit")
    no_load = {k: v for k, v in shore.items() if k != "load"}
    log.save_post(res.visit.id, {**no_load, "tag": "N1"})
    log.save_post(res.visit.id, {**shore, "tag": "E1", "height": "tall"}, allow_errors=True)
    log.save_post(res.visit.id, {**shore, "tag": "E2", "height": "tall"}, allow_errors=True)
    vt = VisitTable(log.path, res.visit.id, {})
    try:
        counts = vt.counts_by_action()
        assert counts["not rated"] == 3
        assert sum(counts.values()) == vt.total() == 6
        assert counts == {k: n for k, n in log.counts_by_action(res.visit.id).items() if n}
    finally:
        vt.close()


def _nonzero(counts: dict[str, int]) -> dict[str, int]:
    return {k: n for k, n in counts.items() if n}


def test_an_office_override_in_force_is_the_action_listed_and_counted(log, shore):
    # judgement: the engineer's raised action is what the inspector must see in the list (as the
    # report shows it, report/model.py); the rating as found stays beside it, and an override
    # never lowers a rating (store/reviews.py)
    res = log.import_rows(_posts(shore, 8), "Site", "Visit")
    posts = {p.tag: p for p in log.posts(res.visit.id)}
    mild = next(t for t, p in posts.items() if p.action_label == "monitor")
    vt = VisitTable(log.path, res.visit.id, {})
    try:
        before = vt.counts_by_action()
        log.review_post(posts[mild].member_id, "override", "sill crushed on site", "make-safe-now")
        # a review written since (here, or synced from the office) is taken in by refresh
        assert vt.refresh() == [posts[mild].member_id]
        row = {p.tag: p for p in vt.page("worst", "", 0, 100)}[mild]
        assert (row.action_label, row.office_action) == ("monitor", 3)
        after = vt.counts_by_action()
        assert after["make-safe-now"] == before.get("make-safe-now", 0) + 1
        assert after["monitor"] == before["monitor"] - 1
        assert mild in {p.tag for p in vt.page("action", "make", 0, 100)}  # the filter's words
        first = vt.page("action", "", 0, after["make-safe-now"])  # sorted with the make-safe
        assert mild in {p.tag for p in first}
        assert _nonzero(log.counts_by_action(res.visit.id)) == after  # the first screen agrees
        # an override that would lower the action is not in force; neither is one of a revision
        # since replaced
        worse = next(t for t, p in posts.items() if p.action == 3 and t != mild)
        log.review_post(posts[worse].member_id, "override", "looked fine", "no-action")
        again = {**posts[mild].record, "notes": "re-measured"}
        log.save_post(res.visit.id, again, posts[mild].member_id)
        vt.refresh()
        rows = {p.tag: p for p in vt.page("tag", "", 0, 100)}
        assert rows[mild].office_action is None and rows[worse].office_action is None
        assert vt.counts_by_action() == before == _nonzero(log.counts_by_action(res.visit.id))
    finally:
        vt.close()


def test_ratings_of_an_older_engine_are_counted_marked_and_re_rated(log, shore, older_engine):
    # judgement: a stored action made by another engine version (or other reference data) may
    # not be this fieldcheck's; it is never shown as if it were: counted, marked, and re-rated
    # on request with the old ratings kept (append-only)
    older_engine(True)  # an older engine stores them
    res = log.import_rows(_posts(shore, 5), "Site", "Visit")
    older_engine(False)
    assert log.older_rated() == 5 and log.older_rated(res.visit.id) == 5
    fresh = log.save_post(res.visit.id, {**shore, "tag": "N1"})  # rated by this engine
    vt = VisitTable(log.path, res.visit.id, {})
    try:
        rows = {p.tag: p for p in vt.page("tag", "", 0, 100)}
        assert rows["N1"].older is False and all(rows[f"P{i}"].older for i in range(5))
        assert vt.older() == 5 and vt.older("N1") == 0
        before = log.db.conn.execute("SELECT count(*) FROM ratings").fetchone()[0]
        done = log.rerate_all()
        assert done.rated == 6 and log.older_rated() == 0
        after = log.db.conn.execute("SELECT count(*) FROM ratings").fetchone()[0]
        assert after == before + 6  # new ratings added; the old ones kept
        # a re-rate runs from the first screen: a visit opened after it reads the new ratings
        vt2 = VisitTable(log.path, res.visit.id, {})
        try:
            assert vt2.older() == 0
            assert fresh.member_id in {p.member_id for p in vt2.page("tag", "", 0, 9)}
        finally:
            vt2.close()
    finally:
        vt.close()


def test_the_posts_list_marks_ratings_of_an_older_engine(log, shore, older_engine):
    # the office's review queue reads Log.posts: the same mark as the visit table (judgement)
    older_engine(True)
    res = log.import_rows(_posts(shore, 2), "Site", "Visit")
    older_engine(False)
    log.save_post(res.visit.id, {**shore, "tag": "N1"})
    marks = {p.tag: p.older for p in log.posts(res.visit.id)}
    assert marks == {"P0": True, "P1": True, "N1": False}


def test_a_reference_finds_its_post_and_a_short_word_never_finds_stray_ones(log, shore):
    # an untagged post is listed and reported by the end of its id (rows.short_ref); typing it
    # finds the post, but a short word such as the tag B3 must not also find the posts whose
    # hex digits happen to hold "b3" (300 refs of 12 hex digits: nearly sure to, were refs matched
    # by any word; judgement)
    untagged = {k: v for k, v in shore.items() if k != "tag"}
    rows = [{**shore, "tag": "B3"}] + [dict(untagged) for _ in range(300)]
    res = log.import_rows(rows, "Site", "Visit")
    vt = VisitTable(log.path, res.visit.id, {})
    try:
        assert [p.tag for p in vt.page("tag", "b3", 0, 10)] == ["B3"]
        some = next(p for p in log.posts(res.visit.id) if not p.tag)
        for text in (some.ref, some.ref[-6:].upper()):
            assert [p.member_id for p in vt.page("tag", text, 0, 10)] == [some.member_id]
    finally:
        vt.close()


def test_worst_first_is_by_the_action_in_force_then_the_ratio(log, shore):
    # report/model.py URGENCY: make safe now, not rated, repair, monitor, no action; a post at
    # repair because of its condition (decay: EN 1995-1-1 has no strength for decayed wood,
    # judgement) comes before every post at monitor or no action, whatever their ratios
    rows = _posts(shore, 12)
    rows[3] = {**rows[3], "load": "500lbf", "decay_wide": "40 mm", "decay_at": "bottom"}
    rows[5] = {k: v for k, v in rows[5].items() if k != "load"}  # not rated: load missing
    res = log.import_rows(rows, "Site", "Visit")
    posts = {p.tag: p for p in log.posts(res.visit.id)}
    decayed = posts["P3"]
    assert decayed.action_label == "repair-or-brace" and decayed.ratio < 0.5
    vt = VisitTable(log.path, res.visit.id, {})
    try:
        order = [p.tag for p in vt.page("worst", "", 0, 100)]
        labels = [posts[t].action_label for t in order]
        rank = {"make-safe-now": 0, "not-rated": 1, "not rated": 1, "repair-or-brace": 2}
        rank |= {"monitor": 3, "no-action": 4}
        assert [rank[a] for a in labels] == sorted(rank[a] for a in labels)
        assert order.index("P5") < order.index("P3")  # not rated before repair
        assert all(order.index("P3") < order.index(t) for t, p in posts.items() if p.action < 2)
    finally:
        vt.close()


def test_the_filter_finds_what_the_list_shows_and_never_the_names_of_fields(log, shore):
    # common practice, no source: a filter finds the words on screen, in any case and script
    rows = _posts(shore, 9)
    rows[1] = {**rows[1], "location": "Cellier ÉTÉ"}
    rows[2] = {k: v for k, v in rows[2].items() if k != "load"}  # not rated: load missing
    rows[3] = {k: v for k, v in rows[3].items() if k != "tag"}  # untagged
    rows[4] = {**rows[4], "notes": "crushing at top"}
    res = log.import_rows(rows, "Site", "Visit")
    words = {"not rated: load missing": "? not rated: load missing"}
    vt = VisitTable(log.path, res.visit.id, words)
    try:
        tags = {p.member_id: p.tag for p in log.posts(res.visit.id)}

        def found(text: str) -> set[str]:
            return {tags[p.member_id] for p in vt.page("tag", text, 0, 100)}

        assert found("été") == found("ÉTÉ") == found("Été") == {"P1"}
        assert found("load missing") == {"P2"}
        assert found("untagged") == {""}
        assert found("top") == {"P4"}  # the note, not every post's field "top"
        bay = {p.tag for p in log.posts(res.visit.id) if p.location == "north bay"}
        assert bay and found("north bay") == bay  # the values are found as before
    finally:
        vt.close()


def test_heights_sort_by_length_however_written(log, shore):
    # common practice, no source: 2.0 m < 7 ft 0 in (2,134 mm) < 2,500 mm < 9 ft < 10 ft
    heights = ["10ft", "2500 mm", "9ft", "7ft 0in", "2.0 m"]
    rows = [{**shore, "tag": f"H{i}", "height": h} for i, h in enumerate(heights)]
    res = log.import_rows(rows, "Site", "Visit")
    vt = VisitTable(log.path, res.visit.id, {})
    try:
        got = [p.record.get("height") for p in vt.page("height", "", 0, 100)]
        assert got == ["2.0 m", "7ft 0in", "2500 mm", "9ft", "10ft"]
    finally:
        vt.close()
