"""Speed of the spring-and-brace buckling solver: 10,000 posts in one call.

Random end springs (pinned to fixed, some rigid), sway and braced posts, and a share of posts with
one or two braces (rigid or elastic). Prints one JSON object on its last line:
{"posts": ..., "seconds": ...} (DEVELOPERS.md, bench), plus the share braced and the K range.
"""

from __future__ import annotations

import json
import time

import numpy as np

from fieldcheck.engine.stability import critical_load, is_mechanism

N = 10_000


def posts(n: int, seed: int = 4):
    rng = np.random.default_rng(seed)
    EI = rng.uniform(2e10, 4e11, n)  # 2x4 to 6x6 in N mm^2
    L = rng.uniform(1500.0, 4500.0, n)
    R = lambda: np.where(rng.random(n) < 0.1, np.inf, 10 ** rng.uniform(-2, 3, n))  # noqa: E731
    k_rot_top = R() * EI / L
    k_rot_bottom = R() * EI / L
    sway = rng.random(n) < 0.3
    k_lat_top = np.where(
        sway, 0.0, np.where(rng.random(n) < 0.2, 10 ** rng.uniform(-1, 3, n), np.inf)
    )
    k_lat_bottom = np.inf
    braces = np.full((n, 2), np.nan)
    one = rng.random(n) < 0.3
    two = one & (rng.random(n) < 0.3)
    braces[one, 0] = L[one] * rng.uniform(0.2, 0.8, one.sum())
    braces[two, 1] = L[two] * rng.uniform(0.05, 0.15, two.sum())
    brace_k = np.where(rng.random((n, 2)) < 0.5, np.inf, 10 ** rng.uniform(0, 3, (n, 2)))
    return EI, L, k_rot_top, k_rot_bottom, k_lat_top, k_lat_bottom, braces, brace_k


def main() -> None:
    args = posts(N)
    critical_load(*(a[:50] if np.ndim(a) else a for a in args), on_mechanism="nan")  # warm-up
    t0 = time.perf_counter()
    p = critical_load(*args, on_mechanism="nan")
    seconds = time.perf_counter() - t0
    K = np.pi / args[1] * np.sqrt(args[0] / p)
    braced_share = float((~np.isnan(args[6])).any(axis=1).mean())
    print(
        f"{N} posts, {braced_share:.0%} with braces, K from {np.nanmin(K):.3f} to "
        f"{np.nanmax(K):.3f}"
    )
    print(f"mechanisms: {int(is_mechanism(*args).sum())}")
    print(
        json.dumps(
            {"posts": N, "seconds": round(seconds, 4), "braced_share": round(braced_share, 3)}
        )
    )


if __name__ == "__main__":
    main()
