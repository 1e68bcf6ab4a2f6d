"""Builders: a record as typed -> PostBatch fields in SI, one engine batch for many rows."""

from __future__ import annotations

import pytest

from fieldcheck.engine.batch import EC5, FIELD_NAMES, LRFD
from fieldcheck.records import parse_records, parse_row
from fieldcheck.records.columns import BUILDERS

IN = 25.4  # mm per inch, exact by definition
LBF = 4.4482216152605  # N per lbf, exact by definition (0.45359237 kg x 9.80665 m/s^2)


def test_the_shore_record_becomes_si_fields(shore):
    fields, meta, problems = parse_row(shore)
    assert problems == []
    # NDS Supplement Table 1B: a 4x4 is dressed to 3-1/2 x 3-1/2 in
    assert fields["d1_mm"] == pytest.approx(3.5 * IN)
    assert fields["d2_mm"] == pytest.approx(3.5 * IN)
    assert fields["height_mm"] == pytest.approx(96 * IN)  # 8 ft
    assert fields["load_n"] == pytest.approx(3000 * LBF)
    assert fields["construction"] is True
    assert set(fields) <= set(FIELD_NAMES)  # builders give PostBatch fields only
    assert meta["_material"].startswith("douglas-fir-larch")


def test_every_builder_gives_batch_fields_only():
    values = {"size": (4, 4), "height": 2438.4}
    meta: dict = {}  # what one builder leaves for the next (section kind, material text)
    for build in BUILDERS:  # in the registry's order, as parse_row runs them
        out = build(dict(values), meta)
        assert set(out) <= set(FIELD_NAMES), build.__name__


def test_the_method_column_sets_the_method_code(shore):
    lrfd, _, _ = parse_row({**shore, "method": "lrfd", "duration": "", "construction": ""})
    nds_material = ("species", "grade")  # an EC5 record names a class instead (refused beside it)
    shore_ec5 = {k: v for k, v in shore.items() if k not in nds_material}
    ec5, _, problems = parse_row({**shore_ec5, "method": "ec5", "class": "C24", "duration": ""})
    assert problems == []
    assert lrfd["method"] == LRFD and ec5["method"] == EC5


def test_a_bad_cell_names_its_column_and_spares_the_other_rows(shore):
    rows = [shore, {**shore, "height": "tall"}, {**shore, "tag": "S3", "notes": "ok"}]
    parsed = parse_records(rows)
    assert parsed.ok.tolist() == [True, False, True]
    assert [(e.row, e.column) for e in parsed.errors] == [(1, "height")]
    assert parsed.batch.n == 2 and parsed.index.tolist() == [0, 2]


def test_identical_records_parse_once_and_rate_alike(shore):
    # a row of identical shores: one distinct record, the same fields on every row
    parsed = parse_records([dict(shore, tag=f"S{k}") for k in range(5)])
    assert parsed.batch.n == 5
    assert len(set(parsed.batch.d1_mm.tolist())) == 1


def test_unknown_columns_are_kept_out_of_the_rating(shore):
    fields, _, problems = parse_row({**shore, "site_own_note": "blue paint"})
    assert problems == [] and fields == parse_row(shore)[0]


@pytest.mark.parametrize(("column", "end"), [("cap_species", "cap"), ("sill_species", "sill")])
def test_cap_and_sill_species_name_their_value_and_its_status(column, end):
    # the cap's or sill's Fc-perp is a reference value too: the material text names it and its
    # status (NDS Supplement Table 4A: Hem-Fir Fc-perp 405 psi, every grade); the lowest over
    # the species' rows is as sure as the least sure of them
    from fieldcheck.engine.materials import weakest
    from fieldcheck.engine.refdata import table

    rec = {"size": "4x4", "height": "8ft", "species": "douglas-fir-larch", "grade": "no2"}
    parsed = parse_records([{**rec, column: "hem-fir"}])
    assert parsed.ok[0]
    material = parsed.meta[0]["_material"]
    rows = [r for r in table("nds_reference_values") if r["species"] == "hem-fir"]
    assert min(float(r["fc_perp_psi"]) for r in rows) == 405
    status = weakest(r["fc_perp_status"] for r in rows)
    assert f"{end} hem-fir: Fc-perp 405 psi ({status}" in material, material


def test_a_knot_on_a_graded_member_is_deducted_unless_stated_within_the_grade():
    # a missing decision input is never read as safe (judgement): a knot or slope of grain
    # recorded on a graded member is deducted (ASTM D245 strength ratio, from memory) unless the
    # inspector states it is within the grade (beyond_grade no)
    from fieldcheck.engine import explain
    from fieldcheck.engine.rating import rate

    rec = {"size": "4x4", "height": "8ft", "species": "douglas-fir-larch", "grade": "no2"}
    rec.update(load="2000lbf", knot="2in")
    caps = {}
    for stated in (None, "yes", "no"):
        row = {**rec, **({"beyond_grade": stated} if stated else {})}
        r = rate(parse_records([row]).batch)
        caps[stated] = float(r.capacity_n[0])
        if stated is None:
            assert any("beyond_grade no" in w for w in explain.warnings(r, 0))
    rec.pop("knot")
    clear = float(rate(parse_records([rec]).batch).capacity_n[0])
    assert caps[None] == caps["yes"] < caps["no"] == clear
