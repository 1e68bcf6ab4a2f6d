"""`rate --batch` result columns: an NDS row keeps the columns its users read; an EC5 row speaks
EN 1995-1-1 (N_Rd, N_Ed, lambda, lambda_rel, k_c, beta_c, k_mod, gamma_M) and leaves the NDS
terms (Ke, le/d and its limit, Cp, allowable load) blank; every row says which table its values
came from and how sure they are (read, secondary, memory)."""

from __future__ import annotations

import csv
import io
import json
import re

import pytest

from fieldcheck.cli import main
from fieldcheck.commands.csv_option import IDENTIFYING, RESULT_COLUMNS

# NDS words that must not reach a person reading an EC5 row (as tests/test_cli_ec5_wording.py)
NDS_WORDS = re.compile(
    r"\bKe\b|le/d|limit 50|\bCp\b|\bCD\b|Fc\*|Fc'|Emin|dry service|19 %|wet.service"
)
HEADER = ["tag", "method", "class", "section", "height", "load", "size", "species", "grade"]
NDS_ROW = ["N1", "", "", "", "10ft", "4000lbf", "4x4", "douglas-fir-larch", "no2"]
EC5_ROW = ["E1", "ec5", "C24", "100mmx100mm", "2.5m", "40kN", "", "", ""]
NDS_ONLY = (
    "allowable_load_lbf",
    "allowable_load_kN",
    "effective_length_factor",
    "slenderness_ratio",
    "stability_factor",
    "within_slenderness_limit",
)
# EN 1995-1-1's terms, after the values' source and status, before the error
EC5_ONLY = RESULT_COLUMNS[RESULT_COLUMNS.index("values_status") + 1 : -1]


def _batch(tmp_path, capsys, rows, name="in.csv") -> list[dict[str, str]]:
    src = tmp_path / name
    with src.open("w", newline="") as fh:
        w = csv.writer(fh)
        w.writerow(HEADER)
        w.writerows(rows)
    out = tmp_path / f"out-{name}"
    assert main(["rate", "--batch", str(src), "--out", str(out)]) == 0, capsys.readouterr().err
    capsys.readouterr()
    return list(csv.DictReader(out.open()))


def _json(capsys, row: list[str]) -> dict:
    args = ["rate", "--json"]
    for k, v in zip(HEADER, row, strict=True):
        if v:
            args += [f"--{k}", v]
    assert main(args) == 0
    return json.loads(capsys.readouterr().out)


def test_ec5_row_speaks_ec5(tmp_path, capsys):
    nds, ec = _batch(tmp_path, capsys, [NDS_ROW, EC5_ROW])
    # computed by hand, EN 1995-1-1 §6.3.2 Eq. 6.21-6.26 with EN 338:2016 C24 (f_c,0,k 21 MPa,
    # E_0,05 7400 MPa), 100 x 100 mm, L_ef 2.5 m: lambda = 2500 / (100 / sqrt 12) = 86.60,
    # lambda_rel = 86.60 / pi * sqrt(21 / 7400) = 1.4685, k = 1.6951, k_c = 0.39343; k_mod 0.6
    # (permanent, service class 1, EN 1995-1-1 Table 3.1), gamma_M 1.3 (Table 2.3):
    # N_Rd = 0.39343 * 0.6 * 21 / 1.3 * 10000 mm2 = 38.13 kN
    assert float(ec["N_Rd_kN"]) == pytest.approx(38.132, abs=0.002)
    assert float(ec["N_Ed_kN"]) == pytest.approx(40.0)
    assert float(ec["lambda"]) == pytest.approx(86.603, abs=1e-3)
    assert float(ec["lambda_rel"]) == pytest.approx(1.4685, abs=1e-4)
    assert float(ec["k_c"]) == pytest.approx(0.39343, abs=1e-5)
    assert float(ec["beta_c"]) == 0.2  # EN 1995-1-1 Eq. 6.29, solid timber
    assert float(ec["buckling_length_factor"]) == 1.0  # pinned both ends (judgement, as NDS G1)
    assert float(ec["k_mod"]) == 0.6 and float(ec["gamma_M"]) == 1.3
    assert float(ec["demand_capacity_ratio"]) == pytest.approx(40.0 / 38.132, abs=1e-3)
    for col in NDS_ONLY:  # the NDS terms are not an EC5 post's
        assert ec[col] == "", col
    assert ec["warnings"] and not NDS_WORDS.search(ec["warnings"]), ec["warnings"]
    assert "EN 1995-1-1 §2.3.1.3" in ec["warnings"]  # moisture: the service class, not NDS
    assert EC5_ONLY[0] == "N_Rd_kN" and "lambda_rel" in EC5_ONLY and "gamma_M" in EC5_ONLY
    for col in EC5_ONLY:  # and an NDS row has none of EC5's
        assert nds[col] == "", col


def test_nds_row_keeps_its_columns(tmp_path, capsys):
    (nds,) = _batch(tmp_path, capsys, [NDS_ROW])
    s = _json(capsys, NDS_ROW)
    # the batch row and the single post's --json agree, column for column (NDS 2018 §3.7.1)
    assert float(nds["allowable_load_lbf"]) == s["allowable_load_lbf"]
    assert float(nds["slenderness_ratio"]) == s["slenderness_ratio"]
    assert float(nds["stability_factor"]) == s["stability_factor"]
    assert float(nds["effective_length_factor"]) == s["effective_length_factor"]
    assert nds["within_slenderness_limit"] == "true"
    assert nds["warnings"] == " | ".join(s["warnings"])


@pytest.mark.parametrize("row", [NDS_ROW, EC5_ROW], ids=["nds", "ec5"])
def test_every_row_names_its_table_and_values_status(tmp_path, capsys, row):
    (got,) = _batch(tmp_path, capsys, [row])
    s = _json(capsys, row)
    # the status of the values reaches the person reading the batch file, as in --json
    assert got["values_status"] == s["values_status"] in ("read", "secondary", "memory")
    assert got["material"] == s["material"] and got["material"]
    assert got["values_source"] == s["values_source"]


def test_mixed_batch_is_the_same_in_engine_blocks(tmp_path, capsys, monkeypatch):
    # blocks with no EC5 post (the first) and blocks with one: the same columns, same numbers
    from fieldcheck.engine import rating as rating_mod

    rows = [NDS_ROW] * 4 + [EC5_ROW, NDS_ROW, EC5_ROW]
    whole = _batch(tmp_path, capsys, rows, "a.csv")
    monkeypatch.setattr(rating_mod, "BLOCK", 3)
    assert _batch(tmp_path, capsys, rows, "b.csv") == whole
    assert whole[4]["N_Rd_kN"] and whole[4]["slenderness_ratio"] == ""


def test_a_rated_batch_file_reads_back(tmp_path, capsys):
    # the result columns are known columns: the output of rate --batch is valid input
    _batch(tmp_path, capsys, [NDS_ROW, EC5_ROW])
    out = tmp_path / "out-in.csv"
    again = tmp_path / "again.csv"
    assert main(["rate", "--batch", str(out), "--out", str(again)]) == 0
    rows = list(csv.DictReader(io.StringIO(again.read_text())))
    assert len(rows) == 2


def test_a_rated_batch_file_imports_as_the_records_alone(tmp_path, capsys):
    # the log keeps what was found on site, append-only: a rated file's result columns (the
    # old ratings, derived) are never stored as part of a post's record (judgement)
    import sqlite3

    _batch(tmp_path, capsys, [NDS_ROW, EC5_ROW])
    db = tmp_path / "log.db"
    args = ["import", "--db", str(db), str(tmp_path / "out-in.csv"), "--site", "S"]
    assert main([*args, "--visit", "V"]) == 0
    capsys.readouterr()
    with sqlite3.connect(db) as con:
        records = [json.loads(r) for (r,) in con.execute("select record_json from observations")]
    assert len(records) == 2
    for rec in records:
        assert not set(rec) & set(RESULT_COLUMNS), rec
        assert set(rec) <= set(HEADER), rec


def test_an_export_rated_as_a_batch_keeps_no_old_rating_beside_the_new(tmp_path, capsys):
    # an office export (its ratio, capacity, state, due date: the log's stored rating) rated
    # again with rate --batch: the old results are left out, the new ones written once
    from fieldcheck.report.export_format import ADDED

    _batch(tmp_path, capsys, [NDS_ROW, EC5_ROW])
    db = tmp_path / "log.db"
    args = ["import", "--db", str(db), str(tmp_path / "out-in.csv"), "--site", "S"]
    assert main([*args, "--visit", "V"]) == 0
    export = tmp_path / "export.csv"
    assert main(["export", "--db", str(db), "--out", str(export)]) == 0
    again = tmp_path / "again.csv"
    assert main(["rate", "--batch", str(export), "--out", str(again)]) == 0
    capsys.readouterr()
    header = next(csv.reader(again.open()))
    assert len(header) == len(set(header))
    old = set(ADDED) - set(IDENTIFYING) - set(RESULT_COLUMNS)
    assert "capacity_lbf" in old and "state" in old and "ratio" in old
    assert not set(header) & old, set(header) & old  # the export's stored rating
    assert "member_id" in header  # which post it is stays


@pytest.mark.slow
def test_batch_columns_agree_with_each_posts_json_over_the_corpus():
    # the batch file and --json are two views of one rating: over the frozen corpus's records
    # (every method, shape, condition, load kind) each rated row's ratio, capacity (N_Rd for
    # EC5), action, governing check and warnings are those of its --json (no source: identity)
    import sys
    import warnings
    from pathlib import Path

    from fieldcheck.engine import explain
    from fieldcheck.engine.rating import rate
    from fieldcheck.records import parse_records
    from fieldcheck.report.batch_csv import KEEP, result_columns

    sys.path.insert(0, str(Path(__file__).parents[1] / "engine"))
    from frozen_corpus import records

    with warnings.catch_warnings():
        warnings.simplefilter("ignore", RuntimeWarning)
        parsed = parse_records(records(1500))
        r = rate(parsed.batch, keep=KEEP)
        cols = result_columns(r, parsed.meta)
        for j in range(r.n):
            s = explain.summary(r, j, with_remedies=False)
            cap_col = "N_Rd_kN" if s["method"] == "ec5" else "allowable_load_kN"
            cap = s.get("N_Rd_kN") if s["method"] == "ec5" else s["allowable_load_kN"]
            for cell, want in (
                (cols["demand_capacity_ratio"][j], s["demand_capacity_ratio"]),
                (cols[cap_col][j], cap),
            ):
                assert (cell == "") == (want is None), (j, cell, want)
                if want is not None:
                    assert float(cell) == pytest.approx(want, rel=6e-5, abs=6e-5), j
            assert cols["action"][j] == s["action"], j
            assert cols["governing_check"][j] == s["governing_check"], j
            rated = s["demand_capacity_ratio"] is not None
            assert cols["governing_combination"][j] == (
                s["governing_combination"] if rated else ""
            ), j
            assert cols["warnings"][j] == " | ".join(s["warnings"]), j
            assert cols["material"][j] == parsed.meta[j].get("_material", ""), j
    assert r.n > 1000


def test_each_row_names_its_governing_load_combination(tmp_path, capsys):
    # every ASCE 7 combination is rated for every check (ASCE 7-16 §2.4.1, NDS 2018 §2.3.2):
    # 4x4 DF-L No.2, 11 ft, 45 sq ft under 55 psf dead and 20 psf roof live: D+Lr at CD 1.25
    # governs the column (computed by hand: D alone 2,475 lbf / F'c A at CD 0.9 gives a lower
    # ratio than 3,375 lbf at CD 1.25); a load given directly is "the load as given", and a post
    # with no load names none
    src = tmp_path / "in.csv"
    src.write_text(
        "tag,size,height,species,grade,tributary,dead,roof_live,load\n"
        "C1,4x4,11ft,dfl,no2,45sqft,55psf,20psf,\n"
        "G1,4x4,11ft,dfl,no2,,,,2kip\n"
        "N1,4x4,11ft,dfl,no2,,,,\n"
    )
    out = tmp_path / "out.csv"
    assert main(["rate", "--batch", str(src), "--out", str(out)]) == 0
    capsys.readouterr()
    rows = {r["tag"]: r for r in csv.DictReader(out.open())}
    assert rows["C1"]["governing_check"] == "column"
    assert rows["C1"]["governing_combination"] == "D+Lr"
    assert (
        rows["G1"]["governing_combination"]
        == _json(capsys, ["G1", "", "", "", "11ft", "2kip", "4x4", "dfl", "no2"])[
            "governing_combination"
        ]
    )
    assert rows["N1"]["action"] == "not-rated" and rows["N1"]["governing_combination"] == ""
