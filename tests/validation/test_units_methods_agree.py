"""The same post typed in US or metric units rates the same; NDS and EC5 differ only as the working
says.
"""

import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from fieldcheck.engine import explain
from fieldcheck.records import rate_records

IN = 25.4
LBF = 4.4482216152605


@settings(max_examples=80, deadline=None)
@given(
    st.floats(3.0, 12.0),
    st.floats(3.0, 12.0),
    st.floats(36.0, 240.0),
    st.floats(100.0, 60_000.0),
    st.sampled_from(["asd", "lrfd", "ec5"]),
)
def test_unit_systems_give_the_same_capacity(b_in, d_in, h_in, p_lbf, method):
    # conversion factors: NIST SP 811 exact (1 in = 25.4 mm; 1 lbf = 4.4482216152605 N)
    mat = {"class": "C24"} if method == "ec5" else {"species": "douglas-fir-larch", "grade": "no2"}
    us = dict(
        mat,
        method=method,
        section=f"{b_in!r}in x {d_in!r}in",
        height=f"{h_in!r} in",
        load=f"{p_lbf!r} lbf",
    )
    si = dict(
        mat,
        method=method,
        section=f"{b_in * IN!r} x {d_in * IN!r} mm",
        height=f"{h_in * IN / 1000!r} m",
        load=f"{p_lbf * LBF / 1000!r} kN",
    )
    r, errors = rate_records([us, si])
    assert errors == []
    assert r.capacity_n[0] == pytest.approx(r.capacity_n[1], rel=1e-9)
    assert r.ratio[0] == pytest.approx(r.ratio[1], rel=1e-9)


def test_nds_and_ec5_differ_only_as_their_working_explains():
    # same 100 x 100 mm post, 3 m, pinned: NDS with DF-L No.2 values, EC5 with C24 (EN 1995-1-1
    # §6.3.2, C24 100 x 100 mm 3 m, computed by hand)
    common = {"section": "100x100mm", "height": "3 m", "duration": "two-months"}
    r, errors = rate_records(
        [
            dict(common, species="douglas-fir-larch", grade="no2"),
            dict(common, method="ec5", **{"class": "C24", "service_class": "1"}),
        ]
    )
    assert errors == []
    nds_steps = {s.label: s for s in explain.working(r, 0)}
    ec5_steps = {s.label: s for s in explain.working(r, 1)}
    assert any("Cp" in k for k in nds_steps) and "NDS 2018 Eq. 3.7-1" in {
        s.clause for s in nds_steps.values()
    }
    assert any("k_c" in k for k in ec5_steps) and any(
        "EN 1995-1-1" in s.clause for s in ec5_steps.values()
    )
    # EN 1995-1-1 §6.3.2, C24 100 x 100 mm 3 m, computed by hand: C24 100 x 100, 3.0 m, medium-term,
    # SC1 -> N_Rd = 36.7747 kN
    assert r.capacity_n[1] / 1000 == pytest.approx(36.7747, rel=1e-5)
    assert explain.summary(r, 1)["k_c_governing"] == pytest.approx(0.284566, abs=1e-6)
