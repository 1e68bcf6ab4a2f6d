"""Result columns of a rated batch as lists of strings, built from the arrays (no per-post JSON).

An NDS row fills the NDS terms (allowable load, Ke, le/d and its limit, Cp); an EC5 row fills EN
1995-1-1's own (N_Rd, N_Ed, the buckling length factor, lambda, lambda_rel, k_c, beta_c, k_mod,
gamma_M) and leaves the NDS ones blank, as its --json does; its warnings are in EC5's words.
"""

from __future__ import annotations

from collections.abc import Sequence

import numpy as np

from fieldcheck.engine.batch import EC5
from fieldcheck.engine.customary import LBF
from fieldcheck.engine.explain import flag_texts
from fieldcheck.engine.result import ACTIONS, Rating

# the engine's intermediate values these columns read (rate(batch, keep=KEEP) for a large batch;
# the ec5_ ones only where a block has an EC5 post, NaN elsewhere)
KEEP = (
    "ke1",
    "ke2",
    "le_d_max",
    "le_d_limit",
    "cp",
    "axis",
    "ec5_lam1",
    "ec5_lam2",
    "ec5_lam_rel1",
    "ec5_lam_rel2",
    "ec5_beta_c",
)


def _fmt(a: np.ndarray, nd: int) -> list[str]:
    return ["" if np.isnan(x) else f"{x:.{nd}f}" for x in a.tolist()]


def governing_combinations(r: Rating) -> list[str]:
    """The load combination of each post's governing check (every ASCE 7 combination is rated
    for every check, engine/combinations.py), as --json's governing_combination; blank where
    the post is not rated (no load)."""
    from fieldcheck.engine.loads import present_bits, present_name

    n = r.n
    combo = np.full(n, -1, dtype=np.intp)
    for k, c in enumerate(r.checks.values()):
        at = np.flatnonzero(r.governing == k)
        if at.size:
            own = r.batch.combo if c.combo is None else c.combo
            combo[at] = np.broadcast_to(np.asarray(own), (n,)).take(at)
    # the name holds the loads each post carries only: one name per (combination, loads present)
    key = combo.astype(np.int64) * 128 + present_bits(r.batch, np.arange(n))
    names = {k: present_name(k // 128, k % 128) for k in np.unique(key).tolist()}
    rated = np.isfinite(r.ratio).tolist()
    return [names[k] if ok else "" for k, ok in zip(key.tolist(), rated, strict=True)]


def result_columns(r: Rating, meta: Sequence[dict] = ()) -> dict[str, list[str]]:
    """Every result column of the rated posts (``meta``: parse_records' meta of each rated row,
    naming the table and the status of its values)."""
    v = r.values
    n = r.n
    ax2 = v["axis"] == 2
    names = np.array(r.check_names, dtype=object)
    flags = r.flags
    ec5 = np.asarray(r.batch.method) == EC5
    nds = ~ec5
    nan = np.full(n, np.nan)
    warn_cache: dict[tuple[int, int], str] = {}

    def warns(f: int, method: int) -> str:
        if (f, method) not in warn_cache:
            warn_cache[f, method] = " | ".join(flag_texts(f, method))
        return warn_cache[f, method]

    def only(mask: np.ndarray, a) -> np.ndarray:
        return np.where(mask, a, np.nan)

    def governing(key: str) -> np.ndarray:  # an EC5 value of the governing axis
        if f"{key}1" not in v:
            return nan
        return only(ec5, np.where(ax2, v[f"{key}2"], v[f"{key}1"]))

    within = v["le_d_max"] <= v["le_d_limit"]
    methods = np.asarray(r.batch.method).tolist()
    return {
        "allowable_load_lbf": _fmt(only(nds, r.capacity_n / LBF), 1),
        "allowable_load_kN": _fmt(only(nds, r.capacity_n / 1000.0), 4),
        "demand_capacity_ratio": _fmt(r.ratio, 4),
        "governing_check": names[r.governing].tolist(),
        "governing_combination": governing_combinations(r),
        "action": np.array(ACTIONS, dtype=object)[r.action].tolist(),
        "effective_length_factor": _fmt(only(nds, np.where(ax2, v["ke2"], v["ke1"])), 4),
        "slenderness_ratio": _fmt(only(nds, v["le_d_max"]), 3),
        "stability_factor": _fmt(only(nds, v["cp"]), 6),
        "within_slenderness_limit": np.where(nds, np.where(within, "true", "false"), "").tolist(),
        "warnings": [warns(int(f), m) for f, m in zip(flags.tolist(), methods, strict=True)],
        "material": [m.get("_material", "") for m in meta] or [""] * n,
        "values_source": [m.get("_values_source") or "" for m in meta] or [""] * n,
        "values_status": [m.get("_values_status") or "" for m in meta] or [""] * n,
        # EN 1995-1-1 §6.3.2: N_Rd = k_c f_c,0,d A against the design load N_Ed
        "N_Rd_kN": _fmt(only(ec5, r.capacity_n / 1000.0), 4),
        "N_Ed_kN": _fmt(only(ec5, r.demand_n / 1000.0), 4),
        "buckling_length_factor": _fmt(only(ec5, np.where(ax2, v["ke2"], v["ke1"])), 4),
        "lambda": _fmt(governing("ec5_lam"), 3),
        "lambda_rel": _fmt(governing("ec5_lam_rel"), 4),
        "k_c": _fmt(only(ec5, v["cp"]), 6),
        "beta_c": _fmt(only(ec5, v.get("ec5_beta_c", nan)), 2),
        "k_mod": _fmt(only(ec5, r.batch.kmod), 4),
        "gamma_M": _fmt(only(ec5, r.batch.gamma_m), 4),
    }
