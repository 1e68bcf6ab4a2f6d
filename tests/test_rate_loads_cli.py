"""`fieldcheck rate` with tributary loads, ground and remedies through the command line."""

import json

import pytest

from fieldcheck.cli import main

LBF = 4.4482216152605
POST = [
    "rate",
    "--size",
    "6x6",
    "--height",
    "8ft",
    "--species",
    "douglas-fir-larch",
    "--grade",
    "no1",
]
BAY = ["--tributary", "120 sq ft", "--dead", "10psf", "--live", "40psf", "--snow", "30psf"]


def _json(capsys, *args):
    assert main([*POST, *args, "--json"]) == 0
    return json.loads(capsys.readouterr().out)


def test_tributary_example_governing_combination(capsys):
    # ASCE 7-10 §2.4.1: 120 ft^2, D 10, L 40, S 30 psf -> D+0.75L+0.75S = 7,500 lb, CD 1.15 governs
    out = _json(capsys, *BAY)
    lc = out["load_combination"]
    assert lc["name"] == "D+0.75L+0.75S" and lc["factor_name"] == "CD" and lc["factor"] == 1.15
    assert lc["load_lbf"] == pytest.approx(7500.0, abs=0.05)
    assert out["demand_lbf"] == pytest.approx(7500.0, abs=0.05)
    assert "remedies" in out and out["remedies"] == []  # a 6x6 No.1 at 8 ft carries it


def test_tributary_with_spacing_and_presets(capsys):
    # common practice, no source: 10 x 12 ft bay = 120 ft^2; floor-carpet 10 psf (HUD Table 3.2),
    # residential 40 psf
    out = _json(
        capsys, "--spacing", "10ft x 12ft", "--dead", "floor-carpet", "--occupancy", "residential"
    )
    assert out["load_combination"]["name"] == "D+L"
    assert out["demand_lbf"] == pytest.approx(6000.0, abs=0.05)


def test_lrfd_lambda(capsys):
    # ASCE 7 §2.3.1 with NDS App. N Table N3 (from memory): 1.2D+1.6S+L = 12,000 lb, lambda 0.8
    out = _json(capsys, *BAY, "--method", "lrfd")
    lc = out["load_combination"]
    assert lc["name"] == "1.2D+1.6S+L" and lc["factor_name"] == "lambda" and lc["factor"] == 0.8
    assert lc["load_lbf"] == pytest.approx(12000.0, abs=0.05)


def test_direct_load_reports_as_given(capsys):
    out = _json(capsys, "--load", "4000lbf", "--duration", "two-months")
    assert (
        out["load_combination"]["name"] == "as given (--load)"
        and out["load_combination"]["factor"] == 1.15
    )


def test_failing_post_lists_remedies_json_and_text(capsys):
    # NDS 2018 §3.7.1, 4x4 No.2 DF-L pinned, computed by hand at 10 ft: 4x4 No.2 carries 4,665 lb;
    # 6,000 lb fails
    args = [
        "rate",
        "--size",
        "4x4",
        "--height",
        "10ft",
        "--species",
        "douglas-fir-larch",
        "--grade",
        "no2",
        "--load",
        "6000lbf",
        # the cap and the sill named: with them unidentified the options stay at repair until
        # they are (tests/engine/test_remedies_offered_pass.py)
        "--cap-species",
        "douglas-fir-larch",
        "--sill-species",
        "douglas-fir-larch",
    ]
    assert main([*args, "--json"]) == 0
    out = json.loads(capsys.readouterr().out)
    assert out["remedies"], out
    for rem in out["remedies"]:
        assert rem["ratio"] <= 1.0 and rem["action"] in ("no-action", "monitor")
        assert rem["record_changes"]
    assert main(args) == 0
    text = capsys.readouterr().out
    assert "What would make it pass" in text and "1. " in text


def test_ground_in_json(capsys):
    out = _json(capsys, "--load", "6000lbf", "--pad", "2ft x 2ft", "--soil", "clay")
    g = out["ground"]
    assert g["allowable_psf"] == 1500 and g["capacity_lbf"] == pytest.approx(
        6000.0
    )  # IBC 2012 Table 1806.2
    out = _json(capsys, "--load", "6000lbf", "--pad", "2ft x 2ft", "--soil", "unknown")
    assert out["ground"]["soil_check"] == "not verified" and out["action"] != "no-action"


@pytest.mark.parametrize(
    "args, word",
    [
        (["--tributary=-120sqft", "--dead", "10psf"], "tributary"),
        (["--load", "4000lbf", *BAY], "load"),
        (["--tributary", "120sqft", "--occupancy", "dance-hall"], "occupancy"),
        (["--tributary", "120sqft", "--rain", "5psf"], "rain_duration"),
        (["--dead", "10psf"], "dead"),
        (["--tributary", "120sqft"], "tributary"),
        # judgement: a dead load nobody stated is not zero (a floor's own weight, the dead part
        # of a load from above); refused until stated, 0 where there is truly none
        (["--tributary", "120sqft", "--live", "40psf"], "dead"),
        (["--spacing", "10ft x 12ft", "--snow", "30psf"], "dead"),
        (["--point-live", "2kip"], "point"),
        (["--tributary", "120sqft", "--live", "40psf", "--occupancy", "office"], "occupancy"),
        (["--tributary", "120sqft", "--dead=-10psf"], "dead"),
        (["--soil", "loam"], "soil"),
        (["--lateral-rule", "cal-osha", "--load", "1kip"], "brace_edge"),
    ],
)
def test_bad_input_one_sentence_exit_2(capsys, args, word):
    assert main([*POST, *args]) == 2
    err = capsys.readouterr().err.strip()
    assert err.startswith(f"fieldcheck: {word}"), err
    assert len(err.splitlines()) == 1 and "Traceback" not in err


def test_a_dead_load_stated_zero_is_taken_as_zero(capsys):
    # judgement: '0 psf' / '0 lbf' says there is none; then D+L is the live load alone
    out = _json(capsys, "--tributary", "100sqft", "--live", "40psf", "--dead", "0psf")
    assert out["demand_lbf"] == pytest.approx(4000.0, abs=1.0)  # 40 psf x 100 sq ft
    out = _json(capsys, "--point-live", "2kip", "--point", "0lbf")
    assert out["demand_lbf"] == pytest.approx(2000.0, abs=1.0)
