"""Every ASCE 7 combination is rated for every check; each check keeps its largest ratio.

Hand values below use the published formulas written out here, not the engine's functions:
NDS 2018 §3.7.1 Eq. 3.7-1 (Cp), NDS 2018 Table 2.3.2 (CD), ASCE 7-10 §2.4.1 (combinations).
"""

from __future__ import annotations

import json
import math

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from fieldcheck.cli import main
from fieldcheck.engine.batch import LRFD, make_batch
from fieldcheck.engine.combinations import rows
from fieldcheck.engine.rating import BLOCK, rate

PSI = 0.006894757293168361
IN = 25.4
LBF = 4.4482216152605


def _cp(fce: float, fc_star: float, c: float = 0.8) -> float:
    # NDS 2018 §3.7.1 Eq. 3.7-1
    a = fce / fc_star
    h = (1 + a) / (2 * c)
    return h - math.sqrt(h * h - a / c)


def _column_capacity_lbf(cd: float) -> float:
    # 4x4 DF-L No.2 (NDS Supplement Table 4A: Fc 1350, Emin 580,000; CF 1.15), 11 ft pinned
    fc_star = 1350 * 1.15 * cd
    le_d = 132 / 3.5  # NDS 2018 §3.7.1.3
    fce = 0.822 * 580_000 / le_d**2  # NDS 2018 §3.7.1
    return _cp(fce, fc_star) * fc_star * 3.5 * 3.5


def test_roof_live_governs_the_slender_column(capsys):
    # the case: D = 55 psf x 45 sq ft = 2,475 lb, Lr = 20 x 45 = 900 lb
    args = ["rate", "--size", "4x4", "--height", "11ft", "--species", "dfl", "--grade", "no2"]
    args += ["--tributary", "45sqft", "--dead", "55psf", "--roof-live", "20psf", "--json"]
    assert main(args) == 0
    out = json.loads(capsys.readouterr().out)
    col = next(c for c in out["checks"] if c["name"] == "column")
    # NDS 2018 §2.3.2: D alone at CD 0.9, D+Lr at CD 1.25 (Lr as a construction load)
    r_d = 2475 / _column_capacity_lbf(0.9)
    r_dlr = 3375 / _column_capacity_lbf(1.25)
    assert r_dlr > r_d  # the old rule (largest load / CD: 2,750 vs 2,700) picked D
    assert col["combination"] == "D+Lr" and col["duration_factor"] == 1.25
    assert col["ratio"] == pytest.approx(r_dlr, rel=1e-3)
    assert out["governing_combination"] == "D+Lr"
    end = next(c for c in out["checks"] if c["name"] == "end_bearing")
    # end grain: capacity proportional to CD, so largest load / CD governs it: D (2,750 > 2,700)
    assert end["combination"] == "D"


def test_bearing_perpendicular_takes_the_largest_load():
    # NDS 2018 Table 2.3.2 footnote: CD does not apply to Fc-perp, so the largest combined load
    # governs the sill, whatever its duration: D + 0.75L + 0.75S (ASCE 7 §2.4.1 (4))
    b = make_batch(
        d1_mm=5.5 * IN,
        d2_mm=5.5 * IN,
        height_mm=96 * IN,
        fc_mpa=1000 * PSI,
        emin_mpa=580e3 * PSI,
        product=1,
        bottom_fc_perp_mpa=625 * PSI,
        nom_d_n=2000 * LBF,
        nom_l_n=3000 * LBF,
        nom_s_n=3000 * LBF,
        load_n=6500 * LBF,
    )
    r = rate(b)
    name, _factor = r.check_combination("sill_bearing", 0)
    assert name == "D+0.75L+0.75S"  # 2,000 + 2,250 + 2,250 = 6,500 lb, the largest
    assert r.checks["sill_bearing"].demand_n[0] / LBF == pytest.approx(6500)


def test_lrfd_lambda_per_combination():
    # NDS 2018 Appendix N Table N3 (from memory): 1.4D at lambda 0.6; 1.2D + 1.6L at 0.8
    b = make_batch(
        d1_mm=3.5 * IN,
        d2_mm=3.5 * IN,
        height_mm=96 * IN,
        fc_mpa=1350 * PSI,
        emin_mpa=580e3 * PSI,
        cf_fc=1.15,
        method=LRFD,
        nom_d_n=np.array([3000.0, 3000.0]) * LBF,
        nom_l_n=np.array([0.0, 3000.0]) * LBF,
        load_n=0.0,
    )
    r = rate(b)
    assert r.check_combination("column", 0) == ("1.4D", 0.6)
    assert r.check_combination("column", 1)[0] == "1.2D+1.6L"  # no Lr, S or R: not named


loads_st = st.floats(0, 20_000)


@settings(max_examples=10, deadline=None)
@given(
    loads_st,
    loads_st,
    loads_st,
    loads_st,
    st.floats(60, 200),
    st.sampled_from([0, 1]),
    st.sampled_from([0.0, 0.25, 1.0]),
)
def test_each_check_ratio_is_the_max_over_combinations(d, l_, lr, s, height_in, method, bow_in):
    # property: every check's ratio is the largest of that check over every combination, each
    # combination rated on its own as a load given with its factor (ASCE 7 §2.4.1 / §2.3.1);
    # a bowed post adds the combined check (NDS 2018 §3.9.2, §15.4.1), whose Cp, Fc' and Fb'
    # all take the factor
    base = {
        "d1_mm": 3.5 * IN,
        "d2_mm": 3.5 * IN,
        "height_mm": height_in * IN,
        "fc_mpa": 1350 * PSI,
        "emin_mpa": 580e3 * PSI,
        "fb_mpa": 900 * PSI,
        "cf_fc": 1.15,
        "top_fc_perp_mpa": 625 * PSI,
        "bow2_mm": bow_in * IN,
        "method": method,
    }
    r = rate(make_batch(**base, nom_d_n=d, nom_l_n=l_, nom_lr_n=lr, nom_s_n=s, load_n=0.0))
    alone = _each_combination_alone(base, {"D": d, "L": l_, "Lr": lr, "S": s}, method)
    for name, check in r.checks.items():
        made = [x for o in alone if not math.isnan(x := float(o.checks[name].ratio[0]))]
        got = float(check.ratio[0])
        if not made:  # the check is not made for this post (no capacity): NaN every time
            assert math.isnan(got)
        else:
            assert got == pytest.approx(max(made), rel=1e-12, abs=1e-15)
    made = [float(c.ratio[0]) for c in r.checks.values() if not math.isnan(float(c.ratio[0]))]
    assert float(r.ratio[0]) == pytest.approx(max(made))


def _each_combination_alone(base: dict, coef: dict[str, float], method: int) -> list:
    """The post rated once per ASCE 7 combination of its method (§2.4.1 ASD, §2.3.1 LRFD), each
    as a load given with its factor: ASD the CD of the shortest load present (NDS 2018 Table
    2.3.2), LRFD the time effect factor of the combination (NDS 2018 Appendix N Table N3)."""
    meth = "asd" if method == 0 else "lrfd"
    cd_of = {"D": 0.9, "L": 1.0, "Lr": 1.25, "S": 1.15}  # NDS 2018 Table 2.3.2
    out = []
    for row in rows():
        if row["method"] != meth:
            continue
        load = sum(float(row[t]) * v for t, v in coef.items())
        if meth == "asd":
            present = [cd_of[t] for t, v in coef.items() if float(row[t]) and v > 0]
            out.append(rate(make_batch(**base, load_n=load, cd=max(present, default=0.9))))
        else:
            out.append(rate(make_batch(**base, load_n=load, lam=float(row["lam_occupancy"]))))
    return out


def test_large_batch_matches_posts_rated_alone():
    # blocks and threads change nothing: a batch larger than one block rated at once equals
    # its posts rated one by one (the single-post path is the batch path)
    n = BLOCK + 5
    rng = np.random.default_rng(3)
    b = make_batch(
        d1_mm=3.5 * IN,
        d2_mm=3.5 * IN,
        height_mm=rng.uniform(60, 160, n) * IN,
        fc_mpa=1350 * PSI,
        emin_mpa=580e3 * PSI,
        cf_fc=1.15,
        nom_d_n=rng.uniform(0, 4000, n) * LBF,
        nom_lr_n=rng.uniform(0, 2000, n) * LBF,
        load_n=0.0,
    )
    r = rate(b)
    for i in (0, 7, BLOCK - 1, BLOCK, n - 1):
        alone = rate(b.take(np.array([i])))
        assert r.ratio[i] == alone.ratio[0]
        assert r.combination_name(i) == alone.combination_name(0)
        assert r.batch.cd[i] == alone.batch.cd[0]


def test_every_check_declares_how_it_takes_the_duration_factor():
    # a new check must say how its capacity takes CD / lambda before combinations can rate it
    from fieldcheck.engine.combinations import SCALING
    from fieldcheck.engine.rating import STAGES

    assert {c for stage in STAGES for c in stage.checks} <= set(SCALING)


def test_a_posts_combination_does_not_depend_on_its_neighbours():
    # ASCE 7 §2.3.1 (2): with no roof live, snow or rain load, 1.2D + 1.6L + 0.5(Lr or S or R)
    # are one load; the earlier row names it, whether or not a neighbour carries snow
    b = make_batch(
        d1_mm=3.5 * IN,
        d2_mm=3.5 * IN,
        height_mm=96 * IN,
        fc_mpa=1350 * PSI,
        emin_mpa=580e3 * PSI,
        cf_fc=1.15,
        method=LRFD,
        nom_d_n=np.array([3000.0, 3000.0]) * LBF,
        nom_l_n=np.array([3000.0, 3000.0]) * LBF,
        nom_s_n=np.array([0.0, 500.0]) * LBF,
        load_n=0.0,
    )
    together = rate(b)
    for i in (0, 1):
        alone = rate(b.take(np.array([i])))
        assert together.check_combination("column", i) == alone.check_combination("column", 0)
    assert together.check_combination("column", 0)[0] == "1.2D+1.6L"  # no Lr, S or R given


def test_a_batch_explains_each_post_as_rated_alone():
    # the working and the summary of a post rated among others are those of the post alone
    # (the single-post path is the batch path), with every combination rated for every check
    from fieldcheck.engine import explain
    from fieldcheck.records import parse_records

    rng = np.random.default_rng(4)
    rows = []
    for k in range(24):
        row = {"size": ["4x4", "4x6", "6x6"][k % 3], "height": f"{6 + k % 9}ft"}
        row.update(species="dfl", grade="no2", tributary=f"{10 + 3 * k} sq ft", dead="15 psf")
        if rng.random() < 0.6:
            row["live"] = "40 psf"
        if rng.random() < 0.4:
            row["snow"] = "25 psf"
        if k % 3 == 0:
            row["method"] = "lrfd"
        if k % 4 == 0:
            row["bow_weak"] = "0.5 in"
        rows.append(row)
    batch = parse_records(rows).batch
    r = rate(batch)
    for i in range(batch.n):
        alone = rate(batch.take(np.array([i])))
        assert explain.working(r, i) == explain.working(alone, 0)
        assert explain.summary(r, i, with_remedies=False) == explain.summary(
            alone, 0, with_remedies=False
        )


@pytest.mark.slow
@settings(max_examples=40, deadline=None)
@given(
    st.fixed_dictionaries(
        {
            "d": loads_st,
            "l": loads_st,
            "lr": loads_st,
            "s": loads_st,
            "side_in": st.floats(2.5, 9.5),
            "height_in": st.floats(24, 240),
            "method": st.sampled_from([0, 1]),
            "round": st.booleans(),
            "bow_in": st.sampled_from([0.0, 0.5]),
            "wet": st.booleans(),
            "sill_lb_in": st.sampled_from([float("nan"), 1.5, 3.0]),
            "soil_kpa": st.sampled_from([float("nan"), 72.0, 144.0]),
            "pad_t_in": st.sampled_from([float("nan"), 1.5]),
        }
    )
)
def test_every_check_of_any_post_is_the_max_over_combinations(p):
    # the property of test_each_check_ratio_is_the_max_over_combinations over more of the
    # paths: round posts (NDS 2018 §3.7.3), any size and height, wet service, bearing on a sill
    # of a given length (NDS 2018 §3.10.4), a pad on soil (IBC 2012 Table 1806.2 pressures),
    # a bow (the combined check); each check's ratio is its largest over every combination
    # (ASCE 7 §2.4.1 / §2.3.1), each combination rated alone as a load given with its factor
    from fieldcheck.engine.batch import RECT, ROUND

    side = p["side_in"] * IN
    base = {
        "d1_mm": side,
        "d2_mm": side,
        "shape": ROUND if p["round"] else RECT,
        "height_mm": p["height_in"] * IN,
        "fc_mpa": 1350 * PSI,
        "emin_mpa": 580e3 * PSI,
        "fb_mpa": 900 * PSI,
        "fc_perp_mpa": 625 * PSI,
        "top_fc_perp_mpa": 405 * PSI,
        "bottom_fc_perp_mpa": 625 * PSI,
        "bottom_lb_mm": p["sill_lb_in"] * IN,
        "bow2_mm": p["bow_in"] * IN,
        "moisture_pct": 25.0 if p["wet"] else float("nan"),
        "soil_kpa": p["soil_kpa"],
        "pad_area_mm2": (24 * IN) ** 2 if p["soil_kpa"] == p["soil_kpa"] else float("nan"),
        "pad_t_mm": p["pad_t_in"] * IN,
        "method": p["method"],
    }
    r = rate(make_batch(**base, nom_d_n=p["d"], nom_l_n=p["l"], nom_lr_n=p["lr"], nom_s_n=p["s"]))
    coef = {"D": p["d"], "L": p["l"], "Lr": p["lr"], "S": p["s"]}
    alone = _each_combination_alone(base, coef, p["method"])
    for name, check in r.checks.items():
        ratios = [float(o.checks[name].ratio[0]) for o in alone]
        made = [x for x in ratios if not math.isnan(x)]
        got = float(check.ratio[0])
        if not made:
            assert math.isnan(got), name
        else:
            assert got == pytest.approx(max(made), rel=1e-9, abs=1e-15), name
    made = [float(c.ratio[0]) for c in r.checks.values() if not math.isnan(float(c.ratio[0]))]
    if made:  # the governing ratio is the largest of the checks'
        assert float(r.ratio[0]) == pytest.approx(max(made), rel=1e-12)
