"""The report holds one chunk of posts at a time (issue 19): a first pass over the log keeps
what the summary parts show of each post on disk (model.PostRows), a second reads and rates
each chunk again for the per-post sections. Never the whole log's posts, photos, reviews or
states in memory; a log that changes between the passes is refused, never reported half-old."""

from __future__ import annotations

import datetime as dt
import tracemalloc

import pytest

from fieldcheck.report import html, model
from fieldcheck.report.model import ReportInfo
from fieldcheck.store import Log, scratch

NOW = dt.datetime(2026, 3, 14, 23, 59, 59, tzinfo=dt.UTC)  # one clock for every render


def test_the_log_is_read_a_chunk_at_a_time_and_the_report_is_the_same(demo_log, monkeypatch):
    whole = html.render_report(demo_log, now=NOW)
    sizes = []
    real_iter, real_reviews = demo_log.iter_posts, demo_log.reviews

    def chunked(*a, **kw):
        for views in real_iter(*a, **kw):
            sizes.append(len(views))
            yield views

    def refuse(*a, **kw):
        raise AssertionError("a read of every post in the log")

    def reviews(member_id=None, *, kind=None):
        assert member_id is not None or kind is not None, "every review in the log"
        return real_reviews(member_id, kind=kind)

    monkeypatch.setattr(demo_log, "iter_posts", chunked)
    for name in ("posts", "attachments", "review_states", "remedy_states"):
        monkeypatch.setattr(demo_log, name, refuse)
    monkeypatch.setattr(demo_log, "reviews", reviews)
    monkeypatch.setattr(model, "CHUNK", 2)
    assert html.render_report(demo_log, now=NOW) == whole
    # nine posts in chunks of two, read twice: the summary pass and the sections' pass
    assert sizes == [2, 2, 2, 2, 1] * 2


def test_the_summary_rows_are_kept_on_disk_not_as_entries(demo_log):
    d = model.gather(demo_log)
    try:
        assert isinstance(d.posts, model.Posts) and len(d.posts) == d.n == 9
        assert not hasattr(d.posts, "__getitem__")  # no list of every post's entry
        first = next(d.rows.by_urgency())
        assert first.tag == "S4" and first.action == 3  # the demo's overloaded shore
        assert [r.tag for r in d.rows.in_order()] == [p.tag for p in d.posts]
    finally:
        d.close()


def test_a_log_changed_between_the_passes_is_refused(demo_log, tmp_path, monkeypatch):
    d = model.gather(demo_log)
    p = demo_log.posts()[0]
    demo_log.save_post(p.visit_id, {**p.record, "height": "9ft"}, p.member_id)
    with pytest.raises(ValueError, match="changed while the report was being written"):
        list(d.posts)
    d.close()

    def save_then_issue(log, *a, **kw):  # the revision is counted between the two passes
        log.save_post(p.visit_id, {**p.record, "height": "10ft"}, p.member_id)
        return ReportInfo()

    monkeypatch.setattr(model, "issue_info", save_then_issue)
    (tmp_path / "out").mkdir()
    with pytest.raises(ValueError, match="write the report again"):
        html.write_report(demo_log, tmp_path / "out" / "r.html")
    assert list((tmp_path / "out").iterdir()) == []  # no half-written report left behind


@pytest.mark.parametrize("scope", [[], ["--site", "9 Birch Lane"], ["--visit", "V1"]])
def test_the_command_reads_no_list_of_every_post(demo_log, tmp_path, monkeypatch, capsys, scope):
    from fieldcheck.cli import main
    from fieldcheck.store import repo

    if scope and scope[0] == "--visit":
        scope = ["--visit", demo_log.visits()[0].name]
    if scope and scope[0] == "--site":
        scope = ["--site", demo_log.sites()[0].name]
    n = len(demo_log.posts(**({"visit_id": demo_log.visits()[0].id} if "--visit" in scope else {})))

    def refuse(*a, **kw):
        raise AssertionError("a list of every post")

    monkeypatch.setattr(repo.Log, "posts", refuse)
    out = tmp_path / "out.html"
    argv = ["report", "--db", str(demo_log.path), "--out", str(out), "--quiet", "--draft"]
    assert main(argv + scope) == 0
    assert f"Wrote the report of {n} posts" in capsys.readouterr().err


def _rows(n: int) -> list[dict[str, str]]:
    loads = ("2000lbf", "6000lbf", "14000lbf", "")  # every action, and posts with no load
    return [
        {
            "tag": f"P{i}",
            "location": f"grid {i % 13}",
            "size": ("4x4", "6x6")[i % 2],
            "height": ("8ft", "9ft 6in", "12ft")[i % 3],
            "species": "douglas-fir-larch",
            "grade": "no2",
            "load": loads[i % 4],
        }
        for i in range(n)
    ]


def _peak(tmp_path, n: int, **kw) -> int:
    with Log.open(tmp_path / f"m{n}.db", author="t", device="device-M") as log:
        log.import_rows(_rows(n), "S", "V")
        tracemalloc.start()
        try:
            tracemalloc.reset_peak()
            html.write_report(log, tmp_path / f"m{n}.html", info=ReportInfo(), **kw)
            return tracemalloc.get_traced_memory()[1]
        finally:
            tracemalloc.stop()


@pytest.mark.slow
@pytest.mark.parametrize(("small", "big", "summary"), [(1000, 4000, True), (150, 600, False)])
def test_peak_memory_is_flat_in_the_number_of_posts(tmp_path, monkeypatch, small, big, summary):
    # chunks of 25 posts, rows read and written 25 at a time: what one chunk holds is small, so
    # memory kept per post would show (the report that held every post's entry grew by about
    # 13 KB a post); allowed: 1 KB a post
    monkeypatch.setattr(model, "CHUNK", 25)
    monkeypatch.setattr(html, "ROWS_PER_PIECE", 25)
    monkeypatch.setattr(scratch, "READ_CHUNK", 25)
    a = _peak(tmp_path, small, summary_only=summary)
    b = _peak(tmp_path, big, summary_only=summary)
    assert b - a < 1024 * (big - small), (a, b)
