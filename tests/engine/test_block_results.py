"""A batch larger than one block rates exactly as its blocks rated one by one, side by side.

rate() puts a large batch's arrays together from its blocks (engine/block_results.py): a block
array that is the batch's own column or another check's is not copied but named, and resolved
at the end. Every array of the rating (the checks' capacity, demand, combination and factor,
the governing combination's load, factor and combination in the rating's batch, and the
rating's capacity, demand, ratio, governing check, action and flags) must equal, to the last
bit, what each block gives rated alone (computed by the engine both ways; no source).
"""

from __future__ import annotations

import sys
from pathlib import Path

import numpy as np
import pytest

from fieldcheck.engine import rating
from fieldcheck.engine.batch import PostBatch
from fieldcheck.engine.rating import BATCH_FIELDS, _rate_any, rate
from fieldcheck.engine.result import Rating
from fieldcheck.records import parse_records

sys.path.insert(0, str(Path(__file__).parent))
import frozen_corpus

CORE = ("capacity_n", "demand_n", "ratio", "governing", "action", "flags")
BLOCK = 256  # small blocks: the same code as 65,536-post blocks, at a test's cost


@pytest.fixture(autouse=True)
def small_blocks(monkeypatch: pytest.MonkeyPatch) -> None:
    monkeypatch.setattr(rating, "BLOCK", BLOCK)


@pytest.fixture(scope="module")
def corpus() -> PostBatch:
    """Varied posts (every method, nominal loads on some, conditions), parsed once."""
    return parse_records(frozen_corpus.records(600)).batch


def _tile(b: PostBatch, n: int) -> PostBatch:
    reps = -(-n // b.n)
    return PostBatch.concat([b] * reps).take(slice(0, n))


def _plain(b: PostBatch) -> PostBatch:
    """The posts with their load as given: no nominal loads, so no combinations are rated."""
    return b.take(np.flatnonzero(np.isnan(b.nom_d_n)))


def _arrays(r: Rating) -> dict[str, np.ndarray]:
    """Every array of a rating by name; a check with no combination of its own takes the
    batch's (Rating.check_combination)."""
    got = {f"batch.{f}": getattr(r.batch, f) for f in BATCH_FIELDS}
    got.update({f: getattr(r, f) for f in CORE})
    for name, c in r.checks.items():
        got[f"{name}.capacity"] = c.capacity_n
        got[f"{name}.demand"] = c.demand_n
        got[f"{name}.combo"] = r.batch.combo if c.combo is None else c.combo
        got[f"{name}.factor"] = r.duration_factor() if c.factor is None else c.factor
    return {k: np.broadcast_to(a, (r.n,)) for k, a in got.items()}


def _by_block(b: PostBatch) -> dict[str, np.ndarray]:
    """Every array of the rating of each block rated alone, the blocks side by side."""
    parts: dict[str, list[np.ndarray]] = {}
    for start in range(0, b.n, BLOCK):
        r = _rate_any(b.take(slice(start, start + BLOCK)), keep_values=False)
        for k, a in _arrays(r).items():
            parts.setdefault(k, []).append(a)
    return {k: np.concatenate(v) for k, v in parts.items()}


def _whole(b: PostBatch) -> dict[str, np.ndarray]:
    r = rate(b)
    assert r.partial
    return _arrays(r)


@pytest.mark.parametrize("layout", ["varied", "plain then varied", "varied then plain"])
def test_large_batch_equals_its_blocks(corpus: PostBatch, layout: str) -> None:
    varied, plain = corpus, _plain(corpus)
    if layout == "varied":
        b = _tile(varied, 3 * BLOCK + 70)
    elif layout == "plain then varied":  # the combinations' arrays first made by a later block
        b = PostBatch.concat([_tile(plain, BLOCK), _tile(varied, 2 * BLOCK + 70)])
    else:  # a later block with no combinations: the batch's combination and factor there
        b = PostBatch.concat([_tile(varied, BLOCK), _tile(plain, 2 * BLOCK + 70)])
    whole, blocks = _whole(b), _by_block(b)
    assert set(whole) == set(blocks)
    for k, a in blocks.items():
        assert np.array_equal(whole[k], a, equal_nan=True), k


def test_demand_is_the_governing_combinations(corpus: PostBatch) -> None:
    """With nominal loads, the rating's demand is the governing combination's load (the
    batch's load_n as rated), not the load column the batch was given."""
    b = _tile(corpus.take(np.flatnonzero(~np.isnan(corpus.nom_d_n))), 2 * BLOCK + 30)
    r = rate(b)
    assert np.array_equal(r.demand_n, r.batch.load_n, equal_nan=True)
    with np.errstate(divide="ignore", invalid="ignore"):
        ratio = r.demand_n / r.capacity_n
    assert np.array_equal(ratio, r.ratio, equal_nan=True)


def test_checks_demand_and_factor_are_made_when_read(corpus: PostBatch) -> None:
    """A large batch's checks with load combinations leave their demand and duration factor to
    be made when first read (result.DeferredCheck); read, they are their blocks' own (computed
    by the engine both ways; no source)."""
    from fieldcheck.engine.result import DeferredCheck

    b = _tile(corpus.take(np.flatnonzero(~np.isnan(corpus.nom_d_n))), 2 * BLOCK + 30)
    r = rate(b)
    column = r.checks["column"]
    assert isinstance(column, DeferredCheck) and column._made is None
    blocks = _by_block(b)
    assert np.array_equal(column.demand_n, blocks["column.demand"], equal_nan=True)
    assert np.array_equal(column.factor, blocks["column.factor"], equal_nan=True)
