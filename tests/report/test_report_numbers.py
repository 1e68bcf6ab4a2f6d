"""The report's numbers are the engine's: one re-rating of the current records, formatted."""

from __future__ import annotations

import datetime as dt
import re
from html import escape

import numpy as np
import pytest

from fieldcheck import ENGINE_VERSION
from fieldcheck.engine import explain
from fieldcheck.engine.curves import capacity_vs_height
from fieldcheck.engine.rating import rate
from fieldcheck.engine.result import ACTIONS, DUE_DAYS
from fieldcheck.records import parse_records
from fieldcheck.report import model, notation
from fieldcheck.report.html import ratio_text, render_report
from fieldcheck.units import format_force


def _engine(log):
    posts = log.posts()
    parsed = parse_records([p.record for p in posts])
    assert parsed.errors == []
    return posts, rate(parsed.batch)


@pytest.mark.parametrize("units", ["us", "metric"])
def test_capacity_and_ratio_cells_equal_the_engine(demo_log, parse_html, units):
    posts, r = _engine(demo_log)
    cells = parse_html(render_report(demo_log, units=units)).cells
    for j, p in enumerate(posts):
        cap = format_force(r.capacity_n[j], units)
        # the summary table and the post's own section  # engine: rating.capacity_n, formatted
        assert cells[(p.member_id, "capacity")] == [cap, cap], p.tag
        rt = f"{r.ratio[j]:.3f}"
        assert cells[(p.member_id, "ratio")] == [rt, rt], p.tag


def test_every_check_row_is_the_engines(demo_log):
    posts, r = _engine(demo_log)
    out = render_report(demo_log)
    j = [p.tag for p in posts].index("S4")
    sec = out[out.index(f'id="m-{posts[j].member_id}"') :]
    sec = sec[sec.index("<h3>Checks</h3>") : sec.index("</section>")]
    for _name, c in r.checks.items():
        cap = float(c.capacity_n[j])
        if np.isnan(cap):
            assert c.label not in sec
            continue
        row = re.search(re.escape(c.label) + r".*?</tr>", sec).group(0)
        assert format_force(cap, "us") in row and ratio_text(float(c.ratio[j])) in row
        assert escape(c.clause) in row


def test_stored_rating_shown_and_compared(demo_log, monkeypatch):
    out = render_report(demo_log)
    assert "The stored rating equals this re-rating" in out
    assert f"Stored rating:</b> engine {ENGINE_VERSION}" in out
    # a report made by a later engine says the stored ratings came from another one
    monkeypatch.setattr(model, "ENGINE_VERSION", "9.9.9")
    later = render_report(demo_log)
    assert "The stored rating differs from this re-rating" in later
    assert f"Stored by engine {ENGINE_VERSION}; this report uses 9.9.9." in later


def test_changed_numbers_are_reported_as_a_difference(demo_log, monkeypatch):
    real = demo_log.rate_records

    def stronger(records):  # stands in for a changed engine: 10 % more capacity everywhere
        parsed, r = real(records)
        r.capacity_n = r.capacity_n * 1.1
        return parsed, r

    monkeypatch.setattr(demo_log, "rate_records", stronger)
    out = render_report(demo_log)
    assert out.count("The stored capacity differs from the re-rating.") == 9


def test_unrated_record_is_shown_with_its_errors(empty_log, parse_html):
    site = empty_log.add_site("Site")
    v = empty_log.add_visit(site.id, "tester")
    empty_log.save_post(
        v.id, {"tag": "P1", "size": "4x4", "height": "eight feet"}, allow_errors=True
    )
    out = render_report(empty_log)
    p = parse_html(out)
    assert p.problems == [] and p.stack == []
    assert "NOT RATED" in out and "height" in out and "assess first" in out
    assert "Stored rating:</b> none for this revision" in out


def test_open_actions_sorted_by_urgency_then_ratio(demo_log):
    out = render_report(demo_log)
    sec = out[out.index('id="actions"') : out.index('id="conflicts"')]
    table = sec[sec.index("<table") :]
    order = re.findall(r"<tr><td[^>]*>([A-Z]\d)", table)
    posts, r = _engine(demo_log)
    expect = sorted(
        (j for j in range(r.n) if r.action[j] >= 1), key=lambda j: (-r.action[j], -r.ratio[j])
    )
    assert order == [posts[j].tag for j in expect]
    assert order[0] == "S4"  # the demo's overloaded shore: make safe first
    assert "Make safe first" in sec


def test_due_date_is_visit_date_plus_due_days(demo_log):
    _posts, r = _engine(demo_log)
    data = model.gather(demo_log)
    for p in data.posts:
        a = int(r.action[p.j])
        visit_day = dt.datetime.fromisoformat(p.visit.started_at).date()
        if DUE_DAYS[a] is None:
            assert p.due is None
        else:  # judgement defaults in engine.rating.DUE_DAYS
            assert p.due == visit_day + dt.timedelta(days=DUE_DAYS[a])
        assert p.summary["action"] == ACTIONS[a]


def test_curves_agree_with_the_engine_curve_function(demo_log):
    _posts, r = _engine(demo_log)
    b = r.batch
    heights, caps = model.capacity_curves(b)
    for j in range(b.n):
        one = capacity_vs_height(b.take(np.array([j])), heights[j])[0]
        np.testing.assert_allclose(caps[j], one, rtol=1e-12)
    # at the post's own height (no braces in the demo) the curve is the post's capacity
    _, at1 = model.capacity_curves(b, np.array([1.0]))
    np.testing.assert_allclose(at1[:, 0], r.capacity_n, rtol=1e-12)


def test_remedies_are_shown_when_the_engine_gives_them(demo_log):
    data = model.gather(demo_log)
    out = render_report(demo_log)
    for p in data.posts:
        for rem in (p.summary or {}).get("remedies") or []:
            if isinstance(rem, dict) and rem.get("description"):
                from html import escape

                # the user's units first (US by default; an EC5 post's section speaks metric)
                us = notation.units_first(rem["description"], "us")
                assert escape(us) in out or escape(rem["description"]) in out


def test_report_summary_equals_rating_summary(demo_log):
    """The report's per-post summary (remedies of all posts from one call) equals the engine's
    own Rating.summary(i) on every key the report shows."""
    _posts, r = _engine(demo_log)
    data = model.gather(demo_log)
    for p in data.posts:
        full = explain.summary(r, p.j)
        for key in (
            "method",
            "demand_capacity_ratio",
            "governing_check",
            "action",
            "due_days",
            "warnings",
            "load_combination",
            "remedies",
        ):
            assert p.summary.get(key) == full.get(key), (p.tag, key)
    assert any(p.summary["remedies"] for p in data.posts)  # S4 (demo) has options


def test_posts_not_rated_are_one_count_and_a_record_with_errors_is_not_said_to_lack_a_load(
    empty_log,
):
    # judgement: a post nobody could rate, for field errors or for want of a load, is "not
    # rated" once on the cover (never two counts of the same badge); a record with a field error
    # may hold its load, so its open action names the errors, each column named once
    site = empty_log.add_site("Site")
    v = empty_log.add_visit(site.id, "tester")
    base = {"size": "4x4", "height": "8ft", "species": "spf", "grade": "no2"}
    bad = {"tag": "E1", **base, "height": "tall", "load": "4kip"}
    empty_log.save_post(v.id, bad, allow_errors=True)
    empty_log.save_post(v.id, {"tag": "N1", **base}, allow_errors=True)
    empty_log.save_post(v.id, {"tag": "R1", **base, "load": "1kip"})
    out = render_report(empty_log)
    cover = out[: out.index('id="client"')]
    assert cover.count("NOT RATED") == 1 and "NOT RATED</span> 2" in cover
    sec = out[out.index('id="actions"') : out.index('id="conflicts"')]
    e1 = sec[sec.index(">E1<") :]
    e1 = e1[: e1.index("</tr>")]
    assert "field errors" in e1 and "no load given" not in e1
    assert "height: height" not in out and "height:" in e1
    n1 = sec[sec.index(">N1<") :]
    assert "no load given" in n1[: n1.index("</tr>")]


def test_an_open_action_raised_by_a_warning_says_which(empty_log):
    # judgement (engine/ground.py): a pad of unknown thickness raises the action to repair
    # although the soil ratio passes; the open actions say what raised it, and a post whose
    # ratio alone sets its action names no warning
    site = empty_log.add_site("Site")
    v = empty_log.add_visit(site.id, "tester")
    base = {"size": "4x4", "height": "8ft", "species": "dfl", "grade": "no2"}
    empty_log.save_post(
        v.id,
        {"tag": "Q1", **base, "load": "4kip", "pad": "2ft x 2ft"}
        | {
            "soil": "clay",
            "duration": "ten-years",
            "moisture": "12%",
            "cap_species": "dfl",
            "sill_species": "dfl",
        },
    )
    empty_log.save_post(
        v.id,
        {"tag": "Q2", **base, "load": "7kip", "duration": "ten-years"}
        | {"moisture": "12%", "cap_species": "dfl", "sill_species": "dfl"},
    )
    out = render_report(empty_log)
    sec = out[out.index('id="actions"') : out.index('id="conflicts"')]
    q1 = sec[sec.index(">Q1<") :]
    q1 = q1[: q1.index("</tr>")]
    assert "REPAIR OR BRACE" in q1 and "Raised by: Pad thickness not given" in q1
    q2 = sec[sec.index(">Q2<") :]
    assert "Raised by" not in q2[: q2.index("</tr>")]


def test_posts_not_assessed_are_in_the_clients_dates_first(empty_log):
    # judgement (issue 13 item 9): the client's "what must happen by when" never leaves out a
    # post that could not be assessed (no load, a field error): it is work to do first, never
    # a post with no date because it is fine
    site = empty_log.add_site("Site")
    v = empty_log.add_visit(site.id, "tester")
    base = {"size": "4x4", "height": "8ft", "species": "spf", "grade": "no2"}
    empty_log.save_post(v.id, {"tag": "N1", **base}, allow_errors=True)
    empty_log.save_post(v.id, {"tag": "E1", **base, "height": "tall"}, allow_errors=True)
    empty_log.save_post(v.id, {"tag": "R1", **base, "load": "6kip"})
    out = render_report(empty_log)
    client = out[out.index('id="client"') : out.index('id="summary"')]
    dates = client[client.index("What must happen by when") :]
    order = re.findall(r'<td data-label="Post">([A-Z]\d)', dates)
    assert set(order[:2]) == {"N1", "E1"} and "R1" in order
    assert dates.count("assess first") == 2 and dates.count("treat it as unsafe") == 2


def test_the_load_duration_says_where_its_factor_came_from(empty_log):
    # NDS 2018 §2.3.2 and Table 2.3.2: with nominal loads every ASCE 7 combination is rated,
    # each at its own CD, and D+Lr (CD 1.25) governs this column (computed by hand, as in
    # tests/tui/test_tui_model.py); a load given with no duration is permanent (CD 0.9, issue
    # 13 item 8); a post with no load shows its capacity at the factor named (permanent, the
    # lowest, judgement). Never "default" for a factor a combination set.
    site = empty_log.add_site("Site")
    v = empty_log.add_visit(site.id, "tester")
    base = {"size": "4x4", "height": "11ft", "species": "dfl", "grade": "no2"}
    empty_log.save_post(
        v.id, {"tag": "C1", **base, "tributary": "45sqft", "dead": "55psf", "roof_live": "20psf"}
    )
    empty_log.save_post(v.id, {"tag": "G1", **base, "load": "2kip"})
    empty_log.save_post(v.id, {"tag": "N1", **base}, allow_errors=True)
    out = render_report(empty_log)

    def duration(tag: str) -> str:
        sec = out[out.index(f"Post {tag}") :]
        sec = sec[sec.index("Load duration") :]
        return re.sub(r"<[^>]+>", "", sec[: sec.index("</tr>")])  # C<sub>D</sub>: CD

    assert "governing D+Lr: CD = 1.25" in duration("C1") and "default" not in duration("C1")
    assert "permanent assumed" in duration("G1") and "CD = 0.9" in duration("G1")
    assert "no load: the capacity is shown at CD = 0.9" in duration("N1")  # permanent, the lowest
