"""NDS 2018 column, bearing and built-up checks against published formulas and worked examples.

Reference values: DF-L No.2 dimension (Fc 1350 psi, Emin 580,000 psi, CF 1.15) and DF-L No.1
Posts & Timbers (Fc 1000 psi, Emin 580,000 psi) are NDS Supplement values from memory (high
confidence for DF-L); the expected numbers are worked examples computed by hand from
NDS 2018 §3.7.1 with those inputs.
"""

import math

import numpy as np
import pytest

from fieldcheck.engine import explain, nds
from fieldcheck.engine.batch import FIXED, FREE, LRFD, PINNED, TIMBER, make_batch
from fieldcheck.engine.rating import FLAGS, rate
from fieldcheck.records import rate_records

F_SLENDER_CONSTRUCTION = FLAGS.bit["slender_construction"]
F_SLENDER_LIMIT = FLAGS.bit["slender_limit"]

PSI = 0.006894757293168361
LBF = 4.4482216152605
IN = 25.4


def dfl_no2_4x4(height_in, **kw):
    base = {
        "d1_mm": 3.5 * IN,
        "d2_mm": 3.5 * IN,
        "height_mm": height_in * IN,
        "fc_mpa": 1350 * PSI,
        "emin_mpa": 580_000 * PSI,
        "e_mpa": 1_600_000 * PSI,
        "fb_mpa": 900 * PSI,
        "fc_perp_mpa": 625 * PSI,
        "cf_fc": 1.15,
        "cf_fb": 1.5,
    }
    base.update(kw)
    return make_batch(**base)


@pytest.mark.parametrize(
    ("ratio", "c", "expected"),
    [  # computed from NDS 2018 Eq. 3.7-1
        (0.10, 0.8, 0.097876),
        (0.25, 0.8, 0.235492),
        (0.50, 0.8, 0.433609),
        (1.00, 0.8, 0.690983),
        (2.00, 0.8, 0.867218),
        (5.00, 0.8, 0.954915),
        (0.10, 0.85, 0.098389),
        (0.50, 0.85, 0.446106),
        (1.00, 0.85, 0.720825),
        (5.00, 0.85, 0.965354),
        (0.25, 0.9, 0.242255),
        (1.00, 0.9, 0.759747),
        (2.00, 0.9, 0.921311),
        (5.00, 0.9, 0.976311),
    ],
)
def test_cp_table(ratio, c, expected):
    cp = nds.column_stability_factor(np.array([ratio]), np.array([1.0]), np.array([c]))
    assert cp[0] == pytest.approx(expected, abs=2e-6)  # NDS 2018 §3.7.1 Eq. 3.7-1


def test_example_a_pinned_4x4_8ft_and_10ft():
    # NDS 2018 §3.7.1, 4x4 No.2 DF-L pinned, computed by hand
    r = rate(dfl_no2_4x4(np.array([96.0, 120.0])))
    assert r.le_d1 == pytest.approx([27.42857, 34.28571], rel=1e-6)
    assert r.fce1 / PSI == pytest.approx([633.7142, 405.5771], rel=1e-6)
    assert r.cp == pytest.approx([0.365948, 0.245296], abs=2e-6)
    assert r.capacity_n / LBF == pytest.approx([6959.64, 4665.07], rel=1e-5)
    assert r.governing_name(0) == "column"


def test_example_a1_euler_check():
    # NDS 2018 §3.7.1, 4x4 No.2 DF-L pinned, computed by hand: FcE A equals pi^2 Emin I / le^2
    # within 0.06 % (0.822 = pi^2/12)
    r = rate(dfl_no2_4x4(96.0))
    d = 3.5 * IN
    euler = math.pi**2 * 580_000 * PSI * (d**4 / 12) / (96 * IN) ** 2
    assert r.fce1[0] * d * d / euler == pytest.approx(0.99943, abs=2e-5)
    assert euler / LBF == pytest.approx(7767.4, rel=1e-4)


def test_example_a2_wet_service():
    # NDS 2018 §3.7.1, 4x4 No.2 DF-L pinned, computed by hand; CM 0.8 Fc, 0.9 Emin
    r = rate(dfl_no2_4x4(96.0, moisture_pct=24.0))
    assert r.fc_star[0] / PSI == pytest.approx(1242.0, rel=1e-6)
    assert r.emin_prime[0] / PSI == pytest.approx(522_000, rel=1e-6)
    assert r.cp[0] == pytest.approx(0.404325, abs=2e-6)
    assert r.capacity_n[0] / LBF == pytest.approx(6151.60, rel=1e-5)


def test_example_a3_construction_duration():
    # NDS 2018 §3.7.1, 4x4 No.2 DF-L pinned, computed by hand: CD not on Emin
    r = rate(dfl_no2_4x4(np.array([96.0, 120.0]), cd=1.25))
    assert r.cp == pytest.approx([0.300693, 0.199095], abs=2e-6)
    assert r.capacity_n / LBF == pytest.approx([7148.27, 4733.01], rel=1e-5)


def test_example_a4_lrfd():
    # NDS 2018 §3.7.1, 4x4 No.2 DF-L pinned, computed by hand (KF, phi from memory)
    r = rate(dfl_no2_4x4(96.0, method=LRFD, lam=0.8))
    assert r.fc_star[0] / PSI == pytest.approx(2682.72, rel=1e-5)
    assert r.emin_prime[0] / PSI == pytest.approx(867_680, rel=1e-5)
    assert r.cp[0] == pytest.approx(0.322648, abs=2e-6)
    assert r.capacity_n[0] / LBF == pytest.approx(10_603.3, rel=1e-5)


def test_example_b_6x6_posts_and_timbers():
    b = make_batch(
        d1_mm=5.5 * IN,
        d2_mm=5.5 * IN,
        height_mm=120 * IN,
        fc_mpa=1000 * PSI,
        emin_mpa=580_000 * PSI,
        product=TIMBER,
    )
    r = rate(b)  # NDS 2018 §3.7.1, 6x6 No.1 DF-L P&T, computed by hand
    assert r.le_d1[0] == pytest.approx(21.81818, rel=1e-6)
    assert r.fce1[0] / PSI == pytest.approx(1001.527, rel=1e-6)
    assert r.cp[0] == pytest.approx(0.691510, abs=2e-6)
    assert r.capacity_n[0] / LBF == pytest.approx(20_918.2, rel=1e-5)


def test_example_c_flagpole_recommended_and_theoretical():
    b = dfl_no2_4x4(
        np.array([96.0, 96.0, 72.0]),
        bottom=FIXED,
        top=FREE,
        theoretical_k=np.array([False, True, False]),
    )
    r = rate(b)  # NDS 2018 Appendix G case (e), computed by hand
    assert r.ke1 == pytest.approx([2.10, 2.0, 2.10])
    assert r.le_d1 == pytest.approx([57.6, 54.857, 43.2], rel=1e-4)
    assert r.cp == pytest.approx([0.090749, 0.099833, 0.158574], abs=2e-6)
    assert r.capacity_n / LBF == pytest.approx([1725.87, 1898.64, 3015.78], rel=1e-5)
    # at 8 ft le/d 57.6 exceeds 50: flagged, and the action is at least repair-or-brace
    assert r.flags[0] & F_SLENDER_LIMIT
    assert r.action[0] >= 2
    assert not explain.summary(r, 0)["within_slenderness_limit"]
    assert explain.summary(r, 2)["within_slenderness_limit"]


def test_example_c_construction_stage_allows_75():
    r = rate(dfl_no2_4x4(96.0, bottom=FIXED, top=FREE, construction=True))  # NDS 2018 §3.7.1.4
    assert r.flags[0] & F_SLENDER_CONSTRUCTION
    assert not r.flags[0] & F_SLENDER_LIMIT
    assert explain.summary(r, 0)["within_slenderness_limit"]


def test_example_f_built_up_nailed_and_bolted():
    # NDS 2018 §15.3, 3-ply 2x6, computed by hand: 3-ply 2x6 No.2 DF-L, 8 ft; NDS 2018 §15.3 (Kf
    # from memory)
    base = {
        "d1_mm": 5.5 * IN,
        "d2_mm": 4.5 * IN,
        "height_mm": 96 * IN,
        "fc_mpa": 1350 * PSI,
        "emin_mpa": 580_000 * PSI,
        "cf_fc": 1.1,
        "plies": 3,
    }
    r = rate(make_batch(kf=np.array([0.6, 0.75]), **base))
    assert r.cp2 == pytest.approx([0.336943, 0.421179], abs=2e-6)
    assert r.cp1[0] == pytest.approx(0.708782, abs=2e-6)
    assert r.capacity_n / LBF == pytest.approx([12_383.9, 15_479.9], rel=1e-5)


def test_example_h_bearing_on_sill():
    # NDS 2018 §3.10.2, §3.10.4, computed by hand (Fc-perp 625 psi from memory)
    b = dfl_no2_4x4(
        np.array([12.0, 12.0]),
        bottom_fc_perp_mpa=625 * PSI,
        bottom_lb_mm=3.5 * IN,
        bottom_cb=np.array([False, True]),
    )
    r = rate(b)
    assert r.checks["sill_bearing"].capacity_n / LBF == pytest.approx([7656.25, 8476.56], rel=1e-6)
    assert r.cb_bot[1] == pytest.approx(1.107143, abs=1e-6)


@pytest.mark.parametrize(
    ("lb_in", "cb"),
    [
        (0.5, 1.75),
        (1.0, 1.375),
        (1.5, 1.25),
        (2.0, 1.1875),
        (3.0, 1.125),
        (4.0, 1.09375),
        (5.5, 1.068182),
        (6.0, 1.0),
    ],
)
def test_bearing_area_factor_table(lb_in, cb):
    # NDS 2018 §3.10.4, computed by hand
    got = nds.bearing_area_factor(np.array([lb_in * IN]), np.array([True]))
    assert got[0] == pytest.approx(cb, abs=1e-6)


def test_example_a_through_records_matches_engine():
    r, errors = rate_records(
        [
            {
                "size": "4x4",
                "height": "10ft",
                "species": "douglas-fir-larch",
                "grade": "no2",
                "top": "pinned",
                "bottom": "pinned",
                "duration": "ten-years",  # CD 1.0, NDS 2018 Table 2.3.2
            }
        ]
    )
    assert errors == []
    assert r.capacity_n[0] / LBF == pytest.approx(4665.07, rel=1e-5)  # worked example A, 10 ft


def test_round_post_equivalent_square():
    # NDS 2018 §3.7.3: a round post as the square of equal area; d = D sqrt(pi)/2
    r, _ = rate_records([{"diameter": "6 in", "height": "8ft", "species": "df-l", "grade": "no2"}])
    assert r.batch.d1_mm[0] / IN == pytest.approx(5.3174, abs=1e-4)
    assert r.values["area"][0] / IN**2 == pytest.approx(28.274, abs=1e-3)


def test_pinned_pinned_is_the_default_and_mechanisms_refused():
    _, errors = rate_records([{"size": "4x4", "height": "8ft", "top": "free", "bottom": "pinned"}])
    assert errors and "mechanism" in errors[0].message  # NDS 2018 Appendix G: no such case
    r, errors = rate_records([{"size": "4x4", "height": "8ft", "species": "df-l", "grade": "no2"}])
    assert not errors and r.ke1[0] == 1.0 and r.batch.top[0] == PINNED
