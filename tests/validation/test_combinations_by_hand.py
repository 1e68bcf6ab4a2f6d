"""Every check of one post under dead, live, roof live and snow loads, worked by hand.

A 4x4 DF-L No.2, 11 ft, pinned, on a DF-L cap (3.5 in bearing) and a Hem-Fir sill (2 in
bearing), on a 2 ft x 2 ft x 6 in pad on sand; 45 sq ft at D 55, L 40, Lr 20, S 30 psf:
D 2,475, L 1,800, Lr 900, S 1,350 lb. Hand values use NDS 2018 §3.7.1 Eq. 3.7-1, §3.10.1,
§3.10.2 and Table 2.3.2 (CD), ASCE 7-10 §2.4.1 (ASD) and §2.3.1 (LRFD), NDS 2018 Appendix N
(KF, phi, lambda) and IBC 2012 Table 1806.2 (sand 2,000 psf), written out here.
"""

from __future__ import annotations

import json
import math

import pytest

from fieldcheck.cli import main

ARGS = ["rate", "--size", "4x4", "--height", "11ft", "--species", "dfl", "--grade", "no2"]
ARGS += ["--tributary", "45sqft", "--dead", "55psf", "--live", "40psf", "--roof-live", "20psf"]
ARGS += ["--snow", "30psf", "--cap-species", "dfl", "--cap-bearing", "3.5in"]
ARGS += ["--sill-species", "hem-fir", "--sill-bearing", "2in"]
ARGS += ["--pad", "2ftx2ft", "--pad-thickness", "6in", "--soil", "sand", "--json"]
A = 3.5 * 3.5  # in2


def _cp(fce: float, fc_star: float, c: float = 0.8) -> float:
    # NDS 2018 §3.7.1 Eq. 3.7-1
    a = fce / fc_star
    h = (1 + a) / (2 * c)
    return h - math.sqrt(h * h - a / c)


def _column_lbf(time: float, emin_factor: float = 1.0) -> float:
    fc_star = 1350 * 1.15 * time  # Supplement Table 4A: Fc 1350, CF 1.15
    fce = 0.822 * 580_000 * emin_factor / (132 / 3.5) ** 2  # NDS 2018 §3.7.1
    return _cp(fce, fc_star) * fc_star * A


def _checks(capsys, method: str) -> dict:
    assert main([*ARGS, "--method", method]) in (0, 1)
    out = json.loads(capsys.readouterr().out)
    return {c["name"]: c for c in out["checks"]}


def test_asd_each_check_its_own_combination(capsys):
    c = _checks(capsys, "asd")
    # ASCE 7 §2.4.1 (4): D + 0.75L + 0.75S = 4,837.5 lb at CD 1.15, the largest column ratio
    assert c["column"]["combination"] == "D+0.75L+0.75S"
    assert c["column"]["capacity_lbf"] == pytest.approx(_column_lbf(1.15), rel=2e-4)
    # end grain, proportional to CD: the largest load / CD, D + L = 4,275 lb at CD 1.0
    assert c["end_bearing"]["combination"] == "D+L"
    assert c["end_bearing"]["capacity_lbf"] == pytest.approx(1350 * 1.15 * A, rel=2e-4)
    # no CD on Fc-perp (NDS 2018 Table 2.3.2) nor on soil: the largest load, 4,837.5 lb
    for name in ("cap_bearing", "sill_bearing", "soil_bearing"):
        assert c[name]["combination"] == "D+0.75L+0.75S"
        assert c[name]["ratio"] * c[name]["capacity_lbf"] == pytest.approx(4837.5, rel=2e-4)
    # NDS 2018 §3.10.2, §3.10.4: Cb 1 (no end distance given), area = bearing length x 3.5 in
    assert c["cap_bearing"]["capacity_lbf"] == pytest.approx(625 * 3.5 * 3.5, rel=2e-4)
    assert c["sill_bearing"]["capacity_lbf"] == pytest.approx(405 * 2.0 * 3.5, rel=2e-4)
    # the load spreads 1:1 through the 6 in pad: (3.5 + 12)^2 in2 at 2,000 psf
    assert c["soil_bearing"]["capacity_lbf"] == pytest.approx(2000 * 15.5**2 / 144, rel=2e-4)


def test_lrfd_each_check_its_own_combination(capsys):
    c = _checks(capsys, "lrfd")
    # ASCE 7 §2.3.1 (3): 1.2D + 1.6S + L = 6,930 lb, lambda 0.8 (Table N3), the largest
    load = 1.2 * 2475 + 1.6 * 1350 + 1800
    assert c["column"]["combination"] == "1.2D+1.6S+L"
    assert c["column"]["duration_factor"] == 0.8
    expected = _column_lbf(2.40 * 0.90 * 0.8, 1.76 * 0.85)  # KF, phi (Appendix N)
    assert c["column"]["capacity_lbf"] == pytest.approx(expected, rel=2e-4)
    assert c["column"]["ratio"] == pytest.approx(load / expected, rel=2e-4)
    # Fc-perp: KF 1.67, phi 0.90 (Appendix N) and lambda where it reduces (judgement)
    assert c["sill_bearing"]["capacity_lbf"] == pytest.approx(
        405 * 2.0 * 3.5 * 1.67 * 0.90 * 0.8, rel=2e-4
    )
