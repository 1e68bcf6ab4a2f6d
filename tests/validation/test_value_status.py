"""Each reference value carries its own status (read, secondary, memory) from
data/nds_reference_values.csv to every place the value reaches a person: rate's text and --json,
and the working that the interface and the report print (one place: the explain layer).

Statuses as recorded against the named sources: Spruce-Pine-Fir Select Structural Fb 1250 psi
was not confirmed (the only reproduction read gives 1150: memory) while its Fc, E and Emin agree
with NDS Supplement 2018 Table 4A as reproduced (secondary)."""

from __future__ import annotations

import json
import subprocess
import sys

import pytest

from fieldcheck.engine import explain, materials
from fieldcheck.engine.rating import rate
from fieldcheck.records import parse_records

SPF_SS = {"Fb": "memory", "Fc": "secondary", "Fc-perp": "secondary", "E": "secondary"}


def _rating(**cells):
    p = parse_records([{"height": "8ft", "load": "1000lb", **cells}])
    assert not p.errors
    return rate(p.batch)


def test_pack_and_unpack_every_status():
    for st in ("read", "secondary", "memory"):
        for key in materials.STATUS_KEYS:
            d = dict.fromkeys(materials.STATUS_KEYS, "secondary")
            d[key] = st
            assert materials.unpack_statuses(materials.pack_statuses(d)) == d
    assert materials.unpack_statuses(-1) is None


def test_summary_and_working_carry_each_value_status():
    r = _rating(size="2x6", species="spruce-pine-fir", grade="select-structural")
    s = explain.summary(r, 0)
    assert {k: s["value_statuses"][k] for k in SPF_SS} == SPF_SS
    steps = {st.label: st.value for st in explain.working(r, 0)}
    assert steps["Reference Fc"].endswith(" (secondary)")
    assert "Fb memory" in steps["Status of the reference values"]
    assert explain.status_line(s).startswith("Fb memory, Fc secondary")


@pytest.mark.parametrize(
    ("cells", "fc_note"),
    [
        ({"size": "6x10", "species": "hem-fir", "grade": "no1"}, " (from memory)"),
        ({"size": "2x8", "species": "southern-pine", "grade": "no2"}, " (secondary)"),
        ({"diameter": "8 in", "species": "douglas-fir-larch", "grade": "no2"}, " (secondary)"),
        # measured, no nominal size: held to the thinnest timber's Fc, the lower of Posts and
        # Timbers (secondary) and Beams and Stringers (memory): the weaker status
        (
            {"section": "4 in x 4 in", "species": "douglas-fir-larch", "grade": "no2"},
            " (from memory)",
        ),
    ],
)
def test_the_fc_step_says_its_status(cells, fc_note):
    steps = {st.label: st.value for st in explain.working(_rating(**cells), 0)}
    assert steps["Reference Fc"].endswith(fc_note)


def _cli(*args):
    return subprocess.run(
        [sys.executable, "-m", "fieldcheck", "rate", *args],
        capture_output=True,
        text=True,
        check=True,
    ).stdout


def test_rate_text_and_json_show_each_value_status():
    args = ("--size", "2x6", "--species", "spf", "--grade", "ss", "--height", "8ft")
    text = _cli(*args, "--load", "1000lb")
    assert "Values        Fb memory, Fc secondary" in text
    js = json.loads(_cli(*args, "--load", "1000lb", "--json"))
    assert {k: js["value_statuses"][k] for k in SPF_SS} == SPF_SS
    assert js["values_status"] == "memory"  # the weakest, as before
