"""The report file: parses, balanced, self-contained, every post and caution in it, escaped."""

from __future__ import annotations

import re

import pytest

from fieldcheck.engine.cautions import CAUTIONS
from fieldcheck.report.html import STATUS_KEY, render_report, write_report
from fieldcheck.report.style import FOOTER_CAUTION, css_string


def _text(parsed) -> str:
    return re.sub(r"\s+", " ", "".join(parsed.text))


def test_demo_report_parses_with_balanced_tags(demo_log, parse_html):
    out = render_report(demo_log)
    p = parse_html(out)
    assert p.problems == []  # every end tag closes the element it should
    assert p.stack == []  # and nothing is left open
    assert out.startswith("<!DOCTYPE html>")


def test_every_post_and_every_caution_appears(demo_log, parse_html):
    out = render_report(demo_log)
    text = _text(parse_html(out))
    posts = demo_log.posts()
    assert len(posts) == 9  # the demo: 4 basement posts, 5 shores (S6 withdrawn)
    for p in posts:
        assert f"Post {p.tag}" in text
        assert f'id="m-{p.member_id}"' in out
    assert "Post S6" not in text  # withdrawn: kept in history, not in the report
    for c in CAUTIONS:
        # in full once, on the cover (every printed page carries one line of them)
        assert text.count(c) == 1
    assert f"content: {css_string(FOOTER_CAUTION)}" in out


def test_no_external_references(demo_log, parse_html):
    out = render_report(demo_log)
    for bad in ("http:", "https:", "//", "<link", "<script", "<iframe", "@import", "url("):
        assert bad not in out.lower(), bad
    p = parse_html(out)
    for tag, attrs in p.tags:
        # photos are embedded reduced copies, never files or addresses
        assert "src" not in attrs or attrs["src"].startswith("data:image/jpeg;base64,"), tag
        if "href" in attrs:
            assert attrs["href"].startswith("#"), attrs["href"]  # in-page anchors only
    ids = {a["id"] for _, a in p.tags if "id" in a}
    for _, a in p.tags:
        if "href" in a:
            assert a["href"][1:] in ids  # every anchor lands somewhere


def test_never_colour_alone(demo_log):
    out = render_report(demo_log)
    badges = re.findall(r'<span class="badge (a[0-3n])">([^<]*)</span>', out)
    assert badges
    words = {
        "a0": "NO ACTION",
        "a1": "MONITOR",
        "a2": "REPAIR OR BRACE",
        "a3": "MAKE SAFE NOW",
        "an": "NOT RATED",
    }
    for cls, label in badges:
        assert words[cls] in label  # a word beside every colour
        assert label.split()[0] != words[cls].split()[0]  # and a symbol before it


def test_one_inline_svg_plot_per_rated_post_with_axis_labels(demo_log):
    out = render_report(demo_log)
    assert out.count('<svg class="plot"') == 9
    assert out.count("height (ft)") == 9 and out.count("capacity (lbf)") == 9
    assert "this post (S4)" in out
    metric = render_report(demo_log, units="metric")
    assert metric.count("height (m)") == 9 and metric.count("capacity (kN)") == 9


def test_user_text_is_escaped(empty_log, parse_html):
    site = empty_log.add_site("Site <b>&</b>")
    v = empty_log.add_visit(site.id, "A & B <i>", name='visit "one" <x>')
    empty_log.save_post(
        v.id,
        {
            "tag": "<script>alert(1)</script>",
            "size": "4x4",
            "height": "8ft",
            "species": "douglas-fir-larch",
            "grade": "no2",
            "load": "2000lbf",
            "notes": "wedge <loose> & 'split'",
        },
    )
    out = render_report(empty_log)
    assert "<script" not in out and "<loose>" not in out and "<x>" not in out and "<b>&" not in out
    assert "&lt;script&gt;alert(1)&lt;/script&gt;" in out
    p = parse_html(out)
    assert p.problems == [] and p.stack == []
    assert "wedge <loose> & 'split'" in "".join(p.text)


def test_an_empty_visit_says_so(empty_log, parse_html):
    site = empty_log.add_site("Quiet site")
    v = empty_log.add_visit(site.id, "tester", name="nothing found")
    out = render_report(empty_log, visit_id=v.id)
    p = parse_html(out)
    assert p.problems == [] and p.stack == []
    text = _text(p)
    assert "No posts are recorded in this scope" in text
    assert "nothing to decide" in text
    assert "Quiet site" in text and "nothing found" in text
    # judgement: with no post in it, the report never says every post is adequate
    assert "adequate" not in text.replace("nothing here says any post is adequate", "")


def test_an_empty_log_renders(empty_log):
    out = render_report(empty_log)
    assert "No posts are recorded" in out


def test_unknown_units_are_refused_in_one_sentence(demo_log):
    with pytest.raises(ValueError, match="units: 'imperial' is not known; write us or metric"):
        render_report(demo_log, units="imperial")


def test_write_report_is_atomic_and_leaves_no_temporary_file(demo_log, tmp_path):
    target = tmp_path / "out" / "report.html"
    target.parent.mkdir()
    target.write_text("old")
    path = write_report(demo_log, target, units="metric")
    assert path == target
    assert target.read_text(encoding="utf-8").startswith("<!DOCTYPE html>")
    assert [f.name for f in target.parent.iterdir()] == ["report.html"]


def test_visit_and_site_scopes(demo_log):
    site = demo_log.sites()[0]
    basement = demo_log.find_visit(site.id, "Basement survey")
    out = render_report(demo_log, visit_id=basement.id)
    assert out.count('class="post"') == 4 and "Post B1" in out and "Post S1" not in out
    out = render_report(demo_log, site_id=site.id)
    assert out.count('class="post"') == 9


def test_client_summary_is_separate_and_plain(demo_log, parse_html):
    out = render_report(demo_log)
    client = out[out.index('id="client"') : out.index('id="summary"')]
    assert "Unsafe now" in client and "S4" in client  # the overloaded shore (demo)
    assert "Safe to use as found" in client
    assert "What must happen by when" in client
    for jargon in ("le/d", "Cp", "NDS", "Fc"):
        assert jargon not in client  # plain words for the client


def test_open_sync_conflicts_are_listed_with_their_differences(empty_log):
    import uuid

    site = empty_log.add_site("Site")
    v = empty_log.add_visit(site.id, "tester")
    first = empty_log.save_post(
        v.id,
        {
            "tag": "S1",
            "size": "4x4",
            "height": "8ft",
            "species": "douglas-fir-larch",
            "grade": "no2",
            "load": "3000lbf",
        },
    )
    # two revisions made apart (as a sync brings them): both supersede the same parent
    with empty_log.db.atomic():
        for dev, h in (("device-B", "9ft"), ("device-C", "10ft")):
            empty_log.db.execute(
                "INSERT INTO observations (id, member_id, visit_id, supersedes, record_json,"
                " device_id, device_seq, author, created_at)"
                " VALUES (?, ?, ?, ?, ?, ?, 1, 'x', ?)",
                [
                    str(uuid.uuid4()),
                    first.member_id,
                    v.id,
                    first.id,
                    f'{{"tag": "S1", "size": "4x4", "height": "{h}", "load": "3000lbf"}}',
                    dev,
                    "2026-01-01T00:00:00+00:00",
                ],
            )
    out = render_report(empty_log)
    sec = out[out.index('id="conflicts"') : out.index('id="record"')]
    assert "S1: 2 revisions made without seeing each other" in sec
    assert "height = 9ft" in sec and "height = 10ft" in sec
    # no device ids (internal identifiers): the revisions are numbered and dated
    assert "device-B" not in sec
    assert '"Revision">1</td><td data-label="When">2026-01-01 00:00</td>' in sec


def test_sign_offs_are_on_the_cover(demo_log):
    v = demo_log.visits()[0]
    demo_log.add_review("sign-off", "Basement posts reviewed", visit_id=v.id)
    out = render_report(demo_log)
    cover = out[: out.index('id="client"')]
    assert "Basement posts reviewed" in cover and "Reviewing engineer" in cover


def test_a_large_batch_reports_the_same_as_a_small_one(demo_log, monkeypatch):
    # above one engine block the rating keeps no intermediates; the report rates each post alone
    # for its assumptions table, so the report is the same text either way
    import datetime as dt

    from fieldcheck.engine import rating as rating_mod

    now = dt.datetime(2026, 3, 14, 23, 59, 59, tzinfo=dt.UTC)  # one clock for both renders
    whole = render_report(demo_log, now=now)
    monkeypatch.setattr(rating_mod, "BLOCK", 2)  # the demo's posts in blocks of two: partial
    assert render_report(demo_log, now=now) == whole


def test_reference_value_status_key_is_printed_once_and_each_post_points_to_it(demo_log):
    # judgement: the key to read/secondary/memory is a legend, not a clause; printed once it keeps
    # the nine-post demo within its page limit while every post still shows each value's status
    out = render_report(demo_log)
    assert out.count(STATUS_KEY) == 1
    assert "read: from the source" not in out
    assert out.count("Status of the reference values") == out.count(
        "key under Engine and reference data"
    )
    assert out.count("Status of the reference values") >= 1
