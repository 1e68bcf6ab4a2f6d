"""Capacity curves for plots: posts re-rated at many heights or brace positions, one engine call.

Part of the explain layer: the interface and the report draw these same curves."""

from __future__ import annotations

import numpy as np

from fieldcheck.engine.batch import PostBatch
from fieldcheck.engine.rating import rate


def capacity_vs_height(batch: PostBatch, heights_mm: np.ndarray) -> np.ndarray:
    """Capacity (N) of each post of ``batch`` at each height: shape (n, k).

    ``heights_mm``: k heights for every post, or an (n, k) array, each post's own. Brace points
    are dropped (unbraced lengths become the full height); everything else stays as measured.
    All n x k variants are rated in one pass of the batch engine.
    """
    h = np.asarray(heights_mm, dtype=np.float64)
    n, k = batch.n, h.shape[-1]
    if n == 0:
        return np.zeros((0, k))
    rep = batch.take(np.repeat(np.arange(n), k))
    rep = rep.replace(
        height_mm=h.ravel() if h.ndim == 2 else np.tile(h, n),
        lu1_mm=np.nan,
        lu2_mm=np.nan,
        braced1=False,
        braced2=False,
        brace1a_mm=np.nan,
        brace1b_mm=np.nan,
        brace2a_mm=np.nan,
        brace2b_mm=np.nan,
    )
    return rate(rep).capacity_n.reshape(n, k)


def capacity_vs_brace(batch: PostBatch, fractions: np.ndarray, axis: int = 2) -> np.ndarray:
    """Capacity (N) of each post with one brace at each fraction of its height in one axis: (n, k).

    The unbraced length in that axis is the longer of the two segments (NDS 2018 §3.7.1.1).
    """
    f = np.asarray(fractions, dtype=np.float64)
    n, k = batch.n, f.size
    rep = batch.take(np.repeat(np.arange(n), k))
    frac = np.tile(f, n)
    lu = rep.height_mm * np.maximum(frac, 1.0 - frac)
    rep = rep.replace(
        **{
            f"lu{axis}_mm": lu,
            f"braced{axis}": True,
            f"brace{axis}a_mm": frac * rep.height_mm,
            f"brace{axis}b_mm": np.nan,
        }
    )
    return rate(rep).capacity_n.reshape(n, k)


def default_heights(height_mm: float, k: int = 24) -> np.ndarray:
    """Heights for a plot around a post's own height: from a quarter to twice it."""
    return np.linspace(0.25 * height_mm, 2.0 * height_mm, k)
