"""Result columns of a rated batch as lists of strings, built from the arrays (no per-post JSON)."""

from __future__ import annotations

import numpy as np

from fieldcheck.engine.customary import LBF
from fieldcheck.engine.rating import FLAGS
from fieldcheck.engine.result import ACTIONS, Rating

# the engine's intermediate values these columns read (rate(batch, keep=KEEP) for a large batch)
KEEP = ("ke1", "ke2", "le_d_max", "le_d_limit", "cp", "axis")


def _fmt(a: np.ndarray, nd: int) -> list[str]:
    return ["" if np.isnan(x) else f"{x:.{nd}f}" for x in a.tolist()]


def result_columns(r: Rating) -> dict[str, list[str]]:
    v = r.values
    ax2 = v["axis"] == 2
    names = np.array(r.check_names, dtype=object)
    flags = r.flags
    warn_cache: dict[int, str] = {}

    def warns(f: int) -> str:
        if f not in warn_cache:
            warn_cache[f] = " | ".join(FLAGS.texts(f))
        return warn_cache[f]

    return {
        "allowable_load_lbf": _fmt(r.capacity_n / LBF, 1),
        "allowable_load_kN": _fmt(r.capacity_n / 1000.0, 4),
        "demand_capacity_ratio": _fmt(r.ratio, 4),
        "governing_check": names[r.governing].tolist(),
        "action": np.array(ACTIONS, dtype=object)[r.action].tolist(),
        "effective_length_factor": _fmt(np.where(ax2, v["ke2"], v["ke1"]), 4),
        "slenderness_ratio": _fmt(v["le_d_max"], 3),
        "stability_factor": _fmt(v["cp"], 6),
        "within_slenderness_limit": np.where(
            v["le_d_max"] <= v["le_d_limit"], "true", "false"
        ).tolist(),
        "warnings": [warns(int(f)) for f in flags.tolist()],
    }
