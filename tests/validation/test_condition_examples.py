"""Worked examples (eccentric load, built-up, bowed post) through the engine; the slope tables."""

from __future__ import annotations

import numpy as np
import pytest

from fieldcheck.engine import condition
from fieldcheck.engine.batch import TIMBER, make_batch
from fieldcheck.engine.rating import rate

PSI = 0.006894757293168361
IN = 25.4
LBF = 4.4482216152605


def _b_6x6(**kw):
    # NDS 2018 §3.7.1, 6x6 No.1 DF-L P&T, computed by hand: 6x6 No.1 DF-L P&T, 10 ft, Ke 1.0; Fb'
    # 1200 psi (example E)
    return make_batch(
        d1_mm=5.5 * IN,
        d2_mm=5.5 * IN,
        height_mm=120 * IN,
        fc_mpa=1000 * PSI,
        emin_mpa=580000 * PSI,
        fb_mpa=1200 * PSI,
        product=TIMBER,
        **kw,
    )


def test_example_e_eccentric_capacity():
    r = rate(_b_6x6(load_n=12000 * LBF, offset1_mm=1.0 * IN))
    # NDS 2018 §15.4.1 Eq. 15.4-1, computed by hand: largest P at e = 1.0 in is 12,122.3 lb
    assert r.checks["eccentric"].capacity_n[0] / LBF == pytest.approx(12122.3, abs=0.1)
    # concentric capacity unchanged: 20,918.2 lb (worked example B)
    assert r.checks["column"].capacity_n[0] / LBF == pytest.approx(20918.2, abs=0.1)
    assert r.governing_name(0) == "eccentric"


def test_example_e_interaction_value_at_12000_lb():
    # NDS 2018 §15.4.1 Eq. 15.4-1, computed by hand: total 0.981598 at P = 12,000 lb (equation [M])
    r = rate(_b_6x6(load_n=12000 * LBF, offset1_mm=1.0 * IN))
    v = r.values
    a = v["area"][0]
    fc_p = v["cp"][0] * v["fc_star"][0]
    # NDS 2018 Eq. 15.4-1 written out here (uniaxial, e1 = 1 in), not the engine's function:
    # (fc/Fc')^2 + fc (6 e/d)(1 + 0.234 fc/FcE1) / (Fb1' (1 - fc/FcE1))
    p = 12000 * LBF
    fc = p / a
    fb = p * 1.0 * IN / v["s1"][0]  # fc 6e/d = P e / S
    fce1 = v["fce1"][0]
    total = (fc / fc_p) ** 2 + fb * (1 + 0.234 * fc / fce1) / (v["fb_star"][0] * (1 - fc / fce1))
    assert total == pytest.approx(0.981598, abs=1e-6)


def test_example_f_built_up_nailed_and_bolted():
    # NDS 2018 §15.3 (from memory), hand calculation: 3-ply 2x6 No.2 DF-L, 8 ft, Kf 0.6 ->
    # 12,383.9 lb; bolted (Kf 0.75) 15,479.9 lb
    kw = {
        "d1_mm": 5.5 * IN,
        "d2_mm": 4.5 * IN,
        "height_mm": 96 * IN,
        "fc_mpa": 1350 * PSI,
        "cf_fc": 1.1,
        "emin_mpa": 580000 * PSI,
        "shape": 2,
        "plies": 3,
    }
    assert rate(make_batch(kf=0.6, **kw)).capacity_n[0] / LBF == pytest.approx(12383.9, abs=0.1)
    assert rate(make_batch(kf=0.75, **kw)).capacity_n[0] / LBF == pytest.approx(15479.9, abs=0.1)


def test_example_g_bowed_post():
    # NDS 2018 §3.9.2 with the bow amplified (from memory), hand calculation: 4x4 No.2 DF-L,
    # 8 ft, P 4,000 lb, bow 0.5 in -> ratio 0.758028
    b = make_batch(
        d1_mm=3.5 * IN,
        d2_mm=3.5 * IN,
        height_mm=96 * IN,
        fc_mpa=1350 * PSI,
        cf_fc=1.15,
        emin_mpa=580000 * PSI,
        fb_mpa=900 * PSI,
        cf_fb=1.5,
        load_n=4000 * LBF,
        bow2_mm=0.5 * IN,
    )
    r = rate(b)
    v = r.values
    a = v["area"][0]
    fc_p = v["cp"][0] * v["fc_star"][0]
    assert fc_p / PSI == pytest.approx(568.1337, abs=1e-3)
    assert v["fb_star"][0] / PSI == pytest.approx(1350.0)

    # NDS 2018 §3.9.2 Eq. 3.9-3 written out here, bow 0.5 in about axis 2 amplified by
    # 1/(1 - fc/FcE2) (mechanics, from memory), not the engine's function
    def interaction(p):
        fc = p / a
        fb2 = p * 0.5 * IN / v["s2"][0]
        return (fc / fc_p) ** 2 + fb2 / (v["fb_star"][0] * (1 - fc / v["fce2"][0]))

    assert interaction(4000 * LBF) == pytest.approx(0.758028, abs=1e-6)
    # the capacity meets the interaction (= 1) to solver precision
    p = r.checks["eccentric"].capacity_n[0]
    assert interaction(p) == pytest.approx(1.0, abs=1e-6)
    assert p < r.checks["column"].capacity_n[0]


@pytest.mark.parametrize(("n", "pct"), [(25, 100), (20, 100), (15, 100), (10, 99), (5, 93)])
def test_clear_wood_slope_compression(n, pct):
    # Wood Handbook Table 5-12 (read): compression parallel, % of straight grain
    ns, sr, status = condition.slope_rows("clear-wood", "compression")
    assert sr[list(ns).index(n)] == pytest.approx(pct / 100) and status == "read"


@pytest.mark.parametrize(("n", "pct"), [(25, 96), (20, 93), (15, 89), (10, 81), (5, 55)])
def test_clear_wood_slope_bending(n, pct):
    # Wood Handbook Table 5-12 (read): modulus of rupture
    ns, sr, _ = condition.slope_rows("clear-wood", "bending")
    assert sr[list(ns).index(n)] == pytest.approx(pct / 100)


@pytest.mark.parametrize(("n", "pct"), [(6, 56), (8, 66), (10, 74), (12, 82), (14, 87), (15, 100)])
def test_grading_slope_compression_from_memory(n, pct):
    # ASTM D245 slope table: from memory, not verified
    ns, sr, status = condition.slope_rows("grading", "compression")
    assert sr[list(ns).index(n)] == pytest.approx(pct / 100) and status == "memory"


def test_slope_between_rows_takes_the_steeper_row():
    # conservative step (our rule): 1 in 11 takes the 1 in 10 row: 0.74 grading, 0.99 clear wood
    n = np.array([11.0, 11.0])
    sr, beyond = condition.slope_ratio(n, np.array([0, 1]), "compression", np.array([0.4, 0.4]))
    assert sr == pytest.approx([0.74, 0.99]) and not beyond.any()


def test_slope_steeper_than_table_relies_on_no_strength():
    # outside the published data (ASTM D245 grading rows from memory; Wood Handbook Table 5-12
    # read): no ratio is extrapolated, the strength is unknown and none is relied on (judgement)
    q = np.full(3, 0.46)
    sr, beyond = condition.slope_ratio(
        np.array([6.0, 5.999, 3.0]), np.zeros(3, dtype=np.int8), "compression", q
    )
    assert beyond.tolist() == [False, True, True]
    assert sr[0] == pytest.approx(0.56) and sr[1] <= 1e-6 and sr[2] <= 1e-6


def test_slope_steeper_than_table_refused_in_one_sentence(capsys):
    # clear wood: Wood Handbook FPL-GTR-190 Table 5-12 stops at 1 in 5 (read); 1 in 2 is outside
    from fieldcheck.cli import main

    args = ["rate", "--size", "4x4", "--height", "8ft", "--species", "dfl", "--grade", "no2"]
    code = main([*args, "--load", "1000lbf", "--slope", "1 in 2", "--slope-table", "clear-wood"])
    err = capsys.readouterr().err
    assert code == 2 and "outside the published data" in err and "unknown strength" in err


def test_knot_strength_ratio():
    # ASTM D245 (from memory): 1 in knot on a 3.5 in face -> 1 - 1/3.5 = 0.714 (formula from memory)
    b = make_batch(
        d1_mm=3.5 * IN,
        d2_mm=3.5 * IN,
        height_mm=96 * IN,
        fc_mpa=1350 * PSI,
        emin_mpa=580000 * PSI,
        knot_mm=1.0 * IN,
    )
    assert condition.strength_ratios(b)["strength_ratio"][0] == pytest.approx(0.714286, abs=1e-6)


def test_lowest_ratio_not_product():
    # D245: several characteristics take the lowest ratio (from memory)
    b = make_batch(
        d1_mm=3.5 * IN,
        d2_mm=3.5 * IN,
        height_mm=96 * IN,
        fc_mpa=1350 * PSI,
        emin_mpa=580000 * PSI,
        knot_mm=1.0 * IN,
        slope_n=10.0,
    )
    assert condition.strength_ratios(b)["strength_ratio"][0] == pytest.approx(
        min(0.714286, 0.74), abs=1e-6
    )
