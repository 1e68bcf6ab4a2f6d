"""Spring-restrained ends in the rating: solved K (stability.py) in place of the Table G1 value.

An end described by a rotational spring keeps its translation from its end code: pinned and
fixed ends are held sideways, free and guided ends sway. The rating uses the solved K raised to
the NDS recommended design value of the bracketing ideal cases (stability.design_k), or the
theoretical K when the user accepts it.
"""

from __future__ import annotations

import numpy as np

from fieldcheck.engine import stability
from fieldcheck.engine.batch import FIXED, FREE, GUIDED, PostBatch

SPRING_MODE = -2  # mode index for "spring-restrained ends, solved"


def end_ratio(code: np.ndarray, r: np.ndarray) -> np.ndarray:
    """R = k L / (E I) of an end: the spring where given, else 0 (pinned, free) or inf (fixed, guided)."""
    from_code = np.where((code == FIXED) | (code == GUIDED), np.inf, 0.0)
    return np.where(np.isnan(r), from_code, r)


def translates(code: np.ndarray) -> np.ndarray:
    return (code == FREE) | (code == GUIDED)


def spring_ke(b: PostBatch, idx: np.ndarray) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """(design K, solved K, sway) for the posts at idx; NaN K where the post is a mechanism."""
    top, bot = b.top[idx], b.bottom[idx]
    rt, rb = end_ratio(top, b.r_top[idx]), end_ratio(bot, b.r_bottom[idx])
    t_top, t_bot = translates(top), translates(bot)
    sway = t_top | t_bot
    # the solver's sway case moves the top; a swaying bottom under a held top is the same post upside down
    flip = t_bot & ~t_top
    r_up, r_down = np.where(flip, rb, rt), np.where(flip, rt, rb)
    both = t_top & t_bot  # nothing holds it sideways: a mechanism
    k = stability.k_from_ratios(r_up, r_down, sway=sway, on_mechanism="nan")
    k = np.where(both, np.nan, k)
    kd = stability.design_k(k, r_up, r_down, sway=sway, theoretical=b.theoretical_k[idx])
    return kd, k, sway
