"""Unknown species or grade is a true lower bound over every species and grade held for the same
size, with the knowledge factor on top (ASCE 41 data collection, secondary; judgement)."""

from __future__ import annotations

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from fieldcheck.engine import materials
from fieldcheck.engine.refdata import table
from fieldcheck.records import rate_records

SIZES = ("2x4", "2x6", "2x8", "2x10", "2x12", "4x4", "4x6", "4x8", "6x6", "6x8", "8x8", "6x10")
HELD = sorted({(r["species"], r["grade"]) for r in table("nds_reference_values")})


def _rate(size, height, species, grade, level=None):
    row = {"size": size, "height": height, "species": species, "grade": grade}
    row.update(load="1000lbf", duration="ten-years", cap_species="hem-fir")
    if level:
        row["data_level"] = level
    r, errors = rate_records([row])
    return None if errors else r


@settings(max_examples=40, deadline=None)
@given(
    st.sampled_from(SIZES),
    st.sampled_from(("4ft", "8ft", "12ft")),
    st.sampled_from(HELD),
    st.sampled_from(("unknown/unknown", "species", "grade")),
    st.sampled_from((None, "usual", "comprehensive")),
)
def test_unknown_never_rates_above_held(size, height, held, which, level):
    species, grade = held
    known = _rate(size, height, species, grade)
    if known is None:  # this grade is not held at this size
        return
    us, ug = {
        "unknown/unknown": ("unknown", "unknown"),
        "species": ("unknown", grade),
        "grade": (species, "unknown"),
    }[which]
    unk = _rate(size, height, us, ug, level)
    assert unk is not None
    for name, c in known.checks.items():
        a, b = float(unk.checks[name].capacity_n[0]), float(c.capacity_n[0])
        if np.isfinite(a) and np.isfinite(b):
            assert a <= b * (1 + 1e-12), name
    # the warning stays whatever the data-collection level (judgement)
    assert any("Material unknown" in w for w in _warnings(unk))


def _warnings(r):
    from fieldcheck.engine.explain import warnings

    return warnings(r, 0)


def test_unknown_grade_takes_no3_and_stud():
    # NDS Supplement Table 4A (values from memory in this table): DF-L No.3 Fc 775 psi is the
    # lowest Fc of DF-L dimension lumber; the bound is below it (with CF 1.15 for a 2x4 No.3)
    rv = materials.reference_values("douglas-fir-larch", "unknown", "dimension", 4, 2)
    assert rv["fc"] <= 775 * 1.15 * materials.PSI * (1 + 1e-12)
    assert rv["cf_included"] and rv["knowledge"] == pytest.approx(0.75)  # ASCE 41 (secondary)
