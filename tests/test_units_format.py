"""fieldcheck.units formatters, and parse(format(x)) round trips."""

from __future__ import annotations

import math

import pytest
from hypothesis import given
from hypothesis import strategies as st

from fieldcheck import units as u

IN = 25.4  # NIST SP 811 exact definition (1 in = 25.4 mm)


@pytest.mark.parametrize(
    ("mm", "us", "metric"),
    [
        (3.5 * IN, "3.5 in", "88.9 mm"),
        (89.0, "3.5 in", "89 mm"),
        (140.0, "5.51 in", "140 mm"),
        (102 * IN, "8' 6\"", "2.59 m"),
        (102.5 * IN, "8' 6-1/2\"", "2.6 m"),
        (96 * IN + IN / 16, "8' 0-1/16\"", "2.44 m"),
        (24 * IN, "2' 0\"", "610 mm"),
        (23.99 * IN, "23.99 in", "609 mm"),
        (2440.0, "8' 0-1/16\"", "2.44 m"),
        (11.999 * 12 * IN, "12' 0\"", "3.66 m"),  # 143.988 in rounds up to 12' 0"
    ],
)
def test_format_length(mm, us, metric):
    # common practice, no source: feet-inches to 1/16 in from 2 ft up; 3 significant figures
    assert u.format_length(mm, "us") == us
    assert u.format_length(mm, "metric") == metric


def test_format_examples_from_brief():
    assert u.format_force(4665 * u.LBF_N, "us") == "4,665 lbf"
    assert u.format_force(20.8e3, "metric") == "20.8 kN"
    assert u.format_force(500.0, "metric") == "500 N"
    assert u.format_stress(1350 * u.PSI_MPA, "us") == "1,350 psi"
    assert u.format_stress(9.31, "metric") == "9.31 MPa"
    assert u.format_stress(1350 * u.PSI_MPA, "metric") == "9.31 MPa"  # 1350 psi = 9.308 MPa
    assert u.format_area_load(40 * u.PSF_KPA, "us") == "40 psf"
    assert u.format_area_load(1.915, "metric") == "1.92 kPa"
    assert u.format_force(4665 * u.LBF_N, "us", grouping=False) == "4665 lbf"


def test_format_bad_input():
    assert u.format_length(math.nan) == "n/a"
    assert u.format_force(math.inf) == "n/a"
    with pytest.raises(ValueError, match="unit system"):
        u.format_length(10.0, "imperial")


def test_format_accepts_numpy_scalars():
    np = pytest.importorskip("numpy")
    assert u.format_length(np.float64(89.0), "metric") == "89 mm"
    assert u.format_force(np.int64(500), "metric") == "500 N"


_len = st.floats(min_value=1.0, max_value=1e5, allow_nan=False, allow_infinity=False)


@given(_len)
def test_roundtrip_length_us(mm):
    back = u.parse_length(u.format_length(mm, "us"))
    # below 24 in: 2 decimals of an inch; above: nearest 1/16 in
    tol = 0.005 * IN if mm < 24 * IN else IN / 32
    assert abs(back - mm) <= tol * (1 + 1e-9)


@given(_len)
def test_roundtrip_length_metric(mm):
    back = u.parse_length(u.format_length(mm, "metric"))
    assert back == pytest.approx(mm, rel=5e-3)  # 3 significant figures


@given(st.floats(min_value=1.0, max_value=1e8, allow_nan=False))
def test_roundtrip_force(n):
    for system in ("us", "metric"):
        back = u.parse_force(u.format_force(n, system, grouping=False))
        assert back == pytest.approx(n, rel=5e-3)


@given(st.floats(min_value=0.01, max_value=1e5, allow_nan=False))
def test_roundtrip_stress_and_area_load(x):
    for system in ("us", "metric"):
        assert u.parse_stress(u.format_stress(x, system, grouping=False)) == pytest.approx(
            x, rel=5e-3
        )
        assert u.parse_area_load(u.format_area_load(x, system, grouping=False)) == pytest.approx(
            x, rel=5e-3
        )


def test_grouped_output_is_refused_not_misread():
    # a pasted "4,665 lbf" is refused with both readings offered, never read as 4.665 or 4665
    with pytest.raises(u.UnitInputError, match=r"4665 lbf or 4\.665 lbf"):
        u.parse_force(u.format_force(4665 * u.LBF_N, "us"), "load")
