"""The rating: ``rate(batch)`` runs the stages, in the order of ``STAGES``, over blocks of posts.

One pass over arrays rates one post or a million: every stage adds its checks and
intermediates (``Stage.run``), then every stage raises its warnings (``Stage.raise_flags``); the
governing check, the ratio and the action follow from the checks and the flags (:func:`finish`).
The flag bits are the flags of the stages in this order (``FLAGS``). Per-post text (summary,
warnings, working) is the explain layer's (explain.py), made for the posts a person looks at.
"""

from __future__ import annotations

import threading

import numpy as np

from fieldcheck.engine import combinations
from fieldcheck.engine.batch import PostBatch
from fieldcheck.engine.block_results import BlockResults, Later
from fieldcheck.engine.blocks import BLOCK, absent, at_least, share_blocks
from fieldcheck.engine.column import COLUMN, ENDS
from fieldcheck.engine.condition import CONDITION
from fieldcheck.engine.ec5_rating import EC5_STAGE
from fieldcheck.engine.ground import GROUND
from fieldcheck.engine.load_stages import BRACING, LOADS
from fieldcheck.engine.result import (
    NOT_RATED,
    RATIO_BANDS,
    Check,
    DeferredCheck,
    Rating,
    duration_factor,
)
from fieldcheck.engine.stage import FlagSet, FlagTable

# The rating, in order: end conditions and effective lengths; the column and bearing checks on
# the section as found; the condition's own checks (eccentricity and bow, net section); EN
# 1995-1-1 in place of NDS for the EC5 posts; the load combinations (the governing one, a
# shared load); the ground and bearing plates; the bracing demand.
STAGES = (ENDS, COLUMN, CONDITION, EC5_STAGE, LOADS, GROUND, BRACING)
FLAGS = FlagTable(STAGES)
# the batch fields the load combinations replace in a rating's batch (combinations._at_rows)
BATCH_FIELDS = ("load_n", "cd", "lam", "combo")


def rate(b: PostBatch, keep: tuple[str, ...] = ()) -> Rating:
    """Rate every post of the batch: one pass of array arithmetic, blockwise for large batches.

    A batch of one block keeps every intermediate value. A larger batch keeps the rating (the
    checks, capacity, ratio, governing check, action, flags) and the intermediates named in
    ``keep`` (for columns over the whole batch, e.g. report.batch_csv.KEEP); per-post text
    re-rates that post alone (:func:`detail`: the single-post path is the batch path).
    """
    n = b.n
    if n <= BLOCK:
        return _rate_any(b)
    starts = range(0, n, BLOCK)
    # The rating, the kept values and the core arrays are copied block by block into arrays of
    # the batch's length; the checks' arrays and the governing combination's load, factor and
    # combination (the rating's batch) are put together by BlockResults, which copies only a
    # block's own arrays: each full-length array costs page faults, and a check's demand is
    # often the batch's load column or another check's (block_results.py).
    # The first block sets them up (their dtypes, the checks and their clauses) and is put in
    # place before any other; the other blocks are rated meanwhile, on both threads, and wait
    # only to be put in place.
    first: dict = {}
    first_put = threading.Event()

    def set_up(r: Rating) -> None:
        # a kept value a block never made (an EC5 value in a block with no EC5 post) is NaN there
        first["out"] = {
            k: np.empty(n, dtype=np.asarray(r.values.get(k, np.nan)).dtype) for k in keep
        }
        first["core"] = {
            k: np.empty(n, dtype=getattr(r, k).dtype)
            for k in ("capacity_n", "ratio", "governing", "action", "flags")
        }
        first["clauses"] = {k: c.clause for k, c in r.checks.items()}
        first["rating"] = r

    lock = threading.Lock()
    results = BlockResults(n, starts, BLOCK)

    def batch_combo(sl: slice) -> np.ndarray:  # a check with no combination of its own
        return results.get(("batch", "combo"))[sl]

    def batch_factor(sl: slice) -> np.ndarray:  # nor a factor: the batch's (Rating.duration_factor)
        return duration_factor(
            b.method[sl], *(results.get(("batch", f))[sl] for f in ("cd", "lam")), b.kmod[sl]
        )

    def put(start: int) -> None:
        blk = b.take(slice(start, start + BLOCK))
        r = _rate_any(blk, bool(keep))
        if start == 0:
            try:
                set_up(r)
                put_block(start, blk, r)
            finally:  # an error in the first block is raised by share_blocks; the others stop
                first_put.set()
        else:
            first_put.wait()
            if first.get("done"):
                put_block(start, blk, r)

    def put_block(start: int, blk: PostBatch, r: Rating) -> None:
        out, core, clauses = first["out"], first["core"], first["clauses"]
        sl = slice(start, start + r.n)
        part = results.block(start, {id(getattr(blk, f)): getattr(b, f) for f in BATCH_FIELDS})
        for f in BATCH_FIELDS:  # the governing combination's, where combinations ran
            part(("batch", f), getattr(r.batch, f))
        for k, c in r.checks.items():
            part((k, "capacity"), c.capacity_n)
            part((k, "combo"), c.combo, batch_combo)
            if c.combo is None:
                part((k, "demand"), c.demand_n)
                part((k, "factor"), c.factor, batch_factor)
            else:  # made from the check's combination when read (DeferredCheck)
                demand, factor = _at_combination(blk, c.combo)
                part((k, "demand"), demand)
                part((k, "factor"), factor)
            if c.clause not in clauses[k]:  # e.g. a block with EC5 posts names both clauses
                with lock:
                    clauses[k] += f" / {c.clause}"
        part(("", "demand"), r.demand_n)
        for k, a in out.items():
            a[sl] = r.values.get(k, np.nan)
        for k, a in core.items():
            a[sl] = getattr(r, k)
        if start == 0:
            first["done"] = True

    share_blocks(put, starts)
    out, core, clauses = first["out"], first["core"], first["clauses"]
    checks = {k: _check(c, clauses[k], results) for k, c in first["rating"].checks.items()}
    own = {f: results.get(("batch", f)) for f in BATCH_FIELDS}
    if any(a is not getattr(b, f) for f, a in own.items()):
        b = b.replace_arrays(**{f: a for f, a in own.items() if a is not getattr(b, f)})
    demand = results.get(("", "demand"))
    return Rating(batch=b, checks=checks, values=out, partial=True, demand_n=demand, **core)


def _at_combination(blk: PostBatch, combo: np.ndarray) -> tuple[Later, Later]:
    """A check's demand and duration factor in a block where combinations ran, both made when
    first read, from the check's combination (combinations.load_at): two full-length arrays
    fewer for each such check of a large batch, and their page faults."""
    got: list = []

    def pair() -> tuple[np.ndarray, np.ndarray]:
        if not got:
            got.append(combinations.load_at(blk, combo))
        return got[0]

    return Later(lambda: pair()[0]), Later(lambda: pair()[1])


def _check(c: Check, clause: str, results: BlockResults) -> Check:
    """The full-length check ``c`` of a large batch; its demand and factor made when read where
    any block left them to its combination (_at_combination)."""
    parts = results.parts
    name = c.name
    later = any(kind == "later" for kind, _ in parts.get((name, "demand"), {}).values())
    capacity, combo = results.get((name, "capacity")), results.get((name, "combo"))
    if not later:
        demand, factor = results.get((name, "demand")), results.get((name, "factor"))
        return Check(c.name, c.label, clause, capacity, demand, combo, factor)

    def make() -> tuple[np.ndarray, np.ndarray]:
        return results.get((name, "demand")), results.get((name, "factor"))

    return DeferredCheck(c.name, c.label, clause, capacity, combo, make)


def detail(r: Rating, i: int) -> tuple[Rating, int]:
    """Post i of ``r`` with every intermediate, as (rating, index): ``(r, i)`` when ``r`` kept
    them, else post i rated alone (the same code on a length-one batch) and 0."""
    if not r.partial:
        return r, i
    return _rate_any(r.batch.take(np.array([i]))), 0


def _rate_any(b: PostBatch, keep_values: bool = True) -> Rating:
    """Rate one block: under every load combination where nominal loads are given
    (combinations.py: each check its largest ratio over the combinations), else with the load
    and duration factor as given. ``keep_values`` False: a large batch keeps none of the
    intermediates, so they need not be those of each post's governing combination."""
    if combinations.used(b):
        return combinations.rate_with_combinations(b, _run_stages, finish, keep_values)
    return finish(_run_stages(b))


def _run_stages(b: PostBatch) -> Rating:
    """Rate one block of posts (every stage, every check, all intermediates kept), before the
    governing check and the action (:func:`finish`)."""
    checks: dict[str, Check] = {}
    values: dict[str, np.ndarray] = {}
    for stage in STAGES:
        stage.run(b, checks, values)
    flags = np.zeros(b.n, dtype=np.int64)
    for stage in STAGES:
        if stage.raise_flags is not None:
            raised = FlagSet(FLAGS, b.n)
            stage.raise_flags(b, values, raised)
            flags |= raised.flags
    column = checks["column"].capacity_n
    rating = Rating(
        batch=b,
        checks=checks,
        capacity_n=column,
        demand_n=b.load_n,
        ratio=column,
        governing=np.zeros(b.n, dtype=np.int8),
        action=np.zeros(b.n, dtype=np.int8),
        flags=flags,
        values=values,
    )
    return rating


def finish(r: Rating, governed: bool = False) -> Rating:
    """Governing check, ratio and action from the checks (run again after adding checks).

    The governing check has the largest demand/capacity ratio; with one demand for every check
    (the usual case) that is the smallest capacity, found without a ratio per check. A check
    with a NaN capacity was not made and never governs. ``governed``: the caller has set the
    governing check, capacity, demand and ratio already (combinations.py); only the action.
    """
    if not governed:
        _govern(r)
    r.action = action_from(r.ratio, r.flags, r.values.get("le_d_max"), r.values.get("le_d_limit"))
    return r


def _govern(r: Rating) -> None:
    checks = list(r.checks.values())
    demand = checks[0].demand_n
    if all(c.demand_n is demand for c in checks):
        # in check order, a strictly smaller capacity takes over (ties keep the earlier check);
        # fmin passes over NaN, so a check not made never governs, and a column with no
        # capacity (a mechanism, no section) never hides another check that fails: the
        # smallest capacity made governs, as the largest ratio does below (NaN only when no
        # check was made). The governing index is updated by arithmetic on int8
        # (gov += lower * (k - gov)), cheaper than a masked copy.
        first = checks[0].capacity_n
        cap = first
        gov = np.zeros(r.n, dtype=np.int8)
        some_nan = bool(np.isnan(first).any())
        for k in range(1, len(checks)):
            c = checks[k].capacity_n
            if absent(c):
                continue
            lower = c < cap  # NaN compares False
            if some_nan:  # a capacity made takes over from none
                lower |= np.isnan(cap) & ~np.isnan(c)
            if lower.any():
                gov += lower * (np.int8(k) - gov)
            cap = np.fmin(cap, c)
        with np.errstate(divide="ignore", invalid="ignore", over="ignore"):
            ratio = demand / cap
    else:
        caps = np.stack([c.capacity_n for c in checks])
        demands = np.stack([c.demand_n for c in checks])
        with np.errstate(divide="ignore", invalid="ignore", over="ignore"):
            ratios = demands / caps
        has_load = ~np.isnan(r.batch.load_n)
        by_ratio = np.argmax(np.where(np.isnan(ratios), -np.inf, ratios), axis=0)
        by_cap = np.argmin(np.where(np.isnan(caps), np.inf, caps), axis=0)
        gov = np.where(has_load, by_ratio, by_cap).astype(np.int8)
        cols = np.arange(r.n)
        cap, demand, ratio = caps[gov, cols], demands[gov, cols], ratios[gov, cols]
    r.governing = gov
    r.capacity_n, r.demand_n, r.ratio = cap, demand, ratio


def action_from(ratio, flags, le_d_max=None, limit=None) -> np.ndarray:
    """Action category from the ratio bands and the condition flags (judgement)."""
    lo, mid, hi = RATIO_BANDS
    act = (ratio > lo).astype(np.int8)  # NaN compares False
    act += ratio > mid
    act += ratio > hi
    if le_d_max is not None:
        at_least(act, 2, le_d_max > limit)
    FLAGS.escalate(act, flags)  # every flag raised lifts the action to its least level
    # no ratio (the load is missing): not rated, a state of its own, unless the condition alone
    # already calls for making safe now (that needs no load). Never no-action, monitor or repair:
    # not rated is the more urgent of those (the report's order), since the load not known may
    # well make the post one to make safe now; a condition that calls for repair says so in
    # its warning beside "not rated: load missing" (judgement)
    unrated = np.isnan(ratio)
    if unrated.any():
        act[unrated & (act < 3)] = NOT_RATED
    return act
