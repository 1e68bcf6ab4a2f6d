"""Columns for ends that are neither pinned nor fixed: a rotational spring at the top or bottom.

Give the spring as a stiffness (moment per radian, e.g. `400 kip-in/rad`) or as the ratio
R = k L / (E I) (0 a pin, inf full fixity). A stiffness becomes R with the post's E and the larger
second moment, which gives the smaller R on both axes (conservative; judgement).
"""

from __future__ import annotations

import math
from typing import Any

import numpy as np

from fieldcheck import units
from fieldcheck.engine import stability
from fieldcheck.engine.spring_ends import end_ratio, translates
from fieldcheck.records.core_columns import Column
from fieldcheck.row_error import RowError


def parse_ratio(text: str, field: str) -> float:
    """R = k L / (E I) as typed: a number from 0 (pin) to inf (fixed), or 'inf' / 'fixed'."""
    from fieldcheck.units import shown

    t = text.strip().lower()
    text = shown(text)
    if t in ("inf", "infinity", "fixed"):
        return math.inf
    try:
        v = float(t)
    except ValueError:
        raise ValueError(
            f"{field}: '{text}' is not a number; give R = k L / (E I) from 0 (pin) to inf "
            "(fixed), e.g. 2."
        ) from None
    if math.isnan(v):
        raise ValueError(
            f"{field}: '{text}' is not a number; give R from 0 (pin) to inf (fixed), e.g. 2."
        )
    if v < 0:
        raise ValueError(
            f"{field}: {text} is negative; give R from 0 (pin) to inf (fixed), e.g. 2."
        )
    return v


def _ratio(field: str):
    return lambda s: parse_ratio(s, field)


COLUMNS: tuple[Column, ...] = (
    Column(
        "top_spring",
        "ends",
        "rotational stiffness of the top connection (moment per radian)",
        "400 kip-in/rad",
        lambda s: units.parse_stiffness(s, "top_spring"),
    ),
    Column(
        "bottom_spring",
        "ends",
        "rotational stiffness of the bottom connection",
        "400 kip-in/rad",
        lambda s: units.parse_stiffness(s, "bottom_spring"),
    ),
    Column(
        "top_ratio",
        "ends",
        "top spring as R = k L / (E I): 0 pin, inf fixed",
        "2",
        _ratio("top_ratio"),
    ),
    Column(
        "bottom_ratio",
        "ends",
        "bottom spring as R = k L / (E I): 0 pin, inf fixed",
        "2",
        _ratio("bottom_ratio"),
    ),
)


def spring_fields(row: dict[str, Any], out: dict[str, Any]) -> dict[str, Any]:
    keys = ("top_spring", "bottom_spring", "top_ratio", "bottom_ratio")
    if not any(k in row for k in keys):
        return {}
    f: dict[str, Any] = {}
    for end in ("top", "bottom"):
        if f"{end}_spring" in row and f"{end}_ratio" in row:
            raise RowError(
                f"{end}_ratio",
                f"{end}_ratio: give the {end} spring as a stiffness or as a ratio, not both.",
            )
        if f"{end}_ratio" in row:
            f[f"r_{end}"] = row[f"{end}_ratio"]
        elif f"{end}_spring" in row:
            e, d1, d2, h = out["_e_mpa"], out["_d1"], out["_d2"], row["height"]
            i_big = d2 * d1**3 / 12.0
            f[f"r_{end}"] = row[f"{end}_spring"] * h / (e * i_big)  # R = k L / (E I)
    # refuse a mechanism here with the solver's own sentence
    from fieldcheck.engine.batch import END_NAMES

    top = np.array([END_NAMES.index(row.get("top", "pinned"))])
    bot = np.array([END_NAMES.index(row.get("bottom", "pinned"))])
    rt = end_ratio(top, np.array([f.get("r_top", np.nan)]))
    rb = end_ratio(bot, np.array([f.get("r_bottom", np.nan)]))
    if translates(top)[0] and translates(bot)[0]:
        raise RowError(
            "top",
            "ends: neither end is held sideways, so the post slides over as a whole; brace one "
            "end.",
        )
    flip = translates(bot)[0] and not translates(top)[0]
    up, down = (rb, rt) if flip else (rt, rb)
    try:
        stability.k_from_ratios(up, down, sway=bool(translates(top)[0] or translates(bot)[0]))
    except ValueError as exc:
        col = next(k for k in keys if k in row)
        raise RowError(col, f"{col}: {exc}") from None
    return f
