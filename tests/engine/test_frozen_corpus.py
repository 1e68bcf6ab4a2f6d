"""The engine's results on a frozen corpus of 10,000 varied posts do not move by accident.

The corpus (tests/engine/data/corpus.json.gz, made by tests/engine/frozen_corpus.py from a seed)
holds the records and what ``fieldcheck rate --json`` gave for each. A change on purpose is made
by regenerating the file and listing the change in the commit message (see frozen_corpus.py).
"""

from __future__ import annotations

import sys
from pathlib import Path

import pytest

sys.path.insert(0, str(Path(__file__).parent))
import frozen_corpus

QUICK_EVERY = 25  # the quick run checks every 25th record (the slow run all of them)


@pytest.fixture(scope="module")
def frozen() -> dict:
    return frozen_corpus.load()


def _check(frozen: dict, step: int) -> None:
    recs = frozen["records"][::step]
    old = frozen["outputs"][::step]
    new = frozen_corpus.outputs(recs, 0, step)
    assert len(new) == len(old)
    bad = []
    for k, (a, b) in enumerate(zip(old, new, strict=True)):
        d = frozen_corpus.differences(a, b, f"post {k * step}")
        if d:
            bad.append(f"{recs[k]}\n  " + "\n  ".join(d[:8]))
    assert not bad, f"{len(bad)} posts changed; the first:\n" + "\n".join(bad[:5])


def test_corpus_generator_is_the_frozen_one(frozen: dict) -> None:
    # the seeded generator still yields the frozen records (so a regeneration changes outputs only)
    assert frozen["seed"] == frozen_corpus.SEED
    assert frozen_corpus.records(200) == frozen["records"][:200]
    assert len(frozen["records"]) == frozen_corpus.N_POSTS


@pytest.mark.filterwarnings("ignore::RuntimeWarning")
def test_corpus_sample_unchanged(frozen: dict) -> None:
    _check(frozen, QUICK_EVERY)


@pytest.mark.slow
@pytest.mark.filterwarnings("ignore::RuntimeWarning")
def test_corpus_unchanged(frozen: dict) -> None:
    _check(frozen, 1)
