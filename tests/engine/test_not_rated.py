"""A missing decision input is never read as safe: not rated, refused, or raised.

Policy, not a published table: a screening aid must not call a post fine when it could not
decide (common practice, no source). JSON (RFC 8259) has no NaN or Infinity.
"""

from __future__ import annotations

import json

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from fieldcheck.cli import main
from fieldcheck.engine import explain
from fieldcheck.engine.batch import FIXED, FREE, PINNED, make_batch
from fieldcheck.engine.rating import FLAGS, rate
from fieldcheck.engine.result import ACTIONS, DUE_DAYS, NOT_RATED, STATE_LOAD_MISSING
from fieldcheck.records import rate_records

PSI = 0.006894757293168361
POST = ["rate", "--size", "4x4", "--height", "8ft", "--species", "dfl", "--grade", "no2"]


def _batch(**kw):
    base = {
        "d1_mm": 88.9,
        "d2_mm": 88.9,
        "height_mm": 2438.4,
        "fc_mpa": 1350 * PSI,
        "emin_mpa": 580e3 * PSI,
    }
    base.update(kw)
    return make_batch(**base)


def test_no_load_is_not_rated_never_no_action_or_monitor():
    r = rate(_batch(load_n=np.array([np.nan, 1000.0])))
    assert int(r.action[0]) == NOT_RATED
    assert ACTIONS[NOT_RATED] == "not-rated" and DUE_DAYS[NOT_RATED] is None  # no due date
    assert int(r.action[1]) == 0  # a light load on a sound post: rated, no action
    assert r.state(0) == STATE_LOAD_MISSING and r.state(1) == "rated"
    assert r.rated().tolist() == [False, True]


def test_condition_that_needs_no_load_still_raises_the_action():
    # a post moving more than before is make-safe-now with or without a load (judgement)
    r = rate(_batch(post_moving=np.array([True])))
    assert int(r.action[0]) == 3


def test_cli_json_not_rated(capsys):
    assert main([*POST, "--json"]) == 0
    out = json.loads(capsys.readouterr().out)
    assert out["state"] == "not rated: load missing"
    assert out["action"] == "not-rated" and out["due_days"] is None
    assert out["demand_capacity_ratio"] is None
    assert out["allowable_load_lbf"] > 0  # the capacity is still shown


def test_cli_text_not_rated(capsys):
    assert main(POST) == 0
    assert "Not rated: load missing" in capsys.readouterr().out


def test_batch_records_not_rated():
    rows = [
        {"size": "4x4", "height": "8ft", "species": "dfl", "grade": "no2"},
        {"size": "4x4", "height": "8ft", "species": "dfl", "grade": "no2", "load": "1000lbf"},
    ]
    r = rate_records(rows)
    rating, errors = r
    assert not errors
    assert int(rating.action[0]) == NOT_RATED and int(rating.action[1]) != NOT_RATED


def test_wane_leaving_no_section_is_refused(capsys):
    # geometry: four 45-degree corner triangles of leg 3 in overlap on a 3.5 in face
    code = main([*POST, "--load", "1000lbf", "--wane", "3in", "--wane-corners", "4", "--json"])
    assert code == 2
    err = capsys.readouterr().err
    assert "wane" in err and err.count("\n") <= 1 and "Traceback" not in err


def test_losses_together_leaving_no_section_are_refused(capsys):
    # geometry: decay 1.5 in from both wide faces, each taken 1/2 in past the probe (the
    # default margin, judgement), meets across the 3.5 in thickness: nothing is left to rate
    args = [*POST, "--load", "1000lbf", "--decay-wide", "1.5in", "--decay-wide2", "1.5in"]
    assert main([*args, "--json"]) == 2
    captured = capsys.readouterr()
    assert captured.out == ""
    err = captured.err.strip()
    assert "no section" in err and err.count("\n") == 0 and "Traceback" not in err
    assert err.count(". ") == 0  # one sentence


def test_losses_together_leaving_no_section_are_refused_in_a_batch():
    # geometry: 1.2 in of decay (+ 1/2 in margin) on both wide faces of a 3.5 in post leaves
    # 0.08 in at the centre, and a 1/2 in bore through the narrow faces takes that: no section
    post = {"size": "4x4", "height": "8ft", "species": "dfl", "grade": "no2", "load": "1000lbf"}
    gone = {**post, "decay_wide": "1.2in", "decay_wide2": "1.2in", "hole": "0.5in"}
    gone.update(hole_face="narrow")
    rating, errors = rate_records([post, gone, {**post, "decay_wide": "1in"}])
    assert rating.n == 2  # the other posts are rated
    assert [(e.row, e.column) for e in errors] == [(1, "decay_wide")]
    assert "no section" in errors[0].sentence() and "decay_wide2 and hole" in errors[0].sentence()


def test_json_never_holds_nan_or_infinity():
    # a mechanism (free-free ends) has no capacity: the JSON says null, never NaN
    r = rate(_batch(load_n=1000.0, top=FREE, bottom=FREE))
    json.dumps(explain.summary(r, 0), allow_nan=False)
    # a zero area (engine API, no refusal in front of it): ratio infinite, JSON null
    r = rate(_batch(load_n=1000.0, end_contact=0.0))
    json.dumps(explain.summary(r, 0), allow_nan=False)


@pytest.mark.parametrize(
    ("bottom", "top", "flagged"), [(FIXED, FREE, True), (PINNED, PINNED, False)]
)
def test_flagpole_warns_of_base_fixity(bottom, top, flagged):
    # NDS 2018 Appendix G case (e): the sway K of a flagpole needs a truly fixed base
    r = rate(_batch(load_n=1000.0, bottom=bottom, top=top))
    assert bool(int(r.flags[0]) & FLAGS.bit["base_fixity"]) is flagged
    assert any("fixity" in w for w in explain.warnings(r, 0)) is flagged


def test_pad_without_thickness_raises_the_action():
    base = {"size": "6x6", "height": "8ft", "species": "dfl", "grade": "no2", "load": "500lbf"}
    base.update(soil="4", pad="24in x 24in")
    thin = rate_records([base])
    thick = rate_records([{**base, "pad_thickness": "3in"}])
    get = lambda r: r[0]  # noqa: E731
    assert int(get(thin).action[0]) >= 2 > int(get(thick).action[0])


@settings(max_examples=40, deadline=None)
@given(
    st.floats(20, 300),  # side, mm
    st.floats(300, 8000),  # height, mm
    st.one_of(st.just(float("nan")), st.floats(0, 5e5)),  # load, N
    st.sampled_from([FIXED, FREE, PINNED]),
    st.sampled_from([FIXED, FREE, PINNED]),
    st.floats(0, 1),  # end contact
    st.floats(0, 60),  # moisture
    st.floats(0, 100),  # bow, mm
)
def test_json_never_nan_or_infinity_property(side, h, load, bottom, top, contact, mc, bow):
    # RFC 8259: JSON has no NaN or Infinity; no input may put one in a rating's summary
    from fieldcheck.engine.explain import summary

    r = rate(
        _batch(
            d1_mm=side,
            d2_mm=side,
            height_mm=h,
            load_n=load,
            bottom=bottom,
            top=top,
            end_contact=contact,
            moisture_pct=mc,
            bow2_mm=bow,
            fb_mpa=900 * PSI,
        )
    )
    json.dumps(summary(r, 0, with_remedies=False), allow_nan=False)


def test_a_column_with_no_capacity_never_hides_another_check():
    # judgement: a mechanism (free-free ends) has no column capacity; the bearing checks that
    # were made still govern the ratio, alone as in a batch, and the action is make-safe-now
    one = _batch(load_n=1000.0, top=FREE, bottom=FREE, bottom_fc_perp_mpa=100 * PSI)
    r = rate(one)
    assert r.governing_name(0) == "sill_bearing" and np.isfinite(r.ratio[0])
    assert ACTIONS[int(r.action[0])] == "make-safe-now"
