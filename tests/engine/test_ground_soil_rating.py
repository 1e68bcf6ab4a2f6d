"""Mudsill / pad on soil inside the rating (engine/ground.py), IBC 2012 Table 1806.2."""

import numpy as np
import pytest

from fieldcheck.engine import explain, loads
from fieldcheck.engine.batch import make_batch
from fieldcheck.engine.rating import FLAGS, rate
from fieldcheck.records import parse_records, rate_records

LBF = 4.4482216152605
FT = 304.8
PSF = loads.PSF_KPA
PSI = 0.006894757293168361
POST = {"size": "6x6", "height": "8ft", "species": "douglas-fir-larch", "grade": "no1"}


def ground_bit(name: str) -> int:
    return FLAGS.bit[name]


def _one(**cols):
    rating, errors = rate_records([{**POST, **cols}])
    assert not errors, errors
    return rating


@pytest.mark.parametrize(
    "soil, psf",
    [
        ("crystalline-bedrock", 12000),
        ("sedimentary-rock", 4000),
        ("sandy-gravel", 3000),
        ("sand", 2000),
        ("clay", 1500),
        ("1", 12000),
        ("4", 2000),
        ("5", 1500),
    ],
)
def test_soil_capacity_is_presumptive_value_times_pad_area(soil, psf):
    # IBC 2012 Table 1806.2 (secondary): capacity = q_allow x A, 2 ft x 2 ft pad
    r = _one(load="1000lbf", pad="2ft x 2ft", soil=soil)
    c = r.checks["soil_bearing"]
    assert c.capacity_n[0] / LBF == pytest.approx(psf * 4.0, rel=1e-9)
    s = explain.summary(r, 0)["ground"]
    # no pad thickness: the pad is taken as rigid, the check made but not relied on (judgement)
    assert s["soil_check"] == "not relied on: pad thickness not given"
    assert s["allowable_psf"] == psf


def test_6000_lb_on_clay_needs_4_ft2():
    # IBC 2012 Table 1806.2 (secondary): A = P / q = 6,000 / 1,500 = 4.0 ft^2 -> ratio 1.0 on a 4
    # ft^2 pad
    r = _one(load="6000lbf", pad="4 ft2", soil="clay")
    assert r.checks["soil_bearing"].ratio[0] == pytest.approx(1.0)
    r = _one(load="9000lbf", pad="2ft x 2ft", soil="clay")
    assert r.checks["soil_bearing"].ratio[0] == pytest.approx(1.5)
    assert r.governing_name(0) == "soil_bearing" and r.action[0] == 3  # 1.5 > 1.25: make safe now


@pytest.mark.parametrize(
    "cols, flag, level",
    [
        ({"soil": "unknown"}, ground_bit("soil_unknown"), 1),
        ({}, ground_bit("soil_unknown"), 1),  # a pad with no soil stated is unknown soil
        ({"soil": "unprepared"}, ground_bit("soil_unprepared"), 2),
    ],
)
def test_unknown_and_unprepared_soil_never_pass_silently(cols, flag, level):
    # IBC 2012 §1806.2: no presumptive value for unclassified, mud, organic or unprepared ground
    # judgement (ground.py docstring): unknown -> at least monitor, unprepared -> repair-or-brace
    r = _one(load="100lbf", pad="2ft x 2ft", **cols)
    assert np.isnan(r.checks["soil_bearing"].capacity_n[0])
    assert r.flags[0] & flag
    assert r.action[0] >= level
    assert explain.summary(r, 0)["ground"]["soil_check"] == "not verified"
    assert any("no presumptive bearing value" in w for w in explain.warnings(r, 0))


def test_soil_without_pad_is_not_verified():
    r = _one(load="100lbf", soil="sand")
    assert r.flags[0] & ground_bit("pad_missing") and r.action[0] >= 1
    assert explain.summary(r, 0)["ground"]["soil_check"] == "not verified"


def test_hud_default_only_when_asked():
    # 24 CFR 3285.202(e) (read): 1,500 psf where the class cannot be determined, chosen explicitly
    r = _one(load="3000lbf", pad="2ft x 2ft", soil="unknown", soil_default="yes")
    assert r.checks["soil_bearing"].capacity_n[0] / LBF == pytest.approx(6000)
    assert r.flags[0] & ground_bit("soil_assumed") and not r.flags[0] & ground_bit("soil_unknown")


def test_no_pad_no_soil_no_ground_check():
    r = _one(load="1000lbf")
    assert np.isnan(r.checks["soil_bearing"].capacity_n[0])
    assert "ground" not in explain.summary(r, 0)
    assert not r.flags[0] & (ground_bit("soil_unknown") | ground_bit("pad_missing"))


def test_pad_spread_through_thickness():
    # judgement (ground.py): each side counts up to post side + 2 t; 6x6 (5.5 in) on a 4 ft pad 6 in
    # thick
    r = _one(load="1000lbf", pad="4ft x 4ft", pad_thickness="6in", soil="sand")
    side = 5.5 * 25.4 + 2 * 6 * 25.4
    assert r.values["pad_area_eff"][0] == pytest.approx(side**2)
    assert r.checks["soil_bearing"].capacity_n[0] == pytest.approx(2000 * PSF * 1e-3 * side**2)
    r = _one(load="1000lbf", pad="4ft x 4ft", soil="sand")  # no thickness: rigid pad, flagged
    assert r.values["pad_area_eff"][0] == pytest.approx((4 * FT) ** 2)
    assert r.flags[0] & ground_bit("pad_rigid")


def test_bearing_plate_spreads_on_the_sill():
    # NDS 2018 §3.10.2, §3.10.4: Fc-perp x Cb x A; 4x4 on a DF-L sill (625 psi, from memory), 8 in
    # plate
    base = {
        "size": "4x4",
        "height": "8ft",
        "species": "douglas-fir-larch",
        "grade": "no2",
        "load": "1000lbf",
        "sill_species": "douglas-fir-larch",
    }
    r0, _ = rate_records([base])
    r1, _ = rate_records([{**base, "plate": "8in"}])
    assert r0.checks["sill_bearing"].capacity_n[0] / LBF == pytest.approx(625 * 12.25, rel=1e-6)
    assert r1.checks["sill_bearing"].capacity_n[0] / LBF == pytest.approx(
        625 * 8 * 3.5, rel=1e-6
    )  # lb >= 6 in: Cb 1
    assert r1.batch.end_plate[0] and r1.flags[0] & ground_bit("plate")


def test_bracing_demand_in_values_and_summary():
    # FEMA US&R 2 % of P (secondary) + out-of-plumb P x 1 in / 96 in (statics); judgement
    r = _one(load="8000lbf", lateral_rule="fema-minimum", lean="1in")
    br = explain.summary(r, 0)["bracing"]
    assert br["minimum_lbf"] == pytest.approx(160.0)
    assert br["thrust_lbf"] == pytest.approx(8000 / 96, abs=0.05)
    assert r.values["lateral_n"][0] / LBF == pytest.approx(160 + 8000 / 96)
    r = _one(load="8000lbf", lateral_rule="cal-osha", brace_edge="20ft")
    assert explain.summary(r, 0)["bracing"]["total_lbf"] == pytest.approx(
        2000.0
    )  # 100 plf x 20 ft > 160 lb
    assert any(s.label.startswith("Bracing must carry") for s in explain.working(r, 0))


def test_vectorised_soil_matches_loads_soil_check():
    # the rating's soil check agrees with loads.soil_check on the same arrays (by construction)
    n = 50
    rng = np.random.default_rng(3)
    P = rng.uniform(1e3, 1e5, n)
    A = rng.uniform(1e5, 2e6, n)
    key = rng.choice(["sand", "clay", "sandy-gravel"], n)
    q = loads.soil_allowable_kpa(list(key))
    b = make_batch(
        n=n,
        d1_mm=140,
        d2_mm=140,
        height_mm=2400,
        fc_mpa=1000 * PSI,
        emin_mpa=580000 * PSI,
        load_n=P,
        pad_area_mm2=A,
        soil_kpa=q,
    )
    r = rate(b)
    s = loads.soil_check(P, A, list(key))
    assert np.allclose(r.checks["soil_bearing"].ratio, s.ratio)


def test_bad_ground_input_one_sentence():
    for cols, col in (
        ({"soil": "loam"}, "soil"),
        ({"pad": "big"}, "pad"),
        ({"pad": "-2 ft2"}, "pad"),
    ):
        p = parse_records([{**POST, **cols}])
        assert p.errors and p.errors[0].column == col
        msg = p.errors[0].message
        assert msg.endswith(".") and msg.replace("e.g. ", "").count(". ") == 0, msg
