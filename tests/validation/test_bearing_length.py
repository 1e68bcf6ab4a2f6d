"""Bearing length on the cap and sill sets both Cb and the bearing area (NDS 2018 §3.10.2,
§3.10.4): fc-perp = P / (lb x b) with Cb = (lb + 0.375) / lb for lb < 6 in."""

from __future__ import annotations

import json

import pytest

from fieldcheck.cli import main

POST = ["rate", "--size", "6x6", "--height", "8ft", "--species", "dfl", "--grade", "no2"]
CAP = ["--cap-species", "dfl", "--cap-end-distance", "12in", "--load", "1000lbf", "--json"]


def _cap_lbf(capsys, lb: str) -> float:
    assert main([*POST, *CAP, "--cap-bearing", lb]) == 0
    out = json.loads(capsys.readouterr().out)
    return next(c["capacity_lbf"] for c in out["checks"] if c["name"] == "cap_bearing")


@pytest.mark.parametrize(("lb", "cb"), [(2.0, 1.1875), (3.5, 1.107143), (5.5, 1.068182)])
def test_cap_bearing_area_and_cb(capsys, lb, cb):
    # NDS 2018 §3.10.4 (Cb formula) and §3.10.2; DF-L Fc-perp 625 psi (NDS Supplement Table 4A);
    # a 6x6 post is 5.5 in across the cap's grain
    assert _cap_lbf(capsys, f"{lb}in") == pytest.approx(625 * cb * 5.5 * lb, rel=1e-4)


def test_shorter_bearing_never_rates_higher(capsys):
    # NDS 2018 §3.10.2: a 2 in bearing carries less than a 5.5 in one (the area falls faster
    # than Cb rises)
    assert _cap_lbf(capsys, "2in") < _cap_lbf(capsys, "5.5in")


def test_bearing_longer_than_the_post_is_the_post(capsys):
    # the post bears only where it stands (geometry): a 12 in cap bearing is the 5.5 in post
    assert _cap_lbf(capsys, "12in") == pytest.approx(_cap_lbf(capsys, "5.5in"))


# EN 1995-1-1 §6.1.5: F_c,90,d <= k_c,90 f_c,90,d A_ef, f_c,90,d = k_mod f_c,90,k / gamma_M
# (§2.4.1 Eq. 2.14); C24 f_c,90,k 2.5 MPa (EN 338:2016 Table 1), k_mod 0.7 long-term, service
# class 1 (EN 1995-1-1 Table 3.1), gamma_M 1.3 (Table 2.3); k_c,90 = 1 and no 30 mm extension
# (the end distance and the next contact are not known: judgement)
EC5 = ["rate", "--section", "100mmx100mm", "--height", "3m", "--method", "ec5", "--class", "C24"]
EC5 += ["--cap-class", "C24", "--load", "10kN", "--duration", "ten-years", "--json"]
FC90D = 0.7 * 2.5 / 1.3  # MPa


def _ec5_cap_kn(capsys, *extra) -> float:
    assert main([*EC5, *extra]) in (0, 1)
    out = json.loads(capsys.readouterr().out)
    return next(c["capacity_kN"] for c in out["checks"] if c["name"] == "cap_bearing")


@pytest.mark.parametrize(("lb", "length"), [("50mm", 50.0), ("100mm", 100.0), ("150mm", 100.0)])
def test_ec5_bearing_length_sets_the_area_and_never_passes_the_post(capsys, lb, length):
    # EN 1995-1-1 §6.1.5 Eq. 6.3: A = 100 mm across x the bearing length, at most the post's
    # 100 mm (geometry: the post bears only where it stands)
    expected = FC90D * 100.0 * length / 1000.0
    assert _ec5_cap_kn(capsys, "--cap-bearing", lb) == pytest.approx(expected, rel=1e-4)


def test_ec5_bearing_takes_the_residual_end_area(capsys):
    # decay at the top leaves less of the end to bear on the cap, as in the NDS path
    # (EN 1995-1-1 §6.1.5: A_ef is the contact area); half the end in contact bears half
    sound = _ec5_cap_kn(capsys)
    assert sound == pytest.approx(FC90D * 100.0 * 100.0 / 1000.0, rel=1e-4)
    assert _ec5_cap_kn(capsys, "--decay-wide", "1in", "--decay-at", "top") < 0.7 * sound
    assert _ec5_cap_kn(capsys, "--end-contact", "50%") == pytest.approx(0.5 * sound, rel=1e-4)
    # decay at the bottom leaves the top's bearing as it is
    assert _ec5_cap_kn(capsys, "--decay-wide", "1in", "--decay-at", "bottom") == pytest.approx(
        sound, rel=1e-4
    )


def test_ec5_steel_plates_spread_the_bearing_as_in_the_nds_path(capsys):
    # --plate is applied in EC5 too (never ignored silently): the plate length along the grain
    # (200 mm) x the post's thickness across (100 mm), EN 1995-1-1 §6.1.5 with k_c,90 = 1
    expected = FC90D * 200.0 * 100.0 / 1000.0
    assert _ec5_cap_kn(capsys, "--plate", "200mm") == pytest.approx(expected, rel=1e-4)
    # a plate shorter than the post bears on the post's width (as the NDS path takes it)
    assert _ec5_cap_kn(capsys, "--plate", "50mm") == pytest.approx(_ec5_cap_kn(capsys), rel=1e-4)
