"""The capacity-against-height plot: everything drawn inside its frame, labelled in words."""

from __future__ import annotations

import re

import numpy as np
from hypothesis import given, settings
from hypothesis import strategies as st

from fieldcheck.report import svg


@given(
    st.floats(300, 12_000),
    st.floats(100, 2e6),
    st.floats(0.01, 3.0),
    st.sampled_from(["us", "metric"]),
)
@settings(max_examples=60, deadline=None)
def test_curve_marker_and_demand_stay_inside_the_frame(h, cap, dem_ratio, units):
    # common practice, no source: a falling curve like Euler's, capacity ~ 1 / height^2 past a
    # plateau
    heights = h * np.linspace(0.25, 2.0, 20)
    caps = np.minimum(cap * 1.3, cap * (h / heights) ** 2)
    out = svg.capacity_plot(heights, caps, h, cap, cap * dem_ratio, units, "P1")
    x0, y0 = svg.LEFT, svg.TOP
    x1, y1 = svg.W - svg.RIGHT, svg.H - svg.BOTTOM
    pts = re.search(r'<polyline points="([^"]+)"', out).group(1).split()
    for p in pts:
        x, y = map(float, p.split(","))
        assert x0 - 0.1 <= x <= x1 + 0.1 and y0 - 0.1 <= y <= y1 + 0.1
    cx, cy = map(float, re.search(r'<circle cx="([\d.]+)" cy="([\d.]+)"', out).groups())
    assert x0 - 0.1 <= cx <= x1 + 0.1 and y0 - 0.1 <= cy <= y1 + 0.1
    assert "this post (P1)" in out
    assert ("height (ft)" in out) == (units == "us") and ("capacity (kN)" in out) == (
        units == "metric"
    )


def test_ticks_cover_the_data():
    assert svg.nice_ticks(1.79, 14.3) == [0, 5, 10, 15]
    t = svg.nice_ticks(0.0, 11_550.0)
    assert t[0] == 0 and t[-1] >= 11_550.0


def test_no_curve_when_height_is_missing():
    out = svg.capacity_plot(np.full(3, np.nan), np.full(3, np.nan), float("nan"), 1.0, None)
    assert "No capacity curve" in out and "<svg" not in out
