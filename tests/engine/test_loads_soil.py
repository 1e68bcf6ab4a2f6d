"""Mudsill / pad on soil against IBC 2012 Table 1806.2."""

import numpy as np
import pytest

from fieldcheck.engine import loads
from fieldcheck.engine.refdata import table

LBF = 4.4482216152605  # N
FT = 304.8  # mm
PSF = 0.0478802589  # kPa


def test_presumptive_values_table_1806_2():
    # IBC 2012 Table 1806.2 (secondary)
    rows = {r["key"]: r for r in table("soil_bearing")}
    expect = {
        "crystalline-bedrock": (12000, 1200, "0.70", ""),
        "sedimentary-rock": (4000, 400, "0.35", ""),
        "sandy-gravel": (3000, 200, "0.35", ""),
        "sand": (2000, 150, "0.25", ""),
        "clay": (1500, 100, "", "130"),
    }
    for key, (v, lat, mu, coh) in expect.items():
        r = rows[key]
        assert float(r["vertical_psf"]) == v
        assert float(r["vertical_kPa"]) == pytest.approx(v * PSF, abs=1e-3)
        assert float(r["lateral_psf_per_ft"]) == lat
        assert r["sliding_friction"] == mu and r["sliding_cohesion_psf"] == coh
        assert r["source"] == "IBC Table 1806.2" and r["edition"] == "IBC 2012"
        assert r["status"] == "secondary"
    got = loads.soil_allowable_kpa(list(expect)) / PSF
    assert np.allclose(got, [12000, 4000, 3000, 2000, 1500])
    assert np.allclose(
        loads.soil_allowable_kpa(["1", "2", "3", "4", "5"]) / PSF, got
    )  # class numbers


def test_pad_area_6000_lb_on_1500_psf():
    # IBC 2012 Table 1806.2 (secondary); computed by hand: A = P / q = 6,000 / 1,500 = 4.0 ft^2
    a = loads.required_pad_area_mm2(6000 * LBF, 1500 * PSF)
    assert a[0] / FT**2 == pytest.approx(4.0, rel=1e-6)
    s = loads.soil_check(6000 * LBF, 4 * FT**2, "clay")
    assert s.required_area_mm2[0] / FT**2 == pytest.approx(4.0, rel=1e-6)
    assert s.pressure_kpa[0] / PSF == pytest.approx(1500, rel=1e-6)
    assert s.ratio[0] == pytest.approx(1.0)
    assert s.flags[0] == loads.SOIL_OK  # exactly at the limit is not over


def test_unknown_and_unprepared_soil_get_no_capacity():
    # IBC §1806.2: mud, organic soils, unprepared fill have no presumptive value (IBC 2012 Table
    # 1806.2 (secondary))
    s = loads.soil_check(np.full(3, 6000 * LBF), 4 * FT**2, ["unknown", "unprepared", "sand"])
    assert np.isnan(s.allowable_kpa[:2]).all() and np.isnan(s.ratio[:2]).all()
    assert s.flags[0] & loads.SOIL_UNKNOWN and s.flags[1] & loads.SOIL_UNPREPARED
    assert "unknown soil" in s.warnings(0)[0]
    assert s.ratio[2] == pytest.approx(0.75)  # 1,500 / 2,000 psf, by hand


def test_hud_default_only_when_chosen():
    # 24 CFR 3285.202(e): 1,500 psf when the class cannot be determined (read)
    s = loads.soil_check(8000 * LBF, 4 * FT**2, "unknown-hud-default")
    assert s.allowable_kpa[0] / PSF == pytest.approx(1500)
    assert s.flags[0] & loads.SOIL_ASSUMED and s.flags[0] & loads.SOIL_OVER
    assert s.ratio[0] == pytest.approx(2000 / 1500)


def test_bad_soil_input():
    with pytest.raises(ValueError, match="soil class 'loam' is not known; use one of"):
        loads.soil_check(1000.0, 1e5, "loam")
    with pytest.raises(ValueError, match="pad_area_mm2 must be a finite number > 0"):
        loads.soil_check(1000.0, 0.0, "sand")
    with pytest.raises(ValueError, match="P_n must be a finite number >= 0"):
        loads.soil_check(-1.0, 1e5, "sand")
