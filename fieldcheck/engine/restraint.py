"""End conditions -> buckling mode -> effective-length factor Ke; brace heights -> unbraced lengths.

Each end is pinned, fixed, free or guided (rotation held, translation free). The pair gives one
of the six classic buckling modes of NDS 2018 Appendix G, Table G1, with its theoretical K and
the recommended design Ke (larger where fixity is assumed, because field fixity is imperfect).
"""

from __future__ import annotations

import itertools

import numpy as np

from fieldcheck.engine.batch import END_NAMES, FIXED, FREE, GUIDED, PINNED

# mode: (label, theoretical K, recommended design Ke)   NDS 2018 Appendix G Table G1
MODES = {
    "a": ("fixed-fixed", 0.5, 0.65),
    "b": ("fixed-pinned", 0.699156, 0.80),  # exact K: pi / 4.493409 (root of tan u = u)
    "c": ("fixed-guided, sway", 1.0, 1.2),
    "d": ("pinned-pinned", 1.0, 1.0),
    "e": ("fixed-free, flagpole", 2.0, 2.10),
    "f": ("pinned-guided, sway", 2.0, 2.4),
}
MODE_KEYS = tuple(MODES)  # index 0..5; -1 marks a mechanism
MECHANISM = -1

# 4x4 lookup [bottom, top] -> mode index (symmetric: the six cases do not depend on which end is up)
_P, _F, _R, _G = PINNED, FIXED, FREE, GUIDED
_LUT = np.full((4, 4), MECHANISM, dtype=np.int8)
for (a, b), m in {
    (_F, _F): "a",
    (_F, _P): "b",
    (_F, _G): "c",
    (_P, _P): "d",
    (_F, _R): "e",
    (_P, _G): "f",
}.items():
    _LUT[a, b] = _LUT[b, a] = MODE_KEYS.index(m)
THEORETICAL = np.array([MODES[k][1] for k in MODE_KEYS])
RECOMMENDED = np.array([MODES[k][2] for k in MODE_KEYS])
SWAY = np.array([k in "cef" for k in MODE_KEYS])


_LUT_FLAT = _LUT.ravel()
# [bottom * 4 + top] -> the ends can move sideways (a sway case; False for a mechanism)
_SWAY_FLAT = np.array([m >= 0 and bool(SWAY[m]) for m in _LUT_FLAT])


def end_pair(bottom: np.ndarray, top: np.ndarray) -> np.ndarray:
    """bottom * 4 + top as intp: one index into the flat end-pair tables (a 1-D take is far
    faster than a 2-D fancy index or a take with int8 indices)."""
    pair = np.multiply(bottom, 4, dtype=np.intp)
    pair += top
    return pair


def mode_index(bottom: np.ndarray, top: np.ndarray) -> np.ndarray:
    """Mode index 0..5 (a..f) per post, or -1 where the pair is a mechanism."""
    return _LUT_FLAT.take(end_pair(bottom, top))


def modes_of_pairs(pair: np.ndarray, theoretical: np.ndarray | bool = False):
    """(mode index, sway, Ke) per post from :func:`end_pair` (NDS 2018 Appendix G Table G1)."""
    k_idx = pair * 2
    k_idx += np.asarray(theoretical, dtype=np.intp)
    return _LUT_FLAT.take(pair), _SWAY_FLAT.take(pair), _KE_FLAT.take(k_idx)


def mechanism_reason(bottom: int, top: int) -> str | None:
    """One sentence saying why an end pair cannot carry load, or None if it can."""
    if _LUT[bottom, top] != MECHANISM:
        return None
    b, t = END_NAMES[bottom], END_NAMES[top]
    if bottom in (FREE, GUIDED) and top in (FREE, GUIDED):
        why = "neither end is held against sideways movement, so the post can slide over as a whole"
        fix = "hold one end sideways (brace it) or fix it"
    else:
        why = "a pinned end with a free end lets the post rotate over as a rigid body"
        fix = "fix the pinned end or hold the free end sideways"
    return f"ends: a {b} bottom with a {t} top is a mechanism: {why}; {fix}."


# [bottom, top, theoretical] -> K (NaN for a mechanism), flattened for one take per call
_KE_LUT = np.full((4, 4, 2), np.nan)
for _b in range(4):
    for _t in range(4):
        if _LUT[_b, _t] != MECHANISM:
            _KE_LUT[_b, _t] = RECOMMENDED[_LUT[_b, _t]], THEORETICAL[_LUT[_b, _t]]
_KE_FLAT = _KE_LUT.ravel()


def unbraced_length(height_mm: float, brace_heights_mm: list[float], field: str) -> float:
    """Longest unbraced segment (mm) between the ends and the brace points (NDS 2018 §3.7.1.1)."""
    pts = sorted(brace_heights_mm)
    for h in pts:
        if not 0.0 < h < height_mm:
            raise ValueError(
                f"{field}: a brace at {h:.0f} mm is not between the bottom (0) and the top "
                f"({height_mm:.0f} mm); give brace heights measured up from the bottom."
            )
    edges = [0.0, *pts, height_mm]
    return max(b - a for a, b in itertools.pairwise(edges))
