"""Rate N synthetic posts through the whole batch engine, against two yardsticks in the same run.

floor: numpy evaluating only the bare Cp formula (NDS 2018 §3.7.1, Eq. 3.7-1) once per post over
       the same N posts, measured in the same run; with or without --combinations it is the
       same floor (one Cp per post), so the ratio counts everything the rating adds.
loop:  a plain per-post Python loop with pint quantities over a sample (what one writes by hand),
       scaled to N.
Prints one JSON line: {"posts", "seconds", "ratio_to_floor", "speedup_vs_loop", ...}.
With --combinations each post is given by nominal loads (D, L, Lr, S) and every ASCE 7
combination is rated for every check (engine/combinations.py); "combinations_per_post" is how
many combinations each post has on average (those that differ in load or factor).
Usage: python bench/engine.py [N] [--conditions] [--combinations]
"""

from __future__ import annotations

import json
import math
import sys
import time

import numpy as np

from fieldcheck.engine.batch import make_batch
from fieldcheck.engine.rating import rate
from fieldcheck.engine.restraint import mode_index

PSI = 0.006894757293168361
IN = 25.4


def synthetic(n: int, seed: int = 7, conditions: bool = False, combinations: bool = False):
    rng = np.random.default_rng(seed)
    d1 = rng.uniform(3.5, 11.5, n) * IN
    d2 = np.minimum(d1, rng.uniform(3.5, 11.5, n) * IN)
    pairs = np.array(
        [
            (b, t)
            for b in range(4)
            for t in range(4)
            if mode_index(np.array([b]), np.array([t]))[0] >= 0
        ]
    )
    ends = pairs[rng.integers(0, len(pairs), n)]
    fields = {
        "d1_mm": d1,
        "d2_mm": d2,
        "height_mm": rng.uniform(48, 240, n) * IN,
        "fc_mpa": rng.uniform(500, 1700, n) * PSI,
        "emin_mpa": rng.uniform(4e5, 7e5, n) * PSI,
        "fb_mpa": rng.uniform(500, 1500, n) * PSI,
        "fc_perp_mpa": rng.uniform(400, 650, n) * PSI,
        "e_mpa": rng.uniform(1.1e6, 1.9e6, n) * PSI,
        "cf_fc": rng.choice([1.0, 1.05, 1.1, 1.15], n),
        "product": rng.integers(0, 2, n),
        "bottom": ends[:, 0],
        "top": ends[:, 1],
        "cd": rng.choice([0.9, 1.0, 1.15, 1.25], n),
        "moisture_pct": rng.uniform(8, 35, n),
        "load_n": rng.uniform(5e3, 2e5, n),
        "top_fc_perp_mpa": np.full(n, 625 * PSI),
        "bottom_fc_perp_mpa": np.full(n, 565 * PSI),
        "top_cb": rng.random(n) < 0.5,
        "bottom_cb": rng.random(n) < 0.5,
    }
    if combinations:
        fields.update(
            nom_d_n=rng.uniform(2e3, 8e4, n),
            nom_l_n=rng.uniform(0, 8e4, n) * (rng.random(n) < 0.6),
            nom_lr_n=rng.uniform(0, 4e4, n) * (rng.random(n) < 0.4),
            nom_s_n=rng.uniform(0, 4e4, n) * (rng.random(n) < 0.3),
        )
    if conditions:
        from fieldcheck.engine import condition

        fields.update(condition.bench_fields(rng, n, d1, d2))
    return make_batch(n=n, **fields)


def floor(b) -> float:
    """Seconds for the bare Cp (NDS 2018 Eq. 3.7-1) of every post of ``b``, one per post."""
    t0 = time.perf_counter()
    le_d = b.height_mm / b.d2_mm
    fce = 0.822 * b.emin_mpa / (le_d * le_d)
    a = fce / b.fc_mpa
    h = (1.0 + a) / 1.6
    cp = h - np.sqrt(h * h - a / 0.8)
    dt = time.perf_counter() - t0
    assert np.isfinite(cp).all()
    return dt


def combinations_per_post(b) -> float:
    """Mean number of combinations per post that differ in load or duration factor."""
    from fieldcheck.engine.combinations import distinct_per_post

    return round(float(distinct_per_post(b).mean()), 3)


def loop(b, sample: int) -> float:
    import pint

    ureg = pint.UnitRegistry()
    Q = ureg.Quantity
    t0 = time.perf_counter()
    for i in range(sample):
        d1 = Q(float(b.d1_mm[i]), "mm")
        d2 = Q(float(b.d2_mm[i]), "mm")
        h = Q(float(b.height_mm[i]), "mm")
        fc = Q(float(b.fc_mpa[i] * b.cd[i] * b.cf_fc[i]), "MPa")
        emin = Q(float(b.emin_mpa[i]), "MPa")
        best = None
        for d in (d1, d2):
            le_d = (h / d).to("dimensionless").magnitude
            fce = 0.822 * emin / le_d**2
            a = (fce / fc).to("dimensionless").magnitude
            c = 0.8
            cp = (1 + a) / (2 * c) - math.sqrt(((1 + a) / (2 * c)) ** 2 - a / c)
            p = (cp * fc * d1 * d2).to("N")
            best = p if best is None or p < best else best
        end = (fc * d1 * d2).to("N")
        cap = min(best, end)
        _ = (Q(float(b.load_n[i]), "N") / cap).to("dimensionless").magnitude
    return (time.perf_counter() - t0) / sample


def main() -> None:
    args = [a for a in sys.argv[1:] if not a.startswith("--")]
    n = int(float(args[0])) if args else 1_000_000
    conditions = "--conditions" in sys.argv
    combos = "--combinations" in sys.argv
    b = synthetic(n, conditions=conditions, combinations=combos)
    rate(b.take(slice(0, 1000)))  # warm-up: imports, caches
    runs = []
    for _ in range(3):
        t0 = time.perf_counter()
        r = rate(b)
        runs.append(time.perf_counter() - t0)
    seconds = min(runs)
    assert np.isfinite(r.capacity_n).all()
    fl = min(floor(b) for _ in range(3))
    per_post = loop(b, sample=min(n, 2000))
    out = {
        "floor": f"bare NDS Cp (Eq. 3.7-1), numpy, once per post over the same {n:,} posts",
        "posts": n,
        "seconds": round(seconds, 4),
        "ratio_to_floor": round(seconds / fl, 2),
        "speedup_vs_loop": round(per_post * n / seconds, 1),
        "floor_seconds": round(fl, 4),
        "loop_us_per_post": round(per_post * 1e6, 1),
        "conditions": conditions,
        "combinations": combos,
    }
    if combos:
        out["combinations_per_post"] = combinations_per_post(b.take(slice(0, 100_000)))
    print(json.dumps(out))


if __name__ == "__main__":
    main()
