"""Where a post's end bears on its cap or sill: the bearing length along their grain and the
area under it (NDS 2018 §3.10.2, §3.10.4; EN 1995-1-1 §6.1.5). One place for the column's
bearing checks, the steel plates of the NDS and EC5 paths and the screen of an unnamed cap."""

from __future__ import annotations

import numpy as np

from fieldcheck.engine.batch import PostBatch
from fieldcheck.engine.blocks import distinct


def bearing_length(lb: np.ndarray, d1: np.ndarray, one: np.ndarray):
    """(lb, lb / d1): the bearing length along the cap's or sill's grain, the post's width d1
    unless given and never more (it bears only where it stands; NaN compares False), and its
    share of the end area (``one``: d1 throughout, no length given in the block)."""
    if not (distinct(lb) > 0).any():
        return d1, one
    lb = np.where(lb > 0, np.minimum(lb, d1), d1)
    return lb, lb / d1


def plate_bearing(b: PostBatch):
    """Steel bearing plates at both ends: (which posts have one, the plate length along the
    grain, at least the post's width, and the area under it, that length x the post's thickness
    across; judgement: a plate stiff enough to spread the load), or None where no post of the
    block has one."""
    plate = ~np.isnan(b.plate_lb_mm)
    if not distinct(plate).any():
        return None
    length = np.maximum(np.where(plate, b.plate_lb_mm, b.d1_mm), b.d1_mm)
    return plate, length, length * b.d2_mm
