"""Spring-restrained ends in the rating, the k-factor command and capacity curves."""

import json

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from fieldcheck.cli import main
from fieldcheck.engine import explain
from fieldcheck.engine.curves import capacity_vs_brace, capacity_vs_height
from fieldcheck.records import parse_records, rate_records

BASE = {"size": "4x4", "height": "8ft", "species": "douglas-fir-larch", "grade": "no2"}


def cap(**kw):
    r, errors = rate_records([dict(BASE, **kw)])
    assert errors == []
    return float(r.capacity_n[0])


@settings(max_examples=40, deadline=None)
@given(st.floats(0.05, 1e4), st.floats(0.05, 1e4))
def test_spring_rating_between_bracketing_ideal_cases(rt, rb):
    # braced post with springs lies between fixed-fixed (NDS Ke 0.65) and pinned-pinned (Ke 1.0)
    # NDS 2018 Appendix G Table G1; K solved by stability.py
    springs = cap(top_ratio=str(rt), bottom_ratio=str(rb))
    assert cap() <= springs * (1 + 1e-9)
    assert springs <= cap(top="fixed", bottom="fixed") * (1 + 1e-9)


def test_spring_end_with_sway_between_flagpole_and_fixed_guided():
    # fixed base, top spring, top free to sway: between NDS cases (e) Ke 2.10 and (c) Ke 1.2
    springs = cap(bottom="fixed", top="guided", top_ratio="2")
    assert cap(bottom="fixed", top="free") <= springs <= cap(bottom="fixed", top="guided")


def test_theoretical_k_only_when_asked():
    r, _ = rate_records(
        [
            dict(BASE, top_ratio="2", bottom_ratio="2"),
            dict(BASE, top_ratio="2", bottom_ratio="2", k_theoretical="yes"),
        ]
    )
    # AISC 360 Commentary App. 7 braced chart with G = 1 (R = 2/G = 2): K = 0.774265 (AISC 360-16
    # Commentary Appendix 7)
    assert r.values["k_solved"][1] == pytest.approx(0.774265, abs=1e-4)
    assert r.ke1[1] == pytest.approx(0.774265, abs=1e-4)
    assert r.ke1[0] > r.ke1[1]  # design value keeps the NDS margin for imperfect fixity
    assert any("Theoretical K" in w for w in explain.warnings(r, 1))
    assert any("spring-restrained" in s.value for s in explain.working(r, 0))


@pytest.mark.parametrize(
    ("kw", "column"),
    [
        ({"top_ratio": "-1"}, "top_ratio"),
        ({"top": "free", "bottom_ratio": "0"}, "bottom_ratio"),
        ({"top_spring": "-5 kip-in/rad"}, "top_spring"),
        ({"top_ratio": "2", "top_spring": "1 kN*m/rad"}, "top_ratio"),
    ],
)
def test_bad_spring_input_one_sentence(kw, column):
    parsed = parse_records([dict(BASE, **kw)])
    assert not parsed.ok[0]
    assert parsed.errors[0].column == column
    assert "\n" not in parsed.errors[0].message


def test_k_factor_json_alignment_chart(capsys):
    # AISC 360 Commentary Appendix 7, sway chart G_A = G_B = 1 -> R = 6/G = 6 ... table K sway
    # 1.317275
    assert main(["k-factor", "--top-ratio", "6", "--bottom-ratio", "6", "--sway", "--json"]) == 0
    out = json.loads(capsys.readouterr().out)
    assert out["K"] == pytest.approx(1.317275, abs=1e-4)


def test_k_factor_mid_brace_halves_one_axis(capsys):
    # a mid-height brace halves the effective length about that axis only (mechanics; NDS 2018
    # §3.7.1.1)
    assert (
        main(
            ["k-factor", "--height", "10ft", "--brace-at", "5ft", "--brace-axis", "weak", "--json"]
        )
        == 0
    )
    out = json.loads(capsys.readouterr().out)
    assert out["K_axis2"] == pytest.approx(0.5, abs=1e-4)
    assert out["K_axis1"] == pytest.approx(1.0, abs=1e-4)


@pytest.mark.parametrize(
    "argv",
    [
        ["k-factor", "--top-ratio=-2"],
        ["k-factor", "--sway"],
        ["k-factor", "--height", "8ft", "--brace-at", "9ft"],
        ["k-factor", "--brace-at", "4ft"],
    ],
)
def test_k_factor_errors_exit_2(capsys, argv):
    assert main(argv) == 2
    err = capsys.readouterr().err.strip()
    assert len(err.splitlines()) == 1 and "Traceback" not in err


def test_capacity_curve_is_the_batch_engine():
    parsed = parse_records([{**BASE, "duration": "ten-years"}])  # CD 1.0 (NDS 2018 Table 2.3.2)
    h = np.array([96.0, 120.0]) * 25.4
    curve = capacity_vs_height(parsed.batch, h)
    # NDS 2018 §3.7.1, 4x4 No.2 DF-L pinned, computed by hand: 6,959.64 and 4,665.07 lb
    assert curve[0] / 4.4482216152605 == pytest.approx([6959.64, 4665.07], rel=1e-5)
    assert (np.diff(capacity_vs_height(parsed.batch, np.linspace(600, 4000, 12))[0]) <= 0).all()


def test_brace_curve_square_post_one_axis_does_not_help():
    # mechanics: a square post braced in one direction only gains nothing
    parsed = parse_records([BASE])
    c = capacity_vs_brace(parsed.batch, np.array([0.25, 0.5, 0.75]), axis=2)
    assert c[0] == pytest.approx([cap()] * 3)


def test_braces_on_a_swaying_post_feed_the_solver():
    # fixed base, free top, braced at mid-height in both axes: the solver sees the brace, so the
    # capacity lies between the unbraced flagpole (NDS case (e)) and a braced fixed-pinned post
    flag = cap(bottom="fixed", top="free")
    braced = cap(bottom="fixed", top="free", brace_weak="4ft", brace_strong="4ft")
    assert flag < braced < cap(bottom="fixed", top="pinned")
    r, _ = rate_records(
        [dict(BASE, bottom="fixed", top="free", brace_weak="4ft", brace_strong="4ft")]
    )
    assert not any("Braces ignored" in w for w in explain.warnings(r, 0))
    # braced in one axis only: the other axis keeps the flagpole value (NDS 2018 §3.7.1.1)
    r, _ = rate_records([dict(BASE, bottom="fixed", top="free", brace_weak="4ft")])
    assert r.ke1[0] == pytest.approx(2.10) and r.ke2[0] < 2.10


def test_braces_with_spring_ends_and_pinned_posts():
    # pinned-pinned with a mid brace: Ke 1.0 on the half-height segment (NDS 2018 §3.7.1.1)
    r, _ = rate_records([dict(BASE, brace_weak="4ft", brace_strong="4ft")])
    assert r.ke1[0] == 1.0 and r.lu1[0] == pytest.approx(48 * 25.4)
    # spring ends with a mid brace: solved over the full height, never weaker than Ke 1 on the
    # segment less the springs' help, never stronger than fixed ends on the segment
    springs = cap(top_ratio="2", bottom_ratio="2", brace_weak="4ft", brace_strong="4ft")
    assert cap(brace_weak="4ft", brace_strong="4ft") <= springs * (1 + 1e-9)


def test_brace_curve_for_a_flagpole_uses_the_solver():
    # a brace moved up a fixed-free post: capacity rises as it nears the free top (mechanics)
    parsed = parse_records([dict(BASE, bottom="fixed", top="free")])
    c = capacity_vs_brace(parsed.batch, np.array([0.3, 0.6, 0.9]), axis=2)[0]
    one_axis = cap(bottom="fixed", top="free")  # the unbraced axis still governs a square post
    assert c == pytest.approx([one_axis] * 3)
    parsed = parse_records([dict(BASE, bottom="fixed", top="free", brace_strong="7ft 6in")])
    c = capacity_vs_brace(parsed.batch, np.array([0.2, 0.5, 0.9]), axis=2)[0]
    assert c[0] <= c[1] <= c[2] and c[0] < c[2]
    assert c[0] > one_axis
