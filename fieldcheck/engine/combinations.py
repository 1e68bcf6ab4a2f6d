"""Every ASCE 7 load combination rated for every check: posts x combinations in one pass.

No one combination can be picked in advance by the largest load / CD (or / lambda): capacity is
not proportional to the duration factor for every check. The column's Cp depends on Fc* through
FcE / Fc* (NDS 2018 §3.7.1), and bearing perpendicular to grain and the soil take no CD at all
(NDS 2018 Table 2.3.2 footnotes; IBC 2012 Table 1806.2). So each check keeps its largest ratio
over every combination and the combination that gave it (ASD: ASCE 7 §2.4.1 with CD per NDS 2018
§2.3.2 and Appendix B; LRFD: ASCE 7 §2.3.1 with lambda per NDS 2018 Appendix N Table N3).

How, without rating the whole pipeline once per combination: only what takes the duration
factor changes from one combination to the next, and each check says how its capacity takes it
(``SCALING``). The stages run once per post, at its reference combination: the one with the
largest load / factor (``ref``). Then, on arrays of posts x combinations:

- a capacity proportional to Fc* (end grain, net section): ratio = load / (factor x capacity
  at factor 1), largest where load / factor is, which is the reference itself;
- a capacity that takes no factor (soil; bearing across the grain in ASD): largest load;
- bearing across the grain in LRFD: largest load / min(lambda, 1) (NDS 2018 Appendix N);
- the column (Cp through Fc*) and the combined interaction: evaluated again, a few vectorised
  lines per combination, only where a combination can beat the reference. Every capacity rises
  with the factor and its capacity / factor falls with it (Cp falls as Fc* rises), so a
  combination with a smaller factor than the reference has load / capacity no larger; one with
  a larger factor can beat it only with a larger load (monotonicity, exact).

The working of a post shows the values of the governing check's combination: where that is not
the reference, the block is rated once more at it (only when the values are kept).
"""

from __future__ import annotations

from functools import cache

import numpy as np

from fieldcheck.engine import column, condition, nds
from fieldcheck.engine.batch import ASD, EC5, LRFD, PostBatch
from fieldcheck.engine.blocks import absent, broadcast, distinct, filled
from fieldcheck.engine.loads import combination_rows as rows
from fieldcheck.engine.refdata import table
from fieldcheck.engine.result import Check, Rating, duration_factor

TYPES = ("D", "L", "Lr", "S", "R", "W", "E")
NOMINAL_FIELDS = ("nom_d_n", "nom_l_n", "nom_lr_n", "nom_s_n", "nom_r_n", "nom_w_n", "nom_e_n")
# what a post's combinations are formed from: the nominal loads, the live and rain loads' CD and
# the kind of live load (lambda, NDS 2018 Appendix N Table N3)
LOAD_FIELDS = (*NOMINAL_FIELDS, "cd_l", "cd_r", "live_kind")
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
    loads of each type are non-zero somewhere (``present``). A row is left out when an earlier
    row of the same method carries every load type at least as much and can have no larger
    factor: ASD, the same types (so the same CD, NDS 2018 §2.3.2); LRFD, a lambda no larger for
    every kind of live load (NDS 2018 Appendix N Table N3). Only an earlier one: where the two
    tie for a post, the earlier row names the combination, whatever other posts share the
    block (the single-post path names the same one)."""
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
            if more and no_larger and c < a:
                keep[a] = False
                break
    return idx[keep], coef[keep]


# how each check's capacity takes the duration factor (see the module docstring); a check not
# listed here is refused (tests/engine/test_combinations_every_check.py lists the stages' checks)
FC, PERP, NONE, STABILITY, INTERACTION = "fc", "perp", "none", "stability", "interaction"
SCALING = {
    "column": STABILITY,  # NDS 2018 §3.7.1: Cp depends on Fc*
    "end_bearing": FC,  # NDS 2018 §3.10.1: Fc*
    "cap_bearing": PERP,  # NDS 2018 Table 2.3.2 footnote: no CD on Fc-perp
    "sill_bearing": PERP,
    "net_section": FC,  # Fc* on the net section
    "eccentric": INTERACTION,  # NDS 2018 §3.9.2, §15.4.1: Fc', Fb' and Cp
    "soil_bearing": NONE,  # IBC 2012 Table 1806.2: no duration factor
}

_COLS: dict[int, np.ndarray] = {}


def _cols(n: int) -> np.ndarray:
    a = _COLS.get(n)
    if a is None:
        if len(_COLS) > 64:
            _COLS.clear()
        a = _COLS[n] = np.arange(n)
        a.flags.writeable = False
    return a


@cache
def _asd_factor_table(rws: tuple[int, ...], cd_l: float, cd_r: float) -> np.ndarray:
    """(k, 128): the CD of each ASD row for each pattern of non-zero nominal loads (bit t: type
    t), NDS 2018 §2.3.2: the CD of the shortest-duration load present; nothing present: dead
    load alone, permanent."""
    asd, _, coef_a, _, _, cd_type, cd_perm = _tables()
    pos = np.searchsorted(asd, np.array(rws, dtype=np.intp))
    cdt = cd_type.copy()
    cdt[1], cdt[4] = cd_l, cd_r
    pats = np.arange(128)
    bits = (pats[:, None] >> np.arange(len(TYPES))[None, :]) & 1  # (128, 7)
    on = (coef_a[pos][:, None, :] != 0) & (bits[None, :, :] != 0)  # (k, 128, 7)
    fac = np.where(on, np.nan_to_num(cdt, nan=0.0)[None, None, :], 0.0).max(axis=2)
    fac[fac == 0] = cd_perm
    return fac


def _dense(b: PostBatch):
    """Every combination of every post as (k, n) arrays, slot-major: load (NaN where a slot
    has no combination for that post: NaN never wins a comparison), factor (CD, lambda; kmod
    for EC5) and combination row. A post with no nominal loads (or an EC5 post) has one slot,
    slot 0: its load_n, factor and combo as given."""
    n = b.n
    _, lrfd_idx, _, _, lam_t, cd_type, cd_perm = _tables()
    noms, gts = {}, {}
    for t, f in enumerate(NOMINAL_FIELDS):
        a = getattr(b, f)
        d = distinct(a)
        if d.shape[0] == 1 and not d[0] > 0:  # nobody gave it in this block (NaN or 0)
            continue
        x = np.fmax(a, 0.0)  # NaN (not given) is no load
        gt = x > 0
        if gt.any():
            noms[t], gts[t] = x, gt
    present = tuple(t in noms for t in range(len(TYPES)))
    kinds = list(noms)
    stack = [noms[t] for t in kinds]
    methods = distinct(b.method)
    loads, facs, combos = [], [], []
    for method in (ASD, LRFD):
        if method == LRFD and not (methods == LRFD).any():
            continue
        if method == ASD and (methods == LRFD).all():
            continue
        rws, coef = _block_rows(method, present)
        # ASCE 7 §2.4.1 / §2.3.1: sum of coefficient x nominal load
        load = _sum_rows(coef[:, kinds], stack) if kinds else np.zeros((len(rws), n))
        if method == LRFD:
            pos = np.searchsorted(lrfd_idx, rws)
            lam_k = lam_t[pos]  # NDS 2018 App. N Table N3: by row and kind of live load
            kind = distinct(b.live_kind)
            if kind.shape[0] == 1:
                fac = np.broadcast_to(lam_k[:, int(kind[0])][:, None], load.shape)
            else:
                fac = lam_k[:, b.live_kind.astype(np.intp)]
        else:
            cl, cr = distinct(b.cd_l), distinct(b.cd_r)
            cdt = cd_type.copy()
            if cl.shape[0] == 1 and cr.shape[0] == 1:
                cdt[1], cdt[4] = float(cl[0]), float(cr[0])
            if cl.shape[0] == 1 and cr.shape[0] == 1 and not (cdt < cd_perm).any():
                # one CD of live and rain for the block, none below permanent: row by row
                fac = _asd_factors(coef, gts, cdt, cd_perm, n)
            elif cl.shape[0] == 1 and cr.shape[0] == 1:  # one CD of live and rain for the block
                pat = np.zeros(n, dtype=np.uint8)
                for t in kinds:
                    pat |= np.left_shift(gts[t], t, dtype=np.uint8)
                fac = _asd_factor_table(tuple(int(r) for r in rws), float(cl[0]), float(cr[0]))
                fac = fac.take(pat, axis=1)
            else:  # NDS 2018 §2.3.2, post by post
                fac = np.zeros_like(load)
                for t in kinds:
                    cdt = b.cd_l if t == 1 else b.cd_r if t == 4 else cd_type[t]
                    on = (coef[:, t, None] != 0) & gts[t][None, :]
                    np.maximum(fac, on * cdt, out=fac)
                fac[fac == 0] = cd_perm
        if distinct(b.incised).any():  # treated: NDS 2018 Table 2.3.2 / Table N3 footnotes
            cap = nds.TREATED_CD_MAX if method == ASD else nds.TREATED_LAMBDA_MAX
            fac = np.where(b.incised, np.minimum(fac, cap), fac)
        loads.append(load)
        facs.append(fac)
        combos.append(np.broadcast_to(rws.astype(np.int8)[:, None], load.shape))
    if len(loads) == 2:  # both methods in the block: each post takes its own method's rows
        is_lrfd = b.method == LRFD
        k = max(x.shape[0] for x in loads)
        pad = lambda a, v: np.concatenate([a, np.full((k - a.shape[0], n), v, a.dtype)])  # noqa: E731
        load = np.where(is_lrfd, pad(loads[1], np.nan), pad(loads[0], np.nan))
        fac = np.where(is_lrfd, pad(facs[1], 1.0), pad(facs[0], 1.0))
        combo = np.where(is_lrfd, pad(combos[1], -1), pad(combos[0], -1))
    else:
        load, fac, combo = loads[0], facs[0], combos[0]
    if (distinct(b.method) != EC5).all() and not np.isnan(b.nom_d_n).any():
        has = filled(True, n)  # every post given by nominal loads
    else:
        has = ~np.isnan(b.nom_d_n) & (b.method != EC5)
    if not bool(distinct(has).all()):  # posts given by load_n alone (or EC5): one slot, as given
        given = ~has
        load = np.where(has, load, np.nan)
        load[0] = np.where(given, b.load_n, load[0])
        fac = np.array(fac)
        fac[0] = np.where(given, _factor(b), fac[0])
        combo = np.array(combo)
        combo[0] = np.where(given, b.combo, combo[0])
    return load, fac, combo, has


def load_at(b: PostBatch, combo: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """(load, duration factor) of each post of a block at the combination ``combo`` that
    rate_with_combinations gave one of its checks: the block's combinations formed again and
    each post's taken from the first slot holding its ``combo`` (a post's slots hold distinct
    combinations; a post given by its load alone has its own in slot 0), so the very numbers
    the check had. A large batch makes its checks' demands and factors so, when they are read
    (engine/rating.py)."""
    load, fac, rows, _ = _dense(b)
    n = b.n
    slot = np.zeros(n, dtype=np.int8)
    found = rows[0] == combo
    for j in range(1, load.shape[0]):
        hit = rows[j] == combo
        hit &= ~found
        if hit.any():
            slot += np.multiply(hit, j, dtype=np.int8)
            found |= hit
    flat = _flat(slot, n)
    return _at_slot(load, slot, flat), _at_slot(fac, slot, flat)


def _largest(b: PostBatch, per) -> np.ndarray:
    """Each post's largest ``per(load, factor)`` over its combinations (NaN where none); a load
    given directly (and EC5): ``per`` of that load and its own factor."""
    if not used(b):
        load, fac = b.load_n, _factor(b)
    else:
        load, fac, _, _ = _dense(b)
    with np.errstate(invalid="ignore", divide="ignore"):
        got = per(load, fac)
    return np.fmax.reduce(got, axis=0) if got.ndim == 2 else got


def largest_perp_load(b: PostBatch) -> np.ndarray:
    """Each post's largest load for bearing across the grain, which takes no CD (NDS 2018 Table
    2.3.2 footnote): the largest over its combinations; LRFD: load / min(lambda, 1), as the
    bearing checks take lambda (judgement); a load given directly (and EC5): that load."""
    lrfd = b.method == LRFD
    return _largest(b, lambda load, fac: load / np.where(lrfd, np.minimum(fac, 1.0), 1.0))


def largest_load(b: PostBatch) -> np.ndarray:
    """Each post's largest load over its combinations (a load given directly: that load): what
    a brace restrains it under, whichever combination governs a check."""
    return _largest(b, lambda load, fac: load)


def largest_load_per_factor(b: PostBatch) -> np.ndarray:
    """Each post's largest load / duration factor over its combinations (CD, lambda; kmod for
    EC5): where a capacity proportional to the factor is largest relative to it (the reference
    combination); a load given directly: that load / its factor."""
    return _largest(b, lambda load, fac: load / fac)


def distinct_per_post(b: PostBatch) -> np.ndarray:
    """How many combinations of each post differ in load or duration factor (bench/engine.py)."""
    load, fac, _, _ = _dense(b)
    fac = np.broadcast_to(fac, load.shape)
    count = np.zeros(b.n, dtype=np.intp)
    for j in range(load.shape[0]):
        new = ~np.isnan(load[j])
        for i in range(j):
            new &= (load[j] != load[i]) | (fac[j] != fac[i])
        count += new
    return count


def _first_max(k: int, n: int, row) -> tuple[np.ndarray, np.ndarray]:
    """(slot, max) over k rows of n values: each post's largest value and the first row holding
    it (int8; NaN never wins; all NaN: slot 0, max NaN), the max as ``np.fmax`` reduces it.

    ``row(j, out)`` gives row j (worked out into ``out``, or a view). One pass per row over
    contiguous arrays: a row takes over where it is strictly larger than every row before it,
    and j is then larger than any slot so far, so the slot is a running maximum."""
    best = np.empty(n)
    got = row(0, best)
    if got is not best:
        np.copyto(best, got)
    slot = np.zeros(n, dtype=np.int8)
    nan_best = bool(np.isnan(best).any())  # a post with no value yet: its first value wins
    buf = np.empty(n)
    for j in range(1, k):
        x = row(j, buf)
        win = x > best
        if nan_best:
            win |= np.isnan(best) & ~np.isnan(x)
        if win.any():
            np.maximum(slot, np.multiply(win, j, dtype=np.int8), out=slot)
        np.fmax(best, x, out=best)
        if nan_best:
            nan_best = bool(np.isnan(best).any())
    return slot, best


def _at_slot(a: np.ndarray, slot: np.ndarray, flat: np.ndarray | None) -> np.ndarray:
    """a[slot[i], i] of a (k, n) array; ``flat`` the flat index slot * n + i (made by
    :func:`_flat`), not needed where ``a`` holds one value per slot (the combination rows)."""
    if a.strides[1] == 0:
        return a[:, 0].take(slot)
    return a.ravel().take(flat)


def _flat(slot: np.ndarray, n: int) -> np.ndarray:
    """slot * n + i: the flat index of each post's slot in a (k, n) array."""
    flat = np.multiply(slot, n, dtype=np.intp)
    flat += _cols(n)
    return flat


def _sum_rows(coef: np.ndarray, stack: list[np.ndarray]) -> np.ndarray:
    """coef @ stack, (k, p) @ (p, n), as sums over the non-zero coefficients (no BLAS call),
    term by term in the order of the types; a coefficient x load made once for every row that
    has it, a coefficient of 1.0 not multiplied (x * 1.0 is x), the first two terms added
    straight into the row (the same sum as a copy of the first and the second added to it)."""
    k, n = coef.shape[0], stack[0].shape[0]
    out = np.empty((k, n))
    scaled: dict[tuple[int, float], np.ndarray] = {}

    def term(j: int, t: int) -> np.ndarray:
        c = float(coef[j, t])
        if c == 1.0:
            return stack[t]
        x = scaled.get((t, c))
        if x is None:
            x = scaled[t, c] = c * stack[t]
        return x

    for j in range(k):
        row = out[j]
        terms = np.flatnonzero(coef[j])
        if not terms.size:
            row.fill(0.0)
        elif terms.size == 1:
            np.copyto(row, term(j, terms[0]))
        else:
            np.add(term(j, terms[0]), term(j, terms[1]), out=row)
            for t in terms[2:]:
                row += term(j, t)
    return out


def _asd_factors(coef: np.ndarray, gts: dict, cdt: np.ndarray, cd_perm: float, n: int):
    """(k, n): the CD of each ASD row for each post, NDS 2018 §2.3.2: the CD of the
    shortest-duration load present in the row (``gts``: type -> load non-zero), permanent when
    only dead load or nothing is. Worked out as max(permanent, CD of each load present) with no
    CD below permanent (the caller's condition): a load of CD no larger than permanent, or of
    no CD (wind, earthquake: NaN), changes nothing, and a row of none is permanent throughout."""
    out = np.empty((coef.shape[0], n))
    on: dict[int, np.ndarray] = {}  # type -> its CD where its load is non-zero, else 0
    for j in range(coef.shape[0]):
        row = out[j]
        ts = [t for t in gts if coef[j, t] != 0 and cdt[t] > cd_perm]  # NaN compares False
        if not ts:
            row.fill(cd_perm)
            continue
        parts = []
        for t in ts:
            p = on.get(t)
            if p is None:
                p = on[t] = np.multiply(gts[t], cdt[t])
            parts.append(p)
        np.maximum(parts[0], cd_perm if len(parts) == 1 else parts[1], out=row)
        for p in parts[2:]:
            np.maximum(row, p, out=row)
        if len(parts) > 1:
            np.maximum(row, cd_perm, out=row)
    return out


def _at_rows(b: PostBatch, load, fac, combo) -> PostBatch:
    """The block with each post's load, duration factor and combination replaced."""
    m = distinct(b.method)
    out = {"load_n": load, "combo": combo.astype(np.int8, copy=False)}
    if (m == ASD).any():
        out["cd"] = fac if (m == ASD).all() else np.where(b.method == ASD, fac, b.cd)
    if (m == LRFD).any():
        out["lam"] = fac if (m == LRFD).all() else np.where(b.method == LRFD, fac, b.lam)
    return b.replace_arrays(**out)


def rate_with_combinations(b: PostBatch, run_stages, finish, keep_values: bool = True):
    """Rate a block under every combination of every post and keep, for each check, the largest
    ratio and its combination; the rating's batch holds the governing combination of the
    governing check (load_n, cd or lam, combo). ``run_stages`` rates a block without finishing
    it; ``keep_values`` False: the intermediates are left at the reference combination (a large
    batch keeps none of them)."""
    n = b.n
    load, fac, combo, has = _dense(b)
    k = load.shape[0]

    def at(slot: np.ndarray) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
        flat = _flat(slot, n)  # (load, factor, combination) of each post at its slot
        return _at_slot(load, slot, flat), _at_slot(fac, slot, flat), _at_slot(combo, slot, flat)

    with np.errstate(divide="ignore", invalid="ignore"):  # the largest load / factor
        ref = _first_max(k, n, lambda j, out: np.divide(load[j], fac[j], out=out))[0]
    at_ref = at(ref)
    l_ref, f_ref, c_ref = at_ref
    r = run_stages(_at_rows(b, l_ref, f_ref, c_ref))
    v = r.values
    any_lrfd = bool((distinct(b.method) == LRFD).any())
    checks: dict[str, Check] = {}
    upper = by_load = None
    made, keys, caps, dems, facs, combos = [], [], [], [], [], []
    for pos, (name, c) in enumerate(r.checks.items()):
        how = SCALING.get(name)
        if how is None:
            raise KeyError(
                f"check {name!r}: how its capacity takes the duration factor is not declared "
                "(combinations.SCALING)"
            )
        if absent(c.capacity_n):  # not made in this block
            nan = filled(np.nan, n)
            checks[name] = Check(c.name, c.label, c.clause, nan, nan)
            continue
        cap = c.capacity_n
        if how == FC:  # largest where load / factor is: the reference
            got = at_ref
        elif how in (NONE, PERP) and not (how == PERP and any_lrfd):  # the largest load
            if by_load is None:
                slot, l_max = _first_max(k, n, lambda j, out: load[j])
                flat = _flat(slot, n)
                by_load = l_max, _at_slot(fac, slot, flat), _at_slot(combo, slot, flat)
            got = by_load
        elif how == PERP:  # LRFD: KF phi min(lambda, 1) on Fc-perp (NDS 2018 Appendix N)
            pt = np.where(b.method == LRFD, np.minimum(fac, 1.0), 1.0)
            with np.errstate(divide="ignore", invalid="ignore"):
                slot = _first_max(k, n, lambda j, out, pt=pt: np.divide(load[j], pt[j], out=out))[0]
                cap = cap * (_at_slot(pt, slot, _flat(slot, n)) / _at_slot(pt, ref, _flat(ref, n)))
            got = at(slot)
        else:
            if upper is None:
                upper = _upper(load, fac, has, l_ref, f_ref)
            cap, *got = _beat_reference(how, b, v, cap, load, fac, combo, at_ref, upper)
        demand, c_fac, c_combo = got
        some = cap > 0  # not NaN or 0, where every combination gives the same ratio (NaN, inf)
        if not some.all():  # those take the first combination of the post (slot 0), as ties go
            none = ~some
            demand = np.where(none, load[0], demand)
            c_fac = np.where(none, fac[0], c_fac)
            c_combo = np.where(none, combo[0], c_combo)
        with np.errstate(divide="ignore", invalid="ignore"):
            ratio = demand / cap
        checks[name] = Check(c.name, c.label, c.clause, cap, demand, combo=c_combo, factor=c_fac)
        made.append(pos)
        keys.append(ratio)
        caps.append(cap)
        dems.append(demand)
        facs.append(c_fac)
        combos.append(c_combo)
    # the governing check: the largest ratio (a NaN never governs; ties keep the earlier)
    gm, g_ratio, (g_cap, g_dem, g_fac, g_combo) = _govern(keys, (caps, dems, facs, combos))
    gov = gm if made == list(range(len(made))) else np.array(made, dtype=np.int8).take(gm)
    # the combination kept for the working: that of the governing check
    batch = _at_rows(b, g_dem, g_fac, g_combo)
    values = v
    if keep_values:  # the intermediates of the governing combination, where it is not the ref
        moved = np.flatnonzero((g_dem != l_ref) | (g_fac != f_ref))
        if moved.size:
            values = _values_at(v, run_stages, batch, moved)
    out = Rating(
        batch=batch,
        checks=checks,
        capacity_n=g_cap,
        demand_n=g_dem,
        ratio=g_ratio,
        governing=gov,
        action=np.zeros(n, dtype=np.int8),
        flags=r.flags,  # a flag that takes the load (end plate) is largest at the reference
        values=values,
    )
    no_load = np.isnan(batch.load_n)
    if no_load.any():  # a post given no load: its smallest capacity governs
        _smallest_capacity(out, no_load)
    return finish(out, governed=True)


def _govern(keys: list, parts: tuple[list, ...]):
    """(m, max, the parts of m): the first of the ratios ``keys`` holding each post's largest
    (int8; a NaN never governs, all NaN: 0 and NaN), and each list of ``parts`` at it.

    One pass per check: a check takes over where its ratio is strictly larger (the max is
    ``np.fmax``'s, as a reduction gives it), and m, larger than any check before it, is then a
    running maximum. The parts are put in place once, at each post's final check (cheaper than
    ``np.where`` unless nearly every post changes, and than moving a post at every check that
    takes it over: the sill's bearing takes over most of the posts the cap's took)."""
    n = keys[0].shape[0]
    best = keys[0].copy()
    gm = np.zeros(n, dtype=np.int8)
    nan_best = bool(np.isnan(best).any())
    won = []
    for m in range(1, len(keys)):
        key = keys[m]
        win = key > best
        if nan_best:
            win |= np.isnan(best) & ~np.isnan(key)
        np.fmax(best, key, out=best)
        if nan_best:
            nan_best = bool(np.isnan(best).any())
        if win.any():
            np.maximum(gm, np.multiply(win, m, dtype=np.int8), out=gm)
            won.append(m)
    got = [p[0] for p in parts]
    if won:
        got = [a.copy() for a in got]  # the checks' own arrays stay as they are
    for m in won:
        idx = np.flatnonzero(gm == m)
        if not idx.size:
            continue
        for a, p in zip(got, parts, strict=True):
            a[idx] = p[m].take(idx)
    return gm, best, got


def _upper(load, fac, has, l_ref, f_ref) -> list[tuple[int, np.ndarray]]:
    """(slot, posts) of the combinations that can beat the reference in a check whose capacity
    rises with the factor: a larger factor and a larger load (see the module docstring)."""
    all_have = bool(distinct(has).all())
    upper = []
    for j in range(load.shape[0] if load.shape[0] > 1 else 0):
        u = load[j] > l_ref
        u &= fac[j] > f_ref
        if not all_have:
            u &= has
        idx = np.flatnonzero(u)
        if idx.size:
            upper.append((j, idx))
    return upper


def _values_at(v: dict, run_stages, batch: PostBatch, moved: np.ndarray) -> dict:
    """The block's intermediates ``v`` with those of posts ``moved`` rated again on ``batch``
    (their governing combination). A few posts are rated alone and put in place; most of the
    block, or an intermediate the few make that the block did not, and the block is rated
    again."""
    n = batch.n
    if 2 * moved.size > n:
        return run_stages(batch).values
    sub = run_stages(batch.take(moved)).values
    if not set(sub) <= set(v):
        return run_stages(batch).values
    out = dict(v)
    for key, a in v.items():
        s = sub.get(key)
        if s is None or not isinstance(a, np.ndarray) or a.shape[:1] != (n,):
            continue  # not made for these posts, or not per post
        if broadcast(a) and broadcast(s) and np.array_equal(a[:1], s[:1], equal_nan=True):
            continue  # one value for every post, the same one
        merged = np.array(a, dtype=np.result_type(a, s))
        merged[moved] = s
        out[key] = merged
    return out


def _smallest_capacity(r: Rating, where: np.ndarray) -> None:
    """Posts ``where`` (no load): the governing check is the smallest capacity (NaN: none)."""
    caps = np.stack([c.capacity_n for c in r.checks.values()])
    demands = np.stack([c.demand_n for c in r.checks.values()])
    by_cap = np.argmin(np.where(np.isnan(caps), np.inf, caps), axis=0).astype(np.int8)
    cols = _cols(r.n)
    r.governing = np.where(where, by_cap, r.governing)
    r.capacity_n = np.where(where, caps[by_cap, cols], r.capacity_n)
    r.demand_n = np.where(where, demands[by_cap, cols], r.demand_n)
    with np.errstate(divide="ignore", invalid="ignore"):
        r.ratio = np.where(where, r.demand_n / r.capacity_n, r.ratio)


def _beat_reference(how, b, v, cap, load, fac, combo, at_ref, upper):
    """(capacity, demand, factor, combination) of the column (Cp through Fc*) or the combined
    interaction: those at the reference, except where the check evaluated again at a combination
    that can beat it (``upper``) gives a larger ratio (the first such slot on a tie)."""
    l_ref, f_ref, c_ref = at_ref
    same = (cap, l_ref, f_ref, c_ref)
    ecc = None
    if how == INTERACTION:
        ecc = v.get("ecc_checked")
        if ecc is None or not bool(distinct(ecc).any()):
            return same
    if not upper:
        return same
    n = b.n
    # every (slot, post) pair at once, in slot order
    idx = np.concatenate([u for _, u in upper])
    slot = np.repeat(np.array([j for j, _ in upper], dtype=np.intp), [u.size for _, u in upper])
    keep = ~np.isnan(cap.take(idx))  # no capacity: none at any combination
    if ecc is not None:
        keep &= ecc.take(idx)
    if not keep.all():
        idx, slot = idx[keep], slot[keep]
        if not idx.size:
            return same
    flat = slot * n + idx
    pair_fac = _at_slot(fac, slot, flat)
    time_fc, time_fb = _time(b, pair_fac, idx)
    p, cp, fc_star = column.capacity_at(b, v, idx, time_fc)
    if ecc is not None:
        p = condition.eccentric_at(b, v, idx, cp, fc_star, time_fb)
    pair_load = load.ravel().take(flat)
    with np.errstate(divide="ignore", invalid="ignore"):
        best = l_ref / cap  # the ratio at the reference
        ratio = pair_load / p
    win = np.flatnonzero(ratio > best.take(idx))  # a pair not beating the reference never wins
    if not win.size:
        return same
    idx, slot, ratio, p = idx.take(win), slot.take(win), ratio.take(win), p.take(win)
    pair_load, pair_fac = pair_load.take(win), pair_fac.take(win)
    pair_combo = _at_slot(combo, slot, flat.take(win))
    # slot by slot (a post may beat the reference in several): strictly larger takes over
    cap, demand, factor, cmb = (a.copy() for a in same)
    ends = np.flatnonzero(np.diff(slot)) + 1
    for s, e in zip(np.r_[0, ends], np.r_[ends, slot.size], strict=True):
        w = s + np.flatnonzero(ratio[s:e] > best.take(idx[s:e]))
        if not w.size:
            continue
        posts = idx.take(w)
        best[posts] = ratio.take(w)
        cap[posts] = p.take(w)
        demand[posts] = pair_load.take(w)
        factor[posts] = pair_fac.take(w)
        cmb[posts] = pair_combo.take(w)
    return cap, demand, factor, cmb


def _time(b: PostBatch, f: np.ndarray, idx: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """The duration part of Fc* and of Fb* at factor f for posts idx: CD (ASD, NDS 2018
    §2.3.2) or KF phi lambda (LRFD, NDS 2018 Appendix N), as the pipeline forms them."""
    if not bool((distinct(b.method) == LRFD).any()):
        return f, f
    lrfd = b.method.take(idx) == LRFD
    return (
        np.where(lrfd, nds.KF_FC * nds.PHI_C * f, f),
        np.where(lrfd, nds.KF_FB * nds.PHI_B * f, f),
    )


def _factor(b: PostBatch) -> np.ndarray:
    """The duration factor of each post: CD (ASD), lambda (LRFD), kmod (EC5)."""
    return duration_factor(b.method, b.cd, b.lam, b.kmod)
