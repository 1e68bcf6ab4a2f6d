"""Properties of the NDS rating that must hold for every valid input (hypothesis)."""

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from fieldcheck.engine import explain
from fieldcheck.engine.batch import END_NAMES, make_batch
from fieldcheck.engine.rating import rate
from fieldcheck.engine.restraint import mode_index
from fieldcheck.engine.result import ACTIONS
from fieldcheck.records import parse_records

PSI = 0.006894757293168361
IN = 25.4
valid_pairs = [
    (b, t) for b in range(4) for t in range(4) if mode_index(np.array([b]), np.array([t]))[0] >= 0
]

post = st.fixed_dictionaries(
    {
        "d1": st.floats(1.5, 12.0),
        "d2": st.floats(1.5, 12.0),
        "h": st.floats(12.0, 360.0),
        "fc": st.floats(300.0, 2500.0),
        "emin": st.floats(2e5, 1e6),
        "cd": st.sampled_from([0.9, 1.0, 1.15, 1.25, 1.6]),
        "ends": st.sampled_from(valid_pairs),
        "mc": st.one_of(st.just(float("nan")), st.floats(5.0, 60.0)),
        "load": st.one_of(st.just(float("nan")), st.floats(0.0, 1e6)),
    }
)


def batch_of(p, **over):
    d1, d2 = max(p["d1"], p["d2"]), min(p["d1"], p["d2"])
    kw = {
        "d1_mm": d1 * IN,
        "d2_mm": d2 * IN,
        "height_mm": p["h"] * IN,
        "fc_mpa": p["fc"] * PSI,
        "emin_mpa": p["emin"] * PSI,
        "fb_mpa": 900 * PSI,
        "fc_perp_mpa": 625 * PSI,
        "cd": p["cd"],
        "bottom": p["ends"][0],
        "top": p["ends"][1],
        "moisture_pct": p["mc"],
        "load_n": p["load"],
        "bottom_fc_perp_mpa": 625 * PSI,
    }
    kw.update(over)
    return make_batch(**kw)


@settings(max_examples=200, deadline=None)
@given(post, st.floats(1.01, 3.0))
def test_capacity_never_rises_with_height(p, factor):
    r = rate(batch_of(p, height_mm=np.array([p["h"], p["h"] * factor]) * IN))
    assert r.capacity_n[1] <= r.capacity_n[0] * (1 + 1e-12)


@settings(max_examples=200, deadline=None)
@given(post, st.floats(1.0, 2.0), st.floats(1.0, 2.0))
def test_capacity_never_falls_with_a_larger_section(p, f1, f2):
    # the same reference values at both sizes; where the values depend on the size (the product
    # class, size factors, Southern Pine widths, round posts) from the records to the rating:
    # tests/validation/test_larger_section_never_lower.py
    d1, d2 = max(p["d1"], p["d2"]), min(p["d1"], p["d2"])
    r = rate(batch_of(p, d1_mm=np.array([d1, d1 * f1]) * IN, d2_mm=np.array([d2, d2 * f2]) * IN))
    assert r.capacity_n[1] >= r.capacity_n[0] * (1 - 1e-12)


@settings(max_examples=300, deadline=None)
@given(post)
def test_no_nan_or_inf_and_always_an_action(p):
    r = rate(batch_of(p))
    assert np.isfinite(r.capacity_n).all() and (r.capacity_n > 0).all()
    assert (
        np.isfinite(r.values["cp"]).all()
        and (r.values["cp"] > 0).all()
        and (r.values["cp"] <= 1).all()
    )
    assert 0 <= int(r.action[0]) < len(ACTIONS)
    s = explain.summary(r, 0)
    assert s["action"] in ACTIONS


@settings(max_examples=100, deadline=None)
@given(post)
def test_single_post_is_the_batch_path(p):
    # the single-post path is the batch path on length-one arrays: same numbers either way
    one = rate(batch_of(p))
    many = rate(batch_of(p, height_mm=np.array([p["h"], p["h"] * 1.5, p["h"]]) * IN))
    assert one.capacity_n[0] == many.capacity_n[0] == many.capacity_n[2]


bad_values = st.sampled_from(
    [
        ("height", "-8 ft"),
        ("height", "0 in"),
        ("height", "ten feet"),
        ("height", "3,5 m"),
        ("height", "4 kip"),
        ("size", "4x"),
        ("load", "-4 kip"),
        ("load", "12 ft"),
        ("moisture", "-5%"),
        ("top", "sideways"),
        ("bottom", "glued"),
        ("species", "oak-ish"),
        ("grade", "no7"),
        ("section", "3.5in"),
        ("diameter", "0 mm"),
        ("plies", "9"),
        ("method", "csa"),
        ("duration", "forever"),
        ("brace_weak", "20 ft"),
        ("temperature", "200 F"),
        ("end_contact", "150%"),
    ]
)


@settings(max_examples=60, deadline=None)
@given(bad_values)
def test_every_invalid_input_is_a_message_naming_its_column(bad):
    col, text = bad
    rec = {
        "size": "4x4",
        "height": "10ft",
        "species": "douglas-fir-larch",
        "grade": "no2",
        col: text,
    }
    parsed = parse_records([rec])
    assert not parsed.ok[0]
    assert len(parsed.errors) == 1
    err = parsed.errors[0]
    assert err.column == col or col in err.message
    assert err.message.endswith(".") and "\n" not in err.message


@pytest.mark.parametrize("ends", [(b, t) for b in range(4) for t in range(4)])
def test_every_end_pair_is_a_mode_or_a_refusal(ends):
    b, t = ends
    parsed = parse_records(
        [{"size": "4x4", "height": "8ft", "bottom": END_NAMES[b], "top": END_NAMES[t]}]
    )
    if (b, t) in valid_pairs:
        assert parsed.ok[0]
    else:
        assert "mechanism" in parsed.errors[0].message
