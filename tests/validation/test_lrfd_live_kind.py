"""LRFD time effect factor by the kind of live load, from the tributary-load columns.

NDS 2018 Appendix N Table N3: 1.2D + 1.6L + 0.5(Lr or S or R) takes lambda 0.7 when L is from
storage, 0.8 from occupancy and 1.25 from impact. Hand values use NDS 2018 §3.7.1 Eq. 3.7-1 and
the LRFD factors of NDS 2018 Table 4.3.1 / Appendix N written out here, not the engine's.
"""

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


def _lrfd_column_lbf(lam: float) -> float:
    # 4x4 DF-L No.2 (NDS Supplement Table 4A: Fc 1350, Emin 580,000; CF 1.15), 9 ft pinned
    fc_star = 1350 * 1.15 * 2.40 * 0.90 * lam  # KF 2.40, phi_c 0.90, lambda (Appendix N)
    emin = 580_000 * 1.76 * 0.85  # KF 1.76, phi_s 0.85 (Appendix N)
    fce = 0.822 * emin / (108 / 3.5) ** 2  # NDS 2018 §3.7.1
    return _cp(fce, fc_star) * fc_star * 3.5 * 3.5


def _column(capsys, *extra):
    args = ["rate", "--size", "4x4", "--height", "9ft", "--species", "dfl", "--grade", "no2"]
    args += ["--method", "lrfd", "--tributary", "40sqft", "--dead", "40psf", *extra, "--json"]
    assert main(args) == 0
    out = json.loads(capsys.readouterr().out)
    return next(c for c in out["checks"] if c["name"] == "column")


@pytest.mark.parametrize(
    "extra, lam, live_psf",
    [
        (("--occupancy", "storage-light"), 0.7, 125),  # NDS 2018 App. N Table N3: storage
        (("--occupancy", "storage-heavy"), 0.7, 250),  # NDS 2018 App. N Table N3: storage
        (("--live", "100psf"), 0.8, 100),  # NDS 2018 App. N Table N3: occupancy
        (("--occupancy", "office"), 0.8, 50),  # NDS 2018 App. N Table N3: occupancy
        (("--live", "100psf", "--live-duration", "impact"), 1.25, 100),  # Table N3: impact
        # a live load stated permanent takes the storage row (judgement: Table N3 has no other)
        (("--live", "100psf", "--live-duration", "permanent"), 0.7, 100),
    ],
)
def test_lambda_follows_the_kind_of_live_load(capsys, extra, lam, live_psf):
    col = _column(capsys, *extra)
    load = 1.2 * 40 * 40 + 1.6 * live_psf * 40  # ASCE 7 §2.3.1 (2), lb
    assert col["combination"] == "1.2D+1.6L"  # ASCE 7 §2.3.1 (2), no Lr, S or R given
    assert col["duration_factor"] == lam  # NDS 2018 App. N Table N3
    # computed by hand from NDS 2018 Eq. 3.7-1 with the Appendix N factors
    assert col["capacity_lbf"] == pytest.approx(_lrfd_column_lbf(lam), rel=2e-4)
    assert col["ratio"] == pytest.approx(load / _lrfd_column_lbf(lam), rel=2e-4)


def test_storage_is_not_rated_above_occupancy(capsys):
    # NDS 2018 App. N Table N3: the same load from storage has the smaller lambda (0.7 < 0.8)
    storage = _column(capsys, "--occupancy", "storage-light")
    occupancy = _column(capsys, "--live", "125psf")
    assert storage["ratio"] > occupancy["ratio"]
