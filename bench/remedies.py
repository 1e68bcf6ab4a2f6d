"""Remedies for 10,000 failing posts: candidates built as one batch and rated in one engine call.

Prints one JSON object on the last line: {"posts": ..., "seconds": ...} (DEVELOPERS.md, bench).
"""

from __future__ import annotations

import json
import time

import numpy as np

from fieldcheck.engine.batch import make_batch
from fieldcheck.engine.rating import rate
from fieldcheck.engine.remedies import remedies

N = 10_000
PSI = 0.006894757293168361


def failing_posts(n: int, seed: int = 1):
    rng = np.random.default_rng(seed)
    nominal = rng.choice([4.0, 6.0], n)
    d = (nominal - 0.5) * 25.4
    timber = nominal >= 6
    return make_batch(
        n=n,
        d1_mm=d,
        d2_mm=d,
        height_mm=rng.uniform(2400, 4200, n),
        fc_mpa=np.where(timber, 1000.0, 1350.0) * PSI,
        fc_perp_mpa=625 * PSI,
        fb_mpa=900 * PSI,
        e_mpa=1.6e6 * PSI,
        emin_mpa=580_000 * PSI,
        cf_fc=np.where(timber, 1.0, 1.15),
        product=timber.astype(np.int8),
        species_code=0,
        load_n=np.where(timber, rng.uniform(110e3, 160e3, n), rng.uniform(30e3, 50e3, n)),
        bottom_fc_perp_mpa=np.where(rng.random(n) < 0.3, 425 * PSI, np.nan),
        pad_area_mm2=np.where(rng.random(n) < 0.3, 610.0**2, np.nan),
        soil_kpa=95.76,
    )


def main() -> None:
    pool = failing_posts(N + N // 5)
    rp = rate(pool)
    # 10,000 failing posts: a ratio over 1 (a post at repair only for a cap or sill nobody
    # identified is not one: identifying it clears it, remedies.py)
    b = pool.take(np.flatnonzero(rp.ratio > 1.0)[:N])
    r = rate(b)
    remedies(b.take(np.arange(10)), rate(b.take(np.arange(10))))  # warm caches
    t0 = time.perf_counter()
    rem = remedies(b, r)
    assert rem.failing.size == N, rem.failing.size
    secs = time.perf_counter() - t0
    per_post = np.bincount(rem.post, minlength=N)
    print(
        f"failing {rem.failing.size} of {N}; options offered {len(rem)}; posts with none "
        f"{(per_post[rem.failing] == 0).sum()}"
    )
    print(
        json.dumps({"posts": int(rem.failing.size), "seconds": round(secs, 3), "options": len(rem)})
    )


if __name__ == "__main__":
    main()
