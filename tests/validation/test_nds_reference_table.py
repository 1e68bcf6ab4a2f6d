"""data/nds_reference_values.csv against its named source, NDS Supplement 2018 Table 4A, as
reproduced in a general-purpose structural library (xcfem/xc awc_nds dimensional_lumber.py:
secondary). Rows not reached in any copy stay status memory."""

from __future__ import annotations

import pytest

from fieldcheck.engine import materials
from fieldcheck.engine.refdata import table

PSI = materials.PSI


def _row(species, grade, category="dimension"):
    return next(
        r
        for r in table("nds_reference_values")
        if (r["species"], r["grade"], r["category"]) == (species, grade, category)
    )


@pytest.mark.parametrize(
    ("species", "grade", "fb", "fc", "e", "emin"),
    [
        # NDS Supplement 2018 Table 4A (secondary reproduction)
        ("douglas-fir-larch", "select-structural", 1500, 1700, 1_900_000, 690_000),
        ("douglas-fir-larch", "no1", 1000, 1500, 1_700_000, 620_000),
        ("douglas-fir-larch", "no2", 900, 1350, 1_600_000, 580_000),
        ("douglas-fir-larch", "no3", 525, 775, 1_400_000, 510_000),
        ("hem-fir", "no1", 975, 1350, 1_500_000, 550_000),  # 1100 is No.1 & Btr
    ],
)
def test_table_4a_rows(species, grade, fb, fc, e, emin):
    r = _row(species, grade)
    assert (float(r["fb_psi"]), float(r["fc_psi"])) == (fb, fc)
    assert (float(r["e_psi"]), float(r["emin_psi"])) == (e, emin)
    assert r["status"] == "secondary" and r["edition"] == "2018"


def test_every_row_has_a_status():
    # each value says how sure it is (read / secondary / memory)
    assert {r["status"] for r in table("nds_reference_values")} <= {"read", "secondary", "memory"}


def test_stud_wider_than_6_in_takes_no3_values():
    # NDS Supplement Table 4A note (from memory): Stud wider than 6 in takes No.3 values
    wide = materials.reference_values("douglas-fir-larch", "stud", "dimension", 8, 2)
    no3 = materials.reference_values("douglas-fir-larch", "no3", "dimension", 8, 2)
    narrow = materials.reference_values("douglas-fir-larch", "stud", "dimension", 4, 2)
    assert wide["fc"] == no3["fc"] == 775 * PSI
    assert narrow["fc"] == 850 * PSI
