"""EN 1995-1-1 (Eurocode 5) column checks, vectorised: buckling, bearing, compression with bending.

Units, always: lengths in mm, forces in N, stresses in MPa (N/mm^2). Every function takes numpy
arrays (or scalars) and broadcasts; NaN in means NaN out (a check that cannot be made).

Axis convention follows PostBatch: axis 1 buckles in the plane of ``d1_mm`` (EC5's y axis for a
rectangle with d1 the larger side), axis 2 in the plane of ``d2_mm`` (EC5's z axis).

Products (EC5 material families): ``"solid"`` (solid timber EN 14081-1; the PostBatch codes
DIMENSION, TIMBER and POLE), ``"glulam"`` (EN 14080; PostBatch GLULAM) and ``"lvl"`` (EN 14374;
no PostBatch code yet). ``product`` arguments take these names (str or array of str) or PostBatch
product codes (int arrays).

Load-duration classes (EN 1995-1-1 Table 2.1): permanent, long-term, medium-term, short-term,
instantaneous. Service classes (EN 1995-1-1 §2.3.1.3): 1, 2, 3. Unknown values raise ValueError
with one sentence naming the field, the accepted values and an example.

Edition: EN 1995-1-1:2004+A1:2008, recommended values (a National Annex may change gamma_M and
k_c,90). Reference tables: data/ec5_kmod.csv, data/ec5_kdef.csv, data/ec5_gamma_m.csv.
"""

from __future__ import annotations

from functools import cache
from typing import NamedTuple

import numpy as np

from fieldcheck.engine import batch as _batch
from fieldcheck.engine.refdata import table


def _f64(x) -> np.ndarray:
    return np.asarray(x, dtype=np.float64)


# --- names and codes -------------------------------------------------------------------------

PRODUCTS = ("solid", "glulam", "lvl")  # index = EC5 product code used in this module
SOLID, GLULAM, LVL = 0, 1, 2
DURATIONS = (
    "permanent",
    "long-term",
    "medium-term",
    "short-term",
    "instantaneous",
)  # EN 1995-1-1 Table 2.1
SERVICE_CLASSES = (1, 2, 3)  # EN 1995-1-1 §2.3.1.3
SUPPORTS = ("general", "continuous", "discrete")  # EN 1995-1-1 §6.1.5(2)-(4)

_PRODUCT_ALIASES = {
    "solid": SOLID,
    "solid timber": SOLID,
    "dimension": SOLID,
    "timber": SOLID,
    "pole": SOLID,
    "glulam": GLULAM,
    "glued laminated timber": GLULAM,
    "lvl": LVL,
}
# PostBatch product codes -> EC5 product code (no PostBatch code for LVL: an LVL post is not
# rated as LVL).
_BATCH_PRODUCT = {
    _batch.DIMENSION: SOLID,
    _batch.TIMBER: SOLID,
    _batch.POLE: SOLID,
    _batch.GLULAM: GLULAM,
}

# Relative slenderness at and below which no buckling reduction applies (EN 1995-1-1 §6.3.2(2)).
LAM_REL_LIMIT = 0.3


def _names_to_codes(values, lookup: dict, field: str, accepted: str, example: str) -> np.ndarray:
    """Map a str or array of str through ``lookup`` (normalised), else one-sentence ValueError."""
    arr = np.asarray(values)
    uniq, inverse = np.unique(arr.astype(str), return_inverse=True)
    codes = np.empty(uniq.shape, dtype=np.int8)
    for j, u in enumerate(uniq):  # loop over distinct values only (a handful), not over posts
        key = " ".join(str(u).strip().lower().replace("_", " ").replace("-", " ").split())
        if key not in lookup:
            raise ValueError(
                f"{field} must be one of {accepted}, got {str(u)!r}; for example {example}."
            )
        codes[j] = lookup[key]
    return codes[inverse].reshape(arr.shape)


def product_code(product) -> np.ndarray:
    """EC5 product code array (0 solid, 1 glulam, 2 lvl) from names or PostBatch product codes."""
    arr = np.asarray(product)
    accepted = "solid, glulam or lvl (or dimension, timber, pole for solid timber)"
    if arr.dtype.kind in "iu":
        lut = np.full(max(_BATCH_PRODUCT) + 1, -1, dtype=np.int8)
        for k, v in _BATCH_PRODUCT.items():
            lut[k] = v
        bad = (arr < 0) | (arr >= lut.size)
        out = lut[np.where(bad, 0, arr)]
        bad |= out < 0
        if np.any(bad):
            raise ValueError(
                f"product must be a PostBatch product code {sorted(_BATCH_PRODUCT)} "
                f"or one of {accepted}, got {arr[bad].flat[0]}; for example 'solid'."
            )
        return out
    lookup = {k.replace("-", " "): v for k, v in _PRODUCT_ALIASES.items()}
    return _names_to_codes(arr, lookup, "product", accepted, "'solid'")


def duration_code(duration) -> np.ndarray:
    """Index into DURATIONS from names (case, '-', '_' and spaces are forgiven) or 0..4 codes."""
    arr = np.asarray(duration)
    accepted = (
        "permanent, long-term, medium-term, short-term or instantaneous (EN 1995-1-1 Table 2.1)"
    )
    if arr.dtype.kind in "iu":
        bad = (arr < 0) | (arr >= len(DURATIONS))
        if np.any(bad):
            raise ValueError(
                f"load-duration class code must be 0 to 4 for {accepted}, got {arr[bad].flat[0]}; "
                "for example 2 for medium-term."
            )
        return arr.astype(np.int8)
    lookup = {d.replace("-", " "): i for i, d in enumerate(DURATIONS)}
    return _names_to_codes(arr, lookup, "load-duration class", accepted, "--duration medium-term")


def service_class_index(service_class) -> np.ndarray:
    """0-based index (0, 1, 2) from service classes 1, 2, 3 (ints, floats or digit strings)."""
    arr = np.asarray(service_class)
    msg = (
        "service class must be 1, 2 or 3 (EN 1995-1-1 §2.3.1.3), got {!r}; "
        "for example --service-class 1."
    )
    if arr.dtype.kind in "iuf":
        num = arr.astype(np.float64)
        bad = ~np.isin(num, SERVICE_CLASSES)
        if np.any(bad):
            v = arr[bad].flat[0]
            raise ValueError(msg.format(v.item() if hasattr(v, "item") else v))
        return (num - 1).astype(np.int8)
    lookup = {str(s): s - 1 for s in SERVICE_CLASSES} | {f"sc{s}": s - 1 for s in SERVICE_CLASSES}
    uniq, inverse = np.unique(arr.astype(str), return_inverse=True)
    codes = np.empty(uniq.shape, dtype=np.int8)
    for j, u in enumerate(uniq):  # distinct values only
        key = str(u).strip().lower().replace(" ", "")
        if key not in lookup:
            raise ValueError(msg.format(str(u)))
        codes[j] = lookup[key]
    return codes[inverse].reshape(arr.shape)


# --- reference tables ------------------------------------------------------------------------


@cache
def _kmod_table() -> np.ndarray:
    """k_mod as an array [product, service class - 1, duration] (EN 1995-1-1 Table 3.1)."""
    out = np.full((len(PRODUCTS), len(SERVICE_CLASSES), len(DURATIONS)), np.nan)
    for r in table("ec5_kmod"):
        out[
            PRODUCTS.index(r["product"]),
            int(r["service_class"]) - 1,
            DURATIONS.index(r["duration"]),
        ] = float(r["kmod"])
    if np.isnan(out).any():
        raise RuntimeError(
            "data/ec5_kmod.csv is incomplete: every product, service class and duration needs a row"
        )
    out.setflags(write=False)
    return out


@cache
def _gamma_m_table() -> np.ndarray:
    """gamma_M as an array [product, 0 fundamental / 1 accidental] (EN 1995-1-1 Table 2.3)."""
    out = np.full((len(PRODUCTS), 2), np.nan)
    for r in table("ec5_gamma_m"):
        if r["material"] in PRODUCTS:
            out[PRODUCTS.index(r["material"]), int(r["combination"] == "accidental")] = float(
                r["gamma_m"]
            )
    if np.isnan(out).any():
        raise RuntimeError(
            "data/ec5_gamma_m.csv is incomplete: "
            "every product needs fundamental and accidental rows"
        )
    out.setflags(write=False)
    return out


@cache
def _kdef_table() -> np.ndarray:
    """k_def as an array [product, service class - 1] (EN 1995-1-1 Table 3.2)."""
    out = np.full((len(PRODUCTS), len(SERVICE_CLASSES)), np.nan)
    for r in table("ec5_kdef"):
        out[PRODUCTS.index(r["product"]), int(r["service_class"]) - 1] = float(r["kdef"])
    if np.isnan(out).any():
        raise RuntimeError(
            "data/ec5_kdef.csv is incomplete: every product and service class needs a row"
        )
    out.setflags(write=False)
    return out


def kdef(service_class, product="solid") -> np.ndarray:
    """k_def (-) by service class (1-3) and product; EN 1995-1-1 Table 3.2 (creep, §2.3.2.2).

    The same for solid timber and glulam: 0.6, 0.8, 2.0 in service classes 1, 2, 3.
    """
    sc = service_class_index(service_class)
    pr = product_code(product)
    sc, pr = np.broadcast_arrays(sc, pr)
    return _kdef_table()[pr, sc]  # EN 1995-1-1 Table 3.2


def kmod(service_class, duration_class, product="solid") -> np.ndarray:
    """k_mod (-) by service class (1-3), load-duration class and product; EN 1995-1-1 Table 3.1.

    For a load combination pass the class of its shortest-duration action (EN 1995-1-1 §3.1.3(2)).
    """
    sc = service_class_index(service_class)
    du = duration_code(duration_class)
    pr = product_code(product)
    sc, du, pr = np.broadcast_arrays(sc, du, pr)
    return _kmod_table()[pr, sc, du]  # EN 1995-1-1 Table 3.1


def gamma_m(product="solid", accidental=False) -> np.ndarray:
    """Partial factor gamma_M (-); EN 1995-1-1 Table 2.3 recommended values.

    A National Annex may change them. ``accidental=True``: accidental combinations (1.0).
    """
    pr = product_code(product)
    acc = np.asarray(accidental, dtype=bool)
    pr, acc = np.broadcast_arrays(pr, acc)
    return _gamma_m_table()[pr, acc.astype(np.int8)]  # EN 1995-1-1 Table 2.3


# --- column buckling, EN 1995-1-1 §6.3.2 ---------------------------------------------------


def beta_c(product="solid") -> np.ndarray:
    """Straightness factor beta_c: 0.2 solid timber, 0.1 glulam and LVL; EN 1995-1-1 Eq. 6.29.

    Valid within the straightness limits of EN 1995-1-1 §10.2 (L/300 solid, L/500 glulam, LVL).
    """
    pr = product_code(product)
    return np.where(pr == SOLID, 0.2, 0.1)  # EN 1995-1-1 §6.3.2 Eq. 6.29


def radius_of_gyration_rect(d_mm) -> np.ndarray:
    """i = d / sqrt(12) (mm) for a rectangle buckling in the plane of side d (I = b d^3 / 12)."""
    return np.asarray(d_mm, dtype=np.float64) / np.sqrt(12.0)


def relative_slenderness(lef_mm, i_mm, fc0k, e005) -> np.ndarray:
    """lambda_rel (-) = (L_ef / i) / pi * sqrt(f_c,0,k / E_0,05).

    EN 1995-1-1 §6.3.2 Eq. 6.21/6.22; lengths in mm, strengths and moduli in MPa.
    """
    # §6.3.2: slenderness ratio lambda = L_ef / i
    lam = _f64(lef_mm) / _f64(i_mm)
    # Eq. 6.21/6.22
    return lam / np.pi * np.sqrt(_f64(fc0k) / _f64(e005))


def k_factor(lam_rel, beta_c) -> np.ndarray:
    """k = 0.5 [1 + beta_c (lambda_rel - 0.3) + lambda_rel^2]; EN 1995-1-1 §6.3.2 Eq. 6.27/6.28."""
    lam_rel = _f64(lam_rel)
    # Eq. 6.27/6.28
    return 0.5 * (1.0 + _f64(beta_c) * (lam_rel - LAM_REL_LIMIT) + lam_rel**2)


def kc(lam_rel, beta_c) -> np.ndarray:
    """Instability factor k_c = 1 / (k + sqrt(k^2 - lambda_rel^2)); EN 1995-1-1 Eq. 6.25/6.26.

    k_c = 1 where lambda_rel <= 0.3 (EN 1995-1-1 §6.3.2(2): no buckling reduction).
    """
    lam_rel = np.asarray(lam_rel, dtype=np.float64)
    k = k_factor(lam_rel, beta_c)
    with np.errstate(invalid="ignore"):
        raw = 1.0 / (k + np.sqrt(np.maximum(k**2 - lam_rel**2, 0.0)))  # Eq. 6.25/6.26
    # §6.3.2(2): no reduction at or below lambda_rel = 0.3; never above 1 (NaN stays NaN).
    return np.where(lam_rel <= LAM_REL_LIMIT, 1.0, np.minimum(raw, 1.0))


def compression_design_strength(fc0k, kmod, gamma_m) -> np.ndarray:
    """f_c,0,d (MPa) = k_mod f_c,0,k / gamma_M; EN 1995-1-1 §2.4.1 Eq. 2.14."""
    return _f64(kmod) * _f64(fc0k) / _f64(gamma_m)  # §2.4.1 Eq. 2.14


class ColumnResistance(NamedTuple):
    """Arrays of length n. Axis 1/2 as in PostBatch (axis 1 = EC5 y for d1 the larger side)."""

    lam1: np.ndarray  # slenderness ratio L_ef / i (-)
    lam2: np.ndarray
    lam_rel1: np.ndarray  # relative slenderness (-), Eq. 6.21/6.22
    lam_rel2: np.ndarray
    beta_c: np.ndarray  # Eq. 6.29
    k1: np.ndarray  # Eq. 6.27/6.28
    k2: np.ndarray
    kc1: np.ndarray  # Eq. 6.25/6.26
    kc2: np.ndarray
    fc0d: np.ndarray  # f_c,0,d (MPa), §2.4.1 Eq. 2.14
    n_rd1: np.ndarray  # k_c,1 f_c,0,d A (N)
    n_rd2: np.ndarray
    n_rd: np.ndarray  # governing: min(n_rd1, n_rd2) (N)
    kc: np.ndarray  # k_c of the governing axis (the rating's stability_factor)
    governing_axis: np.ndarray  # int8: 1 or 2 (2 on a tie)
    no_buckling: np.ndarray  # bool: lambda_rel <= 0.3 on both axes (§6.3.2(2); use Eq. 6.19/6.20)


def column_resistance(
    area_mm2, lef1_mm, lef2_mm, i1_mm, i2_mm, fc0k, e005, kmod, gamma_m, product="solid"
) -> ColumnResistance:
    """Axial design resistance N_Rd (N) of a column about both axes; EN 1995-1-1 §6.3.2.

    ``area_mm2`` is the (residual) section area, ``lef*_mm`` the effective (buckling) lengths,
    ``i*_mm`` the radii of gyration, ``fc0k`` = f_c,0,k and ``e005`` = E_0,05 (MPa), ``kmod`` and
    ``gamma_m`` as from :func:`kmod` and :func:`gamma_m` (or PostBatch.kmod, PostBatch.gamma_m).
    """
    area = np.asarray(area_mm2, dtype=np.float64)
    lam1 = _f64(lef1_mm) / _f64(i1_mm)  # §6.3.2 lambda_y
    lam2 = _f64(lef2_mm) / _f64(i2_mm)  # §6.3.2 lambda_z
    lr1 = relative_slenderness(lef1_mm, i1_mm, fc0k, e005)  # Eq. 6.21
    lr2 = relative_slenderness(lef2_mm, i2_mm, fc0k, e005)  # Eq. 6.22
    bc = beta_c(product)  # Eq. 6.29
    k1 = k_factor(lr1, bc)  # Eq. 6.27
    k2 = k_factor(lr2, bc)  # Eq. 6.28
    kc1 = kc(lr1, bc)  # Eq. 6.25
    kc2 = kc(lr2, bc)  # Eq. 6.26
    fc0d = compression_design_strength(fc0k, kmod, gamma_m)  # §2.4.1 Eq. 2.14
    n1 = kc1 * fc0d * area  # §6.3.2(3): sigma_c,0,d <= k_c,y f_c,0,d
    n2 = kc2 * fc0d * area  # §6.3.2(3): sigma_c,0,d <= k_c,z f_c,0,d
    gov = np.where(n1 < n2, 1, 2).astype(np.int8)
    n_rd = np.minimum(n1, n2)
    kc_gov = np.where(gov == 1, kc1, kc2)
    no_buck = (lr1 <= LAM_REL_LIMIT) & (lr2 <= LAM_REL_LIMIT)  # §6.3.2(2)
    arrs = np.broadcast_arrays(
        lam1, lam2, lr1, lr2, bc, k1, k2, kc1, kc2, fc0d, n1, n2, n_rd, kc_gov, gov, no_buck
    )
    return ColumnResistance(*(np.array(a) for a in arrs))


# --- bearing perpendicular to grain, EN 1995-1-1 §6.1.5 -----------------------------------


class BearingResistance(NamedTuple):
    lef_mm: np.ndarray  # effective contact length along the loaded member's grain (mm)
    aef_mm2: np.ndarray  # effective contact area A_ef = b l_ef (mm^2)
    kc90: np.ndarray  # k_c,90 (-)
    fc90d: np.ndarray  # f_c,90,d = k_mod f_c,90,k / gamma_M (MPa)
    n_rd: np.ndarray  # k_c,90 f_c,90,d A_ef (N)


def bearing_perp_resistance(
    b_mm,
    l_mm,
    fc90k,
    kmod,
    gamma_m,
    *,
    a_mm=np.inf,
    l1_mm=np.inf,
    h_mm=np.nan,
    support="general",
    product="solid",
    softwood=True,
) -> BearingResistance:
    """Design bearing resistance (N) of the member loaded across its grain (sill, plate or cap).

    EN 1995-1-1 §6.1.5: sigma_c,90,d = F_c,90,d / A_ef <= k_c,90 f_c,90,d (Eq. 6.3, 6.4).

    Inputs (all broadcast):
      b_mm      contact width across the loaded member's grain (the post side lying across the sill)
      l_mm      actual contact length along the loaded member's grain (the post side along the sill)
      fc90k     f_c,90,k of the loaded member (MPa; EN 338), kmod and gamma_m of the loaded member
      a_mm      distance from the contact to the loaded member's end on one side (np.inf: no end
                nearby; 0: flush with the end; NaN: unknown, taken as 0, judgement)
      l1_mm     clear distance to the adjacent contact area (another post, a support) along the
                grain (np.inf: none; NaN: unknown, taken as 0 and k_c,90 = 1, judgement)
      h_mm      depth of the loaded member (for the l1 >= 2h condition; NaN: unknown, so
                k_c,90 = 1 unless l1 is infinite)
      support   "general" (k_c,90 = 1), "continuous" (the loaded member lies on a continuous
                support: a sill on a slab) or "discrete" (the loaded member rests on the post: a
                cap or beam over the post); names or 0/1/2 codes
      product   product of the loaded member; softwood: True for C classes, False for D classes

    Effective length: the contact length is increased by up to 30 mm on each side, but by no more
    than a, l or l1/2 (§6.1.5(1)). Here one side is limited by a (and l, l1/2), the other by l and
    l1/2 only.
    """
    b, l, h = _f64(b_mm), _f64(l_mm), _f64(h_mm)
    # unknown end distance or spacing: no extension that way (judgement, conservative)
    a = np.nan_to_num(_f64(a_mm), nan=0.0, posinf=np.inf)
    l1 = np.nan_to_num(_f64(l1_mm), nan=0.0, posinf=np.inf)
    sup = _support_code(support)
    pr = product_code(product)
    soft = np.asarray(softwood, dtype=bool)

    # §6.1.5(1): each side gains min(30 mm, a, l, l1/2); the far side is not limited by a.
    ext_a = np.minimum.reduce(np.broadcast_arrays(30.0, a, l, l1 / 2.0))
    ext_b = np.minimum.reduce(np.broadcast_arrays(30.0, l, l1 / 2.0))
    lef = l + np.maximum(ext_a, 0.0) + np.maximum(ext_b, 0.0)
    aef = b * lef  # §6.1.5(1) Eq. 6.4: A_ef

    # §6.1.5(2)-(4): k_c,90 = 1.0 unless l1 >= 2h and softwood; then 1.25 / 1.5 (continuous,
    # solid / glulam) or 1.5 / 1.75 (discrete, solid / glulam, the latter only when l <= 400 mm).
    with np.errstate(invalid="ignore"):
        spaced = np.isposinf(l1) | (l1 >= 2.0 * h)  # NaN h: False unless l1 infinite
    is_glulam = pr == GLULAM  # LVL: no enhancement (judgement, not covered by §6.1.5(3)-(4))
    is_solid = pr == SOLID
    cont = np.where(is_solid, 1.25, np.where(is_glulam, 1.5, 1.0))  # §6.1.5(3)
    disc = np.where(is_solid, 1.5, np.where(is_glulam & (l <= 400.0), 1.75, 1.0))  # §6.1.5(4)
    enhanced = np.where(sup == 1, cont, np.where(sup == 2, disc, 1.0))
    kc90 = np.where(spaced & soft, enhanced, 1.0)  # §6.1.5(2): 1.0 otherwise, never above 1.75

    fc90d = compression_design_strength(fc90k, kmod, gamma_m)  # §2.4.1 Eq. 2.14 with f_c,90,k
    n_rd = kc90 * fc90d * aef  # §6.1.5 Eq. 6.3
    arrs = np.broadcast_arrays(lef, aef, kc90, fc90d, n_rd)
    return BearingResistance(*(np.array(x) for x in arrs))


def _support_code(support) -> np.ndarray:
    arr = np.asarray(support)
    if arr.dtype.kind in "iu":
        if np.any((arr < 0) | (arr > 2)):
            raise ValueError(
                "bearing support must be 0 general, 1 continuous or 2 discrete; "
                "for example 'general'."
            )
        return arr.astype(np.int8)
    lookup = {s: i for i, s in enumerate(SUPPORTS)}
    return _names_to_codes(
        arr, lookup, "bearing support", "general, continuous or discrete", "'general'"
    )


# --- compression with bending --------------------------------------------------------------


def km(shape=_batch.RECT) -> np.ndarray:
    """k_m (-): 0.7 for rectangular sections of solid timber, glulam and LVL, 1.0 otherwise.

    EN 1995-1-1 §6.1.6(2). ``shape`` takes PostBatch shape codes; built-up posts get 1.0
    (judgement, conservative: the section is not one solid rectangle).
    """
    return np.where(np.asarray(shape) == _batch.RECT, 0.7, 1.0)  # §6.1.6(2)


def bending_design_strength(fmk, kmod, gamma_m, kh=1.0) -> np.ndarray:
    """f_m,d (MPa) = k_h k_mod f_m,k / gamma_M; EN 1995-1-1 §2.4.1 Eq. 2.14 with §3.2(3) k_h.

    k_h defaults to 1.0 (conservative); see :func:`kh_bending`.
    """
    return _f64(kh) * _f64(kmod) * _f64(fmk) / _f64(gamma_m)  # §2.4.1 Eq. 2.14, §3.2(3)


def kh_bending(depth_mm, product="solid") -> np.ndarray:
    """Depth factor k_h for bending (from memory: EN 1995-1-1 §3.2(3) solid, §3.3(3) glulam).

    Solid timber (rho_k <= 700 kg/m^3): min((150/h)^0.2, 1.3) for h < 150 mm, else 1.0.
    Glulam: min((600/h)^0.1, 1.1) for h < 600 mm, else 1.0. LVL: 1.0 here (its k_h depends on
    the product's size-effect exponent; judgement, conservative).
    """
    h = np.asarray(depth_mm, dtype=np.float64)
    pr = product_code(product)
    with np.errstate(divide="ignore", invalid="ignore"):
        solid = np.where(h < 150.0, np.minimum((150.0 / h) ** 0.2, 1.3), 1.0)  # §3.2(3) Eq. 3.1
        glulam = np.where(h < 600.0, np.minimum((600.0 / h) ** 0.1, 1.1), 1.0)  # §3.3(3) Eq. 3.2
    return np.where(
        np.isnan(h), np.nan, np.where(pr == SOLID, solid, np.where(pr == GLULAM, glulam, 1.0))
    )


class CombinedCheck(NamedTuple):
    ratio1: np.ndarray  # Eq. 6.23 (or 6.19): k_m on the axis-2 bending term
    ratio2: np.ndarray  # Eq. 6.24 (or 6.20): k_m on the axis-1 bending term
    ratio: np.ndarray  # max(ratio1, ratio2); <= 1 passes
    no_buckling: np.ndarray  # bool: the §6.2.4 form (Eq. 6.19/6.20) was used


def combined_ratio(
    sigma_c_mpa, sigma_m1_mpa, sigma_m2_mpa, fc0d, fm1d, fm2d, kc1, kc2, lam_rel1, lam_rel2, km
) -> CombinedCheck:
    """Utilisation under axial compression with bending about both axes.

    sigma_c = N/A, sigma_m1 = M1/W1 (bending in the plane of d1, EC5's y), sigma_m2 = M2/W2; all
    design stresses in MPa; fm1d, fm2d from :func:`bending_design_strength`; kc and lam_rel per
    axis from :func:`column_resistance`; km from :func:`km`.

    lambda_rel > 0.3 on either axis: EN 1995-1-1 §6.3.2(3) Eq. 6.23/6.24
        sigma_c / (k_c,y f_c,0,d) + sigma_m,y / f_m,y,d + k_m sigma_m,z / f_m,z,d <= 1
        sigma_c / (k_c,z f_c,0,d) + k_m sigma_m,y / f_m,y,d + sigma_m,z / f_m,z,d <= 1
    lambda_rel <= 0.3 on both: §6.2.4 Eq. 6.19/6.20, the axial term squared and without k_c.
    """
    sc = np.asarray(sigma_c_mpa, dtype=np.float64)
    m1 = np.asarray(sigma_m1_mpa, dtype=np.float64) / np.asarray(fm1d, dtype=np.float64)
    m2 = np.asarray(sigma_m2_mpa, dtype=np.float64) / np.asarray(fm2d, dtype=np.float64)
    fc0d = np.asarray(fc0d, dtype=np.float64)
    k_m = np.asarray(km, dtype=np.float64)
    no_buck = (np.asarray(lam_rel1) <= LAM_REL_LIMIT) & (
        np.asarray(lam_rel2) <= LAM_REL_LIMIT
    )  # §6.3.2(2)
    # §6.3.2(3) Eq. 6.23 / 6.24
    r1_buck = sc / (np.asarray(kc1) * fc0d) + m1 + k_m * m2
    r2_buck = sc / (np.asarray(kc2) * fc0d) + k_m * m1 + m2
    # §6.2.4 Eq. 6.19 / 6.20
    r1_short = (sc / fc0d) ** 2 + m1 + k_m * m2
    r2_short = (sc / fc0d) ** 2 + k_m * m1 + m2
    r1 = np.where(no_buck, r1_short, r1_buck)
    r2 = np.where(no_buck, r2_short, r2_buck)
    arrs = np.broadcast_arrays(r1, r2, np.maximum(r1, r2), no_buck)
    return CombinedCheck(*(np.array(x) for x in arrs))
