"""The issue's properties over every path a record can take, EC5 included (hypothesis and an
exhaustive sweep of the reference table):

- unknown material never rates above any held species and grade (NDS Supplement Tables 4A, 4B,
  4D, every row), for nominal, measured and round posts, dry and wet, ASD and LRFD;
- a larger section of the same description never rates lower, EN 1995-1-1 posts of every
  strength class held (EN 338, EN 14080), square, rectangular, round and nominal;
- no record, whatever it holds, puts NaN or infinity in a rating's JSON or in the batch file's
  result columns.
"""

from __future__ import annotations

import json
import math

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from fieldcheck.engine import explain
from fieldcheck.engine.en338 import class_names
from fieldcheck.engine.rating import rate
from fieldcheck.engine.refdata import table
from fieldcheck.records import parse_records, rate_records
from fieldcheck.report.batch_csv import KEEP, result_columns

HELD = sorted({(r["species"], r["grade"]) for r in table("nds_reference_values")})
CLASSES = class_names()


def _capacities(rows: list[dict[str, str]]) -> list[float | None]:
    """The lowest capacity over the checks made (N) of each row, None where refused; one
    parse and one engine call for all of them."""
    parsed = parse_records(rows)
    r = rate(parsed.batch)
    caps = np.fmin.reduce([c.capacity_n for c in r.checks.values()])
    out: list[float | None] = [None] * len(rows)
    for j, i in enumerate(np.flatnonzero(parsed.ok)):
        out[i] = float(caps[j])
    return out


# every shape a post of unknown material can be described by: nominal sizes of each product
# class (NDS 2018 §4.1.3), measured sections either side of the 4.5 in class boundary, round
NOMINAL = ("2x4", "2x6", "2x8", "2x10", "2x12", "3x6", "4x4", "4x6", "4x8", "4x10")
NOMINAL += ("5x5", "6x6", "6x8", "6x10", "8x8", "8x12", "10x10")
SHAPES = [{"size": s} for s in NOMINAL]
SHAPES += [{"section": s} for s in ("3.5inx3.5in", "4.4inx4.4in", "4.6inx4.6in", "5.5inx9.5in")]
SHAPES += [{"diameter": d} for d in ("4in", "5.5in", "8in")]


@pytest.mark.slow
def test_unknown_material_is_a_lower_bound_over_the_whole_table():
    # every held species and grade (every row of NDS Supplement Tables 4A, 4B, 4D) against
    # unknown species, unknown grade, and both, for every shape, dry and wet, ASD and LRFD, short
    # and tall; the knowledge factor and the "material unknown" warning on top (judgement)
    base = []
    for shape in SHAPES:
        for height in ("3ft", "10ft"):
            for extra in ({}, {"moisture": "25%"}, {"method": "lrfd"}):
                base.append({**shape, "height": height, "load": "1000lbf", **extra})
    rows, pairs = [], []
    for b in base:
        for species, grade in HELD:
            k = len(rows)
            rows.append({**b, "species": species, "grade": grade})
            rows.append({**b, "species": "unknown", "grade": grade})
            rows.append({**b, "species": species, "grade": "unknown"})
            pairs.append((k, (k + 1, k + 2)))
        rows.append({**b, "species": "unknown", "grade": "unknown"})
        both = len(rows) - 1
        pairs = [(k, (*u, both)) if len(u) == 2 else (k, u) for k, u in pairs]
    caps = _capacities(rows)
    checked = 0
    for k, unknowns in pairs:
        held = caps[k]
        if held is None:  # this grade is not held at this size (e.g. Stud 4x10)
            continue
        for u in unknowns:
            assert caps[u] is not None, rows[u]  # unknown is always rated
            assert caps[u] <= held * (1 + 1e-12), (rows[k], rows[u], held, caps[u])
            checked += 1
    assert checked > 3000


@settings(max_examples=80, deadline=None)
@given(
    st.sampled_from(CLASSES),
    st.sampled_from(["500mm", "1.5m", "3m", "6m"]),
    st.sampled_from([("pinned", "pinned"), ("fixed", "pinned"), ("fixed", "free")]),
    st.sampled_from([{}, {"moisture": "25%"}, {"service_class": "2"}]),
    st.one_of(
        st.tuples(st.just("section"), st.floats(40, 300), st.floats(40, 300)),
        st.tuples(st.just("diameter"), st.floats(40, 300), st.just(0.0)),
        st.tuples(st.just("size"), st.sampled_from(NOMINAL), st.just(0.0)),
    ),
    st.floats(1.0, 1.5),
    st.floats(1.0, 1.5),
)
def test_ec5_larger_section_never_rates_lower(cls, height, ends, extra, shape, f1, f2):
    # EN 1995-1-1 §6.3.2 (k_c rises with i), §6.1.4 (area): a larger section of the same strength
    # class, height and ends never rates lower; a round post's i is D/4 (mechanics)
    common = {"method": "ec5", "class": cls, "height": height, "load": "10kN", **extra}
    common.update(bottom=ends[0], top=ends[1])
    kind, a, b = shape
    if kind == "section":
        small, large = f"{a:.3f}mmx{b:.3f}mm", f"{a * f1:.3f}mmx{b * f2:.3f}mm"
    elif kind == "diameter":
        small, large = f"{a:.3f}mm", f"{a * f1:.3f}mm"
    else:
        w, t = (int(x) for x in a.split("x"))
        bigger = [n for n in NOMINAL if min(map(int, n.split("x"))) >= w]
        bigger = [n for n in bigger if max(map(int, n.split("x"))) >= t]
        small, large = a, bigger[int((f1 - 1.0) * 2 * (len(bigger) - 1))]
    lo, hi = _capacities([{**common, kind: small}, {**common, kind: large}])
    assert lo is not None and hi is not None
    assert hi >= lo * (1 - 1e-9), (small, large, lo, hi)


# a record from anywhere in the registry: every method, section kind, end, condition, load kind
record = st.fixed_dictionaries(
    {
        "height": st.sampled_from(["6in", "3ft", "8ft", "14ft", "30ft"]),
        "top": st.sampled_from(["pinned", "fixed", "free", "guided"]),
        "bottom": st.sampled_from(["pinned", "fixed", "guided"]),
    },
    optional={
        "size": st.sampled_from(["2x4", "4x4", "4x6", "6x6", "6x10", "8x8"]),
        "section": st.sampled_from(["1inx1in", "3.5inx3.5in", "140mmx90mm", "11inx11in"]),
        "diameter": st.sampled_from(["2in", "6in", "300mm"]),
        "method": st.sampled_from(["asd", "lrfd", "ec5"]),
        "class": st.sampled_from(CLASSES),
        "species": st.sampled_from(["douglas-fir-larch", "southern-pine", "unknown"]),
        "grade": st.sampled_from(["no2", "stud", "unknown"]),
        "load": st.sampled_from(["0lbf", "1lbf", "5kip", "500kN"]),
        "duration": st.sampled_from(["permanent", "seven-days", "impact"]),
        "moisture": st.sampled_from(["5%", "19%", "30%"]),
        "tributary": st.sampled_from(["40sqft"]),
        "dead": st.sampled_from(["10psf", "200psf"]),
        "snow": st.sampled_from(["30psf"]),
        "decay_wide": st.sampled_from(["0.2in", "1in", "30mm"]),
        "hollow": st.sampled_from(["1in", "50mm"]),
        "wane": st.sampled_from(["0.25in", "1in"]),
        "knot": st.sampled_from(["0.5in", "2in"]),
        "slope": st.sampled_from(["1:8", "1:20"]),
        "bow_weak": st.sampled_from(["0.1in", "2in", "100mm"]),
        "offset_strong": st.sampled_from(["0.5in", "6in"]),
        "cap_bearing": st.sampled_from(["0.5in", "3in"]),
        "cap_class": st.sampled_from(["C16"]),
        "sill_species": st.sampled_from(["hem-fir"]),
        "soil": st.sampled_from(["4", "unknown"]),
        "pad": st.sampled_from(["24inx24in"]),
        "pad_thickness": st.sampled_from(["2in"]),
        "brace_weak": st.sampled_from(["1ft", "4ft"]),
        "end_contact": st.sampled_from(["10%", "100%"]),
        "data_level": st.sampled_from(["default-values", "comprehensive"]),
        "service_class": st.sampled_from(["1", "3"]),
        "top_ratio": st.sampled_from(["0.5", "50"]),
    },
)


@settings(max_examples=150, deadline=None)
@given(st.lists(record, min_size=1, max_size=4))
def test_no_record_puts_nan_or_infinity_in_any_output(rows):
    # RFC 8259: JSON has no NaN or Infinity; a refused record is a sentence, not a number
    rating, errors = rate_records(rows)
    for e in errors:
        assert "\n" not in e.sentence() and "Traceback" not in e.sentence()
    parsed = parse_records(rows)
    big = rate(parsed.batch, keep=KEEP)
    for i in range(rating.n):
        s = explain.summary(rating, i, with_remedies=i == 0)
        json.dumps(s, allow_nan=False)
        assert s["action"] in ("no-action", "monitor", "repair-or-brace", "make-safe-now") or (
            s["action"] == "not-rated" and s["state"] != "rated"
        )
    cols = result_columns(big, parsed.meta)
    for name, cells in cols.items():
        for cell in cells:
            assert not any(w in cell.lower() for w in ("nan", "inf")) or name in (
                "warnings",
                "material",
                "governing_check",
            ), (name, cell)
            if name in ("demand_capacity_ratio", "N_Rd_kN", "allowable_load_kN") and cell:
                assert math.isfinite(float(cell)), (name, cell)
