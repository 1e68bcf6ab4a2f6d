"""A round post bends as the round section it is: S = pi D^3 / 32 (mechanics). NDS 2018 §3.7.3
takes the square of equal area for the column's stability (Cp, FcE) only. The eccentric check
is NDS 2018 Eq. 15.4-1 with a bow (Example G's method: fb = P bow / S, amplified by
1 / (1 - fc/FcE)), solved here by hand for the load at which it reaches 1."""

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


def _bowed_round_capacity_lbf(dia_in: float, height_in: float, bow_in: float) -> float:
    # DF-L No.2 round post: the lower of Supplement Table 4A and Table 4D (Posts and Timbers)
    # values, Fc 700, Fb 750, Emin 470,000 psi (judgement: values that fit a round post); CD 1
    area = math.pi * dia_in**2 / 4
    s = math.pi * dia_in**3 / 32  # round section modulus (mechanics)
    d = dia_in * math.sqrt(math.pi) / 2  # NDS 2018 §3.7.3: the square of equal area
    fce = 0.822 * 470_000 / (height_in / d) ** 2  # NDS 2018 §3.7.1
    fc_prime = 700 * _cp(fce, 700)
    lo, hi = 0.0, fc_prime * area
    for _ in range(200):  # the load at which NDS 2018 Eq. 15.4-1 reaches 1
        p = 0.5 * (lo + hi)
        fc = p / area
        total = (fc / fc_prime) ** 2 + (p * bow_in / s) / (750 * (1 - fc / fce))
        lo, hi = (lo, p) if total > 1 else (p, hi)
    return lo


@pytest.mark.parametrize(("dia", "bow"), [(6.0, 1.0), (8.0, 0.5), (5.0, 0.75)])
def test_bowed_round_post_uses_the_round_section_modulus(capsys, dia, bow):
    args = ["rate", "--diameter", f"{dia}in", "--height", "8ft", "--species", "dfl"]
    args += ["--grade", "no2", "--load", "1000lbf", "--duration", "ten-years"]
    assert main([*args, "--bow-weak", f"{bow}in", "--json"]) == 0
    out = json.loads(capsys.readouterr().out)
    ecc = next(c for c in out["checks"] if c["name"] == "eccentric")
    # computed by hand from NDS 2018 Eq. 3.7-1 and Eq. 15.4-1 with S = pi D^3 / 32
    expected = _bowed_round_capacity_lbf(dia, 96.0, bow)
    assert ecc["capacity_lbf"] == pytest.approx(expected, rel=1e-3)
