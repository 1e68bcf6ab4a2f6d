"""Every ASCE 7 load combination rated for every check: posts x combinations in one pass.

No one combination can be picked in advance by the largest load / CD (or / lambda): capacity is
not proportional to the duration factor for every check. The column's Cp depends on Fc* through
FcE / Fc* (NDS 2018 §3.7.1), and bearing perpendicular to grain and the soil take no CD at all
(NDS 2018 Table 2.3.2 footnotes; IBC 2012 Table 1806.2). So each post is rated under every
combination that could govern, all in one engine pass over an expanded batch (rows = posts x
combinations), and each check keeps its largest ratio and the combination that gave it
(ASD: ASCE 7 §2.4.1 with CD per NDS 2018 §2.3.2 and Appendix B; LRFD: ASCE 7 §2.3.1 with lambda
per NDS 2018 Appendix N Table N3).

A combination is left out only when another combination of the same post has a load at least
as large and a duration factor no larger. Every check's capacity is non-decreasing in CD (or
lambda) and every demand rises with the load, so the other one's ratio is at least as large in
every check: leaving it out changes no ratio (monotonicity, exact). What is left is at most one
combination per distinct factor, usually one to three per post.
"""

from __future__ import annotations

from functools import cache

import numpy as np

from fieldcheck.engine.batch import ASD, EC5, FIELD_NAMES, LRFD, PostBatch
from fieldcheck.engine.blocks import distinct, filled
from fieldcheck.engine.loads import combination_rows as rows
from fieldcheck.engine.refdata import table
from fieldcheck.engine.result import Check, Rating

TYPES = ("D", "L", "Lr", "S", "R", "W", "E")
NOMINAL_FIELDS = ("nom_d_n", "nom_l_n", "nom_lr_n", "nom_s_n", "nom_r_n", "nom_w_n", "nom_e_n")
LIVE_KINDS = ("occupancy", "storage", "impact")


@cache
def _tables():
    rs = rows()
    asd = np.array([i for i, r in enumerate(rs) if r["method"] == "asd"], dtype=np.intp)
    lrfd = np.array([i for i, r in enumerate(rs) if r["method"] == "lrfd"], dtype=np.intp)
    coef_a = np.array([[float(rs[i][t]) for t in TYPES] for i in asd])  # ASCE 7 §2.4.1
    coef_l = np.array([[float(rs[i][t]) for t in TYPES] for i in lrfd])  # ASCE 7 §2.3.1
    lam = np.array([[float(rs[i][f"lam_{k}"]) for k in LIVE_KINDS] for i in lrfd])  # NDS App. N
    cds = {r["key"]: float(r["cd"]) for r in table("load_durations")}  # NDS 2018 Table 2.3.2
    dur = {r["key"]: r["duration"].strip() for r in table("load_types")}
    cd_type = np.array([cds[dur[t]] if dur[t] else np.nan for t in TYPES])
    return asd, lrfd, coef_a, coef_l, lam, cd_type, cds["permanent"]


def used(b: PostBatch) -> bool:
    """Any post of the block given by nominal loads (so its combinations are to be rated)."""
    return not bool(np.isnan(distinct(b.nom_d_n)).all())


@cache
def _block_rows(method: int, present: tuple[bool, ...]) -> tuple[np.ndarray, np.ndarray]:
    """(rows, coef) of the combinations of one method that can govern a block whose nominal
    loads of each type are non-zero somewhere (``present``). A row is left out when another row
    of the same method carries every load type at least as much and can have no larger factor:
    ASD, the same types (so the same CD, NDS 2018 §2.3.2); LRFD, a lambda no larger for every
    kind of live load (NDS 2018 Appendix N Table N3)."""
    asd, lrfd, coef_a, coef_l, lam, _, _ = _tables()
    idx, coef = (lrfd, coef_l) if method == LRFD else (asd, coef_a)
    lam_rows = lam if method == LRFD else np.zeros((len(idx), 1))
    coef = coef * np.array(present, dtype=float)[None, :]  # an absent type adds nothing
    k = len(idx)
    keep = np.ones(k, dtype=bool)
    for a in range(k):
        for c in range(k):
            if a == c or not keep[c]:
                continue
            more = bool(np.all(coef[c] >= coef[a]))
            if method == LRFD:
                no_larger = bool(np.all(lam_rows[c] <= lam_rows[a]))
            else:
                no_larger = bool(np.array_equal(coef[c] != 0, coef[a] != 0))
            same = np.array_equal(coef[c], coef[a]) and np.array_equal(lam_rows[c], lam_rows[a])
            if more and no_larger and (not same or c < a):
                keep[a] = False
                break
    return idx[keep], coef[keep]


def candidates(b: PostBatch):
    """The combinations that could govern each post, as rows of an expanded rating.

    Returns (ii, kk, k, load_r, factor_r, combo_r): the post and the combination slot of each
    expanded row (slot-major), the number of slots, and each expanded row's load, factor and
    combination. A post with no nominal loads keeps one row: its load_n with its cd or lam and
    combo as given.
    """
    n = b.n
    _, lrfd_idx, _, _, lam_t, cd_type, cd_perm = _tables()
    stack = np.stack([np.nan_to_num(getattr(b, f), nan=0.0) for f in NOMINAL_FIELDS])  # (7, n)
    present = tuple(bool((distinct(stack[t]) > 0).any()) for t in range(len(TYPES)))
    methods = distinct(b.method)
    is_lrfd = b.method == LRFD
    loads, facs, combos = [], [], []
    for method in (ASD, LRFD):
        if method == LRFD and not (methods == LRFD).any():
            continue
        if method == ASD and (methods == LRFD).all():
            continue
        rws, coef = _block_rows(method, present)
        load = coef @ stack  # ASCE 7 §2.4.1 / §2.3.1: sum of coefficient x nominal load
        if method == LRFD:
            pos = np.searchsorted(lrfd_idx, rws)
            fac = lam_t[pos][:, b.live_kind.astype(np.intp)]  # NDS 2018 App. N Table N3
        else:
            # NDS 2018 §2.3.2: CD of the shortest-duration load present with a non-zero value
            fac = np.zeros_like(load)
            for t in range(len(TYPES)):
                if not present[t]:
                    continue
                cdt = b.cd_l if t == 1 else b.cd_r if t == 4 else cd_type[t]
                on = (coef[:, t, None] != 0) & (stack[t] > 0)[None, :]
                np.maximum(fac, on * cdt, out=fac)
            fac[fac == 0] = cd_perm  # nothing present: dead load alone, permanent
        loads.append(load)
        facs.append(fac)
        combos.append(np.broadcast_to(rws[:, None], load.shape))
    if len(loads) == 2:  # both methods in the block: each post takes its own method's rows
        k = max(x.shape[0] for x in loads)
        pad = lambda a, v: np.concatenate([a, np.full((k - a.shape[0], n), v)])  # noqa: E731
        load = np.where(is_lrfd, pad(loads[1], -np.inf), pad(loads[0], -np.inf))
        fac = np.where(is_lrfd, pad(facs[1], 1.0), pad(facs[0], 1.0))
        combo = np.where(is_lrfd, pad(combos[1], -1), pad(combos[0], -1)).astype(np.intp)
    else:
        load, fac, combo = loads[0], facs[0], combos[0]
    # a combination is left out where another one has a load at least as large and a factor no
    # larger (ties: the earlier row stays): every check's ratio is then no larger (monotone)
    k = load.shape[0]
    keep = np.isfinite(load)
    for a in range(k):
        for c in range(k):
            if a == c:
                continue
            dom = (load[c] >= load[a]) & (fac[c] <= fac[a])
            if c > a:
                dom &= (load[c] > load[a]) | (fac[c] < fac[a])
            keep[a] &= ~(dom & keep[c])
    has = ~np.isnan(b.nom_d_n) & (b.method != EC5)
    all_have = bool(distinct(has).all())
    if not all_have:
        keep &= has[None, :]
        keep[0] |= ~has  # a post given by load_n alone: one row, as given
    kk, ii = np.nonzero(keep)
    load_r, fac_r, combo_r = load[kk, ii], fac[kk, ii], combo[kk, ii]
    if not all_have:
        given = ~has[ii]
        load_r = np.where(given, b.load_n[ii], load_r)
        combo_r = np.where(given, b.combo[ii], combo_r)
    return ii, kk, k, load_r, fac_r, combo_r


def _take(b: PostBatch, ii: np.ndarray) -> PostBatch:
    """The rows ``ii`` of a block; a field of one value stays one broadcast value (no copy of
    it per row: the expanded batch has a new length for every block)."""
    out = {}
    m = ii.shape[0]
    for name in FIELD_NAMES:
        a = getattr(b, name)
        out[name] = filled(a[0], m) if distinct(a).shape[0] == 1 < a.shape[0] else a[ii]
    return PostBatch(**out)


def _argmax_rows(key: np.ndarray) -> np.ndarray:
    """argmax over axis 0 of a (k, n) array, one contiguous row at a time (numpy's argmax
    along axis 0 walks the array with a stride)."""
    best = key[0].copy()
    arg = np.zeros(key.shape[1], dtype=np.intp)
    for j in range(1, key.shape[0]):
        better = key[j] > best
        if better.any():
            arg[better] = j
            np.maximum(best, key[j], out=best)
    return arg


def expand(b: PostBatch):
    """(expanded batch, ii, kk, k): the block's posts x candidate combinations."""
    ii, kk, k, load_r, fac_r, combo_r = candidates(b)
    sub = _take(b, ii)
    has = ~np.isnan(sub.nom_d_n) & (sub.method != EC5)
    sub.load_n = load_r
    asd = has & (sub.method == ASD)
    lrfd = has & (sub.method == LRFD)
    if asd.any():
        sub.cd = np.where(asd, fac_r, sub.cd)
    if lrfd.any():
        sub.lam = np.where(lrfd, fac_r, sub.lam)
    sub.combo = combo_r.astype(np.int8)
    return sub, ii, kk, k


def rate_with_combinations(b: PostBatch, rate_block, finish):
    """Rate a block under every candidate combination in one ``rate_block`` call and keep, for
    each check, the largest ratio and its combination; the rating's batch holds the governing
    combination of the governing check (load_n, cd or lam, combo)."""
    n = b.n
    sub, ii, kk, k = expand(b)
    r = rate_block(sub)
    m = sub.n
    row_of = np.zeros((k, n), dtype=np.intp)
    row_of[kk, ii] = np.arange(m)
    cols = np.arange(n)
    factor = _factor(sub)
    checks: dict[str, Check] = {}
    ratios, rows_by_check = [], []
    for name, c in r.checks.items():
        if c.capacity_n.strides == (0,) and np.isnan(c.capacity_n[0]):  # not made in this block
            nan = filled(np.nan, n)
            checks[name] = Check(c.name, c.label, c.clause, nan, nan)
            continue
        with np.errstate(divide="ignore", invalid="ignore"):
            ratio = c.demand_n / c.capacity_n
        key = np.full((k, n), -np.inf)
        # NaN (no capacity or no load) ranks below any number but above a missing row
        key[kk, ii] = np.where(np.isnan(ratio), -1e300, ratio)
        rows_c = row_of[_argmax_rows(key), cols]
        ratios.append(ratio[rows_c])
        rows_by_check.append(rows_c)
        checks[name] = Check(
            c.name,
            c.label,
            c.clause,
            c.capacity_n[rows_c],
            c.demand_n[rows_c],
            combo=sub.combo[rows_c],
            factor=factor[rows_c],
        )
    flags = np.zeros(n, dtype=np.int64)
    for j in range(k):  # a flag raised under any combination stands
        sel = kk == j
        if sel.any():
            flags[ii[sel]] |= r.flags[sel]
    # the row kept for the working: that of the check with the largest ratio
    stack = np.stack(ratios)
    gov_made = _argmax_rows(np.where(np.isnan(stack), -np.inf, stack))
    rows = np.stack(rows_by_check)[gov_made, cols]
    gov = {f: getattr(sub, f)[rows] for f in ("load_n", "cd", "lam", "combo")}
    out = Rating(
        batch=b.replace_arrays(**gov),
        checks=checks,
        capacity_n=b.load_n,
        demand_n=b.load_n,
        ratio=b.load_n,
        governing=np.zeros(n, dtype=np.int8),
        action=np.zeros(n, dtype=np.int8),
        flags=flags,
        values={
            key_: (
                (filled(v[0], n) if v.strides == (0,) else v[rows])
                if isinstance(v, np.ndarray) and v.shape[:1] == (m,)
                else v
            )
            for key_, v in r.values.items()
        },
    )
    return finish(out)


def _factor(sub: PostBatch) -> np.ndarray:
    """The duration factor of each row: CD (ASD), lambda (LRFD), kmod (EC5)."""
    return np.where(sub.method == LRFD, sub.lam, np.where(sub.method == EC5, sub.kmod, sub.cd))
