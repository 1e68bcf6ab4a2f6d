"""The column-wise path of parse_records gives what parsing each record on its own gives: the
same PostBatch values, the same errors row by row, the same material text (property test)."""

from __future__ import annotations

import numpy as np
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from fieldcheck.engine.batch import DEFAULTS, DTYPES, FIELD_NAMES
from fieldcheck.records import RowError, parse_records, parse_row

# texts an inspector might type, a few of them refused (judgement: the common columns of a
# survey, with the numbers that differ on every post)
POOL = {
    "tag": ["P1", "P2", ""],
    "size": ["4x4", "4x6", "6x6", "8x8", "2x4", "12x12", "4x4x4", ""],
    "section": ["3.5 x 5.5 in", "90x140mm"],
    "diameter": ["8 in", "250mm"],
    "plies": ["2", "3"],
    "ply": ["2x6", "2x8"],
    "height": ["8ft", "2438 mm", "9' 6\"", "10ft 3in", "3100mm", "tall", "-3ft", ""],
    "top": ["pinned", "fixed", "free", "guided", "hinge"],
    "bottom": ["pinned", "fixed", "free"],
    "species": ["douglas-fir-larch", "southern-pine", "hem-fir", "unknown", "oak?"],
    "grade": ["no1", "no2", "select-structural", "stud", "unknown", "best"],
    "method": ["asd", "lrfd", "ec5", "nds?"],
    "duration": ["permanent", "ten-years", "seven-days", "forever"],
    "load": ["3000 lbf", "12.5 kN", "1000lbf", "0 N", "heavy", ""],
    "moisture": ["12%", "19%", "19.5%", "28%", "wet"],
    "temperature": ["20C", "45 C", "70F"],
    "incised": ["yes", "no"],
    "construction": ["yes", "no"],
    "cap_species": ["douglas-fir-larch"],
    "sill_bearing": ["5.5 in"],
    "notes": ["leaning", ""],
    # columns that take the record-by-record path
    "brace_weak": ["4ft"],
    "shared_by": ["2"],
    "class": ["C24"],
    "bow_weak": ["0.5 in"],
    "site_own_note": ["blue paint"],
}
COMMON = ["size", "height", "top", "species", "grade", "load", "moisture"]


@st.composite
def records(draw):
    rec = {}
    for col in COMMON:
        if draw(st.integers(0, 9)) > 0:
            rec[col] = draw(st.sampled_from(POOL[col]))
    for col in draw(st.lists(st.sampled_from(sorted(POOL)), max_size=3)):
        rec[col] = draw(st.sampled_from(POOL[col]))
    return rec


def one_by_one(rows):
    """Reference: every record through parse_row on its own."""
    out = []
    for i, rec in enumerate(rows):
        fields, meta, problems = parse_row(rec)
        out.append((fields, meta, [RowError(c, m, row=i) for c, m in problems]))
    return out


def check_alike(rows):
    parsed = parse_records(rows)
    ref = one_by_one(rows)
    assert parsed.errors == [e for _, _, errs in ref for e in errs]
    assert parsed.ok.tolist() == [not errs for _, _, errs in ref]
    good = [(f, m) for f, m, errs in ref if not errs]
    assert parsed.batch.n == len(good)
    assert [m.get("_material") for m in parsed.meta] == [m.get("_material") for _, m in good]
    for name in FIELD_NAMES:
        want = np.asarray([f.get(name, DEFAULTS[name]) for f, _ in good], dtype=DTYPES[name])
        got = getattr(parsed.batch, name)
        np.testing.assert_array_equal(got, want, err_msg=name)


@settings(max_examples=60, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(st.lists(records(), min_size=1, max_size=25))
def test_column_wise_parse_equals_record_by_record(rows):
    check_alike(rows)


def test_a_column_order_shared_by_many_posts_with_their_own_numbers():
    # common practice, no source: a survey where every post has its own height, load, moisture
    rows = [
        {
            "tag": f"P{i}",
            "size": ("4x4", "6x6", "4x6")[i % 3],
            "height": f"{2000 + 37 * i} mm" if i % 2 else f"{6 + i % 5}ft {i % 12}in",
            "species": ("douglas-fir-larch", "hem-fir")[i % 2],
            "grade": ("no1", "no2", "unknown")[i % 3],
            "load": f"{1000 + 13 * i} lbf",
            "moisture": f"{10 + i % 15}%",
        }
        for i in range(200)
    ]
    rows[17]["height"] = "tall"  # refused: the row's own error, the others rated
    check_alike(rows)


def test_the_cache_carries_combinations_from_chunk_to_chunk():
    rows = [{"size": "4x4", "height": f"{8 + i}ft", "load": f"{1000 + i} lbf"} for i in range(6)]
    cache: dict = {}
    first = parse_records(rows[:3], cache)
    second = parse_records(rows[3:], cache)
    alone = parse_records(rows)
    both = np.concatenate([first.batch.height_mm, second.batch.height_mm])
    np.testing.assert_array_equal(both, alone.batch.height_mm)
    np.testing.assert_array_equal(
        np.concatenate([first.batch.load_n, second.batch.load_n]), alone.batch.load_n
    )
