"""Cross-sections: nominal to dressed sizes, round posts, built-up plies. SI (mm) throughout.

Measured dimensions always win: nominal sizes only fill in what was not measured (rough-sawn and
old stock is often full size; NDS Supplement Table 1B).
"""

from __future__ import annotations

from functools import cache

import numpy as np

from fieldcheck.engine.customary import IN


def dressed_in(nominal_in: np.ndarray, thickness_in: np.ndarray | None = None) -> np.ndarray:
    """Dressed (dry) size in inches of a nominal dimension (NDS Supplement Table 1A; PS 20).

    Dimension lumber (2"-4" thick): nominal - 1/2 in up to 6 in, - 3/4 in for 8 in and up.
    Timbers (5" and thicker both ways): nominal - 1/2 in.
    ``thickness_in`` is the smaller nominal dimension of the piece (decides the product class).
    """
    nom = np.asarray(nominal_in, dtype=np.float64)
    thick = nom if thickness_in is None else np.asarray(thickness_in, dtype=np.float64)
    timber = thick >= 5  # NDS Supplement Table 1B: timbers 5 in and thicker
    return np.where(timber | (nom <= 6), nom - 0.5, nom - 0.75)


@cache
def nominal_dressed_mm(a: int, b: int) -> tuple[float, float]:
    """Dressed (d1, d2) in mm for a nominal size a x b (d1 the larger)."""
    big, small = max(a, b), min(a, b)
    d1 = float(dressed_in(np.array([big]), np.array([small]))[0]) * IN
    d2 = float(dressed_in(np.array([small]), np.array([small]))[0]) * IN
    return d1, d2


def is_timber(d2_mm: np.ndarray) -> np.ndarray:
    """Timbers are 5 in nominal (4.5 in dressed) and thicker (NDS Supplement Table 4D scope)."""
    return np.asarray(d2_mm) >= 4.5 * IN - 1.0


def nominal_width_in(d1_mm: np.ndarray) -> np.ndarray:
    """Conservative nominal width (in) of a measured piece, for the size factor CF.

    The smallest nominal whose dressed size is at least the measured width: a full-sawn 4.0 in
    piece counts as 5 in nominal, which gives the lower CF (judgement, conservative).
    """
    w = np.asarray(d1_mm, dtype=np.float64) / IN
    # invert dressed_in for dimension lumber: +1/2 up to 5.5 in dressed, +3/4 above
    nom = np.where(w <= 5.5 + 1e-6, w + 0.5, w + 0.75)
    return np.ceil(nom - 1e-6)


def round_equivalent_side(diameter_mm: np.ndarray) -> np.ndarray:
    """Side of the square with the same area as a round post: d = D sqrt(pi)/2 (NDS 2018 §3.7.3)."""
    return np.asarray(diameter_mm, dtype=np.float64) * (np.sqrt(np.pi) / 2.0)


def area(d1_mm: np.ndarray, d2_mm: np.ndarray) -> np.ndarray:
    return d1_mm * d2_mm


def second_moments(d1_mm: np.ndarray, d2_mm: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """(I1, I2) in mm^4: I1 bends in the plane of d1 (d2 d1^3 / 12), I2 in the plane of d2."""
    # products, not **3: numpy's power is several times slower than two multiplications
    return d2_mm * (d1_mm * d1_mm * d1_mm) / 12.0, d1_mm * (d2_mm * d2_mm * d2_mm) / 12.0
