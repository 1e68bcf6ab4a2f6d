"""End-grain bearing above 0.75 Fc* asks for a steel plate (NDS 2018 §3.10.1.3).

A 6x6 Douglas Fir-Larch No.1 post, 4 ft, pinned ends, on steel or concrete at both ends (no cap
or sill of wood), dry, ten-year load. Fc = 1,000 psi (NDS Supplement Table 4D, Posts and
Timbers, from memory), A = 30.25 in2, so 0.75 Fc* A = 22,688 lb at CD 1.0 (computed by hand). A
requirement of the NDS not met is not a failure: the post is at least monitored until a plate is
fitted (judgement), and the warning says why.
"""

from __future__ import annotations

import json

import pytest

from fieldcheck.cli import main

POST = ["rate", "--size", "6x6", "--height", "4ft", "--species", "dfl", "--grade", "no1"]
POST += ["--top", "pinned", "--bottom", "pinned", "--cap-species", "none"]
POST += ["--sill-species", "none", "--moisture", "12%", "--duration", "ten-years", "--json"]
LIMIT_LB = 0.75 * 1000 * 5.5 * 5.5  # NDS 2018 §3.10.1.3, computed by hand: 22,687.5 lb


def _rate(capsys, *extra) -> dict:
    assert main([*POST, *extra]) in (0, 1)
    return json.loads(capsys.readouterr().out)


@pytest.mark.parametrize(("load", "plate_asked"), [(22_500, False), (23_000, True)])
def test_plate_asked_above_three_quarters_of_fc_star(capsys, load, plate_asked):
    assert 22_500 < LIMIT_LB < 23_000
    out = _rate(capsys, "--load", f"{load}lbf")
    asked = any("§3.10.1.3" in w for w in out["warnings"])
    assert asked is plate_asked
    # the column ratio stays under 0.8 (no action by the ratio bands): the plate alone monitors
    assert out["demand_capacity_ratio"] < 0.8
    assert out["action"] == ("monitor" if plate_asked else "no-action")


def test_a_plate_recorded_clears_it(capsys):
    out = _rate(capsys, "--load", "23000lbf", "--end-plate", "yes")
    assert not any("§3.10.1.3" in w for w in out["warnings"])
    assert out["action"] == "no-action"
