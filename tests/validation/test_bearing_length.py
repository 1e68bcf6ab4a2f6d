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
