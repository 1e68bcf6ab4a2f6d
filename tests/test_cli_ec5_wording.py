"""An EC5 rating speaks EN 1995-1-1 end to end (text, working, --json): lambda, lambda_rel, k_c,
beta_c, N_Rd and N_Ed in kN first, the service class of §2.3.1.3; never the NDS Ke, le/d and its
limit of 50, Cp, CD or the NDS dry/wet-service sentence. Every end condition and section kind."""

from __future__ import annotations

import itertools
import json
import re

import pytest

from fieldcheck.cli import main

ENDS = ("pinned", "fixed", "free", "guided")
# NDS words that must not reach a person reading an EC5 rating
NDS_WORDS = re.compile(
    r"\bKe\b|le/d|limit 50|\bCp\b|\bCD\b|Fc\*|Fc'|Emin|Fb\*|dry service|19 %|wet-service|"
    r"wet service"
)
POST = ["rate", "--method", "ec5", "--class", "C24", "--height", "3m", "--load", "30kN"]
SECTIONS = {
    "square": ["--section", "140mmx140mm"],
    "rectangle braced": ["--section", "90mmx140mm", "--brace-weak", "1.5m"],
    "round": ["--diameter", "150mm"],
    "built-up": ["--plies", "3", "--ply", "2x6", "--fastening", "nailed"],
    "nominal": ["--size", "4x4"],
    "spring end": ["--section", "140mmx140mm", "--top-spring", "50kN-m/rad"],
    "bowed, off centre, wet": [
        "--section",
        "140mmx140mm",
        "--offset-strong",
        "20mm",
        "--bow-strong",
        "20mm",
        "--moisture",
        "25%",
    ],
    "decayed, knot": ["--section", "140mmx140mm", "--decay-wide", "20mm", "--knot", "30mm"],
}


def _run(capsys, args):
    rc = main(args)
    cap = capsys.readouterr()
    return rc, cap.out, cap.err


def _check_text(out: str) -> None:
    assert not NDS_WORDS.search(out), NDS_WORDS.search(out)
    # EN 1995-1-1 §6.3.2: the slenderness and buckling factors in EC5's own symbols
    assert re.search(r"^λ [\d.]+, λ_rel [\d.]+, k_c [\d.]+, β_c 0\.[12]", out, re.M), out
    # N_Rd and N_Ed in kN first, lbf beside
    assert re.search(r"^N_Rd +[\d.,]+ kN \([\d,]+ lbf\)", out, re.M), out
    assert re.search(r"^N_Ed +[\d.,]+ kN \([\d,]+ lbf\)", out, re.M), out
    assert "Working:" in out and "Method: EC5 (EN 1995-1-1" in out


@pytest.mark.parametrize(("top", "bottom"), list(itertools.product(ENDS, ENDS)))
def test_every_end_condition_speaks_ec5(capsys, top, bottom):
    args = [*POST, *SECTIONS["square"], "--top", top, "--bottom", bottom, "--working"]
    rc, out, err = _run(capsys, args)
    if rc == 2:  # a mechanism (both ends free to move sideways, or pinned with free): refused
        assert "mechanism" in err and "Traceback" not in err
        return
    assert rc == 0, err
    _check_text(out)


@pytest.mark.parametrize("kind", list(SECTIONS))
def test_every_section_kind_speaks_ec5(capsys, kind):
    rc, out, err = _run(capsys, [*POST, *SECTIONS[kind], "--working"])
    assert rc == 0, err
    _check_text(out)


@pytest.mark.parametrize("kind", ["square", "round", "bowed, off centre, wet"])
def test_json_keys_speak_ec5(capsys, kind):
    rc, out, err = _run(capsys, [*POST, *SECTIONS[kind], "--json", "--working"])
    assert rc == 0, err
    s = json.loads(out)
    # no NDS keys on an EC5 rating
    for key in ("effective_length_factor", "slenderness_limit", "stability_factor"):
        assert key not in s
    for key in ("lambda", "lambda_rel", "k_c", "beta_c", "N_Rd_kN", "N_Ed_kN", "k_mod", "gamma_M"):
        assert key in s
    keys = list(s)
    assert keys.index("N_Rd_kN") < keys.index("allowable_load_lbf")  # kN first
    assert s["N_Rd_kN"] == s["allowable_load_kN"] and s["strength_class_edition"] == "EN 338:2016"
    assert not NDS_WORDS.search(" ".join(s["warnings"]))
    assert not NDS_WORDS.search(" ".join(f"{w['label']} {w['value']}" for w in s["working"]))


def test_unmeasured_moisture_uses_service_class_wording(capsys):
    # EN 1995-1-1 §2.3.1.3: service classes by moisture (12 % / 20 %), not NDS dry service
    rc, out, _ = _run(capsys, [*POST, *SECTIONS["square"]])
    assert rc == 0
    assert "Moisture not measured: the service class given (or 1) is used" in out
    assert "EN 1995-1-1 §2.3.1.3" in out


def test_metric_units_show_kn_only(capsys):
    rc, out, _ = _run(capsys, [*POST, *SECTIONS["square"], "--units", "metric"])
    assert rc == 0
    assert re.search(r"^N_Rd +[\d.,]+ kN +governed", out, re.M) and "lbf" not in out


def test_a_mixed_block_shows_each_post_its_own_clauses():
    # an NDS and an EC5 post rated together share one clause text per check; each post's
    # summary and working show only its own method's clause
    from fieldcheck.engine import explain
    from fieldcheck.records import rate_records

    common = {"section": "100x100mm", "height": "3 m", "load": "20 kN", "bow_weak": "20 mm"}
    r, errors = rate_records(
        [
            dict(common, species="douglas-fir-larch", grade="no2", duration="two-months"),
            dict(common, method="ec5", **{"class": "C24"}, duration="two-months"),
        ]
    )
    assert errors == []
    nds, ec = explain.summary(r, 0), explain.summary(r, 1)
    assert all("EN 1995-1-1" not in c["clause"] for c in nds["checks"])
    assert all("NDS" not in c["clause"] for c in ec["checks"])
    ec_checks = [s for s in explain.working(r, 1) if s.label.startswith("Check:")]
    assert ec_checks and all("NDS 2018 §3" not in s.clause for s in ec_checks)


def test_values_line_names_en338_symbols(capsys):
    # each value's status as EN 338 names the value (EN 338:2009 C35: f_m,k from the class name,
    # the rest recalled)
    rc, out, _ = _run(
        capsys, [*POST, "--section", "140mmx140mm", "--class", "C35", "--en338-edition", "2009"]
    )
    assert rc == 0
    assert re.search(r"^Values +f_m,k secondary, f_c,0,k memory", out, re.M), out


def test_condition_speaks_ec5(capsys):
    # a knot, a slope of grain and decay on an EC5 post: the strength ratios reduce f_c,0,k and
    # f_m,k (EN 338's symbols), never the NDS Fc and Fb; the net section is EN 1995-1-1 §6.1.4
    args = [*POST, "--section", "140mmx140mm", "--knot", "30mm", "--slope", "1:10"]
    rc, out, _ = _run(capsys, [*args, "--decay-wide", "20mm", "--working"])
    assert rc == 0
    assert not re.search(r"\bF[cb]\b", out), re.search(r".*\bF[cb]\b.*", out).group(0)
    assert re.search(r"Strength ratio.*: f_c,0,k x 0\.\d+, f_m,k x 0\.\d+", out), out
    net = re.search(r"^  Net section.*$", out, re.M).group(0)
    assert "EN 1995-1-1 §6.1.4" in net and "NDS" not in net, net
