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


# EN 1995-1-1 §6.3.2, C24 100 x 100 mm 3 m, medium-term SC1, computed by hand:
# k_c = 0.284566; f_c,0,d = 0.8 x 21 / 1.3; f_m,d = 0.8 x 24 / 1.3 (EN 338 C24 f_m,k 24, k_h 1);
# W = 100^3 / 6; A = 10 000 mm2; I = 100^4 / 12
KC, FC0D, FMD, W, A, I = 0.284566, 0.8 * 21 / 1.3, 0.8 * 24 / 1.3, 100**3 / 6, 10_000.0, 100**4 / 12


def test_bow_within_the_straightness_limit_adds_no_moment():
    # EN 1995-1-1 §10.2: solid timber straight within L/300 = 10 mm over 3 m; within it beta_c
    # (Eq. 6.29) allows for the bow, so the post rates as the plain column: N_Rd = 36.7747 kN
    r, errors = rate_records([dict(BASE, load="20 kN", bow_weak="10 mm")])
    assert errors == []
    assert r.capacity_n[0] / 1000 == pytest.approx(36.7747, rel=1e-5)
    assert r.checks["eccentric"].capacity_n[0] / 1000 == pytest.approx(36.7747, rel=1e-5)


def test_bow_beyond_the_limit_amplified_by_hand():
    # a 20 mm bow (beyond L/300 = 10 mm, EN 1995-1-1 §10.2) in the plane of d2: the moment
    # N e amplified by 1 / (1 - N/N_cr) (initially curved bar, Timoshenko & Gere ch. 1) in
    # EN 1995-1-1 Eq. 6.24 (the z axis; k_m only on the y term, which is nought):
    #   N / (A k_c f_c,0,d) + N e / (W f_m,d (1 - N/N_cr)) = 1
    # N_cr = pi^2 E_d I / L_ef^2, E_d = min(E_0,mean / gamma_M = 11000 / 1.3, E_0,05 = 7400)
    # (EN 1995-1-1 §2.4.1 Eq. 2.15; judgement) = 7400 MPa -> N_cr = 67.625 kN.
    # Times (1 - N/N_cr), a quadratic: N^2 / (a N_cr) - N (1/a + e/b + 1/N_cr) + 1 = 0 with
    # a = A k_c f_c,0,d and b = W f_m,d; the smaller root is N_Rd (hand calculation: 24.956 kN)
    import math

    from scipy.optimize import brentq

    e = 20.0
    ncr = math.pi**2 * 7400 * I / 3000**2
    assert ncr / 1000 == pytest.approx(67.625, rel=1e-4)
    a, b = A * KC * FC0D, W * FMD
    qa, qb = 1.0 / (a * ncr), -(1.0 / a + e / b + 1.0 / ncr)
    n_hand = (-qb - math.sqrt(qb * qb - 4.0 * qa)) / (2.0 * qa)
    assert n_hand / 1000 == pytest.approx(24.956, abs=5e-4)
    # an independent root finder (scipy) on the unmultiplied equation agrees
    n_scipy = brentq(lambda n: n / a + n * e / (b * (1 - n / ncr)) - 1.0, 1.0, 0.999999 * ncr)
    assert n_scipy == pytest.approx(n_hand, rel=1e-9)

    r, errors = rate_records([dict(BASE, load="20 kN", bow_weak="20 mm")])
    assert errors == []
    assert r.checks["eccentric"].capacity_n[0] == pytest.approx(n_hand, rel=1e-6)
    assert r.governing_name(0) == "eccentric"
    # the same bow without the amplification (first order) would give more: the amplification
    # is what lowers it
    assert n_hand < 1.0 / (1.0 / a + e / b)


def test_end_eccentricity_stays_first_order_by_hand():
    # a load 10 mm off centre in the plane of d2 on a straight post: EN 1995-1-1 Eq. 6.24 with
    # sigma_m,z = N e / W, linear in N: N = 1 / (1/(A kc fc0d) + e/(W fmd))
    r, errors = rate_records([dict(BASE, load="20 kN", offset_weak="10 mm")])
    assert errors == []
    n = 1.0 / (1.0 / (A * KC * FC0D) + 10.0 / (W * FMD))
    assert r.checks["eccentric"].capacity_n[0] == pytest.approx(n, rel=1e-5)


def test_glulam_bow_limit_is_l_over_500():
    # EN 1995-1-1 §10.2: glulam straight within L/500 = 6 mm over 3 m; a 8 mm bow is beyond it
    # (and within L/300 = 10 mm, where solid timber would take no moment)
    gl, _ = rate_records([dict(BASE, **{"class": "GL24h"}, load="20 kN", bow_weak="8 mm")])
    solid, _ = rate_records([dict(BASE, load="20 kN", bow_weak="8 mm")])
    assert gl.checks["eccentric"].capacity_n[0] < gl.checks["column"].capacity_n[0]
    assert solid.checks["eccentric"].capacity_n[0] == pytest.approx(
        solid.checks["column"].capacity_n[0], rel=1e-9
    )


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


def test_net_section_near_an_end_checked_on_ec5():
    # a 50 mm hole bored through a 100 x 100 mm post near its top: the net section 100 x (100 -
    # 50) = 5000 mm2 crushes at f_c,0,d A_net (EN 1995-1-1 §6.1.4), f_c,0,d = 0.8 x 21 / 1.3
    # (C24, medium-term, SC1): 64.615 kN by hand
    post = dict(BASE, height="1 m", load="20 kN", hole="50 mm", hole_height="0.95 m")
    r, errors = rate_records([post])
    assert errors == []
    assert r.checks["net_section"].capacity_n[0] == pytest.approx(FC0D * 5000.0, rel=1e-9)
    assert "EN 1995-1-1 §6.1.4" in r.checks["net_section"].clause
