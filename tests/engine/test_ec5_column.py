"""EN 1995-1-1 §6.3.2 column buckling: worked example D and its variants, threshold, properties."""

import math

import numpy as np
import pytest
from hypothesis import given
from hypothesis import strategies as st

from fieldcheck.engine import ec5, en338
from fieldcheck.engine.batch import DIMENSION, GLULAM, TIMBER

REL = 0.005  # 0.5 %; the values below agree far closer (see the abs tolerances)


def _square_post(side_mm, length_mm, cls, service_class, duration):
    v = en338.strength_class(cls)
    i = ec5.radius_of_gyration_rect(side_mm)
    km = ec5.kmod(service_class, duration, "solid")
    gm = ec5.gamma_m("solid")
    return ec5.column_resistance(
        side_mm * side_mm, length_mm, length_mm, i, i, v["fc0k_mpa"], v["e005_mpa"], km, gm, "solid"
    )


def test_example_d_c24_100x100_3m_medium_term_sc1():
    # EN 1995-1-1 §6.3.2, C24 100 x 100 mm 3 m, computed by hand from EN 1995-1-1 §6.3.2
    r = _square_post(100.0, 3000.0, "C24", 1, "medium-term")
    assert float(ec5.radius_of_gyration_rect(100.0)) == pytest.approx(28.86751, rel=1e-6)
    assert float(r.lam1) == pytest.approx(103.92305, rel=1e-6)  # §6.3.2 lambda
    assert float(r.lam_rel1) == pytest.approx(1.762202, rel=1e-6)  # Eq. 6.21
    assert float(r.k1) == pytest.approx(2.198899, rel=1e-6)  # Eq. 6.27
    assert float(r.kc1) == pytest.approx(0.284566, rel=1e-5)  # Eq. 6.25
    assert float(r.fc0d) == pytest.approx(12.923077, rel=1e-7)  # §2.4.1 Eq. 2.14
    assert float(r.n_rd) == pytest.approx(36774.75, rel=REL)
    assert float(r.n_rd) == pytest.approx(36774.75, abs=0.05)
    assert float(r.kc) == pytest.approx(0.284566, rel=1e-5)  # stability_factor
    assert float(r.beta_c) == 0.2  # Eq. 6.29 solid timber
    assert not bool(r.no_buckling)


def test_variant_d2_short_term_sc2():
    # EN 1995-1-1 §6.3.2, C24 100 x 100 mm 3 m, computed by hand from EN 1995-1-1 §6.3.2
    r = _square_post(100.0, 3000.0, "C24", 2, "short-term")
    assert float(ec5.kmod(2, "short-term")) == 0.9  # EN 1995-1-1 Table 3.1
    assert float(r.n_rd) == pytest.approx(41371.6, rel=REL)
    assert float(r.n_rd) / 1000 == pytest.approx(41.3716, abs=5e-5)


def test_variant_d3_c24_2400mm():
    # EN 1995-1-1 §6.3.2, C24 100 x 100 mm 3 m, computed by hand from EN 1995-1-1 §6.3.2
    r = _square_post(100.0, 2400.0, "C24", 1, "medium-term")
    assert float(r.lam1) == pytest.approx(83.13844, rel=1e-6)
    assert float(r.lam_rel1) == pytest.approx(1.409762, rel=1e-6)
    assert float(r.k1) == pytest.approx(1.604691, rel=1e-6)
    assert float(r.kc1) == pytest.approx(0.421720, rel=1e-5)
    assert float(r.n_rd) / 1000 == pytest.approx(54.4992, rel=REL)
    assert float(r.n_rd) / 1000 == pytest.approx(54.4992, abs=5e-4)


def test_variant_d4_c16_3m():
    # EN 1995-1-1 §6.3.2, C24 100 x 100 mm 3 m, computed by hand from EN 1995-1-1 §6.3.2
    v = en338.strength_class("C16")
    assert (v["fc0k_mpa"], v["e005_mpa"]) == (17.0, 5400.0)  # EN 338:2016 Table 1 (as 2009)
    r = _square_post(100.0, 3000.0, "C16", 1, "medium-term")
    assert float(r.lam_rel1) == pytest.approx(1.856050, rel=1e-6)
    assert float(r.k1) == pytest.approx(2.378065, rel=1e-6)
    assert float(r.kc1) == pytest.approx(0.258748, rel=1e-5)
    assert float(r.n_rd) / 1000 == pytest.approx(27.0690, rel=REL)
    assert float(r.n_rd) / 1000 == pytest.approx(27.0690, abs=5e-4)


def test_examples_vectorised_in_one_call():
    # EN 1995-1-1 §6.3.2, C24 100 x 100 mm 3 m, computed by hand, one batch; EN 1995-1-1 §6.3.2
    fc0k = np.array([21.0, 21.0, 21.0, 17.0])
    e005 = np.array([7400.0, 7400.0, 7400.0, 5400.0])
    length = np.array([3000.0, 3000.0, 2400.0, 3000.0])
    kmod = ec5.kmod(
        [1, 2, 1, 1], ["medium-term", "short-term", "medium-term", "medium-term"], "solid"
    )
    i = ec5.radius_of_gyration_rect(np.full(4, 100.0))
    r = ec5.column_resistance(
        1e4, length, length, i, i, fc0k, e005, kmod, ec5.gamma_m("solid"), "solid"
    )
    np.testing.assert_allclose(r.n_rd, [36774.75, 41371.6, 54499.2, 27069.0], rtol=REL)
    assert r.n_rd.shape == (4,)


def test_rectangle_governs_on_weak_axis():
    # EN 1995-1-1 §6.3.2: both axes checked, the weaker governs; 150 x 75 C24, 2.4 m both ways
    v = en338.strength_class("C24")
    r = ec5.column_resistance(
        150 * 75,
        2400,
        2400,
        ec5.radius_of_gyration_rect(150),
        ec5.radius_of_gyration_rect(75),
        v["fc0k_mpa"],
        v["e005_mpa"],
        0.8,
        1.3,
        "solid",
    )
    assert int(r.governing_axis) == 2
    assert float(r.kc) == float(r.kc2) < float(r.kc1)
    assert float(r.n_rd) == pytest.approx(float(r.kc2) * 0.8 * 21 / 1.3 * 150 * 75, rel=1e-12)


def test_beta_c_by_product():
    # EN 1995-1-1 §6.3.2 Eq. 6.29
    np.testing.assert_array_equal(
        ec5.beta_c(["solid", "glulam", "lvl", "timber", "pole"]), [0.2, 0.1, 0.1, 0.2, 0.2]
    )
    np.testing.assert_array_equal(
        ec5.beta_c(np.array([DIMENSION, TIMBER, GLULAM])), [0.2, 0.2, 0.1]
    )


def test_threshold_lambda_17_692_for_c24():
    # EN 1995-1-1 §6.3.2, C24 100 x 100 mm 3 m, computed by hand: lambda_rel = 0.3 at lambda =
    # 17.692 for C24
    # (EN 1995-1-1 §6.3.2(2))
    lam_rel = ec5.relative_slenderness(17.692, 1.0, 21.0, 7400.0)
    assert float(lam_rel) == pytest.approx(0.3, abs=2e-5)
    lam_limit = 0.3 * math.pi / math.sqrt(21.0 / 7400.0)
    assert lam_limit == pytest.approx(17.692, abs=5e-4)
    assert float(ec5.kc(ec5.relative_slenderness(lam_limit, 1.0, 21.0, 7400.0) - 1e-12, 0.2)) == 1.0
    below = ec5.kc(np.array([0.0, 0.1, 0.2999, 0.3]), 0.2)
    np.testing.assert_array_equal(below, 1.0)  # EN 1995-1-1 §6.3.2(2)
    assert float(ec5.kc(0.3 + 1e-6, 0.2)) < 1.0
    assert float(ec5.kc(0.3 + 1e-6, 0.2)) == pytest.approx(
        1.0, abs=1e-5
    )  # continuous at the threshold


def test_no_buckling_flag_short_block():
    # EN 1995-1-1 §6.3.2(2): stocky post, lambda_rel <= 0.3 on both axes
    # -> k_c = 1, N_Rd = f_c,0,d A
    r = ec5.column_resistance(
        1e4,
        500,
        500,
        ec5.radius_of_gyration_rect(100),
        ec5.radius_of_gyration_rect(100),
        21.0,
        7400.0,
        0.8,
        1.3,
    )
    assert bool(r.no_buckling)
    assert float(r.kc) == 1.0
    assert float(r.n_rd) == pytest.approx(0.8 * 21 / 1.3 * 1e4, rel=1e-12)


def test_nan_propagates():
    # common practice, no source: a missing value gives NaN, never a number
    r = ec5.column_resistance(1e4, np.nan, 3000, 28.9, 28.9, 21.0, 7400.0, 0.8, 1.3)
    assert np.isnan(r.kc1) and np.isnan(r.n_rd1) and np.isnan(r.n_rd)


@given(
    lam_a=st.floats(0.0, 6.0, allow_nan=False),
    lam_b=st.floats(0.0, 6.0, allow_nan=False),
    bc=st.sampled_from([0.1, 0.2]),
)
def test_kc_decreases_with_slenderness(lam_a, lam_b, bc):
    # EN 1995-1-1 §6.3.2 Eq. 6.25-6.28: k_c is non-increasing in lambda_rel and lies in (0, 1]
    lo, hi = sorted((lam_a, lam_b))
    k_lo, k_hi = float(ec5.kc(lo, bc)), float(ec5.kc(hi, bc))
    assert 0.0 < k_hi <= k_lo <= 1.0
    if hi > 0.3 + 1e-6 and hi - lo > 1e-6:
        assert k_hi < k_lo  # strictly decreasing above the threshold


@given(lam_rel=st.floats(0.3, 8.0, allow_nan=False), bc=st.sampled_from([0.1, 0.2]))
def test_kc_never_above_euler(lam_rel, bc):
    # EN 1995-1-1 §6.3.2: k_c f_c,0,k never exceeds the Euler stress with E_0,05,
    # i.e. k_c <= 1/lambda_rel^2
    assert float(ec5.kc(lam_rel, bc)) <= 1.0 / lam_rel**2 * (1 + 1e-12)


@given(lam_rel=st.floats(0.31, 5.0, allow_nan=False))
def test_glulam_kc_not_below_solid(lam_rel):
    # EN 1995-1-1 Eq. 6.29: the straighter product (beta_c 0.1) buckles no earlier than solid (0.2)
    assert float(ec5.kc(lam_rel, 0.1)) >= float(ec5.kc(lam_rel, 0.2))


@pytest.mark.parametrize("extra", [["--temperature", "50C"], ["--incised"]])
def test_ec5_refuses_temperature_and_incising_in_one_sentence(capsys, extra):
    # EN 1995-1-1 has no Ct or Ci (NDS 2018 Table 4.3.1 factors): refused, never ignored
    from fieldcheck.cli import main

    args = ["rate", "--method", "ec5", "--class", "C24", "--section", "100mm x 100mm"]
    code = main([*args, "--height", "3m", "--load", "10kN", *extra])
    err = capsys.readouterr().err
    assert code == 2 and err.count("\n") == 1 and "EC5" in err


def test_ec5_service_class_follows_measured_moisture(capsys):
    # EN 1995-1-1 §2.3.1.3 (from memory): 24 % is service class 3 whatever class was chosen;
    # kmod permanent, solid timber, class 3 is 0.50 (EN 1995-1-1 Table 3.1); no NDS wet text
    import json

    from fieldcheck.cli import main

    args = ["rate", "--method", "ec5", "--class", "C24", "--section", "100mm x 100mm"]
    assert main([*args, "--height", "3m", "--load", "10kN", "--moisture", "24%", "--json"]) == 0
    out = json.loads(capsys.readouterr().out)
    assert "service class 3, not 1" in out["material"] and "k_mod 0.50" in out["material"]
    assert not any("NDS Supplement" in w or "CM applied" in w for w in out["warnings"])
    assert not any("wet service CM" in r.get("reduction", "") for r in out.get("reductions", []))


def test_ec5_round_post_radius_of_gyration_is_d_over_4():
    # EN 1995-1-1 §6.3.2: lambda = L_ef / i; a round post has i = D/4 (mechanics), so at
    # D = 150 mm, L = 3 m: lambda = 3000 / 37.5 = 80
    import math

    from fieldcheck.engine.batch import ROUND, make_batch
    from fieldcheck.engine.rating import rate

    d = 150.0 * math.sqrt(math.pi) / 2.0  # the equivalent square's side (NDS 2018 §3.7.3)
    b = make_batch(
        d1_mm=d,
        d2_mm=d,
        shape=ROUND,
        height_mm=3000.0,
        method=2,
        fc_mpa=21.0,
        emin_mpa=7400.0,
        kmod=0.8,
        gamma_m=1.3,
        load_n=10_000.0,
    )
    v = rate(b).values
    lam_rel = 80.0 / math.pi * math.sqrt(21.0 / 7400.0)  # EN 1995-1-1 Eq. 6.21
    assert v["ec5_lam_rel1"][0] == pytest.approx(lam_rel, rel=1e-9)
