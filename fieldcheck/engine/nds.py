"""NDS 2018 checks for posts, vectorised (ASD and LRFD). SI inside: mm, N, MPa.

Every function takes and returns numpy arrays of length n. Clauses are ANSI/AWC NDS-2018 and
its Supplement unless stated.
"""

from __future__ import annotations

import numpy as np

from fieldcheck.engine.batch import DIMENSION, GLULAM, POLE, TIMBER
from fieldcheck.engine.customary import IN, PSI

# LRFD format conversion and resistance factors (NDS 2018 Table 4.3.1 and Appendix N; from memory
# except KF = 2.16/phi for Fc, which NDS 2018 Table 4.3.1, Appendix N supports).
KF_FC, PHI_C = 2.40, 0.90
KF_EMIN, PHI_S = 1.76, 0.85
KF_FCP, PHI_FCP = 1.67, 0.90
KF_FB, PHI_B = 2.54, 0.85

# NDS 2018 Table 2.3.2 footnote: CD above 1.6 does not apply to members pressure-treated with
# waterborne preservatives (or fire retardants); Appendix N Table N3 footnote: lambda above 1.0
# likewise. An incised member was incised to take a preservative: taken as treated (judgement,
# conservative: the treatment is rarely known on site).
TREATED_CD_MAX, TREATED_LAMBDA_MAX = 1.6, 1.0

# Column constant c by product (NDS 2018 §3.7.1): sawn 0.8, round poles 0.85, glulam/SCL 0.9.
C_BY_PRODUCT = np.array([0.8, 0.8, 0.85, 0.9])
assert (DIMENSION, TIMBER, POLE, GLULAM) == (0, 1, 2, 3)

# le/d limits (NDS 2018 §3.7.1.4): 50, or 75 during construction.
LE_D_LIMIT, LE_D_LIMIT_CONSTRUCTION = 50.0, 75.0
FCE_COEFF = 0.822  # NDS 2018 §3.7.1 (= pi^2/12 to 0.06 %)
END_BEARING_PLATE_RATIO = 0.75  # NDS 2018 §3.10.1.3
CB_REACH_MM = 0.375 * IN  # NDS 2018 §3.10.4: Cb = (lb + 0.375 in)/lb
CB_MAX_LB_MM = 6.0 * IN


def column_stability_factor(
    fce: np.ndarray, fc_star: np.ndarray, c: np.ndarray, two_c: np.ndarray | None = None
) -> np.ndarray:
    """Cp (NDS 2018 §3.7.1, Eq. 3.7-1), Ylinen's column curve: h - sqrt(h^2 - a / c) with
    a = FcE / Fc*, h = (1 + a) / 2c (``two_c``: 2c, given when it serves both axes). The same
    operations in the same order, into as few arrays as they need."""
    a = fce / fc_star
    h = 1.0 + a
    h /= 2.0 * c if two_c is None else two_c
    r = h * h
    r -= a / c
    np.sqrt(r, out=r)
    return np.subtract(h, r, out=h)


def euler_stress(emin_prime: np.ndarray, le_d: np.ndarray) -> np.ndarray:
    """FcE = 0.822 Emin' / (le/d)^2 (NDS 2018 §3.7.1)."""
    return FCE_COEFF * emin_prime / (le_d * le_d)


def euler_stresses(emin_prime: np.ndarray, le_d1: np.ndarray, le_d2: np.ndarray):
    """FcE about both axes (NDS 2018 §3.7.1), 0.822 Emin' worked out once."""
    k = FCE_COEFF * emin_prime
    return k / (le_d1 * le_d1), k / (le_d2 * le_d2)


_CM_FC = np.array([1.0, 0.91, 0.8])  # dry or tabulated wet; wet timber; wet dimension lumber
_CM_E = np.array([1.0, 0.9])  # all but wet dimension lumber; wet dimension lumber


def wet_service_factors(product, fc, cf_fc, wet, wet_tabulated, class_unknown=None):
    """CM for Fc and E/Emin (NDS Supplement Tables 4A and 4D adjustment factors).

    Dimension lumber: Fc 0.8 (1.0 when Fc CF <= 750 psi), E 0.9. Timbers: Fc 0.91, E 1.0. Values
    already tabulated for wet service take 1.0. CM for Fc-perp (0.67) belongs to each bearing: the
    rating applies it where the bearing is wet; CM for Fb is wet_bending_factor (bending checks).
    A post whose grading class is not known (``class_unknown``: a measured section, a round post)
    takes the lowest of them, Fc 0.8 and E 0.9, whatever its values (judgement, conservative:
    its values are capped by or taken over several classes, and one CM for every size keeps a
    larger section from rating lower in wet service).
    """
    apply = wet & ~wet_tabulated if wet_tabulated.any() else wet
    timber = product != DIMENSION
    relief = fc * cf_fc <= 750 * PSI
    if class_unknown is not None and class_unknown.any():
        timber = timber & ~class_unknown
        relief = relief & ~class_unknown
    dim = apply & ~timber
    # Fc: 1.0 dry, 0.91 wet timber, 0.8 wet dimension lumber above 750 psi; E: 0.9 wet
    # dimension lumber; table lookups by a one-byte code (np.where with scalars costs more)
    code = np.left_shift(dim & ~relief, 1, dtype=np.uint8)
    code |= apply & timber
    cm_fc = _CM_FC.take(code)
    cm_e = _CM_E.take(dim.view(np.uint8))
    return cm_fc, cm_e


def wet_bending_factor(product, fb, cf_fb, wet, wet_tabulated, class_unknown=None):
    """CM for Fb (NDS Supplement Table 4A): 0.85 for wet dimension lumber, 1.0 when Fb CF <= 1150
    psi, for timbers and for values tabulated wet; a NaN Fb takes 0.85. A post whose grading
    class is not known takes 0.85 (judgement, as wet_service_factors)."""
    dim = wet & ~wet_tabulated & (product == DIMENSION)
    relief = fb * cf_fb <= 1150 * PSI
    if class_unknown is not None and class_unknown.any():
        dim = dim | (wet & ~wet_tabulated & class_unknown)
        relief = relief & ~class_unknown
    return np.where(dim & ~relief, 0.85, 1.0)


def temperature_factors(temp_c: np.ndarray, wet: np.ndarray):
    """Ct for Fc/Fb/Fc-perp and for E/Emin (NDS 2018 §2.3.3, Table 2.3.3; from memory).

    T <= 100 F (37.8 C): 1.0; 100 F < T <= 125 F (51.7 C): 0.8 dry / 0.7 wet, E 0.9;
    125 F < T <= 150 F (65.6 C): 0.7 dry / 0.5 wet, E 0.9. NaN temperature: normal (1.0).
    """
    t = np.nan_to_num(temp_c, nan=20.0)
    mid = (t > 37.8) & (t <= 51.7)
    hot = t > 51.7
    ct_f = np.where(mid, np.where(wet, 0.7, 0.8), np.where(hot, np.where(wet, 0.5, 0.7), 1.0))
    ct_e = np.where(mid | hot, 0.9, 1.0)
    return ct_f, ct_e


def incising_factors(incised: np.ndarray):
    """Ci for Fc/Fb and for E/Emin (NDS 2018 §4.3.8, Table 4.3.8): 0.80 and 0.95; Fc-perp 1.0."""
    return np.where(incised, 0.80, 1.0), np.where(incised, 0.95, 1.0)


def bearing_area_factor(
    lb_mm: np.ndarray, eligible: np.ndarray, cb: np.ndarray | None = None
) -> np.ndarray:
    """Cb = (lb + 0.375 in)/lb for lb < 6 in and bearing >= 3 in from the member end, else 1.0
    (NDS 2018 §3.10.4). ``cb``: (lb + 0.375 in)/lb already worked out (bearing_area_ratio)."""
    ok = eligible & (lb_mm < CB_MAX_LB_MM) & (lb_mm > 0)
    if cb is None:
        cb = bearing_area_ratio(lb_mm)
    # where(ok, cb, 1.0) without numpy's slow pick on a mixed mask: where ok, cb is finite and
    # at least 1 (lb > 0), so max(cb, 1) is cb; elsewhere 0 x cb is 0 or NaN (lb 0 or NaN) and
    # fmax passes over NaN: 1
    with np.errstate(invalid="ignore"):  # 0 x inf where lb is 0
        out = np.multiply(ok, cb)
        return np.fmax(out, 1.0, out=out)


def bearing_area_ratio(lb_mm: np.ndarray) -> np.ndarray:
    """(lb + 0.375 in)/lb (NDS 2018 §3.10.4), wherever lb is (0 or NaN: inf or NaN)."""
    with np.errstate(divide="ignore", invalid="ignore"):  # lb 0 or NaN only where not ok
        return (lb_mm + CB_REACH_MM) / lb_mm
