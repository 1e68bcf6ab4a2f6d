"""An incised member (incised to take a preservative) is taken as treated: no CD above 1.6
(NDS 2018 Table 2.3.2 footnote) and no lambda above 1.0 (NDS 2018 Appendix N Table N3
footnote). Taking incised as treated is judgement. Hand values use NDS 2018 §3.7.1 Eq. 3.7-1
and the incising factors of NDS 2018 Table 4.3.8 written out here."""

from __future__ import annotations

import json
import math

import pytest

from fieldcheck.cli import main


def _cp(fce: float, fc_star: float, c: float = 0.8) -> float:
    # NDS 2018 §3.7.1 Eq. 3.7-1
    a = fce / fc_star
    h = (1 + a) / (2 * c)
    return h - math.sqrt(h * h - a / c)


def _incised_column_lbf(time: float, emin_factor: float = 1.0) -> float:
    # 4x4 DF-L No.2 (NDS Supplement Table 4A: Fc 1350, Emin 580,000; CF 1.15), 9 ft pinned;
    # Ci 0.80 on Fc and 0.95 on Emin (NDS 2018 Table 4.3.8)
    fc_star = 1350 * 1.15 * 0.80 * time
    fce = 0.822 * 580_000 * 0.95 * emin_factor / (108 / 3.5) ** 2  # NDS 2018 §3.7.1
    return _cp(fce, fc_star) * fc_star * 3.5 * 3.5


DIRECT = ("--load", "3000lbf", "--duration", "impact")
TRIBUTARY = ("--tributary", "40sqft", "--dead", "40psf", "--live", "100psf")
TRIBUTARY += ("--live-duration", "impact")


def _column(capsys, *extra):
    args = ["rate", "--size", "4x4", "--height", "9ft", "--species", "dfl", "--grade", "no2"]
    assert main([*args, "--incised", "yes", *extra, "--json"]) in (0, 1)
    out = json.loads(capsys.readouterr().out)
    return next(c for c in out["checks"] if c["name"] == "column")


@pytest.mark.parametrize("extra", [DIRECT, TRIBUTARY])
def test_asd_impact_on_an_incised_post_takes_cd_1_6(capsys, extra):
    col = _column(capsys, *extra)
    assert col["duration_factor"] == 1.6  # NDS 2018 Table 2.3.2 footnote
    # computed by hand from NDS 2018 Eq. 3.7-1 at CD 1.6
    assert col["capacity_lbf"] == pytest.approx(_incised_column_lbf(1.6), rel=2e-4)


@pytest.mark.parametrize("extra", [DIRECT, TRIBUTARY])
def test_lrfd_impact_on_an_incised_post_takes_lambda_1(capsys, extra):
    col = _column(capsys, "--method", "lrfd", *extra)
    assert col["duration_factor"] == 1.0  # NDS 2018 Appendix N Table N3 footnote
    # computed by hand: KF 2.40, phi 0.90 on Fc; KF 1.76, phi_s 0.85 on Emin (Appendix N)
    expected = _incised_column_lbf(2.40 * 0.90 * 1.0, 1.76 * 0.85)
    assert col["capacity_lbf"] == pytest.approx(expected, rel=2e-4)


def test_incised_leaves_cd_1_6_and_below_as_they_are(capsys):
    col = _column(capsys, "--load", "3000lbf", "--duration", "seven-days")
    assert col["duration_factor"] == 1.25  # NDS 2018 Table 2.3.2
    assert col["capacity_lbf"] == pytest.approx(_incised_column_lbf(1.25), rel=2e-4)
