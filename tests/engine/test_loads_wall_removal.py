"""Bearing-wall removal: line load, new beam reactions, temporary shores."""

import numpy as np
import pytest

from fieldcheck.engine import loads

LBF = 4.4482216152605  # N
FT = 304.8  # mm
PSF = 0.0478802589  # kPa
PLF = LBF / FT  # N/mm


def _example():
    # common practice, no source: simple spans: joists 12 ft each side, D = 10, L = 40 psf,
    # one floor, new 12 ft beam; temporary shores at 4 ft under a header (our assumption)
    return loads.wall_removal(12 * FT, 12 * FT, 10 * PSF, 40 * PSF, 12 * FT, 4 * FT)


def test_line_load_600_plf():
    w = _example()
    # common practice, no source: simple spans: w = 50 psf x (12/2 + 12/2) ft = 600 plf
    assert w.total("line_n_per_mm")[0] / PLF == pytest.approx(600, rel=1e-6)
    assert w.line_n_per_mm["D"][0] / PLF == pytest.approx(120, rel=1e-6)
    assert w.line_n_per_mm["L"][0] / PLF == pytest.approx(480, rel=1e-6)


def test_end_post_3600_lb():
    w = _example()
    # common practice, no source: simple spans: R = 600 plf x 12 ft / 2 = 3,600 lb per end post
    assert w.total("end_post_n")[0] / LBF == pytest.approx(3600, rel=1e-6)
    # the D/L split feeds asd_combinations: D + L is 3,600 lb at CD 1.0 (ASCE 7 §2.4.1 (2))
    c = loads.asd_combinations(w.end_post_n["D"], w.end_post_n["L"])
    k = c.keys.index("2")
    assert c.names[k] == "D+L" and c.factor[k, 0] == 1.0
    assert c.load_n[k, 0] / LBF == pytest.approx(3600, rel=1e-6)


def test_temporary_shores_each_side():
    w = _example()
    # our stated assumption: a shore line each side picks up its side's half-span,
    # 50 psf x 6 ft = 300 plf; a shore every 4 ft carries 1,200 lb (computed by hand)
    assert w.total("shore_line_n_per_mm")[0] / PLF == pytest.approx(300, rel=1e-6)
    assert w.total("shore_n")[0] / LBF == pytest.approx(1200, rel=1e-6)
    one = loads.wall_removal(
        12 * FT, 12 * FT, 10 * PSF, 40 * PSF, 12 * FT, 4 * FT, temporary_lines=1
    )
    # one line at the wall carries the whole 600 plf -> 2,400 lb per shore (by hand)
    assert one.total("shore_n")[0] / LBF == pytest.approx(2400, rel=1e-6)


def test_unequal_spans_and_wall_above_vectorised():
    w = loads.wall_removal(
        np.array([10.0, 14.0]) * FT,
        np.array([14.0, 10.0]) * FT,
        10 * PSF,
        40 * PSF,
        12 * FT,
        wall_above_dead_n_per_mm=60 * PLF,
    )
    # (10/2 + 14/2) x 50 + 60 = 660 plf (common practice, no source: simple spans with wall weight
    # above)
    assert np.allclose(w.total("line_n_per_mm") / PLF, 660)
    assert np.all(np.isnan(w.shore_n["D"]))  # no spacing given: shore loads not computed
    # most loaded side: 7 ft x 50 psf + 30 plf (half the wall above) = 380 plf (by hand)
    assert np.allclose(w.total("shore_line_n_per_mm") / PLF, 380)


def test_bad_input():
    with pytest.raises(ValueError, match="span_left_mm must be a finite number >= 0 mm"):
        loads.wall_removal(-1.0, 3000.0, 0.5, 1.9, 3000.0)
    with pytest.raises(ValueError, match="beam_span_mm must be a finite number > 0 mm"):
        loads.wall_removal(3000.0, 3000.0, 0.5, 1.9, 0.0)
    with pytest.raises(ValueError, match="temporary_lines must be 1 or 2"):
        loads.wall_removal(3000.0, 3000.0, 0.5, 1.9, 3000.0, temporary_lines=3)
