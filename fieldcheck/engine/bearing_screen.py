"""A cap or sill nobody identified, screened against the softest wood held.

Where a post has a load but its cap (sill) species or class was not given, the bearing across
the grain is not checked (column.py flags it). Here the load is compared with what the softest
value held would carry in the same place: Fc-perp the lowest of every species and grade
(materials.fc_perp_held("unknown")) or, for EC5, the lowest f_c,90,k of every EN 338 class held,
over the same area, bearing-length share, CM, Ct and LRFD KF phi as the real check, Cb = 1 and
k_c,90 = 1 (NDS 2018 §3.10.2, §3.10.4; EN 1995-1-1 §6.1.5), against the largest load over the
combinations (bearing across the grain takes no CD; LRFD the load / min(lambda, 1)). A load
above it raises a flag at repair level (judgement: crushing of an unidentified cap is possible,
not found); a load within it leaves the rating as it is (any wood held would carry it). No
ratio, capacity or governing check changes.
"""

from __future__ import annotations

import numpy as np

from fieldcheck.engine import combinations, en338, materials, nds
from fieldcheck.engine.batch import EC5, LRFD, PostBatch
from fieldcheck.engine.bearing_area import bearing_length, plate_bearing
from fieldcheck.engine.blocks import distinct
from fieldcheck.engine.stage import Flag, FlagSet

SOFT_FC_PERP_MPA = materials.fc_perp_held("unknown")[0]  # NDS Supplement Tables 4A-4D
SOFT_FC90K_MPA = min(r["values"]["fc90k_mpa"] for r in en338.rows())  # EN 338, EN 14080
SOFT_GAMMA_M = 1.3  # EN 1995-1-1 Table 2.3: solid timber (the softest class is solid)


def _words(end: str, option: str, value: str) -> str:
    return (
        f"{end} not identified: the load exceeds the bearing of the softest wood held "
        f"({value}), so it may crush (judgement). Give {option}, or none if not wood."
    )


_NDS = f"Fc-perp {SOFT_FC_PERP_MPA / materials.PSI:.0f} psi"
_EC5 = f"f_c,90,k {SOFT_FC90K_MPA:.1f} MPa, k_c,90 = 1"
CAP, SILL = "Cap or beam above", "Sill or plate below"
FLAGS = (
    Flag("cap_soft", _words(CAP, "--cap-species (unknown: rated at that value)", _NDS), 2),
    Flag("sill_soft", _words(SILL, "--sill-species (unknown: rated at that value)", _NDS), 2),
)
# the same warnings as an EC5 rating gives them (ec5_rating.EC5_WARNINGS)
EC5_WARNINGS = {
    "cap_soft": _words(CAP, "--cap-class", _EC5),
    "sill_soft": _words(SILL, "--sill-class", _EC5),
}


def _soft_capacity(b: PostBatch, values: dict, a_end, lb) -> np.ndarray:
    """What the softest value held carries at one end (N), Cb = 1, k_c,90 = 1, at factor 1."""
    _, share = bearing_length(lb, b.d1_mm, 1.0)
    area = a_end * share
    plates = plate_bearing(b)
    if plates is not None:  # steel plates: the plate length x the post's thickness
        area = np.where(plates[0], plates[2], area)
    ones = np.ones(b.n)
    # NDS 2018 §3.10.2: Fc-perp x CM x Ct (x KF phi for LRFD; lambda is on the load side)
    nds_cap = (
        SOFT_FC_PERP_MPA
        * values.get("cm_bear", ones)
        * values.get("ct_f", ones)
        * np.where(b.method == LRFD, nds.KF_FCP * nds.PHI_FCP, 1.0)
    )
    # EN 1995-1-1 §6.1.5 Eq. 6.3 with §2.4.1 Eq. 2.14: k_mod f_c,90,k / gamma_M
    ec5_cap = SOFT_FC90K_MPA * b.kmod / SOFT_GAMMA_M
    return np.where(b.method == EC5, ec5_cap, nds_cap) * area


def raise_flags(b: PostBatch, values: dict, flag: FlagSet) -> None:
    ends = (
        ("cap_soft", b.top_fc_perp_mpa, b.top_not_wood, "a_top", b.top_lb_mm),
        ("sill_soft", b.bottom_fc_perp_mpa, b.bottom_not_wood, "a_bottom", b.bottom_lb_mm),
    )
    # nothing to screen where every post of the block has its cap and sill (or said none)
    todo = [e for e in ends if (np.isnan(distinct(e[1])) & ~distinct(e[2])).any()]
    if not todo or np.isnan(distinct(b.load_n)).all():
        return
    load = combinations.largest_perp_load(b)
    for name, fc_perp, not_wood, a_key, lb in todo:
        unknown = np.isnan(fc_perp) & ~not_wood
        a_end = values.get(a_key, b.d1_mm * b.d2_mm)
        with np.errstate(invalid="ignore"):
            flag(name, unknown & (load > _soft_capacity(b, values, a_end, lb)))
