"""Elastic buckling of spring-restrained and braced posts, solved numerically, many posts at once.

One axis at a time. A prismatic post of bending stiffness EI and length L carries an axial load P
that stays vertical. Each end has a rotational spring (moment per radian: 0 a pin, ``inf`` fixed)
and a lateral spring (force per mm: 0 free to sway, ``inf`` held). Braces are lateral restraints at
heights strictly between the ends (rigid by default, or with a stiffness in N/mm).

Method (exact, no discretisation error): the post is cut into segments at the brace heights. Each
segment gets the exact beam-column stiffness matrix built from the stability functions (Livesley's
phi functions; Timoshenko & Gere, *Theory of Elastic Stability*, ch. 1-2). The critical load is
the smallest P at which the assembled stiffness matrix stops being positive definite. It is found
by bisection on u = L sqrt(P / EI) with the Wittrick-Williams count (Wittrick & Williams 1971):

    number of critical loads below P = J0 + (number of negative eigenvalues of K(P))

where J0 counts the clamped-clamped critical loads of each segment below P (these are the poles
of the stability functions). The count needs only the signs of the eigenvalues of small symmetric
matrices (2 x (braces + 2) rows), computed batched with ``np.linalg.eigvalsh``. 52 halvings of
[0, 2 pi / longest segment] give u to about 1e-15 relative to the bracket.

Units: EI in N mm^2, L and brace heights in mm, rotational stiffness in N mm / rad, lateral and
brace stiffness in N / mm; the critical load in N. Dimensionless forms: R = k_rot L / EI (the
stiffness ratio of Timoshenko & Gere ch. 2, stability functions) and T = k_lat L^3 / EI.

Public functions (all vectorised over posts; every stiffness argument broadcasts to length n):

- :func:`critical_load` -> P_cr in N
- :func:`effective_length_factor` -> K = (pi / L) sqrt(EI / P_cr)
- :func:`k_from_ratios` -> K from R_top, R_bottom, sway or braced, braces as fractions of L
- :func:`is_mechanism` -> bool mask of posts with no buckling strength (P_cr = 0)
- :func:`design_k` -> the K to rate with: never below the NDS recommended design value of the
  bracketing ideal cases unless the theoretical value is accepted (judgement, documented there)
- :func:`bracketing_cases` -> indices into :data:`IDEAL_CASES` of the stiffer and the more
  flexible bracketing ideal case, for the working
"""

from __future__ import annotations

import math

import numpy as np

__all__ = [
    "IDEAL_CASES",
    "bracketing_cases",
    "critical_load",
    "design_k",
    "effective_length_factor",
    "is_mechanism",
    "k_from_ratios",
]

_TWO_PI = 2.0 * math.pi
_ITERATIONS = 52  # halvings of the bracket: 2**-52 ~ 2e-16 of the upper bound on u
_SERIES_BELOW = 1.0
# a spring this many times the segment stiffness (12EI/l^3, 4EI/l) is rigid  # use the Taylor series
# of the cancelling differences below this argument
_RIGID_RATIO = 1e9

# ---------------------------------------------------------------------------------------------
# Ideal cases: NDS 2018 Appendix G, Table G1 (NDS 2018 Appendix G Table G1). Theoretical K for (b)
# is the
# exact root of tan u = u (Timoshenko & Gere ch. 2), so a solved K equal to it maps onto 0.80.
# (name, theoretical K, NDS recommended design Ke)
IDEAL_CASES: tuple[tuple[str, float, float], ...] = (
    ("fixed-fixed", 0.5, 0.65),  # (a) NDS 2018 App. G Table G1
    ("fixed-pinned", 0.699156, 0.80),  # (b)
    ("fixed-guided", 1.0, 1.2),  # (c)
    ("pinned-pinned", 1.0, 1.0),  # (d)
    ("flagpole", 2.0, 2.10),  # (e) fixed base, free top
    ("pinned-guided", 2.0, 2.4),  # (f) pinned base, top rotation fixed and free to translate
    ("pinned-free", math.inf, math.inf),  # a mechanism: not an NDS case
)
_FF, _FP, _FG, _PP, _FLAG, _PG, _MECH = range(7)
_CASE_K = np.array([c[1] for c in IDEAL_CASES])
_CASE_KE = np.array([c[2] for c in IDEAL_CASES])


# ---------------------------------------------------------------------------------------------
# Input checking


def _fmt(x) -> str:
    return f"{float(x):g}"


def _of_post(i: int, n: int) -> str:
    """' of post i' in a batch; nothing for a single post (the CLI and the interface)."""
    return f" of post {i}" if n > 1 else ""


def _as_float(name: str, value, n: int) -> np.ndarray:
    arr = np.asarray(value, dtype=np.float64)
    if arr.ndim == 0:
        return np.full(n, float(arr))
    if arr.shape != (n,):
        raise ValueError(
            f"{name} has shape {arr.shape} but every post needs one value: give {n} values or "
            "one scalar."
        )
    return arr


def _post_count(*values) -> int:
    sizes = [np.size(v) for v in values if v is not None and np.ndim(v) > 0]
    return max(sizes) if sizes else 1


def _check_stiffness(name: str, arr: np.ndarray, unit: str, example: str) -> None:
    bad = np.isnan(arr) | (arr < 0)
    if bad.any():
        i = int(np.argmax(bad))
        raise ValueError(
            f"{name}{_of_post(i, arr.size)} is {_fmt(arr[i])}: it must be 0 (no restraint) up "
            f"to inf (rigid) {unit}, "
            f"for example {example}."
        )


def _check_positive(name: str, arr: np.ndarray, unit: str, example: str) -> None:
    bad = ~(np.isfinite(arr) & (arr > 0))
    if bad.any():
        i = int(np.argmax(bad))
        raise ValueError(
            f"{name}{_of_post(i, arr.size)} is {_fmt(arr[i])}: it must be a positive finite "
            f"number in {unit}, for example {example}."
        )


def _prepare_braces(braces, brace_k, n: int, L: np.ndarray, unit: str = "mm"):
    """Braces as (n, m) heights measured from the bottom (NaN padding) and stiffnesses; sorted."""
    if braces is None:
        return np.empty((n, 0)), np.empty((n, 0))
    h = np.atleast_2d(np.asarray(braces, dtype=np.float64))
    if h.ndim != 2 or h.shape[0] not in (1, n):
        raise ValueError(
            f"braces has shape {np.shape(braces)}: give an (n, m) array of heights in {unit} "
            "from the bottom, "
            f"NaN-padded, for example [[1200.0, nan]] for one brace."
        )
    h = np.broadcast_to(h, (n, h.shape[1]))
    if brace_k is None:
        k = np.full(h.shape, np.inf)
    else:
        k = np.asarray(brace_k, dtype=np.float64)
        k = np.broadcast_to(k if k.ndim != 1 or h.shape[1] != 1 else k[:, None], h.shape)
    given = ~np.isnan(h)
    bad = given & ~((h > 0) & (h < L[:, None]))
    if bad.any():
        i, j = np.argwhere(bad)[0]
        raise ValueError(
            f"brace height {_fmt(h[i, j])} {unit}{_of_post(i, n)} is not between the bottom (0) "
            "and the top "
            f"({_fmt(L[i])}) of the post: a brace must lie strictly between the ends, for example "
            f"{_fmt(0.5 * L[i])} for mid-height (restrain an end with its lateral stiffness "
            "instead)."
        )
    kb = np.where(given, k, np.inf)
    bad_k = given & ~(kb > 0)
    if bad_k.any():
        i, j = np.argwhere(bad_k)[0]
        raise ValueError(
            f"brace stiffness {_fmt(kb[i, j])}{_of_post(i, n)} must be greater than 0 up to inf "
            "(rigid), "
            f"for example inf; a brace with no stiffness is not a brace: leave it out."
        )
    order = np.argsort(h, axis=1, kind="stable")  # NaN sorts last
    h = np.take_along_axis(h, order, axis=1)
    kb = np.take_along_axis(kb, order, axis=1)
    dup = ~np.isnan(h[:, 1:]) & (np.diff(h, axis=1) <= 1e-9 * L[:, None])
    if dup.any():
        i, j = np.argwhere(dup)[0]
        raise ValueError(
            f"The post{_of_post(i, n)} has two braces at the same height {_fmt(h[i, j])} "
            f"{unit}: give each brace height once "
            f"(add their stiffnesses if there really are two)."
        )
    m = int((~np.isnan(h)).sum(axis=1).max(initial=0))
    return h[:, :m], kb[:, :m]


# ---------------------------------------------------------------------------------------------
# Stability functions (exact beam-column stiffness; Timoshenko & Gere ch. 1, Livesley's phi)


def _sin_minus_x_cos(x: np.ndarray) -> np.ndarray:
    """sin x - x cos x without cancellation for small x (Taylor series below 1)."""
    out = np.sin(x) - x * np.cos(x)
    small = np.abs(x) < _SERIES_BELOW
    if small.any():
        xs = x[small]
        x2 = xs * xs
        term = xs * x2 / 3.0  # k = 1: 2k x^(2k+1) / (2k+1)!
        acc = term.copy()
        for k in range(2, 10):
            # ratio of term k to term k-1: -(k / (k-1)) x^2 / ((2k)(2k+1))
            term = -term * x2 * k / ((k - 1) * (2 * k) * (2 * k + 1))
            acc += term
        out[small] = acc
    return out


def _x_minus_sin(x: np.ndarray) -> np.ndarray:
    """x - sin x without cancellation for small x (Taylor series below 1)."""
    out = x - np.sin(x)
    small = np.abs(x) < _SERIES_BELOW
    if small.any():
        xs = x[small]
        x2 = xs * xs
        term = xs * x2 / 6.0
        acc = term.copy()
        for k in range(2, 10):
            term = -term * x2 / ((2 * k) * (2 * k + 1))
            acc += term
        out[small] = acc
    return out


def _segment_terms(u: np.ndarray, length: np.ndarray):
    """Exact stiffness terms of a compressed segment (EI = 1), DOFs (w1, th1, w2, th2).

    u = length * sqrt(P/EI). Returns a, b, c, d with the element matrix
    [[a, b, -a, b], [b, c, -b, d], [-a, -b, a, -b], [b, d, -b, c]]; for u -> 0 these tend to
    12/l^3, 6/l^2, 4/l, 2/l (the plain beam). Timoshenko & Gere ch. 1, stability functions.
    """
    half = 0.5 * u
    sh = np.sin(half)
    fh = _sin_minus_x_cos(half)
    den = 4.0 * sh * fh  # 2 - 2 cos u - u sin u: zero at the clamped-clamped critical loads
    with np.errstate(divide="ignore", invalid="ignore", over="ignore"):
        a = u**3 * np.sin(u) / den / length**3
        b = u * u * sh / (2.0 * fh) / length**2
        c = u * _sin_minus_x_cos(u) / den / length
        d = u * _x_minus_sin(u) / den / length
    return a, b, c, d, fh


def _clamped_count(u: np.ndarray, f_half: np.ndarray) -> np.ndarray:
    """J0: clamped-clamped critical loads of a segment below u (Wittrick & Williams 1971).

    Roots of 2 - 2 cos u - u sin u = 4 sin(u/2) (sin(u/2) - (u/2) cos(u/2)): u = 2 pi j, and
    tan(u/2) = u/2 with one root of x = u/2 in (j pi, j pi + pi/2) for each j >= 1.
    f_half is sin(u/2) - (u/2) cos(u/2).
    """
    sym = np.floor(u / _TWO_PI)
    j = np.floor(0.5 * u / math.pi)
    sign = np.where(j % 2 == 0, 1.0, -1.0)
    anti = j - 1 + (f_half * sign > 0)
    return sym + np.maximum(anti, 0)


def _negative_count(K: np.ndarray) -> np.ndarray:
    """Negative eigenvalues of each symmetric matrix in K (n, N, N), by Sylvester's law of inertia.

    Symmetric Gaussian elimination without pivoting counts the negative pivots (vectorised over
    posts, a loop over the N columns). Where a pivot other than the last is tiny against the
    matrix scale the count could be unreliable, so those matrices are counted again with
    np.linalg.eigvalsh (non-finite ones, on a pole of a segment, count as past the root).
    """
    n, size, _ = K.shape
    A = K.copy()
    neg = np.zeros(n, dtype=np.int64)
    scale = np.abs(np.diagonal(K, axis1=1, axis2=2)).max(axis=1)
    doubtful = ~np.isfinite(scale)
    for k in range(size):
        piv = A[:, k, k]
        neg += piv < 0
        if k + 1 < size:  # a tiny last pivot is only the root being near: its sign is the answer
            doubtful |= ~(np.abs(piv) > 1e-9 * scale)
            with np.errstate(divide="ignore", invalid="ignore", over="ignore"):
                col = A[:, k + 1 :, k] / piv[:, None]
                A[:, k + 1 :, k + 1 :] -= col[:, :, None] * A[:, k, None, k + 1 :]
    if doubtful.any():
        sub = K[doubtful]
        ok = np.isfinite(sub).all(axis=(1, 2))
        recount = np.full(sub.shape[0], 1, dtype=np.int64)  # non-finite: on a pole, count as past
        if ok.any():
            recount[ok] = (np.linalg.eigvalsh(sub[ok]) < 0).sum(axis=1)
        neg[doubtful] = recount
    return neg


# ---------------------------------------------------------------------------------------------
# The solver core, dimensionless (EI = 1, L = 1)


def _mechanism_mask(Rt, Rb, Tt, Tb, Tbr) -> np.ndarray:
    """No buckling strength: a rigid-body motion w = a + b x meets no restraint.

    A rotational spring stops b; then one lateral restraint stops a. With no rotational spring,
    two lateral restraints at different heights are needed.
    """
    lateral_points = (Tt > 0).astype(int) + (Tb > 0) + (Tbr > 0).sum(axis=1)
    rotation = (Rt > 0) | (Rb > 0)
    return ~((rotation & (lateral_points >= 1)) | (lateral_points >= 2))


def _mechanism_sentence(i: int, Rt, Rb, Tt, Tb, Tbr) -> str:
    points = int((Tt[i] > 0) + (Tb[i] > 0) + (Tbr[i] > 0).sum())
    if points == 0:
        return (
            f"The post{_of_post(i, Rt.size)} is a mechanism about this axis: nothing holds it "
            "laterally (both end lateral "
            f"stiffnesses are 0 and there are no braces), so it slides sideways under any load; "
            f"hold at least one end laterally."
        )
    return (
        f"The post{_of_post(i, Rt.size)} is a mechanism about this axis: it is held laterally "
        "at one point only and no end "
        "resists rotation (like a pinned base with a free top), so it tips over under any "
        "load; hold the "
        f"other end laterally, add a brace, or give an end rotational stiffness."
    )


def _solve_group(Rt, Rb, Tt, Tb, xb, Tbr) -> np.ndarray:
    """u_cr = L sqrt(P_cr / EI) for posts sharing the brace count m = xb.shape[1]."""
    n, m = xb.shape
    nodes = m + 2
    size = 2 * nodes
    x = np.concatenate([np.zeros((n, 1)), xb, np.ones((n, 1))], axis=1)
    seg = np.diff(x, axis=1)  # (n, m + 1)

    # Lateral (w) and rotational (theta) DOF of node i: 2i and 2i + 1.
    spring = np.zeros((n, size))
    spring[:, 0] = Tb
    spring[:, 1] = Rb
    spring[:, 2 * (nodes - 1)] = Tt
    spring[:, 2 * (nodes - 1) + 1] = Rt
    if m:
        spring[:, 2 : 2 * (nodes - 1) : 2] = Tbr
    # A finite spring 1e9 times stiffer than the stiffest segment is rigid to ~1e-9 in K, and
    # leaving it finite only spoils the conditioning of K(P): treat it as held (judgement).
    short = seg.min(axis=1)[:, None]
    rigid_at = np.where(np.arange(size) % 2 == 0, 12.0 / short**3, 4.0 / short) * _RIGID_RATIO
    held = spring > rigid_at
    spring = np.where(held, 0.0, spring)
    keep = ~held
    keep2 = keep[:, :, None] & keep[:, None, :]
    eye_values = np.eye(size)  # held DOFs: their rows and columns become the identity
    diag_idx = np.arange(size)

    # Upper bound: clamping every node can only raise the critical load, and then the longest
    # segment buckles clamped-clamped at u = 2 pi (Timoshenko & Gere ch. 2).
    lo = np.zeros(n)
    hi = _TWO_PI / seg.max(axis=1)
    K = np.empty((n, size, size))
    for _ in range(_ITERATIONS):
        mu = 0.5 * (lo + hi)
        u = mu[:, None] * seg
        a, b, c, d, fh = _segment_terms(u, seg)
        j0 = _clamped_count(u, fh).sum(axis=1)
        K.fill(0.0)
        for s in range(m + 1):  # assemble segment s on DOFs 2s .. 2s + 3
            w1, t1, w2, t2 = 2 * s, 2 * s + 1, 2 * s + 2, 2 * s + 3
            K[:, w1, w1] += a[:, s]
            K[:, w2, w2] += a[:, s]
            K[:, t1, t1] += c[:, s]
            K[:, t2, t2] += c[:, s]
            for r, q, v in (
                (w1, t1, b),
                (w1, t2, b),
                (t1, w2, -b),
                (w2, t2, -b),
                (w1, w2, -a),
                (t1, t2, d),
            ):
                K[:, r, q] += v[:, s]
                K[:, q, r] += v[:, s]
        K[:, diag_idx, diag_idx] += spring
        Km = np.where(keep2, K, eye_values)
        count = j0 + _negative_count(Km)
        below = count == 0
        lo = np.where(below, mu, lo)
        hi = np.where(below, hi, mu)
    return 0.5 * (lo + hi)


def _solve_u(Rt, Rb, Tt, Tb, xb, Tbr, on_mechanism: str) -> np.ndarray:
    """Dimensionless critical u per post; NaN (or ValueError) for mechanisms."""
    if on_mechanism not in ("raise", "nan"):
        raise ValueError(
            f"on_mechanism is {on_mechanism!r}: it must be 'raise' or 'nan', for example 'nan'."
        )
    mech = _mechanism_mask(Rt, Rb, Tt, Tb, Tbr)
    if mech.any() and on_mechanism == "raise":
        raise ValueError(_mechanism_sentence(int(np.argmax(mech)), Rt, Rb, Tt, Tb, Tbr))
    u = np.full(Rt.shape, np.nan)
    counts = (~np.isnan(xb)).sum(axis=1)
    for m in np.unique(counts[~mech]):
        sel = np.flatnonzero((counts == m) & ~mech)
        u[sel] = _solve_group(Rt[sel], Rb[sel], Tt[sel], Tb[sel], xb[sel, :m], Tbr[sel, :m])
    return u


def _dimensionless(
    EI_nmm2, L_mm, k_rot_top, k_rot_bottom, k_lat_top, k_lat_bottom, braces, brace_k
):
    n = _post_count(EI_nmm2, L_mm, k_rot_top, k_rot_bottom, k_lat_top, k_lat_bottom)
    if braces is not None and np.ndim(braces) == 2:
        n = max(n, np.shape(braces)[0])
    EI = _as_float("EI_nmm2", EI_nmm2, n)
    L = _as_float("L_mm", L_mm, n)
    _check_positive(
        "EI_nmm2 (bending stiffness E I)", EI, "N mm^2", "5.7e10 (a 4x4, E = 11,000 MPa)"
    )
    _check_positive("L_mm (post length)", L, "mm", "2440")
    ends = {
        "k_rot_top": ("N mm/rad", "5e8"),
        "k_rot_bottom": ("N mm/rad", "5e8"),
        "k_lat_top": ("N/mm", "200"),
        "k_lat_bottom": ("N/mm", "inf"),
    }
    vals = {}
    for name, v in zip(ends, (k_rot_top, k_rot_bottom, k_lat_top, k_lat_bottom), strict=True):
        arr = _as_float(name, v, n)
        _check_stiffness(name, arr, *ends[name])
        vals[name] = arr
    h, kb = _prepare_braces(braces, brace_k, n, L)
    with np.errstate(
        invalid="ignore"
    ):  # inf * finite stays inf; 0 * inf does not occur (EI, L > 0)
        Rt = vals["k_rot_top"] * L / EI
        Rb = vals["k_rot_bottom"] * L / EI
        Tt = vals["k_lat_top"] * L**3 / EI
        Tb = vals["k_lat_bottom"] * L**3 / EI
        Tbr = np.where(np.isnan(h), 0.0, kb * (L**3 / EI)[:, None])
    return EI, L, Rt, Rb, Tt, Tb, h / L[:, None], Tbr


# ---------------------------------------------------------------------------------------------
# Public API


def critical_load(
    EI_nmm2,
    L_mm,
    k_rot_top,
    k_rot_bottom,
    k_lat_top,
    k_lat_bottom,
    braces=None,
    brace_k=None,
    *,
    on_mechanism: str = "raise",
) -> np.ndarray:
    """Elastic critical load P_cr in N for each post, about one axis.

    EI_nmm2: bending stiffness E I in N mm^2 (> 0). L_mm: length in mm (> 0).
    k_rot_top, k_rot_bottom: rotational spring at each end in N mm/rad, 0 (pin) to inf (fixed).
    k_lat_top, k_lat_bottom: lateral spring at each end in N/mm, 0 (free to sway) to inf (held).
    braces: (n, m) brace heights in mm from the bottom, NaN-padded, strictly between 0 and L;
    a 1-D array is one post's braces (broadcast to every post). None: no braces.
    brace_k: brace stiffness in N/mm, same shape as braces (or broadcastable); None: rigid.
    Scalars broadcast to the number of posts. on_mechanism: "raise" (ValueError, one sentence
    naming the first such post) or "nan" (NaN for those posts; see :func:`is_mechanism`).
    """
    EI, L, Rt, Rb, Tt, Tb, xb, Tbr = _dimensionless(
        EI_nmm2, L_mm, k_rot_top, k_rot_bottom, k_lat_top, k_lat_bottom, braces, brace_k
    )
    u = _solve_u(Rt, Rb, Tt, Tb, xb, Tbr, on_mechanism)
    return u * u * EI / (L * L)  # u = L sqrt(P / EI)


def effective_length_factor(
    EI_nmm2,
    L_mm,
    k_rot_top,
    k_rot_bottom,
    k_lat_top,
    k_lat_bottom,
    braces=None,
    brace_k=None,
    *,
    on_mechanism: str = "raise",
) -> np.ndarray:
    """K = (pi / L) sqrt(EI / P_cr) for each post (relative to the full length L); arguments as
    :func:`critical_load`. Mechanisms: ValueError, or NaN with on_mechanism="nan"."""
    _, _, Rt, Rb, Tt, Tb, xb, Tbr = _dimensionless(
        EI_nmm2, L_mm, k_rot_top, k_rot_bottom, k_lat_top, k_lat_bottom, braces, brace_k
    )
    return math.pi / _solve_u(Rt, Rb, Tt, Tb, xb, Tbr, on_mechanism)  # Euler: P = pi^2 EI / (K L)^2


def is_mechanism(
    EI_nmm2,
    L_mm,
    k_rot_top,
    k_rot_bottom,
    k_lat_top,
    k_lat_bottom,
    braces=None,
    brace_k=None,
) -> np.ndarray:
    """Bool mask: True where the post has no buckling strength about this axis (P_cr = 0).

    Arguments as :func:`critical_load` (invalid input still raises ValueError)."""
    _, _, Rt, Rb, Tt, Tb, _, Tbr = _dimensionless(
        EI_nmm2, L_mm, k_rot_top, k_rot_bottom, k_lat_top, k_lat_bottom, braces, brace_k
    )
    return _mechanism_mask(Rt, Rb, Tt, Tb, Tbr)


def k_from_ratios(
    R_top, R_bottom, sway=False, braces_frac=None, *, on_mechanism: str = "raise"
) -> np.ndarray:
    """K from dimensionless end stiffness ratios R = k L / (E I) (0 pin, inf fixed).

    sway: True where the top translates freely (lateral spring 0 at the top, bottom held);
    False: both ends held laterally (braced). braces_frac: rigid brace heights as fractions of
    L from the bottom, (n, m) NaN-padded or 1-D for every post, each strictly in (0, 1).
    Alignment charts (AISC 360 Commentary App. 7): R = 2/G braced, R = 6/G sway.
    """
    sway_arr = np.asarray(sway, dtype=bool)
    n = _post_count(R_top, R_bottom, sway_arr)
    if braces_frac is not None and np.ndim(braces_frac) == 2:
        n = max(n, np.shape(braces_frac)[0])
    k_lat_top = np.where(np.broadcast_to(sway_arr, (n,)), 0.0, np.inf)
    try:
        return effective_length_factor(
            1.0, 1.0, R_top, R_bottom, k_lat_top, np.inf, braces_frac, on_mechanism=on_mechanism
        )
    except ValueError as exc:  # speak in ratios, not in N mm
        msg = str(exc).replace("k_rot_top", "R_top").replace("k_rot_bottom", "R_bottom")
        msg = msg.replace(" N mm/rad", "").replace("5e8", "2.0").replace(" mm", " (fraction of L)")
        raise ValueError(msg) from None


def bracketing_cases(R_top, R_bottom, sway=False) -> tuple[np.ndarray, np.ndarray]:
    """Indices into :data:`IDEAL_CASES` of the stiffer and the more flexible bracketing case.

    Each end is pinned (R = 0), fixed (R = inf) or a spring; a spring end is fixed in the
    stiffer case and pinned in the more flexible one. sway: the top translates freely.
    """
    Rt = np.asarray(R_top, dtype=np.float64)
    Rb = np.asarray(R_bottom, dtype=np.float64)
    sw = np.asarray(sway, dtype=bool)
    Rt, Rb, sw = np.broadcast_arrays(Rt, Rb, sw)
    for name, arr in (("R_top", Rt), ("R_bottom", Rb)):
        bad = np.isnan(arr) | (arr < 0)
        if bad.any():
            i = int(np.argmax(bad.ravel()))
            raise ValueError(
                f"{name}{_of_post(i, arr.size)} is {_fmt(arr.ravel()[i])}: it must be 0 (pin) "
                "up to inf (fixed), for example 2.0."
            )

    def case(top_fixed, bottom_fixed):
        braced = np.where(
            top_fixed & bottom_fixed, _FF, np.where(top_fixed | bottom_fixed, _FP, _PP)
        )
        swayed = np.where(
            top_fixed & bottom_fixed,
            _FG,
            np.where(bottom_fixed, _FLAG, np.where(top_fixed, _PG, _MECH)),
        )
        return np.where(sw, swayed, braced)

    stiff = case(Rt > 0, Rb > 0)
    flexible = case(np.isinf(Rt), np.isinf(Rb))
    return stiff, flexible


def design_k(K_solved, R_top, R_bottom, sway=False, theoretical=False) -> np.ndarray:
    """The K to rate with: the solved K, raised to the NDS recommended design values.

    Rule (judgement; AISC 360-16 Commentary Appendix 7; NDS 2018 Appendix G Table G1): the NDS
    recommended Ke exceeds the theoretical K where fixity is relied on, because field fixity is
    imperfect. A spring end lies between pinned and fixed, so the post lies between two ideal
    cases (:func:`bracketing_cases`): the stiffer (springs fixed, theoretical K_s, recommended
    Ke_s) and the more flexible (springs pinned, K_f, Ke_f). The solved K is mapped linearly from
    [K_s, K_f] onto [Ke_s, Ke_f]:

        K_design = Ke_s + (K - K_s) (Ke_f - Ke_s) / (K_f - K_s)

    so an ideal case gets exactly its NDS value, the result never falls below K (both ends of the
    map are >= theory) and never leaves the recommended values of the bracketing cases, and it
    grows with K. Outside [K_s, K_f] (braces or lateral springs doing more than the ideal cases
    assume) and when the two cases coincide, the margin Ke / K of the nearer case multiplies K.
    When the flexible case is a mechanism (sway, spring base, pinned top) the stiffer case's margin
    multiplies K. theoretical: True where the user accepts the solved K as it is.
    Returns an array the shape of the broadcast inputs (NaN stays NaN).
    """
    K = np.asarray(K_solved, dtype=np.float64)
    stiff, flex = bracketing_cases(R_top, R_bottom, sway)
    K, stiff, flex, theo = np.broadcast_arrays(K, stiff, flex, np.asarray(theoretical, dtype=bool))
    Ks, Kes = _CASE_K[stiff], _CASE_KE[stiff]
    Kf, Kef = _CASE_K[flex], _CASE_KE[flex]
    with np.errstate(invalid="ignore", divide="ignore"):
        margin_s = np.where(
            np.isfinite(Ks), Kes / Ks, 1.0
        )  # both cases mechanisms: no fixity relied on
        margin_f = np.where(np.isfinite(Kf), Kef / Kf, margin_s)
        span = Kf - Ks
        inside = np.isfinite(Kf) & (span > 0) & (Ks <= K) & (Kf >= K)
        mapped = Kes + (K - Ks) * (Kef - Kes) / np.where(inside, span, 1.0)
        out = np.where(
            inside,
            mapped,
            np.where(np.isfinite(Kf) & (Kf < K), K * margin_f, K * margin_s),
        )
    out = np.maximum(out, K)
    return np.where(theo, K, out)
