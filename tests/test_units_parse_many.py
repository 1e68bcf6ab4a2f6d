"""units.parse_many reads a column of plain quantities at once: every value it claims is exactly
the value the kind's own cell parser gives (bit for bit), and it never claims a text that parser
refuses (property test); the plain forms of a survey are all read column-wise."""

from __future__ import annotations

import math

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from fieldcheck import units

CELL = {
    "length": units.parse_length,
    "force": units.parse_force,
    "percent": units.parse_percent,
    "temperature": units.parse_temperature,
}
# spellings the cell parser accepts, some it refuses, in any letter case (judgement: what a
# spreadsheet of posts holds)
UNITS = {
    "length": ["mm", "MM", "cm", "m", "M", "in", "IN", "inch", "inches", "ft", "Ft", "feet"],
    "force": ["lbf", "LBF", "lb", "lbs", "kip", "kips", "kN", "KN", "kn", "N", "MN", "newtons"],
    "percent": ["%", "pct", "percent", "PCT"],
    "temperature": ["F", "C", "f", "c", "degF", "degc", "celsius", "fahrenheit"],
}
ODD_UNITS = ["'", '"', "mN", "°F", "psi", "kPa", "sqft", "x4", "kgf", "", "µm", "ｍｍ", "k N"]  # noqa: RUF001
PLAIN = st.one_of(
    st.integers(0, 10**16).map(str),
    st.tuples(st.integers(0, 10**9), st.integers(0, 10**9), st.integers(0, 12)).map(
        lambda t: f"{t[0]}.{t[1]:0{t[2]}d}"
    ),
    st.floats(0, 1e7, allow_nan=False).map(repr),
    st.from_regex(r"\A0*[0-9]{0,9}\.?[0-9]{0,9}\Z"),
)
ODD = st.sampled_from(["3 1/2", "3-1/2", "1/2", "½", "1e3", "1E-2", ".5", "5.", "1_000", "٣"])
SPACE = st.sampled_from(["", "", "", " ", "  "])
ODD_SPACE = st.sampled_from(["\t", "\u00a0", "\n", "\x00", " "])


@st.composite
def texts(draw, kind):
    pick = draw(st.integers(0, 9))
    if pick == 0:
        return draw(st.text(max_size=12))
    if pick <= 5:  # a plain form
        unit = draw(st.sampled_from(UNITS[kind]))
        return draw(SPACE) + draw(PLAIN) + draw(SPACE) + unit
    sign = draw(st.sampled_from(["", "-", "+"]))
    number = draw(st.one_of(PLAIN, ODD))
    unit = draw(st.sampled_from(ODD_UNITS + UNITS[kind] + UNITS["length"]))
    tail = draw(st.sampled_from(["", " 6in", '-6"', " 3", " kN"]))
    return draw(ODD_SPACE) + sign + number + draw(SPACE) + unit + tail + draw(ODD_SPACE)


def cell(kind: str, text: str, lo, hi) -> float | None:
    try:
        return CELL[kind](text, "field", lo=lo, hi=hi)
    except ValueError:
        return None


LIMITS = (st.one_of(st.none(), st.floats(-100, 1000)), st.one_of(st.none(), st.floats(0, 1e6)))


def check_claims(data, lo, hi) -> None:
    kind = data.draw(st.sampled_from(sorted(CELL)))
    column = data.draw(st.lists(texts(kind), min_size=1, max_size=30))
    values, ok = units.parse_many(kind, column, lo=lo, hi=hi)
    assert values.shape == ok.shape == (len(column),)
    for text, v, claimed in zip(column, values.tolist(), ok.tolist(), strict=True):
        if claimed:
            want = cell(kind, text, lo, hi)
            assert want is not None, text  # never claims a text the cell parser refuses
            assert math.copysign(1, v) == math.copysign(1, want)
            assert v.hex() == float(want).hex(), text  # bit for bit


@settings(max_examples=80, deadline=None)
@given(st.data(), *LIMITS)
def test_every_value_claimed_is_the_cell_parsers_own(data, lo, hi):
    check_claims(data, lo, hi)


@pytest.mark.slow
@settings(max_examples=1000, deadline=None)
@given(st.data(), *LIMITS)
def test_every_value_claimed_is_the_cell_parsers_own_many_columns(data, lo, hi):
    check_claims(data, lo, hi)


def test_the_plain_forms_of_a_survey_are_read_column_wise():
    # common practice, no source: how heights, loads, moisture and temperature are typed
    cases = {
        "length": ["2438 mm", "96in", "8 ft", "2.44 m", "3100MM", " 250 cm"],
        "force": ["5999 lbf", "5.00 kN", "4 kip", "500 N", "12.5 KN", "1000lbs"],
        "percent": ["8%", "19.5 %", "24 pct", "12 percent"],
        "temperature": ["70 F", "38 C", "100 f"],
    }
    for kind, column in cases.items():
        values, ok = units.parse_many(kind, column)
        assert ok.all(), (kind, column)
        want = [CELL[kind](t, "field") for t in column]
        np.testing.assert_array_equal(values, want)


def test_what_it_leaves_to_the_cell_parser():
    # judgement: feet and inches, fractions, signs, bare numbers, blanks, long or non-ASCII
    # texts and non-text cells take the cell parser's path (for their value or their message)
    column = [
        "8ft 6in",
        "3-1/2 in",
        "-3 ft",
        "24",
        "",
        "   ",
        "0 lbf",
        "5ft\x00",
        "8\u2032",
        "x" * 50,
    ]
    _, ok = units.parse_many("length", column)
    assert not ok.any()
    _, ok = units.parse_many("force", ["4 kip", 4000])  # a number, not text: all left alone
    assert not ok.any()
    values, ok = units.parse_many("length", ["10 ft", "90 ft"], lo=100.0, hi=20_000.0)
    assert ok.tolist() == [True, False]  # outside the range: the cell parser says so
    assert values[0] == units.parse_length("10 ft")
