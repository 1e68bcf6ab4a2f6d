"""Spring-restrained ends in the rating: solved K (stability.py) in place of the Table G1 value.

An end described by a rotational spring keeps its translation from its end code: pinned and
fixed ends are held sideways, free and guided ends sway. The rating uses the solved K raised to
the NDS recommended design value of the bracketing ideal cases (stability.design_k), or the
theoretical K when the user accepts it.
"""

from __future__ import annotations

import numpy as np

from fieldcheck.engine import stability
from fieldcheck.engine.batch import FIXED, FREE, GUIDED, PINNED, PostBatch
from fieldcheck.engine.restraint import RECOMMENDED, THEORETICAL, mode_index

SPRING_MODE = -2  # mode index for "spring-restrained ends, solved"


def end_ratio(code: np.ndarray, r: np.ndarray) -> np.ndarray:
    """R = k L / (E I) of an end: the spring where given, else 0 (pinned, free) or inf (fixed,
    guided).
    """
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
    # the solver's sway case moves the top; a swaying bottom under a held top is the same post
    # upside down
    flip = t_bot & ~t_top
    r_up, r_down = np.where(flip, rb, rt), np.where(flip, rt, rb)
    both = t_top & t_bot  # nothing holds it sideways: a mechanism
    k = stability.k_from_ratios(r_up, r_down, sway=sway, on_mechanism="nan")
    k = np.where(both, np.nan, k)
    kd = stability.design_k(k, r_up, r_down, sway=sway, theoretical=b.theoretical_k[idx])
    return kd, k, sway


def braced_ke(b: PostBatch, idx: np.ndarray, axis: int) -> tuple[np.ndarray, np.ndarray]:
    """(design K, solved K) about one axis for posts with braces in that axis whose ends sway or are
    springs: the solver takes the ends as they are and rigid braces at the recorded heights.
    K is relative to the full height; NaN where the post is still a mechanism."""
    top, bot = b.top[idx], b.bottom[idx]
    rt, rb = end_ratio(top, b.r_top[idx]), end_ratio(bot, b.r_bottom[idx])
    t_top, t_bot = translates(top), translates(bot)
    h = b.height_mm[idx]
    braces = np.stack(
        [getattr(b, f"brace{axis}a_mm")[idx], getattr(b, f"brace{axis}b_mm")[idx]], axis=1
    )
    klt, klb = np.where(t_top, 0.0, np.inf), np.where(t_bot, 0.0, np.inf)
    frac = braces / h[:, None]

    def solve(r_top, r_bot, copies=1):
        # several cases of the same posts in one solver call (the solver's cost is mostly per
        # call; each post is solved on its own, so the numbers are those of separate calls)
        return stability.effective_length_factor(
            1.0,
            1.0,
            r_top,
            r_bot,
            np.tile(klt, copies),
            np.tile(klb, copies),
            np.tile(frac, (copies, 1)),
            on_mechanism="nan",
        )

    if b.theoretical_k[idx].all():
        k = solve(rt, rb)
        return k, k
    # the bracketing ideal cases WITH the same braces: spring ends taken as fixed (stiff) and as
    # pinned (flexible); each gets the NDS margin of its ideal case (recommended / theoretical Ke,
    # NDS 2018 Appendix G), and the solved K is mapped linearly between them (judgement, as
    # stability.design_k does for posts without braces)
    spring_t, spring_b = ~np.isnan(b.r_top[idx]), ~np.isnan(b.r_bottom[idx])
    r_tops = (rt, np.where(spring_t, np.inf, rt), np.where(spring_t, 0.0, rt))
    r_bots = (rb, np.where(spring_b, np.inf, rb), np.where(spring_b, 0.0, rb))
    k, k_s, k_f = np.split(solve(np.concatenate(r_tops), np.concatenate(r_bots), 3), 3)
    m_s = _margin(_stiff_code(top, spring_t), _stiff_code(bot, spring_b))
    m_f = _margin(_flex_code(top, spring_t), _flex_code(bot, spring_b))
    m_f = np.where(
        np.isnan(m_f) | np.isnan(k_f), m_s, m_f
    )  # flexible case a mechanism: stiff margin
    k_f = np.where(np.isnan(k_f), k, k_f)
    lo_k, hi_k = k_s, np.maximum(k_f, k_s)
    with np.errstate(divide="ignore", invalid="ignore"):
        t = np.clip((k - lo_k) / (hi_k - lo_k), 0.0, 1.0)
    t = np.where(hi_k > lo_k, t, 0.0)
    kd = k * (m_s + t * (m_f - m_s))
    kd = np.where(b.theoretical_k[idx], k, kd)
    return kd, k


def _stiff_code(code: np.ndarray, spring: np.ndarray) -> np.ndarray:
    # a spring end at its stiff limit: rotation held (fixed, or guided where it translates)
    return np.where(spring, np.where(translates(code), GUIDED, FIXED), code)


def _flex_code(code: np.ndarray, spring: np.ndarray) -> np.ndarray:
    # a spring end at its flexible limit: rotation free (pinned, or free where it translates)
    return np.where(spring, np.where(translates(code), FREE, PINNED), code)


def _margin(top: np.ndarray, bot: np.ndarray) -> np.ndarray:
    """Recommended / theoretical Ke of the ideal case (NDS 2018 Appendix G); NaN for a mechanism."""
    m = mode_index(bot, top)
    safe = np.where(m < 0, 0, m)
    return np.where(m < 0, np.nan, RECOMMENDED[safe] / THEORETICAL[safe])
