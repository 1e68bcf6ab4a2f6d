"""Lateral design load on shores and out-of-plumb thrust."""

import numpy as np
import pytest

from fieldcheck.engine import loads

LBF = 4.4482216152605  # N
FT = 304.8  # mm


def test_out_of_plumb_1_in_over_96_in():
    # computed by hand: 1 in over 96 in -> 1.04 % of P (statics)
    h = loads.out_of_plumb_thrust_n(1000.0, 25.4, 96 * 25.4)
    assert h[0] / 1000.0 * 100 == pytest.approx(1.04, abs=0.005)


def test_fema_two_and_ten_percent():
    # FEMA US&R Rescue Specialist manual 06/98 (secondary)
    P = np.array([8000.0, 20000.0]) * LBF
    d = loads.lateral_demand(P)
    assert np.allclose(d.minimum_n, 0.02 * P) and np.all(d.thrust_n == 0)
    d = loads.lateral_demand(P, "fema-aftershock")
    assert np.allclose(d.total_n, 0.10 * P)
    # with 1 in out of plumb over 8 ft the bracing carries 2 % + 1.04 % (FEMA US&R and Cal/OSHA T8
    # §1717 (secondary); judgement)
    d = loads.lateral_demand(P, offset_mm=25.4, height_mm=96 * 25.4)
    assert np.allclose(d.total_n / P, 0.02 + 1 / 96)


def test_cal_osha_rule():
    # Cal/OSHA T8 §1717(a)(4) (secondary): max(100 plf of edge, 2 % of dead)
    d = loads.lateral_demand(0.0, "cal-osha", dead_n=50000 * LBF, floor_edge_mm=20 * FT)
    assert d.minimum_n[0] / LBF == pytest.approx(2000, rel=1e-6)  # 100 plf x 20 ft > 1,000 lb
    d = loads.lateral_demand(0.0, "cal-osha", dead_n=200000 * LBF, floor_edge_mm=20 * FT)
    assert d.minimum_n[0] / LBF == pytest.approx(4000, rel=1e-6)  # 2 % of 200,000 lb


def test_bad_lateral_input():
    with pytest.raises(ValueError, match="lateral rule 'wind' is not known"):
        loads.lateral_demand(1000.0, "wind")
    with pytest.raises(ValueError, match="height_mm is needed"):
        loads.lateral_demand(1000.0, offset_mm=10.0)
    with pytest.raises(ValueError, match="floor_edge_mm is needed"):
        loads.lateral_demand(1000.0, "cal-osha")
