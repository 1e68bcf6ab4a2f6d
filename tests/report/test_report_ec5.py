"""An EC5 post in the report speaks EN 1995-1-1 from its result to its assumptions: the service
class of §2.3.1.3 for moisture (never the NDS dry-service text), the buckling length factor β,
L_ef and λ (never Ke, le/d); a post whose ends were not given is drawn with the ends it was rated
with (pinned), NDS and EC5 alike."""

from __future__ import annotations

import re
from html import unescape

import pytest

from fieldcheck.report.html import render_report
from fieldcheck.store import Log

# NDS words that must not reach a person reading an EC5 post (the report strips tags: Ke is
# K<sub>e</sub>, le/d is written with a script l before <sub>e</sub>/d)
NDS_WORDS = re.compile(
    r"\bKe\b|\u2113e/d|le/d|limit 50|\bCp\b|\bCD\b|Fc\*|Fc'|Emin|dry service|19 %|wet.service"
)
EC5 = {"method": "ec5", "class": "C24", "section": "100mmx100mm", "height": "2.5m"}
NDS = {"size": "4x4", "height": "8ft", "species": "douglas-fir-larch", "grade": "no2"}


def _sections(tmp_path, rows) -> dict[str, str]:
    """Each post's section of the report as plain text, by tag."""
    with Log.open(tmp_path / "r.db", author="tester", device="device-R") as log:
        res = log.import_rows(rows, "Site", "Visit")
        assert res.errors == []
        out = render_report(log)
    out = re.sub(r"<style.*?</style>", "", out, flags=re.S)
    parts = re.split(r'<section class="post"', out)[1:]
    text = {}
    for part in parts:
        plain = re.sub(r"\s+", " ", unescape(re.sub(r"<[^>]+>", "", part)))
        tag = re.search(r"Post (\S+)", plain).group(1)
        text[tag] = plain
    return text


@pytest.mark.parametrize(
    "extra",
    [{}, {"moisture": "25%"}, {"load": "20kN", "duration": "seven-days"}, {"diameter": "120mm"}],
    ids=["no load", "wet", "loaded", "round"],
)
def test_ec5_post_speaks_ec5(tmp_path, extra):
    row = {**EC5, "tag": "E1", **extra}
    if "diameter" in extra:
        del row["section"]
    text = _sections(tmp_path, [row])["E1"]
    found = NDS_WORDS.search(text)
    assert not found, text[max(0, found.start() - 200) : found.end() + 100]
    # EN 1995-1-1 §6.3.2: the buckling length and slenderness in EC5's symbols
    assert "L_ef" in text and "λ" in text
    if "moisture" in extra:  # EN 1995-1-1 §2.3.1.3: 25 % is service class 3
        assert "service class 3" in text
    else:  # not measured: the service class used, said in EC5's words
        assert re.search(r"Moisture ?not measured: service class 1 used", text), text


@pytest.mark.parametrize("row", [NDS, EC5], ids=["nds", "ec5"])
def test_ends_not_given_are_drawn_as_rated(tmp_path, row):
    # the engine rates a post whose ends were not given as pinned at both ends (common
    # practice, no source); the sketch shows that, never "not drawn"
    text = _sections(tmp_path, [{**row, "tag": "P1", "load": "1000lbf"}])["P1"]
    assert "not drawn" not in text
    assert "top pinned (not given), bottom pinned (not given)" in text


def test_ec5_post_gives_n_rd_and_n_ed_in_kn_first(tmp_path):
    # EN 1995-1-1 §6.3.2: the design resistance N_Rd against the design load N_Ed, in kN, in a
    # report whose units are US customary (an NDS post beside it keeps lbf and its words)
    text = _sections(
        tmp_path,
        [
            {**EC5, "tag": "E1", "load": "20kN", "duration": "seven-days"},
            {**NDS, "tag": "N1", "load": "1000lbf"},
        ],
    )
    ec, nds = text["E1"], text["N1"]
    assert re.search(r"N_Rd \(governing\) ?[\d.,]+ kN", ec), ec[:600]
    assert re.search(r"N_Ed ?20(\.0+)? kN", ec) and "N_Ed / N_Rd" in ec
    assert "lbf" not in ec.split("Inputs as measured")[0]  # kN first: the result in kN
    assert re.search(r"Capacity \(governing\) ?[\d.,]+ lbf", nds) and "N_Rd" not in nds


def test_each_post_cites_its_own_methods_clauses_in_a_mixed_log(tmp_path):
    # an NDS and an EC5 post rated in one chunk share a check's clause text; each post's check
    # table cites only its own method (EN 1995-1-1 §6.3.2 for EC5, NDS 2018 §3.7.1 for NDS)
    text = _sections(
        tmp_path,
        [
            {**EC5, "tag": "E1", "load": "20kN", "duration": "seven-days"},
            {**NDS, "tag": "N1", "load": "1000lbf"},
        ],
    )
    ec = text["E1"].split("Checks")[1].split("Working")[0]
    nds = text["N1"].split("Checks")[1].split("Working")[0]
    assert "EN 1995-1-1 §6.3.2" in ec and "NDS 2018" not in ec, ec
    assert "NDS 2018 §3.7.1" in nds and "EN 1995-1-1" not in nds, nds
