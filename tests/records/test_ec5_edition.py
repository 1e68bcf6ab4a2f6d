"""The EN 338 edition of an EC5 rating: a field of the record like any other (rate, rate --batch,
import and export), EN 338:2016 by default, EN 338:2009 when chosen, and EN 14080 glulam."""

from __future__ import annotations

import csv
import json

import pytest

from fieldcheck.cli import main
from fieldcheck.engine import en338
from fieldcheck.engine.batch import GLULAM
from fieldcheck.records import parse_records
from fieldcheck.store import Log

POST = {
    "method": "ec5",
    "section": "140mm x 140mm",
    "height": "3 m",
    "load": "60 kN",
    "duration": "two-months",
    "sill_class": "D40",
}


def _meta_and_batch(**extra):
    parsed = parse_records([{**POST, **extra}])
    assert not parsed.errors, parsed.errors
    return parsed.meta[0], parsed.batch


def test_default_edition_is_en338_2016_and_named():
    # EN 338:2016 Table 3: D40 f_c,90,k 5.5 MPa (the sill); Table 1: C30 f_c,0,k 24 MPa
    meta, b = _meta_and_batch(**{"class": "C30"})
    assert b.fc_mpa[0] == 24.0 and b.bottom_fc_perp_mpa[0] == 5.5
    assert meta["_values_source"] == "EN 338:2016"
    assert "C30 (EN 338:2016" in meta["_material"] and "sill D40 (EN 338:2016" in meta["_material"]
    assert en338.row(b.strength_row[0])["edition"] == "EN 338:2016"


def test_en338_2009_selectable():
    # EN 338:2009 Table 1 (TU Delft reproduction): C30 f_c,0,k 23, D40 f_c,90,k 8.3 MPa
    meta, b = _meta_and_batch(**{"class": "C30", "en338_edition": "2009"})
    assert b.fc_mpa[0] == 23.0 and b.bottom_fc_perp_mpa[0] == 8.3
    assert meta["_values_source"] == "EN 338:2009"


def test_glulam_class_is_rated_as_glulam():
    # EN 14080:2013 Table 5 GL24h: f_c,0,g,k 24, E_0,g,05 9600 (TU Delft reproduction);
    # EN 1995-1-1 Table 2.3 gamma_M 1.25 for glued laminated timber (recommended value)
    meta, b = _meta_and_batch(**{"class": "GL24h"})
    assert b.product[0] == GLULAM and b.gamma_m[0] == 1.25
    assert b.fc_mpa[0] == 24.0 and b.emin_mpa[0] == 9600.0
    assert meta["_values_source"] == "EN 14080:2013"


@pytest.mark.parametrize(
    ("extra", "column", "words"),
    [
        ({"class": "D27", "en338_edition": "2009"}, "class", "D27 is not in EN 338:2009"),
        ({"class": "GL24h", "en338_edition": "2016"}, "en338_edition", "EN 14080:2013"),
        ({"class": "C24", "en338_edition": "2003"}, "en338_edition", "2016 (the default) or 2009"),
        ({"class": "C24", "sill_class": "D80", "en338_edition": "2009"}, "sill_class", "D80"),
    ],
)
def test_edition_refusals_name_the_field(extra, column, words):
    parsed = parse_records([{**POST, **extra}])
    assert [e.column for e in parsed.errors] == [column]
    assert words in parsed.errors[0].message


def test_an_edition_needs_method_ec5():
    parsed = parse_records([{"size": "4x4", "height": "8ft", "en338_edition": "2009"}])
    assert [e.column for e in parsed.errors] == ["en338_edition"]


def test_rate_json_names_edition_and_status(capsys):
    args = ["rate", "--method", "ec5", "--class", "D40", "--en338-edition", "2009"]
    args += ["--section", "140mmx140mm", "--height", "3m", "--load", "60kN", "--json"]
    assert main(args) == 0
    out = json.loads(capsys.readouterr().out)
    assert out["values_source"] == "EN 338:2009" and out["values_status"] == "secondary"
    assert "D40 (EN 338:2009" in out["material"]


def test_batch_csv_accepts_the_edition_column_in_any_case(tmp_path, capsys):
    src = tmp_path / "in.csv"
    with src.open("w", newline="") as fh:
        w = csv.writer(fh)
        w.writerow(["tag", *POST, "class", "EN338_Edition"])
        w.writerow(["A", *POST.values(), "D40", "2009"])
        w.writerow(["B", *POST.values(), "D40", ""])
    out = tmp_path / "out.csv"
    assert main(["rate", "--batch", str(src), "--out", str(out)]) == 0
    rows = list(csv.DictReader(out.open()))
    # the sill governs: D40 f_c,90,k 8.3 (EN 338:2009) against 5.5 (EN 338:2016)
    cap = [float(r["N_Rd_kN"]) for r in rows]  # an EC5 row's resistance: N_Rd, not allowable
    assert cap[0] / cap[1] == pytest.approx(8.3 / 5.5, rel=1e-6)


def test_import_keeps_the_edition_and_export_gives_it_back(tmp_path):
    with Log.open(tmp_path / "survey.db", author="tester", device="device-A") as log:
        rows = [{**POST, "tag": "E1", "class": "C24", "en338_edition": "2009"}]
        res = log.import_rows(rows, "Edition site", "Visit 1")
        assert res.errors == [] and res.imported == 1
        table = log.export_rows()
        assert table.rows[0]["en338_edition"] == "2009"
        assert table.rows[0]["class"] == "C24"
