"""Large surveys: rated chunk by chunk (each chunk and its curves within one engine block, so no
post is re-rated alone and the cost stays linear), streamed to the file post by post, with a
progress callback and a summary-only form. Speed and memory are measured in bench/report.py."""

from __future__ import annotations

import datetime as dt

import pytest

from fieldcheck.cli import main
from fieldcheck.engine.blocks import BLOCK
from fieldcheck.report import html, model
from fieldcheck.report.model import ReportInfo


def test_chunks_fit_one_engine_block_with_their_curves():
    assert model.CHUNK * len(model.CURVE_FACTORS) <= BLOCK


def test_small_chunks_give_the_same_report_and_no_post_is_rated_alone(demo_log, monkeypatch):
    now = dt.datetime(2026, 3, 14, 23, 59, 59, tzinfo=dt.UTC)  # one clock for both renders
    whole = html.render_report(demo_log, now=now)
    real = demo_log.rate_records

    def whole_chunk(records):
        parsed, r = real(records)
        # a partial rating would re-rate each post alone for its text: the path that made
        # 88,000 posts take 828 s
        assert not r.partial
        return parsed, r

    monkeypatch.setattr(demo_log, "rate_records", whole_chunk)
    monkeypatch.setattr(model, "CHUNK", 2)  # nine posts in five chunks
    assert html.render_report(demo_log, now=now) == whole


def test_streamed_post_by_post_and_the_text_dropped_after(demo_log):
    d = model.gather(demo_log)
    parts = html.render_parts(d)
    sections = [p for p in parts if p.startswith('<section class="post"')]
    assert len(sections) == 9
    assert all(not p._cache for p in d.posts)  # each post's summary and working released


def test_progress_is_reported_for_rating_and_writing(demo_log, tmp_path):
    seen = []
    html.write_report(
        demo_log, tmp_path / "r.html", info=ReportInfo(), progress=lambda *a: seen.append(a)
    )
    assert seen[-1] == (9, 9, "writing")
    assert (9, 9, "rating") in seen


def test_summary_only_leaves_out_the_technical_record(demo_log, tmp_path, capsys):
    out = tmp_path / "s.html"
    db = str(demo_log.path)
    assert main(["report", "--db", db, "--out", str(out), "--summary-only", "--quiet"]) == 0
    text = out.read_text(encoding="utf-8")
    assert 'class="post"' not in text and "written as a summary only" in text
    assert text.count('data-k="capacity"') == 9  # every post in the summary table
    assert "Client summary" in text


@pytest.mark.parametrize("summary_only", [False, True])
def test_dash_writes_the_report_to_standard_output(demo_log, capsys, summary_only):
    argv = ["report", "--db", str(demo_log.path), "--out", "-", "--quiet"]
    assert main(argv + (["--summary-only"] if summary_only else [])) == 0
    cap = capsys.readouterr()
    assert cap.out.startswith("<!DOCTYPE html>") and cap.out.rstrip().endswith("</html>")
    assert "Wrote the report" in cap.err
