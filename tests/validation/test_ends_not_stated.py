"""An end the record does not state is taken as pinned, and every surface says so.

Pinned (NDS 2018 Appendix G, case (d): Ke 1.0) holds the end sideways; a post whose top can move
sideways is a sway case (a flagpole: Ke 2.1, more than four times weaker in Euler buckling). An
end nobody recorded is therefore not the safe reading: the rating says it was assumed and never
calls the post 'no action' on it (judgement), as a missing load, duration or material is said.
"""

from __future__ import annotations

import csv
import json

import pytest

from fieldcheck.cli import main
from fieldcheck.engine import explain
from fieldcheck.records import rate_records

POST = [
    "rate", "--size", "6x6", "--height", "8ft", "--species", "dfl", "--grade", "no1",
    "--load", "4000lbf", "--duration", "ten-years", "--cap-species", "none",
    "--sill-species", "none",
]  # fmt: skip
WORDS = "End condition not stated"


def _rate(capsys, *extra) -> dict:
    assert main([*POST, *extra, "--json"]) in (0, 1)
    return json.loads(capsys.readouterr().out)


@pytest.mark.parametrize(
    "ends",
    [(), ("--top", "pinned"), ("--bottom", "pinned"), ("--top-ratio", "2")],
)
def test_an_end_not_stated_is_said_and_never_no_action(capsys, ends):
    out = _rate(capsys, *ends)
    assert any(WORDS in w for w in out["warnings"])
    # judgement: the column rests on an end nobody saw: at least monitor, never 'no action'
    assert out["action"] == "monitor"
    # the rating itself is pinned-pinned (NDS 2018 Appendix G): Ke 1.0, as when both are given
    stated = _rate(capsys, "--top", "pinned", "--bottom", "pinned")
    assert out["effective_length_factor"] == 1.0 or ends == ("--top-ratio", "2")
    if not ends:
        assert out["allowable_load_lbf"] == stated["allowable_load_lbf"]


@pytest.mark.parametrize(
    "ends",
    [
        ("--top", "pinned", "--bottom", "pinned"),
        ("--top", "free", "--bottom", "fixed"),
        ("--top-spring", "400 kip-in/rad", "--bottom", "pinned"),
        ("--top-ratio", "2", "--bottom-ratio", "2"),
    ],
)
def test_both_ends_stated_by_an_end_or_a_spring_raise_nothing(capsys, ends):
    out = _rate(capsys, *ends)
    assert not any(WORDS in w for w in out["warnings"])


def test_the_batch_file_and_an_ec5_post_say_it_too(tmp_path, capsys):
    src, dst = tmp_path / "in.csv", tmp_path / "out.csv"
    src.write_text(
        "tag,size,height,species,grade,load,duration,cap_species,sill_species,top,bottom\n"
        "A,6x6,8ft,douglas-fir-larch,no1,4000 lbf,ten-years,none,none,,\n"
        "B,6x6,8ft,douglas-fir-larch,no1,4000 lbf,ten-years,none,none,pinned,pinned\n"
    )
    assert main(["rate", "--batch", str(src), "--out", str(dst)]) == 0
    rows = {r["tag"]: r for r in csv.DictReader(dst.open())}
    assert WORDS in rows["A"]["warnings"] and rows["A"]["action"] == "monitor"
    assert WORDS not in rows["B"]["warnings"] and rows["B"]["action"] == "no-action"
    rec = {
        "method": "ec5", "class": "C24", "section": "150mm x 150mm", "height": "2.4 m",
        "load": "20 kN", "duration": "seven-days", "cap_class": "none", "sill_class": "none",
    }  # fmt: skip
    r, errors = rate_records([rec])
    assert not errors
    said = explain.warnings(r, 0)
    assert any(WORDS in w and "β" in w for w in said)  # EN 1995-1-1 words: beta, not Ke
    assert explain.summary(r, 0)["action"] == "monitor"
