"""Condition inputs feed the EN 1995-1-1 path: residual section, strength ratio, eccentricity and
bow.
"""

import pytest

from fieldcheck.records import rate_records

BASE = {
    "method": "ec5",
    "class": "C24",
    "service_class": "1",
    "duration": "medium-term",
    "section": "100x100mm",
    "height": "3 m",
}


def test_bow_checked_by_eq_6_24_by_hand():
    r, errors = rate_records([dict(BASE, load="20 kN", bow_weak="10 mm")])
    assert errors == []
    # computed from the formulas: EN 1995-1-1 §6.3.2, C24 100 x 100 mm 3 m, computed by hand gives
    # k_c = 0.284566,
    # f_c,0,d = 0.8 x 21 / 1.3; f_m,d = 0.8 x 24 / 1.3 (EN 338 C24 f_m,k 24); W = 100^3 / 6;
    # EN 1995-1-1 Eq. 6.24 with sigma_m,z = N e / W, linear in N: N = 1 / (1/(A kc fc0d) + e/(W
    # fmd))
    fc0d, fmd, w = 0.8 * 21 / 1.3, 0.8 * 24 / 1.3, 100**3 / 6
    n = 1.0 / (1.0 / (10_000 * 0.284566 * fc0d) + 10.0 / (w * fmd))
    assert r.checks["eccentric"].capacity_n[0] == pytest.approx(n, rel=1e-5)
    assert r.governing_name(0) == "eccentric"


def test_straight_centred_ec5_post_is_the_plain_column():
    r, _ = rate_records([dict(BASE, load="20 kN")])
    # EN 1995-1-1 §6.3.2, C24 100 x 100 mm 3 m, computed by hand: N_Rd = 36.7747 kN, no combined
    # check
    assert r.capacity_n[0] / 1000 == pytest.approx(36.7747, rel=1e-5)
    assert r.governing_name(0) == "column"


def test_decay_reduces_the_ec5_capacity():
    sound, _ = rate_records([dict(BASE)])
    decayed, errors = rate_records([dict(BASE, decay_wide="10 mm", decay_at="middle")])
    assert errors == []
    # judgement: decayed wood has no strength: residual section
    assert decayed.capacity_n[0] < sound.capacity_n[0]
