"""An EC5 record refuses the NDS material inputs it would otherwise ignore or misuse, in one
sentence naming the column: the cap's or sill's NDS species (an NDS reference Fc-perp is not an
EN 338 f_c,90,k) and the NDS species and grade beside the strength class. The ASCE 41 data level
applies its knowledge factor on EC5 too (judgement, conservative)."""

from __future__ import annotations

import pytest

from fieldcheck.records import parse_records

POST = {
    "method": "ec5",
    "class": "C24",
    "section": "100mmx100mm",
    "height": "2.5m",
    "load": "20kN",
}


@pytest.mark.parametrize(
    ("extra", "column", "words"),
    [
        # EN 338 Table 1 gives f_c,90,k 2.5 MPa for C24 (2016); the NDS Supplement Table 4A
        # Fc-perp of Douglas Fir-Larch is 625 psi (4.3 MPa): not the same basis (judgement)
        ({"cap_species": "hem-fir"}, "cap_species", "--cap-class"),
        ({"sill_species": "douglas-fir-larch"}, "sill_species", "--sill-class"),
        ({"species": "douglas-fir-larch"}, "species", "--class"),
        ({"grade": "no2"}, "grade", "--class"),
    ],
)
def test_nds_material_inputs_are_refused_on_ec5(extra, column, words):
    parsed = parse_records([{**POST, **extra}])
    assert not parsed.ok[0]
    (err,) = parsed.errors
    assert err.column == column
    assert words in err.message and err.message.endswith(".") and "\n" not in err.message


def test_unknown_species_and_grade_are_no_material_on_ec5():
    # 'unknown' says nothing is known of an NDS material: no contradiction with a class given
    parsed = parse_records([{**POST, "species": "unknown", "grade": "unknown"}])
    assert parsed.ok[0], parsed.errors


def test_the_ec5_cap_and_sill_by_class_still_rate():
    # EN 1995-1-1 §6.1.5 with the cap's own EN 338 class (f_c,90,k of C16: 2.2 MPa, EN 338:2016)
    parsed = parse_records([{**POST, "cap_class": "C16", "sill_class": "C24"}])
    assert parsed.ok[0], parsed.errors


def test_data_level_applies_its_knowledge_factor_on_ec5():
    # ASCE 41 default values: kappa 0.75 (secondary), on N_Rd as on the NDS capacity
    from fieldcheck.engine.rating import rate

    plain = parse_records([POST])
    low = parse_records([{**POST, "data_level": "default-values"}])
    assert low.ok[0]
    ratio = rate(low.batch).capacity_n[0] / rate(plain.batch).capacity_n[0]
    assert ratio == pytest.approx(0.75)
