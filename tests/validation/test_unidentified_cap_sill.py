"""A cap or sill nobody identified is screened against the softest wood held (bearing_screen).

The screening capacity is NDS 2018 §3.10.2 with Cb = 1 (§3.10.4) at the lowest Fc-perp held,
375 psi (Southern Pine timbers, NDS Supplement Table 4D, from memory), or EN 1995-1-1 §6.1.5
with k_c,90 = 1 at the lowest f_c,90,k held, 2.0 MPa (C14, EN 338 Table 1), gamma_M 1.3
(Table 2.3). The escalation to repair is judgement (crushing is possible, not found). No ratio,
capacity or governing check changes.
"""

from __future__ import annotations

import json

import numpy as np
import pytest

from fieldcheck.cli import main
from fieldcheck.engine import combinations
from fieldcheck.engine.batch import make_batch

POST = ["rate", "--size", "6x6", "--height", "8ft", "--species", "dfl", "--grade", "no1"]
POST += ["--top", "pinned", "--bottom", "pinned"]
SOFT_6X6_LBF = 375 * 5.5 * 5.5  # NDS 2018 §3.10.2: Fc-perp x bearing area, Cb = 1
CAP_WORDS = "Cap or beam above not identified"
SILL_WORDS = "Sill or plate below not identified"


def _rate(capsys, *extra, duration: tuple[str, ...] = ("--duration", "ten-years")) -> dict:
    assert main([*POST, *duration, *extra, "--json"]) in (0, 1)
    return json.loads(capsys.readouterr().out)


def _said(out: dict, words: str) -> bool:
    return any(words in w for w in out["warnings"])


@pytest.mark.parametrize(("load", "raised"), [(11_300, False), (11_400, True), (15_000, True)])
def test_a_load_above_the_softest_wood_is_flagged_and_escalated(capsys, load, raised):
    # computed by hand: 375 psi x 30.25 in2 = 11,343.75 lb
    assert 11_300 < SOFT_6X6_LBF < 11_400
    out = _rate(capsys, "--load", f"{load}lbf")
    assert _said(out, CAP_WORDS) is raised and _said(out, SILL_WORDS) is raised
    # judgement: an unidentified cap that may crush is repaired before the due date
    assert (out["action"] == "repair-or-brace") is raised


def test_the_screen_moves_no_ratio_capacity_or_governing_check(capsys):
    flagged = _rate(capsys, "--load", "15000lbf")
    not_wood = _rate(
        capsys, "--load", "15000lbf", "--cap-species", "none", "--sill-species", "none"
    )
    assert not _said(not_wood, CAP_WORDS) and not _said(not_wood, SILL_WORDS)
    for key in ("allowable_load_lbf", "demand_capacity_ratio", "governing_check"):
        assert flagged[key] == not_wood[key]
    assert flagged["checks"] == not_wood["checks"]
    assert flagged["action"] == "repair-or-brace" and not_wood["action"] == "no-action"
    # the post needs no change: no remedy is proposed, the note says to identify the cap
    assert flagged["remedies"] == [] and "Identify the cap or sill" in flagged["remedies_note"]


def test_an_identified_cap_is_checked_not_screened(capsys):
    out = _rate(capsys, "--load", "15000lbf", "--cap-species", "dfl")
    assert not _said(out, CAP_WORDS) and _said(out, SILL_WORDS)


def test_lrfd_takes_kf_phi_and_the_load_over_min_lambda(capsys):
    # NDS 2018 Appendix N: KF 1.67, phi 0.90 on Fc-perp; lambda on the load side, min(lambda, 1)
    soft = SOFT_6X6_LBF * 1.67 * 0.90  # 17,049 lb
    lrfd = ("--method", "lrfd")  # no duration: permanent, lambda 0.6
    above = _rate(capsys, *lrfd, "--load", f"{0.6 * soft * 1.01:.0f}lbf", duration=())
    assert above["load_combination"]["factor"] == 0.6
    assert _said(above, CAP_WORDS)  # 0.606 soft / 0.6 > soft
    below = _rate(capsys, *lrfd, "--load", f"{0.6 * soft * 0.99:.0f}lbf", duration=())
    assert not _said(below, CAP_WORDS)


def test_ec5_takes_the_softest_class(capsys):
    # EN 1995-1-1 §6.1.5: 2.0 MPa x k_mod 0.7 / 1.3 x 100 mm x 100 mm = 10.77 kN
    args = ["rate", "--section", "100mmx100mm", "--height", "2m", "--method", "ec5"]
    args += ["--class", "C24", "--duration", "ten-years", "--json"]
    for load, raised in (("10.7kN", False), ("10.9kN", True)):
        assert main([*args, "--load", load]) in (0, 1)
        out = json.loads(capsys.readouterr().out)
        assert _said(out, CAP_WORDS) is raised


def test_the_largest_load_over_the_combinations_not_the_reference():
    # bearing across the grain takes no CD (NDS 2018 Table 2.3.2): D 4,000 + Lr 500 lb gives
    # D+Lr = 4,500 lb, though D alone (4,000 / 0.9) is the reference combination (ASCE 7 §2.4.1)
    lbf = 4.4482216152605
    b = make_batch(
        d1_mm=88.9,
        d2_mm=88.9,
        height_mm=1219.2,
        fc_mpa=9.3,
        emin_mpa=4000.0,
        nom_d_n=np.array([1000.0, 4000.0]) * lbf,
        nom_l_n=np.array([3000.0, 0.0]) * lbf,
        nom_lr_n=np.array([2000.0, 500.0]) * lbf,
        load_n=0.0,
    )
    # ASCE 7 §2.4.1 (4): D + 0.75L + 0.75Lr = 1,000 + 2,250 + 1,500 = 4,750 lb for the first
    assert combinations.largest_perp_load(b) / lbf == pytest.approx([4750.0, 4500.0])


def test_no_load_says_at_which_duration_the_capacity_is_shown(capsys):
    assert main([*POST, "--json"]) == 0
    out = json.loads(capsys.readouterr().out)
    assert any("permanent load (CD 0.9; LRFD lambda 0.6)" in w for w in out["warnings"])


@pytest.mark.parametrize("method", ["asd", "lrfd", "ec5"])
def test_no_load_capacity_is_shown_at_the_lowest_duration_factor(capsys, method):
    # a missing duration is never read as the kinder one: with no load the capacity shown is that
    # of a permanent load (NDS 2018 Table 2.3.2: CD 0.9; Appendix N Table N3: lambda 0.6;
    # EN 1995-1-1 Table 3.1: the permanent class's k_mod), as for a load given with no duration;
    # the choice is judgement
    post = [*POST[:5], "--class", "C24", *POST[9:]] if method == "ec5" else POST
    assert main([*post, "--method", method, "--json"]) == 0
    none = json.loads(capsys.readouterr().out)
    for duration, same in (("permanent", True), ("ten-years", False)):
        args = [*post, "--method", method, "--load", "1kN", "--duration", duration]
        assert main([*args, "--json"]) == 0
        given = json.loads(capsys.readouterr().out)
        assert (none["allowable_load_kN"] == given["allowable_load_kN"]) is same, duration


@pytest.mark.parametrize(
    ("method", "loads", "name"),
    [
        ("lrfd", ["--live", "40psf"], "1.2D+1.6L"),  # ASCE 7 §2.3.1 (2) with no Lr, S or R
        ("lrfd", ["--snow", "30psf"], "1.2D+1.6S"),  # ASCE 7 §2.3.1 (3) with no L
        ("asd", ["--live", "40psf"], "D+L"),  # ASCE 7 §2.4.1 (2)
    ],
)
def test_combination_names_only_the_loads_present(capsys, method, loads, name):
    args = [*POST[:-4], "--species", "dfl", "--grade", "no2", "--method", method]
    args += ["--tributary", "40sqft", "--dead", "40psf", *loads, "--json"]
    assert main(args) in (0, 1)
    out = json.loads(capsys.readouterr().out)
    assert out["governing_combination"] == name
    assert out["load_combination"]["name"] == name


@pytest.mark.parametrize("none", [("--cap-class", "none"), ("--cap-species", "none")])
def test_ec5_can_say_the_cap_is_not_wood(capsys, none):
    # the warning asks for the class or none: an EC5 record takes none too (judgement: a steel
    # or concrete cap has no bearing across the grain to screen)
    args = ["rate", "--section", "100mmx100mm", "--height", "2m", "--method", "ec5"]
    args += ["--class", "C24", "--duration", "ten-years", "--load", "15kN", "--json"]
    assert main([*args, *none]) in (0, 1)
    out = json.loads(capsys.readouterr().out)
    assert not _said(out, CAP_WORDS) and _said(out, SILL_WORDS)
