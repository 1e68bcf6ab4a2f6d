"""ASCE 7 load combinations with the NDS load-duration and time-effect factors."""

import numpy as np
import pytest

from fieldcheck.engine import loads

LBF = 4.4482216152605  # N, exact definition
FT = 304.8  # mm
PSF = 0.0478802589  # kPa


def _bay_loads():
    # common practice, no source; ASCE 7-10 §2.4.1: 10 x 12 ft bay (120 ft^2), D 10, L 40, S 30 psf
    area = loads.tributary_area_mm2(10 * FT, 10 * FT, 12 * FT, 12 * FT)
    assert area[0] / FT**2 == pytest.approx(120.0)  # common practice, no source
    D = loads.area_load_n(10 * PSF, area)
    L = loads.area_load_n(40 * PSF, area)
    S = loads.area_load_n(30 * PSF, area)
    return D, L, S


def test_example_d_plus_l_6000_lb():
    D, L, _ = _bay_loads()
    c = loads.asd_combinations(D, L)
    assert c.load_n[c.keys.index("2"), 0] / LBF == pytest.approx(
        6000, rel=1e-6
    )  # common practice, no source


def _row(c, key):
    return c.keys.index(key)


def test_example_combinations_and_cd():
    D, L, S = _bay_loads()
    c = loads.asd_combinations(D, L, S=S)
    row = {r["key"]: r for r in c.rows(0)}
    # computed by hand from ASCE 7-10 §2.4.1 and NDS 2018 Table 2.3.2
    assert row["2"]["load_n"] / LBF == pytest.approx(6000, rel=1e-6)
    assert row["3b"]["load_n"] / LBF == pytest.approx(4800, rel=1e-6)
    assert row["4b"]["load_n"] / LBF == pytest.approx(7500, rel=1e-6)
    assert row["2"]["cd"] == 1.0 and row["3b"]["cd"] == 1.15 and row["4b"]["cd"] == 1.15


def test_dead_alone_cd_09():
    # NDS 2018 Table 2.3.2: permanent load CD 0.9; an absent load does not set CD
    c = loads.asd_combinations(D=1000.0)
    assert np.all(c.factor[:, 0] == 0.9)


def test_construction_live_duration_override():
    # NDS 2018 Table 2.3.2: construction load seven days, CD 1.25
    c = loads.asd_combinations(D=1000.0, L=4000.0, durations={"L": "seven-days"})
    assert c.factor[_row(c, "2"), 0] == 1.25


def test_vectorised_posts_each_own_factor():
    D = np.array([1000.0, 1000.0, 5000.0])
    L = np.array([4000.0, 0.0, 100.0])
    S = np.array([0.0, 3000.0, 0.0])
    c = loads.asd_combinations(D, L, S=S)
    assert c.load_n.shape == (len(c.keys), 3)
    # NDS 2018 §2.3.2: CD of the shortest-duration load present with a non-zero value
    assert c.factor[_row(c, "2")].tolist() == [1.0, 0.9, 1.0]  # D+L; L = 0 on post 2
    assert c.factor[_row(c, "3b")].tolist() == [0.9, 1.15, 0.9]  # D+S; S only on post 2


def test_lrfd_lambda():
    # NDS 2018 Appendix N Table N3 (from memory) with ASCE 7 §2.3.1
    c = loads.lrfd_combinations(D=1000.0)
    assert c.factor[_row(c, "1"), 0] == 0.6
    assert c.load_n[_row(c, "1"), 0] == pytest.approx(1400.0)
    c = loads.lrfd_combinations(D=1000.0, L=4000.0)
    assert c.factor[_row(c, "2a"), 0] == 0.8
    assert c.load_n[_row(c, "2a"), 0] == pytest.approx(1200 + 6400)
    c = loads.lrfd_combinations(D=1000.0, L=4000.0, live_kind="storage")
    assert c.factor[_row(c, "2a"), 0] == 0.7
    D, L, S = _bay_loads()
    c = loads.lrfd_combinations(D, L, S=S)
    # by hand: 1.2x1200 + 1.6x3600 + 4800 = 12,000 lb (ASCE 7 §2.3.1 (3))
    assert c.load_n[_row(c, "3a2"), 0] / LBF == pytest.approx(12000, rel=1e-6)


def test_live_reduction_option_in_combinations():
    # ASCE 7 §4.7.2; computed by hand: Lo 40 psf, A_T 120 ft^2, K_LL 4 -> 37.4 psf
    D, L, _ = _bay_loads()
    c = loads.asd_combinations(D, L, live_reduction_area_mm2=120 * FT**2)
    assert c.live_reduction[0] * 40 == pytest.approx(37.4, abs=0.05)
    c0 = loads.asd_combinations(D, L)  # default: no reduction (judgement, temporary shoring)
    assert c0.live_reduction[0] == 1.0
    assert c.load_n[_row(c, "2"), 0] < c0.load_n[_row(c0, "2"), 0]


def test_load_with_no_duration_is_refused():
    # rain has no NDS duration: the user must state it
    with pytest.raises(ValueError, match="load R has no duration") as e:
        loads.asd_combinations(D=1000.0, R=500.0)
    assert str(e.value).count(". ") == 0  # one sentence
    c = loads.asd_combinations(D=1000.0, R=500.0, durations={"R": "seven-days"})
    assert c.factor[_row(c, "3c"), 0] == 1.25
    with pytest.raises(ValueError, match="no duration"):
        loads.asd_combinations(D=1000.0, L=500.0, durations={"L": None})
    with pytest.raises(ValueError, match="not known"):
        loads.asd_combinations(D=1000.0, L=500.0, durations={"L": "forever"})


def test_negative_load_refused():
    with pytest.raises(ValueError, match=r"L load must be a finite number >= 0 N"):
        loads.asd_combinations(D=1000.0, L=-5.0)
    with pytest.raises(ValueError, match="same length"):
        loads.asd_combinations(D=[1.0, 2.0], L=[1.0, 2.0, 3.0])
