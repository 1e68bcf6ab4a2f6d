"""A larger section of the same material description never rates lower (hypothesis).

Over heights, species, grades (unknown included) and ends, for:
- round posts by diameter (NDS 2018 §3.7.3 for stability; values the lower of the dimension
  lumber and Posts and Timbers values: judgement, conservative);
- measured sections with no nominal size, across the dimension lumber / timber boundary
  (4.5 in dressed, NDS Supplement Table 4D scope), the size factor steps (Table 4A) and the
  Southern Pine width rows (Table 4B);
- nominal sizes within one product class (their own table, NDS 2018 §4.1.3), and nominal sizes
  of unknown grade across the classes. A graded nominal 4x6 and a graded 6x6 are graded to
  different rules (Tables 4A and 4D) and the published values differ: not one description.

The capacity compared is the allowable load (the lowest over the checks rated).
"""

from __future__ import annotations

import math

from hypothesis import given, settings
from hypothesis import strategies as st

from fieldcheck.engine import materials
from fieldcheck.engine.rating import rate
from fieldcheck.records import parse_records

SPECIES = ["douglas-fir-larch", "hem-fir", "spruce-pine-fir", "southern-pine", "unknown"]
GRADES = ["select-structural", "no1", "no2", "no3", "stud", "unknown"]
ENDS = [("pinned", "pinned"), ("fixed", "pinned"), ("fixed", "free")]


def capacity(cells: dict[str, str]) -> float | None:
    """Allowable load (N), or None when the description is refused (not held at that size)."""
    p = parse_records([{"load": "1000lb", **cells}])
    if p.errors:
        return None
    r = rate(p.batch)
    caps = [c.capacity_n[0] for c in r.checks.values() if not math.isnan(c.capacity_n[0])]
    return min(caps)


common = st.fixed_dictionaries(
    {
        "height": st.sampled_from(["2ft", "4ft", "6ft", "8ft", "10ft", "14ft"]),
        "species": st.sampled_from(SPECIES),
        "grade": st.sampled_from(GRADES),
        "ends": st.sampled_from(ENDS),
        "moisture": st.sampled_from([None, "12%", "25%"]),
    }
)


def _cells(c: dict) -> dict[str, str]:
    out = {
        "height": c["height"],
        "species": c["species"],
        "grade": c["grade"],
        "bottom": c["ends"][0],
        "top": c["ends"][1],
    }
    if c["moisture"]:
        out["moisture"] = c["moisture"]
    return out


def _no_lower(small: dict, large: dict) -> None:
    a, b = capacity(small), capacity(large)
    if a is None or b is None:
        return  # refused: not held at that size, nothing rated
    assert b >= a * (1 - 1e-9), (small, large, a, b)


@settings(max_examples=60, deadline=None)
@given(common, st.floats(2.0, 14.0), st.floats(0.0, 3.0))
def test_round_posts(c, dia, more):
    # NDS 2018 §3.7.3 (equal-area square); values the same at every diameter (judgement)
    base = _cells(c)
    _no_lower({**base, "diameter": f"{dia:.4f} in"}, {**base, "diameter": f"{dia + more:.4f} in"})


# sizes near the class boundary and the size-factor steps are drawn often
near = st.one_of(
    st.floats(1.5, 14.0),
    st.sampled_from([3.5, 4.0, 4.4, 4.45, 4.46, 4.5, 4.55, 5.5, 6.25, 7.25, 9.25, 11.25]),
)


@settings(max_examples=120, deadline=None)
@given(common, near, near, st.floats(0.0, 1.5), st.floats(0.0, 1.5))
def test_measured_sections(c, x, y, dx, dy):
    # measured, no nominal size: NDS Supplement Tables 4A, 4B, 4D with the class unknown
    d1, d2 = max(x, y), min(x, y)
    base = _cells(c)
    _no_lower(
        {**base, "section": f"{d1:.4f} in x {d2:.4f} in"},
        {**base, "section": f"{d1 + dx:.4f} in x {d2 + dy:.4f} in"},
    )


NOMINAL = [(2, 4), (2, 6), (2, 8), (2, 10), (2, 12), (3, 4), (4, 4), (4, 6), (4, 8), (4, 10)]
NOMINAL += [(5, 5), (6, 6), (6, 8), (6, 10), (8, 8), (8, 10), (8, 12), (10, 10), (10, 12)]


def _larger(a, b):
    return a != b and min(b) >= min(a) and max(b) >= max(a)


PAIRS = [(a, b) for a in NOMINAL for b in NOMINAL if _larger(a, b)]


@settings(max_examples=120, deadline=None)
@given(common, st.sampled_from(PAIRS))
def test_nominal_sizes(c, pair):
    # NDS 2018 §4.1.3: a graded nominal size is rated in its own class; within a class a larger
    # nominal size never rates lower; of unknown grade, not across the classes either
    a, b = pair
    ca, cb = materials.size_class(min(a), max(a)), materials.size_class(min(b), max(b))
    if ca != cb and c["grade"] != "unknown":
        c = {**c, "grade": "unknown"}
    base = _cells(c)
    _no_lower({**base, "size": f"{a[0]}x{a[1]}"}, {**base, "size": f"{b[0]}x{b[1]}"})


def test_the_issue_examples():
    # the round post 5.0 -> 5.1 in and the measured square 4.45 -> 4.5 in (DF-L No.2, 8 ft)
    base = {"height": "8ft", "species": "douglas-fir-larch", "grade": "no2"}
    r50 = capacity({**base, "diameter": "5.0 in"})
    r51 = capacity({**base, "diameter": "5.1 in"})
    assert r51 >= r50 and r51 / r50 < 1.1
    s445 = capacity({**base, "section": "4.45 in x 4.45 in"})
    s450 = capacity({**base, "section": "4.5 in x 4.5 in"})
    assert s450 >= s445 * (1 - 1e-9) and s450 / s445 < 1.1


def test_measured_sections_in_wet_service_examples():
    # NDS Supplement Tables 4A, 4D wet service factors: a thin measured piece capped by a
    # timber's values took the timber's CM (Fc 0.91, E 1.0) while a larger piece kept dimension
    # lumber's (0.8, 0.9) and rated lower; a class not known takes the lowest CM (judgement)
    wet = {"height": "2ft", "moisture": "25%"}
    for cells, small, large in (
        ({"species": "unknown", "grade": "no2"}, "7in x 1.875in", "8in x 1.875in"),
        (
            {"species": "southern-pine", "grade": "select-structural"},
            "7in x 2.5in",
            "7.25in x 2.5in",
        ),
    ):
        base = {**wet, **cells}
        _no_lower({**base, "section": small}, {**base, "section": large})


def test_measured_sections_grid():
    # every pair of a grid of measured sections, dry and wet, short and long, every species
    # and grade drawn above: a larger section never rates lower (NDS Supplement Tables 4A, 4B,
    # 4D with the class unknown; judgement for the caps)
    import itertools

    import numpy as np

    sizes = [1.5, 1.875, 2.5, 3.5, 4.0, 4.45, 4.5, 5.5, 7.0, 7.25, 8.0, 9.25, 11.25, 12.0]
    rows, keys = [], []
    for sp, gr, wet, h in itertools.product(SPECIES, GRADES, (False, True), ("2ft", "8ft")):
        for a, b in itertools.product(sizes, sizes):
            if b <= a:
                r = {"load": "1000lb", "height": h, "species": sp, "grade": gr}
                r["section"] = f"{a} in x {b} in"
                if wet:
                    r["moisture"] = "25%"
                rows.append(r)
                keys.append((sp, gr, wet, h, a, b))
    p = parse_records(rows)
    refused = {e.row for e in p.errors}
    kept = [k for i, k in enumerate(keys) if i not in refused]
    r = rate(p.batch)
    caps = np.vstack([c.capacity_n for c in r.checks.values()])
    cap = np.min(np.where(np.isnan(caps), np.inf, caps), axis=0)
    by_key = dict(zip(kept, cap, strict=True))
    worse = []
    for (sp, gr, wet, h, a, b), v in by_key.items():
        for a2, b2 in itertools.product(sizes, sizes):
            if a2 >= a and b2 >= b and b2 <= a2 and (a2, b2) != (a, b):
                w = by_key.get((sp, gr, wet, h, a2, b2))
                if w is not None and w < v * (1 - 1e-9):
                    worse.append(((sp, gr, wet, h, a, b), (a2, b2), v, w))
    assert not worse, worse[:5]
