"""Product classes by size and the tables that go with them, against the named sources.

- NDS 2018 §4.1.3 (class definitions) and NDS Supplement 2018 Table 4D (Posts and Timbers,
  Beams and Stringers): from memory; no copy of Table 4D's Beams and Stringers rows was read.
- NDS Supplement 2018 Table 4B (Southern Pine by width, the post-2013 values): read in a
  reproduction, the Southern Pine Use Guide (SFPA, metric edition) values carried in a
  general-purpose structural library (xcfem/xc, materials/awc_nds/dimensional_lumber.py):
  secondary. That copy gives MPa to 0.1, so each psi value is checked to within 0.05 MPa.
"""

from __future__ import annotations

import math

import pytest

from fieldcheck.engine import materials
from fieldcheck.engine.rating import rate
from fieldcheck.engine.refdata import table
from fieldcheck.records import parse_records

PSI = materials.PSI  # MPa per psi
MPA_PER_PSI = 0.00689475729  # 1 psi in MPa (exact by definition of the inch and the pound)


@pytest.mark.parametrize(
    ("nominal", "cls"),
    [
        # NDS 2018 §4.1.3 (from memory): Beams and Stringers are 5 in and thicker with the
        # width more than 2 in greater than the thickness; Posts and Timbers 5x5 and larger
        # with the width not more than 2 in greater than the thickness
        ((4, 10), "dimension"),
        ((5, 5), "timber"),
        ((6, 6), "timber"),
        ((6, 8), "timber"),  # 8 = 6 + 2: not more than 2 in greater
        ((6, 10), "beams-stringers"),
        ((5, 8), "beams-stringers"),
        ((8, 10), "timber"),
        ((8, 12), "beams-stringers"),
    ],
)
def test_size_class(nominal, cls):
    assert materials.size_class(*nominal) == cls


def _parse(**cells):
    parsed = parse_records([{"height": "8ft", "load": "1000lb", **cells}])
    assert not parsed.errors, parsed.errors
    return parsed


@pytest.mark.parametrize(
    ("size", "grade", "fc_psi", "words"),
    [
        # NDS Supplement 2018 Table 4D, Douglas Fir-Larch (from memory)
        ("6x10", "no1", 925, "Beams and Stringers"),
        ("6x10", "no2", 600, "Beams and Stringers"),
        ("6x10", "select-structural", 1100, "Beams and Stringers"),
        ("6x6", "no1", 1000, "Posts and Timbers"),
        ("6x8", "no1", 1000, "Posts and Timbers"),
        ("6x8", "no2", 700, "Posts and Timbers"),  # secondary (2024 edition reproduction)
    ],
)
def test_a_6x10_is_rated_as_beams_and_stringers(size, grade, fc_psi, words):
    p = _parse(size=size, species="douglas-fir-larch", grade=grade)
    assert p.batch.fc_mpa[0] == pytest.approx(fc_psi * PSI)
    assert p.batch.cf_fc[0] == 1.0  # NDS Supplement Table 4D: no size factor on Fc
    assert words in p.meta[0]["_material"]


def test_beams_and_stringers_lower_fc_than_posts_and_timbers_for_every_species_held():
    # NDS Supplement 2018 Table 4D (from memory): for each species and grade held as Posts and
    # Timbers, Beams and Stringers Fc is lower or equal (Southern Pine: one class, equal)
    for s, g, c in {(r["species"], r["grade"], r["category"]) for r in table(_T)}:
        if c != "timber":
            continue
        pt = materials.reference_values(s, g, "timber")
        bs = materials.reference_values(s, g, "beams-stringers")
        assert bs["fc"] <= pt["fc"], (s, g)
        assert bs["fc_perp"] == pt["fc_perp"]


_T = "nds_reference_values"


def test_6x10_column_capacity_by_hand():
    # NDS 2018 Eq. 3.7-1 written out: 6x10 DF-L No.1 (Beams and Stringers Fc 925 psi, from
    # memory), 8 ft pinned-pinned, CD 0.9 (permanent), Emin 580,000 psi, c 0.8. The weak axis
    # (d = 5.5 in dressed) governs; Fc applies on either axis.
    p = _parse(size="6x10", species="douglas-fir-larch", grade="no1", duration="permanent")
    r = rate(p.batch)
    fc_star = 925 * 0.9
    le_d = 96 / 5.5
    fce = 0.822 * 580_000 / le_d**2
    a = fce / fc_star
    cp = (1 + a) / 1.6 - math.sqrt(((1 + a) / 1.6) ** 2 - a / 0.8)
    p_lb = cp * fc_star * 5.5 * 9.5
    assert r.checks["column"].capacity_n[0] == pytest.approx(p_lb * 4.4482216152605, rel=1e-6)


def test_timbers_deeper_than_12_in_take_a_size_factor_on_fb():
    # NDS 2018 §4.3.6.2 (from memory): CF = (12/d)^(1/9) on Fb when d > 12 in; none on Fc
    cf_fc, cf_fb = materials.size_factors("douglas-fir-larch", "no2", 14, 12)
    assert cf_fc == 1.0
    assert cf_fb == pytest.approx((12 / 13.5) ** (1 / 9))
    assert materials.size_factors("douglas-fir-larch", "no2", 12, 12) == (1.0, 1.0)


def test_beams_and_stringers_fb_takes_the_flat_use_factor():
    # NDS Supplement 2018 Table 4D adjustment factors (from memory): Beams and Stringers loaded
    # on the wide face, Fb x Cfu (Select Structural 0.86, No.1 0.74, No.2 1.00); the engine
    # has one Fb for both axes, so it always takes it (conservative)
    assert materials.size_factors("douglas-fir-larch", "no1", 10, 6) == (1.0, 0.74)
    assert materials.size_factors("douglas-fir-larch", "select-structural", 10, 6)[1] == 0.86
    assert materials.size_factors("douglas-fir-larch", "no2", 10, 6)[1] == 1.0
    assert materials.size_factors("douglas-fir-larch", "no1", 8, 6) == (1.0, 1.0)  # P&T


# Southern Pine Use Guide, metric edition (SFPA), as carried in xcfem/xc (secondary):
# MPa for 2-4 in, 5-6 in (2x6), 8 in, 10 in and 12 in wide
SP_METRIC = {
    ("select-structural", "fb"): (16.2, 14.5, 13.4, 11.7, 11.0),
    ("select-structural", "fc"): (13.1, 12.4, 11.7, 11.4, 11.4),
    ("no1", "fb"): (10.3, 9.3, 8.6, 7.2, 6.9),
    ("no1", "fc"): (11.4, 10.7, 10.3, 10.0, 9.7),
    ("no2", "fb"): (7.6, 6.9, 6.4, 5.5, 5.2),
    ("no2", "fc"): (10.0, 9.7, 9.3, 9.0, 8.6),
    ("no3", "fb"): (4.5, 4.0, 3.6, 3.3, 3.1),
    ("no3", "fc"): (5.9, 5.5, 5.3, 5.2, 5.0),
}
SP_E_METRIC = {  # GPa: E, Emin
    "select-structural": (12.4, 4.6),
    "no1": (11.0, 4.0),
    "no2": (9.7, 3.5),
    "no3": (9.0, 3.2),
}
WIDTHS = (4, 6, 8, 10, 12)


@pytest.mark.parametrize(("grade", "prop"), sorted(SP_METRIC))
def test_southern_pine_values_by_width(grade, prop):
    # NDS Supplement 2018 Table 4B via the Southern Pine Use Guide (metric; secondary)
    for k, w in enumerate(WIDTHS):
        rv = materials.reference_values("southern-pine", grade, "dimension", w, 2)
        assert rv[prop] / PSI * MPA_PER_PSI == pytest.approx(SP_METRIC[grade, prop][k], abs=0.05)
        assert rv["statuses"][prop] == "secondary"
        assert rv["table"].startswith("4B")
    e, emin = SP_E_METRIC[grade]
    rv = materials.reference_values("southern-pine", grade, "dimension", 6, 2)
    assert rv["e"] / PSI * MPA_PER_PSI / 1000 == pytest.approx(e, abs=0.05)
    assert rv["emin"] / PSI * MPA_PER_PSI / 1000 == pytest.approx(emin, abs=0.05)


def test_southern_pine_no1_2x4_fc_is_the_2_to_4_in_row():
    # NDS Supplement 2018 Table 4B (secondary): No.1, 2-4 in wide, Fc 1650 psi (1550 is 5-6 in)
    assert materials.reference_values("southern-pine", "no1", "dimension", 4, 2)["fc"] == (
        1650 * PSI
    )
    p = _parse(size="2x4", species="southern-pine", grade="no1")
    assert p.batch.fc_mpa[0] == 1650 * PSI
    p = _parse(size="2x6", species="southern-pine", grade="no1")
    assert p.batch.fc_mpa[0] == 1550 * PSI


def test_southern_pine_takes_no_size_factor_up_to_12_in():
    # NDS Supplement 2018 Table 4B footnote (from memory): size adjustments are already in the
    # tabulated values; over 12 in wide, the 12 in values x 0.9 (Fb, Ft, Fc)
    for w in WIDTHS:
        for t in (2, 3, 4):
            assert materials.size_factors("southern-pine", "no2", w, t) == (1.0, 1.0)
    assert materials.size_factors("southern-pine", "no2", 14, 2) == (0.9, 0.9)
    p = _parse(size="2x14", species="southern-pine", grade="no2")
    assert p.batch.fc_mpa[0] * p.batch.cf_fc[0] == pytest.approx(1250 * 0.9 * PSI)


def test_southern_pine_timbers_are_held_and_tabulated_wet():
    # NDS Supplement 2018 Table 4D, Southern Pine 5x5 and larger (from memory): one class for
    # both timber shapes, values for wet service already
    for size in ("6x6", "6x10"):
        p = _parse(size=size, species="southern-pine", grade="no2")
        assert p.batch.fc_mpa[0] == 525 * PSI
        assert bool(p.batch.wet_tabulated[0])


def test_every_value_has_a_status_and_the_row_takes_the_weakest():
    order = ("read", "secondary", "memory")
    for r in table(_T):
        st = [r[f"{p}_status"] for p in ("fb", "fc", "fc_perp", "e", "emin", "g")]
        assert set(st) <= set(order)
        assert r["status"] == max(st, key=order.index)


@pytest.mark.parametrize(
    ("size", "table_words", "cf_words"),
    [
        # NDS Supplement Table 4D holds timbers 5x5 and larger (NDS 2018 §4.1.3, from memory):
        # no size factor on Fc; Table 4A's size factors are dimension lumber's (CF 1.1 for a
        # 4x6 on Fc, Table 4A adjustment factors, secondary)
        ("6x6", "Supplement Table 4D", "§2.3.2"),
        ("6x10", "Supplement Table 4D", "§2.3.2"),
        ("4x6", "Supplement Tables 4A, 4B", "Supplement Table 4A"),
    ],
)
def test_working_cites_the_table_of_the_product_class(size, table_words, cf_words):
    from fieldcheck.engine import explain

    parsed = parse_records(
        [{"size": size, "height": "8ft", "species": "douglas-fir-larch", "grade": "no2"}]
    )
    steps = {s.label: s for s in explain.working(rate(parsed.batch), 0)}
    assert "§4.1.3" in steps["Product"].clause
    assert table_words in steps["Reference Fc"].clause
    factors = next(s for label, s in steps.items() if label.startswith("Factors on Fc"))
    assert cf_words in factors.clause, factors.clause
    if "4D" in table_words:
        assert "4A" not in factors.clause  # a timber's factors are not Table 4A's
