"""EN 1995-1-1 §6.1.5 bearing across the grain; §6.3.2(3) and §6.2.4 compression with bending."""

import numpy as np
import pytest

from fieldcheck.engine import ec5
from fieldcheck.engine.batch import BUILT_UP, RECT, ROUND

FC90D = 0.8 * 2.5 / 1.3  # C24 sill, medium-term, SC1: EN 1995-1-1 §2.4.1 Eq. 2.14 with f_c,90,k


def test_bearing_general_adds_30mm_each_side():
    # EN 1995-1-1 §6.1.5(1): l_ef = l + 2 x 30 mm far from ends; k_c,90 = 1.0 (§6.1.5(2)); hand calc
    r = ec5.bearing_perp_resistance(100.0, 100.0, 2.5, 0.8, 1.3)
    assert float(r.lef_mm) == 160.0 and float(r.aef_mm2) == 16000.0 and float(r.kc90) == 1.0
    assert float(r.n_rd) == pytest.approx(FC90D * 16000.0, rel=1e-12)


def test_bearing_extension_limited_by_end_distance_and_spacing():
    # EN 1995-1-1 §6.1.5(1): each side at most min(30 mm, a, l, l1/2)
    r = ec5.bearing_perp_resistance(
        100.0,
        100.0,
        2.5,
        0.8,
        1.3,
        a_mm=[0.0, 10.0, np.nan, 50.0],
        l1_mm=[np.inf, np.inf, np.inf, 40.0],
    )
    np.testing.assert_allclose(r.lef_mm, [130.0, 140.0, 130.0, 140.0])
    short = ec5.bearing_perp_resistance(100.0, 20.0, 2.5, 0.8, 1.3)
    assert float(short.lef_mm) == 60.0  # extension not more than l


@pytest.mark.parametrize(
    ("support", "product", "softwood", "l_mm", "l1_mm", "h_mm", "kc90"),
    [
        ("general", "solid", True, 100, np.inf, 100, 1.0),  # §6.1.5(2)
        ("continuous", "solid", True, 100, np.inf, 100, 1.25),  # §6.1.5(3)
        ("continuous", "glulam", True, 100, np.inf, 100, 1.5),  # §6.1.5(3), from memory
        ("discrete", "solid", True, 100, np.inf, 100, 1.5),  # §6.1.5(4)
        ("discrete", "glulam", True, 300, np.inf, 100, 1.75),  # §6.1.5(4), l <= 400 mm
        ("discrete", "glulam", True, 450, np.inf, 100, 1.0),  # §6.1.5(4) not met: l > 400 mm
        ("continuous", "solid", True, 100, 150, 100, 1.0),  # l1 < 2h
        ("continuous", "solid", True, 100, 200, 100, 1.25),  # l1 = 2h
        (
            "continuous",
            "solid",
            True,
            100,
            300,
            np.nan,
            1.0,
        ),  # h unknown, finite l1: no enhancement
        ("discrete", "solid", False, 100, np.inf, 100, 1.0),  # hardwood: softwood values only
        ("discrete", "lvl", True, 100, np.inf, 100, 1.0),  # LVL: not covered, judgement
    ],
)
def test_kc90(support, product, softwood, l_mm, l1_mm, h_mm, kc90):
    r = ec5.bearing_perp_resistance(
        100.0,
        l_mm,
        2.5,
        0.8,
        1.3,
        l1_mm=l1_mm,
        h_mm=h_mm,
        support=support,
        product=product,
        softwood=softwood,
    )
    assert float(r.kc90) == kc90
    assert float(r.n_rd) == pytest.approx(kc90 * FC90D * float(r.aef_mm2), rel=1e-12)  # Eq. 6.3


def test_bearing_vectorised_supports():
    r = ec5.bearing_perp_resistance(
        100.0, 100.0, 2.5, 0.8, 1.3, support=["general", "continuous", "discrete"]
    )
    np.testing.assert_array_equal(r.kc90, [1.0, 1.25, 1.5])
    with pytest.raises(
        ValueError, match=r"^bearing support must be one of general, continuous or discrete"
    ):
        ec5.bearing_perp_resistance(100.0, 100.0, 2.5, 0.8, 1.3, support="sideways")


def test_km():
    # EN 1995-1-1 §6.1.6(2): 0.7 rectangular solid/glulam/LVL, 1.0 otherwise (built-up: judgement)
    np.testing.assert_array_equal(ec5.km([RECT, ROUND, BUILT_UP]), [0.7, 1.0, 1.0])


def test_combined_axial_only_equals_column_ratio():
    # EN 1995-1-1 §6.3.2(3) Eq. 6.23/6.24 with no bending reduce to N / N_Rd;
    # EN 1995-1-1 §6.3.2, C24 100 x 100 mm 3 m, computed by hand
    r = ec5.column_resistance(1e4, 3000, 3000, 28.86751, 28.86751, 21.0, 7400.0, 0.8, 1.3)
    n = 30000.0
    c = ec5.combined_ratio(
        n / 1e4, 0.0, 0.0, r.fc0d, 1.0, 1.0, r.kc1, r.kc2, r.lam_rel1, r.lam_rel2, 0.7
    )
    assert float(c.ratio) == pytest.approx(n / float(r.n_rd), rel=1e-12)
    assert not bool(c.no_buckling)


def test_combined_eq_6_23_6_24_hand_calc():
    # EN 1995-1-1 §6.3.2(3) Eq. 6.23/6.24, hand calc:
    # sigma_c 2, kc 0.5/0.25, fc0d 10, sm 3/2, fm 15, km 0.7
    c = ec5.combined_ratio(2.0, 3.0, 2.0, 10.0, 15.0, 15.0, 0.5, 0.25, 1.0, 1.5, 0.7)
    r1 = 2 / (0.5 * 10) + 3 / 15 + 0.7 * 2 / 15
    r2 = 2 / (0.25 * 10) + 0.7 * 3 / 15 + 2 / 15
    assert float(c.ratio1) == pytest.approx(r1, rel=1e-12)
    assert float(c.ratio2) == pytest.approx(r2, rel=1e-12)
    assert float(c.ratio) == pytest.approx(max(r1, r2), rel=1e-12)


def test_combined_short_form_eq_6_19_6_20():
    # EN 1995-1-1 §6.2.4 Eq. 6.19/6.20 when lambda_rel <= 0.3 on both axes (§6.3.2(2)); hand calc
    c = ec5.combined_ratio(
        [6.0, 6.0], 3.0, 1.5, 12.0, 15.0, 15.0, 1.0, 1.0, [0.2, 0.2], [0.3, 0.31], 0.7
    )
    assert bool(c.no_buckling[0]) and not bool(c.no_buckling[1])
    assert float(c.ratio1[0]) == pytest.approx((6 / 12) ** 2 + 3 / 15 + 0.7 * 1.5 / 15, rel=1e-12)
    assert float(c.ratio2[0]) == pytest.approx((6 / 12) ** 2 + 0.7 * 3 / 15 + 1.5 / 15, rel=1e-12)
    assert float(c.ratio1[1]) == pytest.approx(6 / 12 + 3 / 15 + 0.7 * 1.5 / 15, rel=1e-12)


def test_bending_design_strength_and_kh():
    # EN 1995-1-1 Eq. 2.17; k_h from memory (§3.2(3) solid: min((150/h)^0.2, 1.3))
    assert float(ec5.bending_design_strength(24.0, 0.8, 1.3)) == pytest.approx(0.8 * 24 / 1.3)
    kh = ec5.kh_bending([100.0, 150.0, 200.0, 20.0], "solid")
    np.testing.assert_allclose(kh, [1.5**0.2, 1.0, 1.0, 1.3])
    assert float(ec5.kh_bending(300.0, "glulam")) == pytest.approx(2.0**0.1)
