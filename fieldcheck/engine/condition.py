"""The post as found: defects and damage -> residual section, strength ratios, eccentricity, flags.

Pure numpy on PostBatch arrays (SI: mm, N, MPa), no per-post loops. The column stage calls
:func:`residual` for the section it checks; the ``CONDITION`` stage adds the eccentric and
net-section checks (:func:`add_checks`), raises the condition's flags (:func:`condition_flags`)
and explains them (:func:`summary_keys`, :func:`working_lines`).

Model (judgement on ASTM D245 principles, from memory; NDS 2018 §3.9.2, §15.4.1):

* Section loss is deducted from the section (decayed, insect-damaged and charred wood has no
  strength): depth per face from the original face, a hollow core at the centre, char plus the
  zero-strength layer, a notch across one face, a bored hole, wane at the corners. Probed decay is
  extended by a margin (``decay_margin_mm``, default 13 mm: judgement, decay reaches further
  than probed).
* Where along the height: loss in the middle half (or over the full height) enters the stability
  check through the residual I and A (d_eff = sqrt(12 I / A) per axis); loss at an end enters the
  bearing checks at that end; the crushing check uses the net section wherever the loss is
  (NDS 2018 §3.6.3 as remembered: net section for the stress check anywhere, net section in Cp
  where the reduction is in the buckling-critical part) [M].
* Knots and slope of grain reduce Fc (and Fb) through the lowest strength ratio (ASTM D245
  principle, from memory). A graded member's tabulated values already allow its grade's own
  knots and slope, so the ratio is left out only where the inspector states the defect is within
  the grade (beyond_grade no); unstated, it is applied (``sr_applies``: whether it is within the
  grade is a decision input, never read as the safe answer; judgement); it then multiplies the
  tabulated value as if it were clear wood: conservative by up to the grade's own ratio
  (judgement, ASTM D245 principle, from memory).
* Eccentricity (load off-centre, the centroid shift of one-sided loss, partial end contact, the
  lean of a sway post) and bow at mid-height are checked with the NDS 2018 §3.9.2 interaction in
  the eccentric-column form of §15.4.1 (a bowed post: Timoshenko & Gere ch. 1, initially curved
  bar); the capacity is the largest load meeting it. A centred straight post has no such check:
  it gives exactly the plain column result.
"""

from __future__ import annotations

import numpy as np

from fieldcheck.engine import nds
from fieldcheck.engine import quantities as q
from fieldcheck.engine.batch import EC5, LRFD, ROUND, PostBatch
from fieldcheck.engine.blocks import at_least, distinct, filled, memo
from fieldcheck.engine.refdata import table
from fieldcheck.engine.result import Check, Step
from fieldcheck.engine.sections import second_moments
from fieldcheck.engine.stage import Flag, FlagSet, Stage

# ---- codes used in PostBatch condition fields ----------------------------------------------
ZONE_NAMES = ("full", "middle", "top", "bottom")  # where along the height a loss lies
FULL, MIDDLE, TOP, BOTTOM = 0, 1, 2, 3
FACE_NAMES = ("wide", "narrow")  # a wide face is d1 wide (loss there reduces d2)
WIDE, NARROW = 0, 1
SPLIT_NAMES = ("none", "check", "through", "opening")
SPLIT_NONE, SPLIT_CHECK, SPLIT_THROUGH, SPLIT_OPENING = 0, 1, 2, 3
SPLIT_FACE_NAMES = ("unknown", "wide", "narrow")  # the faces a through split shows on
SLOPE_TABLES = (
    "grading",
    "clear-wood",
)  # grading: ASTM D245 [M]; clear-wood: Wood Handbook 5-12 [V]
GRADING, CLEAR_WOOD = 0, 1
CRUSHED_NAMES = ("none", "top", "bottom", "both")  # bit 1 top, bit 2 bottom
DATA_LEVELS = ("default-values", "drawings", "usual", "comprehensive")  # ASCE 41 data collection
CONDITIONS = ("none recorded", "minor", "moderate", "severe")  # what was seen (not what to do)

# ---- judgement and remembered constants (each editable here) --------------------------------
CHAR_LAYER_MM = 7.0  # zero-strength layer beyond the char line, EN 1995-1-2 §4.2.2 d0 = 7 mm [M]
CRUSHED_AREA = 0.5  # share of a crushed or broomed end taken as bearing (judgement)
MIDDLE_FROM, MIDDLE_TO = 0.25, 0.75  # the buckling-critical middle half of the height (judgement)
MC_DECAY_RISK = (
    20.0  # % MC at or above which most decay fungi grow (Smulski 1996 [S]; judgement flag)
)
MC_SATURATED = (
    28.0  # % MC: near fibre saturation, meters unreliable (FPL-GTR-6 [V]; flag judgement)
)
NO_STRENGTH = 1e-6  # strength ratio where none is relied on (near 0, keeps the formulas finite)
HANKINSON_Q_BENDING = 0.1  # Q/P for bending at an angle to grain (Wood Handbook ch. 5 range [M])
LE_BENDING = (
    1.84  # le/lu for the bending check of a post with end moments (NDS 2018 Table 3.3.3 [M])
)
ECC_ITERATIONS = 16  # most Illinois steps of the interaction solve
ECC_RTOL = (
    1e-7  # stop once every bracket is this tight (relative); lo is returned, on the safe side
)
DEPTH_FIELDS = ("1p", "1m", "2p", "2m")  # faces: 1p/1m the narrow faces (reduce d1), 2p/2m wide


@np.errstate(divide="ignore", invalid="ignore")
def _nz(a: np.ndarray) -> np.ndarray:
    """NaN -> 0 (a depth not given is no loss)."""
    return np.where(np.isnan(a), 0.0, a)


# =============================================================================================
# Strength ratios
# =============================================================================================
def slope_rows(name: str, prop: str) -> tuple[np.ndarray, np.ndarray, str]:
    """(slope n ascending, ratio 0-1, status) for one table and property (slope_of_grain.csv)."""
    rows = [r for r in table("slope_of_grain") if r["table"] == name and r["property"] == prop]
    rows.sort(key=lambda r: float(r["slope_n"]))
    return (
        np.array([float(r["slope_n"]) for r in rows]),
        np.array([float(r["ratio_pct"]) / 100 for r in rows]),
        rows[0]["status"],
    )


def _hankinson(n: np.ndarray, q: np.ndarray) -> np.ndarray:
    """Strength at the grain angle of slope 1 in n over strength along the grain, exponent 2:
    Q / (P sin^2 + Q cos^2) with P = 1 (Hankinson; FPL Report 1203 [V], NDS 2018 §3.10.3 form)."""
    s2 = 1.0 / (1.0 + n * n)  # sin^2(atan(1/n))
    return q / (s2 + q * (1.0 - s2))


def slope_ratio(
    n: np.ndarray, which: np.ndarray, prop: str, q: np.ndarray
) -> tuple[np.ndarray, np.ndarray]:
    """(strength ratio, steeper-than-table mask) for slope 1 in n (inf: straight).

    A slope between rows takes the row at or steeper than it (conservative). Steeper than the
    steepest row is outside the published data: no strength ratio is extrapolated (Hankinson's
    formula was not calibrated to these tables); the strength is unknown and none is relied on
    (ratio NO_STRENGTH, judgement). The records layer refuses such a slope in one sentence.
    """
    out = np.ones_like(n, dtype=np.float64)
    beyond = np.zeros(n.shape, dtype=bool)
    straight = ~np.isfinite(n)
    for code, name in enumerate(SLOPE_TABLES):
        ns, sr, _ = slope_rows(name, prop)
        m = (which == code) & ~straight
        if not m.any():
            continue
        idx = np.searchsorted(ns, n, side="right") - 1
        steep = idx < 0
        row = sr[np.clip(idx, 0, None)]
        out = np.where(m, np.where(steep, NO_STRENGTH, row), out)
        beyond |= m & steep
    return out, beyond


def strength_ratios(b: PostBatch) -> dict[str, np.ndarray]:
    """Lowest strength ratio of the knot and the slope, for Fc and Fb (D245: lowest, no product)."""
    if not (
        np.any(b.knot_mm > 0) or np.any(np.isfinite(b.slope_n))
    ):  # nothing recorded in this block
        one, no = filled(1.0, b.n), filled(False, b.n)
        return {
            "strength_ratio": one,
            "sr_bending": one,
            "sr_knot": one,
            "sr_slope": one,
            "sr_slope_bending": one,
            "slope_beyond_table": no,
            "sr_recorded": no,
        }
    k = _nz(b.knot_mm)
    w = np.where(b.knot_face == NARROW, b.d2_mm, b.d1_mm)
    sr_knot = np.clip(1.0 - k / w, 0.0, 1.0)  # ASTM D245 principle, knot as a hole: 1 - k/w [M]
    q_c = np.clip(np.where(np.isnan(b.fc_perp_mpa), 0.1, b.fc_perp_mpa / b.fc_mpa), 0.02, 1.0)
    sr_slope_c, beyond = slope_ratio(b.slope_n, b.slope_table, "compression", q_c)
    sr_slope_b, _ = slope_ratio(
        b.slope_n, b.slope_table, "bending", np.full_like(q_c, HANKINSON_Q_BENDING)
    )
    recorded = (k > 0) | np.isfinite(b.slope_n)
    apply = b.sr_applies & recorded
    sr_c = np.where(apply, np.minimum(sr_knot, sr_slope_c), 1.0)
    # bending: the compression knot form is used for Fb too (judgement; D245 bending rules for
    # edge and centre knots are more detailed and were not verified)
    sr_b = np.where(apply, np.minimum(sr_knot, sr_slope_b), 1.0)
    return {
        "strength_ratio": sr_c,
        "sr_bending": sr_b,
        "sr_knot": sr_knot,
        "sr_slope": sr_slope_c,
        "sr_slope_bending": sr_slope_b,
        "slope_beyond_table": beyond & apply,
        "sr_recorded": recorded,
    }


# =============================================================================================
# Residual section
# =============================================================================================
def _in_zone(zone: np.ndarray, *wanted: int) -> np.ndarray:
    m = zone == FULL
    for z in wanted:
        m = m | (zone == z)
    return m


def _cut_zones(z_mm: np.ndarray, h: np.ndarray, d1: np.ndarray):
    """(middle, top end, bottom end) masks for a notch or hole at height z (NaN: mid-height assumed,
    the worst place for buckling). An end means within one section width of it (judgement)."""
    z = np.where(np.isnan(z_mm), 0.5 * h, z_mm)
    mid = (z >= MIDDLE_FROM * h) & (z <= MIDDLE_TO * h)
    return mid, z >= h - d1, z <= d1


def _section(
    b: PostBatch,
    dec: list,
    chr_: list,
    inc_dec,
    inc_chr,
    inc_hollow,
    inc_notch,
    inc_hole,
    parts: dict,
    full: bool = True,
) -> dict[str, np.ndarray]:
    """Residual section for the losses included (boolean masks). Coordinates from the original
    centre: x along d1, y along d2. Returns area and, if ``full``, I1, I2, centroid, S, sizes.

    ``parts`` holds the per-batch inputs prepared once by :func:`residual` (NaN -> 0, face masks,
    and which kinds of loss occur in this batch at all, so absent kinds cost nothing).
    """
    d1, d2 = b.d1_mm, b.d2_mm
    a = [np.maximum(dec[k] * inc_dec, chr_[k] * inc_chr) for k in range(4)]
    if parts["has_notch"]:  # a notch is cut on the + face of its pair (the sign is immaterial)
        notch = parts["notch"] * inc_notch
        a[0] = np.maximum(a[0], notch * parts["notch_narrow"])
        a[2] = np.maximum(a[2], notch * parts["notch_wide"])
    a1p, a1m, a2p, a2m = a
    b1 = np.maximum(d1 - a1p - a1m, 0.0)
    b2 = np.maximum(d2 - a2p - a2m, 0.0)
    ar = b1 * b2
    area = ar.copy()
    # wane: 45-degree corner triangles of leg w at the original corners, filled in the order
    # (+1,+2), (-1,+2), (+1,-2), (-1,-2); face losses shrink the leg to w - a1 - a2 (exact)
    tri = []
    if parts["has_wane"]:
        w = parts["wane"]
        for j, (sx, sy, ax, ay) in enumerate(
            ((1, 1, a1p, a2p), (-1, 1, a1m, a2p), (1, -1, a1p, a2m), (-1, -1, a1m, a2m))
        ):
            wc = np.maximum(w - ax - ay, 0.0) * parts["corner"][j]
            at = 0.5 * wc * wc
            area -= at
            tri.append((sx, sy, ax, ay, wc, at))
    if parts["has_hollow"]:
        hol = parts["hollow"] * inc_hollow
        a_h = (np.pi / 4.0) * hol * hol
        area -= a_h
    xc, yc = 0.5 * (a1m - a1p), 0.5 * (a2m - a2p)  # centre of the rectangle left by the faces
    if parts["has_hole"]:
        hole = parts["hole"] * inc_hole
        tw = parts["hole_wide"]  # 1.0: bored through the wide faces (runs along d2), else 0.0
        # the bore is on the original centre line; only its part inside the rectangle the face
        # losses left is taken off (a part in wood already lost is not taken twice: geometry)
        lo = np.maximum(-0.5 * hole, np.where(tw > 0, xc - 0.5 * b1, yc - 0.5 * b2))
        hi = np.minimum(0.5 * hole, np.where(tw > 0, xc + 0.5 * b1, yc + 0.5 * b2))
        h_in = np.maximum(hi - lo, 0.0)  # the bore's diameter inside the rectangle
        m_in = np.where(h_in > 0, 0.5 * (lo + hi), 0.0)  # and the centre of that part
        a_bore = h_in * (tw * b2 + (1.0 - tw) * b1)
        area -= a_bore
    np.maximum(area, 0.0, out=area)
    out = {"area": area}
    if not full:
        return out
    # first and second moments about the original centre, then about the new centroid
    sx_, sy_ = ar * xc, ar * yc
    i1 = b2 * b1 * b1 * b1 / 12.0 + ar * xc * xc
    i2 = b1 * b2 * b2 * b2 / 12.0 + ar * yc * yc
    for sx, sy, ax, ay, wc, at in tri:
        x_t = sx * (0.5 * d1 - ax - wc / 3.0)
        y_t = sy * (0.5 * d2 - ay - wc / 3.0)
        wc2 = wc * wc
        it = wc2 * wc2 / 36.0  # right isosceles triangle about its centroid
        sx_ -= at * x_t
        sy_ -= at * y_t
        i1 -= it + at * x_t * x_t
        i2 -= it + at * y_t * y_t
    if parts["has_hollow"]:
        i_h = (np.pi / 64.0) * (hol * hol) * (hol * hol)
        i1 -= i_h
        i2 -= i_h
    if parts["has_hole"]:
        xb = tw * m_in + (1.0 - tw) * xc
        yb = tw * yc + (1.0 - tw) * m_in
        sx_ -= a_bore * xb
        sy_ -= a_bore * yb
        h3 = h_in * h_in * h_in / 12.0
        i1 -= tw * b2 * h3 + (1.0 - tw) * h_in * b1 * b1 * b1 / 12.0 + a_bore * xb * xb
        i2 -= tw * h_in * b2 * b2 * b2 / 12.0 + (1.0 - tw) * b1 * h3 + a_bore * yb * yb
    safe = np.maximum(area, 1e-9)
    xbar, ybar = sx_ / safe, sy_ / safe
    i1 = np.maximum(i1 - area * xbar * xbar, 0.0)
    i2 = np.maximum(i2 - area * ybar * ybar, 0.0)
    c1 = np.maximum(0.5 * d1 - a1p - xbar, xbar + 0.5 * d1 - a1m)  # extreme fibres
    c2 = np.maximum(0.5 * d2 - a2p - ybar, ybar + 0.5 * d2 - a2m)
    out.update(i1=i1, i2=i2, xbar=xbar, ybar=ybar, c1=c1, c2=c2, b1=b1, b2=b2)
    return out


def _sections(b, dec, chr_, parts, h, d1):
    """(middle, net, top end, bottom end) residual sections: each loss in the zones it covers."""
    n_mid, n_top, n_bot = _cut_zones(b.notch_z_mm, h, d1)
    h_mid, h_top, h_bot = _cut_zones(b.hole_z_mm, h, d1)
    yes = np.ones(b.n, dtype=bool)
    mid = _section(
        b,
        dec,
        chr_,
        _in_zone(b.decay_zone, MIDDLE),
        _in_zone(b.char_zone, MIDDLE),
        _in_zone(b.hollow_zone, MIDDLE),
        n_mid,
        h_mid,
        parts,
    )
    net = _section(b, dec, chr_, yes, yes, yes, yes, yes, parts)
    top = _section(
        b,
        dec,
        chr_,
        _in_zone(b.decay_zone, TOP),
        _in_zone(b.char_zone, TOP),
        _in_zone(b.hollow_zone, TOP),
        n_top,
        h_top,
        parts,
        full=False,
    )
    bot = _section(
        b,
        dec,
        chr_,
        _in_zone(b.decay_zone, BOTTOM),
        _in_zone(b.char_zone, BOTTOM),
        _in_zone(b.hollow_zone, BOTTOM),
        n_bot,
        h_bot,
        parts,
        full=False,
    )
    return mid, net, top, bot


LOSS_FIELDS = (
    *tuple(f"{k}_{f}_mm" for k in ("decay", "char") for f in DEPTH_FIELDS),
    "hollow_mm",
    "wane_mm",
    "notch_mm",
    "hole_mm",
)


def _block_has_loss(b: PostBatch) -> bool:
    """Any section loss or through split in this block (NaN and 0 mean none); kept on the batch."""
    return memo(
        b,
        "_has_loss",
        lambda: (
            any((distinct(getattr(b, f)) > 0).any() for f in LOSS_FIELDS)
            or bool((distinct(b.split) >= SPLIT_THROUGH).any())
        ),
    )


def _sound(b: PostBatch) -> dict[str, np.ndarray]:
    """A block with no loss: the gross section. The bending properties (I, i, S) are added only
    where a check needs them (gross_bending_properties), not for every sound block."""
    d1, d2 = b.d1_mm, b.d2_mm
    gross = d1 * d2
    zero, no = filled(0.0, b.n), filled(False, b.n)
    out = {
        "area": gross,
        "area_gross": gross,
        "area_net": gross,
        "area_top": gross,
        "area_bottom": gross,
        "d_eff1": d1,
        "d_eff2": d2,
        "least_d1": d1,
        "least_d2": d2,
        "shift1": zero,
        "shift2": zero,
        "loss": no,
        "loss_mid": no,
        "split_axis": filled(np.int8(0), b.n),
    }
    out.update(strength_ratios(b))
    return out


# A round post bends as the round section it is: its elastic section modulus pi D^3 / 32 is
# 3 / (2 sqrt(pi)) = 0.846 of the d^3 / 6 of the square of equal area (side d = D sqrt(pi) / 2;
# mechanics). NDS 2018 §3.7.3 takes that square for the column's stability only. Losses on a
# round post are worked out on the square and their modulus scaled the same way (judgement).
ROUND_S = 3.0 / (2.0 * np.sqrt(np.pi))


def _round_s(b: PostBatch):
    """ROUND_S for round posts, 1.0 for the others (None: no round post in the block)."""
    if not (distinct(b.shape) == ROUND).any():
        return None
    return np.where(b.shape == ROUND, ROUND_S, 1.0)


def gross_bending_properties(b: PostBatch, v: dict) -> None:
    """res_i1, res_i2, i_gyr1, i_gyr2, s1, s2 of the gross section, where a sound block left them
    out (the same formulas as the residual path gives a sound post)."""
    if "s1" in v:
        return
    d1, d2 = b.d1_mm, b.d2_mm
    i1, i2 = second_moments(d1, d2)
    s1, s2 = i1 / (0.5 * d1), i2 / (0.5 * d2)
    rs = _round_s(b)
    if rs is not None:
        s1, s2 = s1 * rs, s2 * rs
    v.update(
        res_i1=i1,
        res_i2=i2,
        i_gyr1=d1 / np.sqrt(12.0),
        i_gyr2=d2 / np.sqrt(12.0),
        s1=s1,
        s2=s2,
    )


def residual(
    b: PostBatch, le1: np.ndarray | None = None, le2: np.ndarray | None = None
) -> dict[str, np.ndarray]:
    """Every condition value the rating needs, as arrays (see the module docstring).

    Keys: area (middle section, used by the column check), area_gross, area_net (all losses
    together, for the crushing check), area_top, area_bottom (end bearing), res_i1, res_i2,
    d_eff1, d_eff2, i_gyr1, i_gyr2, s1, s2 (a sound block leaves res_i*, i_gyr* and s* to
    gross_bending_properties), least_d1, least_d2, shift1, shift2, loss (bool),
    and the strength ratios (strength_ratio for Fc, sr_bending for Fb, ...). ``le1``, ``le2``
    (effective lengths) decide the axis of a through split whose faces were not recorded.
    """
    d1, d2, h = b.d1_mm, b.d2_mm, b.height_mm
    if not _block_has_loss(
        b
    ):  # a sound block: the gross section (same values as below, fewer steps)
        return _sound(b)
    margin = _nz(b.decay_margin_mm)
    dec = [
        np.where(
            _nz(getattr(b, f"decay_{f}_mm")) > 0, _nz(getattr(b, f"decay_{f}_mm")) + margin, 0.0
        )
        for f in DEPTH_FIELDS
    ]  # judgement: a margin past the probed boundary (decay reaches further than probed)
    chr_ = [
        np.where(
            _nz(getattr(b, f"char_{f}_mm")) > 0,
            _nz(getattr(b, f"char_{f}_mm")) + CHAR_LAYER_MM,
            0.0,
        )
        for f in DEPTH_FIELDS
    ]  # char + zero-strength layer d0 (EN 1995-1-2 §4.2.2, from memory)
    parts = {
        "notch": _nz(b.notch_mm),
        "wane": _nz(b.wane_mm),
        "hollow": _nz(b.hollow_mm),
        "hole": _nz(b.hole_mm),
        "notch_narrow": (b.notch_face == NARROW).astype(np.float64),
        "notch_wide": (b.notch_face == WIDE).astype(np.float64),
        "hole_wide": (b.hole_face == WIDE).astype(np.float64),
        "corner": [(b.wane_corners > j).astype(np.float64) for j in range(4)],
    }
    for k in ("notch", "wane", "hollow", "hole"):
        parts[f"has_{k}"] = bool(parts[k].any())
    gross = d1 * d2
    loss_any = (
        sum(dec)
        + sum(chr_)
        + parts["hollow"]
        + parts["notch"]
        + parts["hole"]
        + parts["wane"] * parts["corner"][0]
    ) > 0
    if not loss_any.any():  # a sound block: the gross section, nothing to compute
        zero = np.zeros(b.n)
        mid = net = {
            "area": gross,
            "i1": zero,
            "i2": zero,
            "xbar": zero,
            "ybar": zero,
            "c1": zero,
            "c2": zero,
            "b1": d1,
            "b2": d2,
        }
        top = bot = mid
    else:
        mid, net, top, bot = _sections(b, dec, chr_, parts, h, d1)
    loss_mid = loss_any & (mid["area"] < gross)
    # through split in the buckling-critical part: the halves act separately about one axis,
    # I about it / 4 (mechanics; judgement [X]); unknown faces: the worse axis
    split_mid = (b.split >= SPLIT_THROUGH) & _in_zone(b.split_zone, MIDDLE)
    with np.errstate(divide="ignore", invalid="ignore"):
        a_m = np.where(loss_mid, mid["area"], gross)
        de1 = np.where(
            loss_mid, np.sqrt(12.0 * mid["i1"] / np.maximum(a_m, 1e-9)), d1
        )  # d_eff = sqrt(12 I / A)
        de2 = np.where(loss_mid, np.sqrt(12.0 * mid["i2"] / np.maximum(a_m, 1e-9)), d2)
    if le1 is None:
        le1, le2 = h, h
    worse_is_1 = le1 / de1 > le2 / de2  # halving d_eff doubles le/d: the larger one matters more
    s_axis1 = split_mid & ((b.split_faces == 1) | ((b.split_faces == 0) & worse_is_1))
    s_axis2 = split_mid & ~s_axis1
    g1, g2 = second_moments(d1, d2)
    i1 = np.where(loss_mid, mid["i1"], g1)
    i2 = np.where(loss_mid, mid["i2"], g2)
    i1 = np.where(s_axis1, 0.25 * i1, i1)
    i2 = np.where(s_axis2, 0.25 * i2, i2)
    de1 = np.where(s_axis1, 0.5 * de1, de1)
    de2 = np.where(s_axis2, 0.5 * de2, de2)
    c1 = np.where(loss_mid, mid["c1"], 0.5 * d1)
    c2 = np.where(loss_mid, mid["c2"], 0.5 * d2)
    shift1 = np.where(
        loss_any, np.where(np.abs(net["xbar"]) > np.abs(mid["xbar"]), net["xbar"], mid["xbar"]), 0.0
    )
    shift2 = np.where(
        loss_any, np.where(np.abs(net["ybar"]) > np.abs(mid["ybar"]), net["ybar"], mid["ybar"]), 0.0
    )
    out = {
        "area": a_m,
        "area_gross": gross,
        "area_net": np.where(loss_any, net["area"], gross),
        "area_top": np.where(loss_any, top["area"], gross),
        "area_bottom": np.where(loss_any, bot["area"], gross),
        "res_i1": i1,
        "res_i2": i2,
        "d_eff1": de1,
        "d_eff2": de2,
        "i_gyr1": de1 / np.sqrt(12.0),
        "i_gyr2": de2 / np.sqrt(12.0),
        "s1": i1 / c1,
        "s2": i2 / c2,
        "least_d1": np.where(loss_mid, mid["b1"], d1),
        "least_d2": np.where(loss_mid, mid["b2"], d2),
        "shift1": shift1,
        "shift2": shift2,
        "loss": loss_any,
        "loss_mid": loss_mid,
        "split_axis": np.where(s_axis1, 1, np.where(s_axis2, 2, 0)).astype(np.int8),
    }
    rs = _round_s(b)
    if rs is not None:
        out["s1"], out["s2"] = out["s1"] * rs, out["s2"] * rs
    out.update(strength_ratios(b))
    return out


# =============================================================================================
# Checks added to the rating: eccentric load and bow, net-section crushing
# =============================================================================================
def _interaction(x, a0, u1, u2, g1, h1, g2, h2, f1, f2, k):
    """NDS 2018 Eq. 15.4-1 with the bow terms, minus 1, times both amplifier denominators
    (positive below the poles, so the root is the same and the function has no poles)."""
    den1 = 1.0 - u1 * x  # 1 - fc/FcE1
    kx = k * x
    den2 = 1.0 - u2 * x - kx * kx  # 1 - fc/FcE2 - (fb1/FbE)^2
    d12 = den1 * den2
    return (a0 * x * x - 1.0) * d12 + x * (g1 + h1 * x) * den2 / f1 + x * (g2 + h2 * x) * den1 / f2


def eccentric_capacity(area, s1, s2, e1, e2, bow1, bow2, fc_prime, fb1p, fb2p, fce1, fce2, fbe):
    """Largest P meeting the NDS 2018 §3.9.2 / §15.4.1 interaction (from memory).

        (fc/Fc')^2 + [fb1 + fc (6 e1/d1)(1 + 0.234 fc/FcE1)] / (Fb1' [1 - fc/FcE1])
          + [fb2 + fc (6 e2/d2)(1 + 0.234 fc/FcE2)]
            / (Fb2' [1 - fc/FcE2 - ((fb1 + fc 6e1/d1)/FbE)^2]) = 1

    with fc = P/A, fc 6e/d = P e / S (the end-moment stress of the residual section) and
    fb = P bow / S (a measured initial bow, amplified by the same 1/(1 - fc/FcE) term:
    mechanics, Timoshenko & Gere ch. 1).
    The left side grows with P, so the root lies between 0 and the concentric capacity A Fc' (or
    the first pole of the amplifiers, if sooner). Multiplied by both amplifier denominators the
    equation becomes a quartic without poles; Illinois (modified regula falsi) steps on the
    bracket, vectorised; the lower end is returned, so the answer always satisfies the interaction.
    """
    a0 = 1.0 / (area * fc_prime) ** 2
    u1 = 1.0 / (area * fce1)
    u2 = 1.0 / (area * fce2)
    g1 = (bow1 + e1) / s1
    h1 = 0.234 * u1 * e1 / s1  # NDS 2018 Eq. 15.4-1: 0.234 fc/FcE
    g2 = (bow2 + e2) / s2
    h2 = 0.234 * u2 * e2 / s2
    k = np.where(np.isfinite(fbe), g1 / fbe, 0.0)  # (fb1 + fc 6e1/d1) / FbE = k P
    args = (a0, u1, u2, g1, h1, g2, h2, fb1p, fb2p, k)

    # bracket: without the amplifiers the equation is a quadratic whose root p0 is an upper bound;
    # with the amplifiers frozen at their p0 values (their largest below p0) its root p1 is a
    # lower bound. Also below the concentric capacity and the first pole (fc < FcE1; T2).
    def quad_root(bb):  # root of a0 x^2 + bb x - 1 = 0, stable form
        return 2.0 / (bb + np.sqrt(bb * bb + 4.0 * a0))

    p0 = quad_root(g1 / fb1p + g2 / fb2p)
    pole2 = 2.0 / (u2 + np.sqrt(u2 * u2 + 4.0 * k * k))
    hi = np.minimum(np.minimum(np.minimum(area * fc_prime, 1.0 / u1), pole2), p0)
    den1, den2 = 1.0 - u1 * hi, 1.0 - u2 * hi - (k * hi) ** 2
    with np.errstate(divide="ignore", invalid="ignore"):
        p1 = quad_root((g1 + h1 * hi) / (fb1p * den1) + (g2 + h2 * hi) / (fb2p * den2))
    lo = np.where((den1 > 0) & (den2 > 0) & (p1 < hi), p1, 0.0)
    flo = _interaction(lo, *args)
    np.copyto(lo, 0.0, where=flo > 0)  # rounding guard: keep lo on the safe side
    np.copyto(flo, -1.0, where=flo > 0)
    fhi = _interaction(hi, *args)
    out = lo  # the answer; the loop works on the posts still open and writes back when they close
    idx = np.arange(area.shape[0])
    prev_lo = np.zeros(area.shape, dtype=bool)  # the last step moved lo
    prev_hi = np.zeros(area.shape, dtype=bool)
    for _ in range(ECC_ITERATIONS):
        with np.errstate(divide="ignore", invalid="ignore"):
            x = (lo * fhi - hi * flo) / (fhi - flo)  # regula falsi
        mid = 0.5 * (lo + hi)
        np.copyto(x, mid, where=~((x > lo) & (x < hi)))  # outside the bracket or NaN: bisect
        fx = _interaction(x, *args)
        neg = fx <= 0.0
        pos = ~neg
        np.copyto(lo, x, where=neg)
        np.copyto(flo, fx, where=neg)
        np.copyto(hi, x, where=pos)
        np.copyto(fhi, fx, where=pos)
        np.multiply(fhi, 0.5, out=fhi, where=neg & prev_lo)  # Illinois: same end kept twice
        np.multiply(flo, 0.5, out=flo, where=pos & prev_hi)
        prev_lo, prev_hi = neg, pos
        # a post stops as soon as its own bracket is tight, so its answer never depends on which
        # other posts share the batch (the single-post path gives the same number)
        done = hi - lo <= ECC_RTOL * hi
        if done.all():
            break
        if done.any():
            out[idx[done]] = lo[done]
            keep = ~done
            idx, lo, hi, flo, fhi = idx[keep], lo[keep], hi[keep], flo[keep], fhi[keep]
            prev_lo, prev_hi = prev_lo[keep], prev_hi[keep]
            args = tuple(a[keep] for a in args)
    out[idx] = lo
    return out


def _beam_stability(fbe: np.ndarray, fb_star: np.ndarray, deep: np.ndarray) -> np.ndarray:
    """CL (NDS 2018 Eq. 3.3-6) where the post is deep (d1 > 2 d2), else 1.0."""
    with np.errstate(divide="ignore", invalid="ignore"):
        r = fbe / fb_star
        hh = (1.0 + r) / 1.9
        return np.where(deep, hh - np.sqrt(hh * hh - r / 0.95), 1.0)  # NDS 2018 Eq. 3.3-6


def eccentric_at(b: PostBatch, v: dict, idx: np.ndarray, cp, fc_star, time_fb) -> np.ndarray:
    """The eccentric capacity of posts ``idx`` of a rated block (every one of them checked) at
    another load combination: its Cp and Fc* (column.capacity_at) and the duration part of Fb*
    ``time_fb``; the steps of add_checks, in the same order (engine/combinations.py)."""
    kappa = b.knowledge.take(idx)
    fb_star = v["fb_untimed"].take(idx) * time_fb
    deep = b.d1_mm.take(idx) > 2.0 * b.d2_mm.take(idx)
    fbe = v["fbe"].take(idx)
    cl = _beam_stability(fbe, fb_star, deep)
    return eccentric_capacity(
        v["area"].take(idx),
        v["s1"].take(idx),
        v["s2"].take(idx),
        v["ecc1"].take(idx),
        v["ecc2"].take(idx),
        v["bow1"].take(idx),
        v["bow2"].take(idx),
        cp * fc_star * kappa,
        fb_star * cl * kappa,
        fb_star * kappa,
        v["fce1"].take(idx),
        v["fce2"].take(idx),
        fbe,
    )


ECC_FIELDS = ("offset1_mm", "offset2_mm", "bow1_mm", "bow2_mm", "plumb1_mm", "plumb2_mm")


def _block_has_eccentricity(b: PostBatch, v: dict) -> bool:
    """Any load offset, bow, lean, centroid shift or partial contact in this block."""
    return (
        any((np.abs(distinct(getattr(b, f))) > 0).any() for f in ECC_FIELDS)  # NaN: none
        or bool((distinct(b.end_contact) < 1.0).any())
        or bool((distinct(v["shift1"]) != 0).any())
        or bool((distinct(v["shift2"]) != 0).any())
    )


def eccentricities(b: PostBatch, values: dict) -> tuple[np.ndarray, ...]:
    """(e1, e2, bow1, bow2) in mm: end eccentricity per axis and the mid-height bow per axis.

    End eccentricity adds (all taken in the same sense, conservative): the load off-centre on the
    cap; the centroid shift of one-sided loss; partial end contact, (1 - contact) d2 / 2 about the
    weak axis (judgement: the patch taken against one wide face); and for a sway post (a top or
    bottom free to move sideways) the lean over the height (P-delta; the sway Ke in FcE gives the
    amplification, Timoshenko & Gere ch. 1, initially curved bar). A post held at both ends gains no
    bending from its lean.
    """
    sway = values["sway"]
    contact = np.clip(b.end_contact, 0.0, 1.0)
    e1 = (
        np.abs(_nz(b.offset1_mm))
        + np.abs(values["shift1"])
        + np.where(sway, np.abs(_nz(b.plumb1_mm)), 0.0)
    )
    e2 = (
        np.abs(_nz(b.offset2_mm))
        + np.abs(values["shift2"])
        + (1.0 - contact) * 0.5 * b.d2_mm
        + np.where(sway, np.abs(_nz(b.plumb2_mm)), 0.0)
    )
    return e1, e2, np.abs(_nz(b.bow1_mm)), np.abs(_nz(b.bow2_mm))


def add_checks(b: PostBatch, checks: dict, values: dict) -> None:
    """Add the 'eccentric' and 'net_section' checks (NaN where they do not apply)."""
    v = values
    n = b.n
    load = b.load_n
    kappa = b.knowledge
    nds_m = b.method != EC5
    lrfd = b.method == LRFD
    # ---- net section away from mid-height (NDS 2018 §3.6.3 as remembered [M]) -----------------
    nan = filled(np.nan, n)
    m_net = nds_m & (v["area_net"] < v["area"])
    p_net = np.where(m_net, v["fc_star"] * v["area_net"] * kappa, nan) if m_net.any() else nan
    checks["net_section"] = Check(
        "net_section",
        "crushing of the net section (loss near an end)",
        "NDS 2018 §3.6.3, §3.7.1",
        p_net,
        load,
    )
    # ---- eccentric load and bow (NDS 2018 §3.9.2, §15.4.1) ------------------------------------
    if not _block_has_eccentricity(b, v):  # centred, straight, full contact: no combined check
        zero = filled(0.0, n)
        no = filled(False, n)
        checks["eccentric"] = Check(
            "eccentric",
            "combined axial load and bending (eccentricity, bow)",
            "NDS 2018 §3.9.2, §15.4.1",
            nan,
            load,
        )
        v.update(
            ecc1=zero,
            ecc2=zero,
            bow1=zero,
            bow2=zero,
            fb_star=nan,
            fbe=nan,
            cl=nan,
            ecc_checked=no,
            ecc_wanted=no,
        )
        return
    gross_bending_properties(b, v)
    e1, e2, bow1, bow2 = eccentricities(b, v)
    time_fb = np.where(lrfd, nds.KF_FB * nds.PHI_B * b.lam, b.cd)
    cm_fb = nds.wet_bending_factor(
        b.product, b.fb_mpa, b.cf_fb, v["wet"], b.wet_tabulated, b.class_unknown
    )
    # every factor but the duration one, which goes last (another combination changes only it)
    fb_untimed = b.fb_mpa * cm_fb * v["ct_f"] * b.cf_fb * v["ci_f"] * v["sr_bending"]
    fb_star = fb_untimed * time_fb
    # lateral-torsional buckling only for d1/d2 > 2 (NDS 2018 §4.4.1: CL = 1.0 up to 2, from memory)
    deep = b.d1_mm > 2.0 * b.d2_mm
    rb2 = LE_BENDING * v["lu1"] * b.d1_mm / (b.d2_mm * b.d2_mm)  # RB^2 (NDS 2018 §3.3.3)
    fbe = np.where(deep, 1.20 * v["emin_prime"] / rb2, np.inf)  # FbE (NDS 2018 §3.3.3)
    cl = _beam_stability(fbe, fb_star, deep)
    want = (e1 > 0) | (e2 > 0) | (bow1 > 0) | (bow2 > 0)
    m = want & nds_m & np.isfinite(fb_star) & (fb_star > 0) & (v["area"] > 0)
    p_ecc = np.full(n, np.nan)
    idx = np.flatnonzero(m)
    if idx.size:
        fc_prime = (v["cp"] * v["fc_star"] * kappa)[idx]
        p_ecc[idx] = eccentric_capacity(
            v["area"][idx],
            v["s1"][idx],
            v["s2"][idx],
            e1[idx],
            e2[idx],
            bow1[idx],
            bow2[idx],
            fc_prime,
            (fb_star * cl * kappa)[idx],
            (fb_star * kappa)[idx],
            v["fce1"][idx],
            v["fce2"][idx],
            fbe[idx],
        )
    checks["eccentric"] = Check(
        "eccentric",
        "combined axial load and bending (eccentricity, bow)",
        "NDS 2018 §3.9.2, §15.4.1",
        p_ecc,
        load,
    )
    v.update(
        ecc1=e1,
        ecc2=e2,
        bow1=bow1,
        bow2=bow2,
        fb_star=fb_star,
        fb_untimed=fb_untimed,
        fbe=fbe,
        cl=cl,
        ecc_checked=m,
        ecc_wanted=want,
    )


# =============================================================================================
# Flags, escalations, condition level
# =============================================================================================
# =============================================================================================
# Flags (in this order in the flag table), escalations, condition level
# =============================================================================================
# escalations: make safe now for what moves or has no section left; repair for decay found;
# monitor for a decay risk or a split (judgement, common practice, no source)
FLAGS = (
    Flag(
        "decay_risk",
        "Moisture 20 % or more: decay risk. Probe for decay and find the water source "
        "(judgement; most decay fungi need about 20 % MC).",
        escalates_to=1,
    ),
    Flag(
        "saturated",
        "Moisture 28 % or more: near fibre saturation the meter reads unreliably; treat "
        "the post as wet and probe it thoroughly (judgement).",
        escalates_to=1,
    ),
    Flag(
        "section_loss",
        "Section loss deducted: the checks use the residual section (decayed, insect-"
        "damaged and charred wood taken as having no strength).",
    ),
    Flag(
        "decay_found",
        "Decay or insect damage found: repair or brace before the due date and stop the "
        "water getting in; hidden decay may reach further than probed.",
        escalates_to=2,
    ),
    Flag(
        "sr_applied",
        "Knots or slope of grain reduce Fc and Fb by the lowest strength ratio "
        "(ASTM D245 principle, from memory); on a graded member they are deducted unless "
        "stated within its grade (give beyond_grade no).",
    ),
    Flag(
        "sr_not_applied",
        "Knots or slope recorded on a graded member and stated within its grade "
        "(beyond_grade no): not deducted, the grade allows for its own.",
    ),
    Flag(
        "slope_steep",
        "Slope of grain steeper than the published table (1 in 5 clear wood, 1 in 6 grading): "
        "outside the published data, so the strength is unknown and none is relied on; "
        "replace the member or have the engineer assess it.",
        escalates_to=2,
    ),
    Flag(
        "checks",
        "Seasoning checks: little effect on crushing; probe the bottom of deep checks for decay.",
    ),
    Flag(
        "split_through",
        "Through split in the middle part: the halves are taken as acting separately "
        "(I / 4 about one axis). Clamp or bolt it.",
        escalates_to=1,
    ),
    Flag(
        "split_opening",
        "Split opening under load: make safe now.",
        escalates_to=3,
    ),
    Flag(
        "end_split",
        "Split at an end: the halves may act separately near the end; clamp it or replace the "
        "post.",
        escalates_to=1,
    ),
    Flag(
        "crushed_end",
        "Crushed or broomed end: half of that end's area taken as bearing (judgement); "
        "re-wedge or pack it to full contact.",
        escalates_to=1,
    ),
    Flag(
        "crushing",
        "Crushing in progress: make safe now (clear the area, call the engineer).",
        escalates_to=3,
    ),
    Flag(
        "settling",
        "Sill or pad settling: make safe now (clear the area, call the engineer).",
        escalates_to=3,
    ),
    Flag(
        "moving",
        "Post leaning or moving more than before: make safe now.",
        escalates_to=3,
    ),
    Flag(
        "eccentric",
        "Eccentric load or bow: combined axial load and bending checked "
        "(NDS 2018 §3.9.2, §15.4.1; EN 1995-1-1 §6.3.2(3) for EC5 ratings).",
    ),
    Flag(
        "ecc_unchecked",
        "Eccentricity or bow recorded but the combined check was not made (no "
        "bending value Fb for this method): the capacity shown is for a centred load.",
    ),
    Flag(
        "lean_thrust",
        "Out of plumb with both ends held: no bending added, but the bracing and the "
        "end friction must carry H = P x lean / height.",
    ),
    Flag(
        "sw_suspect",
        "Stress-wave time 30 % or more above the sound reading: suspect decay; drill or "
        "probe there (threshold from memory).",
        escalates_to=1,
    ),
    Flag(
        "sw_advanced",
        "Stress-wave time 50 % or more above the sound reading: advanced decay likely "
        "(threshold from memory).",
        escalates_to=2,
    ),
    Flag(
        "no_section",
        "No sound section left at some height: the post cannot be relied on.",
        escalates_to=3,
    ),
    Flag(
        "data_level",
        "Knowledge factor set from the data-collection level given (ASCE 41, borrowed "
        "for gravity checks: judgement).",
    ),
)
SEVERE = ("split_opening", "crushing", "settling", "moving", "no_section")
MODERATE = (
    "section_loss",
    "decay_found",
    "sw_advanced",
    "sr_applied",
    "split_through",
    "end_split",
    "crushed_end",
    "eccentric",
    "ecc_unchecked",
    "slope_steep",
)
MINOR = ("decay_risk", "saturated", "sw_suspect", "checks", "sr_not_applied", "lean_thrust")


def stress_wave(b: PostBatch) -> dict[str, np.ndarray]:
    """Velocity v = path / time (m/s), E_d = rho v^2 (MPa; physics) and the
    ratio of the transit time to the sound reading on the same member and path."""
    with np.errstate(divide="ignore", invalid="ignore"):
        v = b.sw_path_mm / b.sw_time_us * 1000.0  # mm/us = 1000 m/s
        ed = b.density_kgm3 * v * v / 1e6  # Pa -> MPa
        ratio = b.sw_time_us / b.sw_sound_us
    return {"sw_velocity": v, "sw_ed_mpa": ed, "sw_ratio": ratio}


def condition_flags(b: PostBatch, values: dict, flag: FlagSet) -> None:
    """The condition's flags, and values['condition'] (0-3, what was seen)."""
    v = values

    mc = b.moisture_pct  # NaN compares False
    flag("decay_risk", mc >= MC_DECAY_RISK)
    flag("saturated", mc >= MC_SATURATED)
    # fields nobody gave hold one value for the whole block: distinct() tests that one value
    # (a mask of length one stands for the block), so the flags of a plain block cost little
    u = distinct
    flag("section_loss", u(v["loss"]))
    if _block_has_loss(b):
        decay = (
            _nz(b.decay_1p_mm)
            + _nz(b.decay_1m_mm)
            + _nz(b.decay_2p_mm)
            + _nz(b.decay_2m_mm)
            + _nz(b.hollow_mm)
        ) > 0
        flag("decay_found", decay)
    flag("sr_applied", u(v["strength_ratio"]) < 1.0)
    flag("sr_not_applied", u(v["sr_recorded"]) & ~u(b.sr_applies))
    flag("slope_steep", u(v["slope_beyond_table"]))
    split = u(b.split)
    flag("checks", split == SPLIT_CHECK)
    if (split >= SPLIT_THROUGH).any():
        at_end = (b.split_zone == TOP) | (b.split_zone == BOTTOM)
        flag("split_through", (b.split >= SPLIT_THROUGH) & ~at_end)
        flag("end_split", (b.split >= SPLIT_THROUGH) & at_end)
    flag("split_opening", split == SPLIT_OPENING)
    flag("crushed_end", u(b.crushed_end) > 0)
    flag("crushing", u(b.crushing_active))
    flag("settling", u(b.settling_sill))
    flag("moving", u(b.post_moving))
    flag("eccentric", u(v["ecc_checked"]))
    flag("ecc_unchecked", u(v["ecc_wanted"]) & ~u(v["ecc_checked"]))
    leaning = (np.abs(u(b.plumb1_mm)) > 0) | (np.abs(u(b.plumb2_mm)) > 0)  # NaN: none
    if leaning.any():
        flag("lean_thrust", ~v["sway"] & leaning)
    if np.isnan(b.sw_time_us).all():  # no stress-wave readings in this block
        nan = filled(np.nan, b.n)
        sw = {"sw_velocity": nan, "sw_ed_mpa": nan, "sw_ratio": nan}
    else:
        sw = stress_wave(b)
    v.update(sw)
    ratio = u(sw["sw_ratio"])
    flag("sw_advanced", ratio >= u(b.sw_advanced))
    flag("sw_suspect", (ratio >= u(b.sw_suspect)) & ~(ratio >= u(b.sw_advanced)))
    no_section = v["area"] <= 0  # a sound block: the areas are all the gross area
    if _block_has_loss(b):
        no_section = (
            no_section | (v["area_net"] <= 0) | (v["area_top"] <= 0) | (v["area_bottom"] <= 0)
        )
    flag("no_section", no_section)
    flag("data_level", u(b.data_level) >= 0)
    level = np.zeros(b.n, dtype=np.int8)
    flags = flag.flags
    if not flags.any():
        v["condition"] = level
        return
    present = int(np.bitwise_or.reduce(flags))  # every flag raised in the block
    for lv, names in ((1, MINOR), (2, MODERATE), (3, SEVERE)):
        bits = flag.mask(*names)
        if bits & present:
            at_least(level, lv, (flags & bits) != 0)
    v["condition"] = level


# =============================================================================================
# Per post, on demand: reductions (for --json), working lines
# =============================================================================================
def reductions(r, i: int) -> list[dict]:
    """Each reduction applied to post i, in order, with its factor and clause."""
    b, v = r.batch, r.values
    out: list[dict] = []

    def add(what: str, detail: str, factor: float | None, clause: str) -> None:
        out.append(
            {
                "reduction": what,
                "detail": detail,
                "factor": None if factor is None else round(float(factor), 6),
                "clause": clause,
            }
        )

    gross = float(v["area_gross"][i])
    ec5 = int(b.method[i]) == EC5  # EN 1995-1-1 clauses in place of the NDS ones
    if bool(v["loss"][i]):
        add(
            "residual section, middle part",
            f"area {v['area'][i] / gross:.3f} of gross; d_eff {q.length(v['d_eff1'][i])} x "
            f"{q.length(v['d_eff2'][i])}; centroid shift {q.length(v['shift1'][i])}, "
            f"{q.length(v['shift2'][i])}; decay margin {q.length(b.decay_margin_mm[i])}"
            " (judgement)",
            v["area"][i] / gross,
            "common practice: decayed wood has no strength; char + 7 mm (EN 1995-1-2 §4.2.2, "
            "from memory); "
            + (
                "EN 1995-1-1 §6.3.2 on the residual section"
                if ec5
                else "NDS 2018 §3.6.3 (from memory)"
            ),
        )
        add(
            "net section (all losses together)",
            f"area {v['area_net'][i] / gross:.3f} of gross",
            v["area_net"][i] / gross,
            "EN 1995-1-1 §6.1.4 on the net section" if ec5 else "NDS 2018 §3.6.3 as remembered",
        )
    for end, key in (("top", "a_top"), ("bottom", "a_bottom")):
        f = v[key][i] / gross
        if f < 1.0:
            add(
                f"bearing area at the {end}",
                "residual end area x contact share"
                + (
                    " x 0.5 crushed end (judgement)"
                    if b.crushed_end[i] & (1 if end == "top" else 2)
                    else ""
                ),
                f,
                ("EN 1995-1-1 §6.1.4, §6.1.5" if ec5 else "NDS 2018 §3.10.1")
                + "; judgement for partial contact",
            )
    if int(v["split_axis"][i]):
        add(
            "through split",
            f"halves act separately: I about axis {int(v['split_axis'][i])} / 4",
            0.25,
            "mechanics: two halves acting separately, I / 4",
        )
    if v["strength_ratio"][i] < 1.0 or v["sr_bending"][i] < 1.0:
        tname = SLOPE_TABLES[int(b.slope_table[i])]
        src = (
            "ASTM D245 grading table, from memory"
            if tname == "grading"
            else "Wood Handbook Table 5-12"
        )
        parts = []
        if _nz(b.knot_mm[i : i + 1])[0] > 0:
            parts.append(
                f"knot {q.length(b.knot_mm[i])} on a {FACE_NAMES[int(b.knot_face[i])]} face: "
                f"{v['sr_knot'][i]:.3f}"
            )
        if np.isfinite(b.slope_n[i]):
            parts.append(
                f"slope 1 in {b.slope_n[i]:g} ({tname} table, {src}): {v['sr_slope'][i]:.3f}"
            )
        add(
            f"strength ratio on {'f_c,0,k' if ec5 else 'Fc'} (lowest, not the product)",
            "; ".join(parts),
            v["strength_ratio"][i],
            "ASTM D245 principle (from memory); Wood Handbook Table 5-12",
        )
        add(
            f"strength ratio on {'f_m,k' if ec5 else 'Fb'}",
            "lowest of knot and slope (bending column)",
            v["sr_bending"][i],
            "ASTM D245 principle (from memory)",
        )
    if v["cm_fc"][i] < 1.0 and int(b.method[i]) != EC5:  # EC5: the service class does it
        unknown = bool(b.class_unknown[i])
        add(
            "wet service CM on Fc",
            f"moisture {b.moisture_pct[i]:.0f} %"
            + (", grading class not known: the lowest CM of any class" if unknown else ""),
            v["cm_fc"][i],
            "NDS Supplement; judgement (class not known)" if unknown else "NDS Supplement",
        )
    if b.knowledge[i] < 1.0:
        lvl = int(b.data_level[i])
        basis = DATA_LEVELS[lvl] if lvl >= 0 else "default values (species or grade unknown)"
        add(
            "knowledge factor kappa",
            f"data collection: {basis}",
            b.knowledge[i],
            "ASCE 41 (secondary); judgement",
        )
    ecc = r.checks.get("eccentric")
    if ecc is not None and np.isfinite(ecc.capacity_n[i]):
        col = r.checks["column"].capacity_n[i]
        add(
            "eccentricity and bow",
            f"e1 {q.length(v['ecc1'][i])}, e2 {q.length(v['ecc2'][i])}, "
            f"bow {q.length(v['bow1'][i])}, {q.length(v['bow2'][i])}",
            ecc.capacity_n[i] / col,
            "EN 1995-1-1 §6.3.2(3), §10.2" if ec5 else "NDS 2018 §3.9.2, §15.4.1",
        )
    return out


def summary_keys(r, i: int, out: dict) -> None:
    """Summary hook: what was seen (condition), the reductions, the stress-wave readings."""
    v = r.values
    lvl = int(v["condition"][i])
    out["condition"] = CONDITIONS[lvl]
    out["condition_level"] = lvl
    out["urgency_days"] = out.get("due_days")
    out["reductions"] = reductions(r, i)
    if np.isfinite(v["sw_velocity"][i]):
        out["stress_wave"] = {
            "velocity_m_s": round(float(v["sw_velocity"][i]), 1),
            "dynamic_e_mpa": _num(v["sw_ed_mpa"][i]),
            "time_ratio": _num(v["sw_ratio"][i]),
            "note": "E_d is an indicator, not a design value (common practice)",
        }


def _num(x) -> float | None:
    x = float(x)
    return None if not np.isfinite(x) else round(x, 4)


def working_lines(r, i: int) -> list:
    """Working steps for the condition of post i."""
    b, v = r.batch, r.values
    s = []
    if bool(v["loss"][i]):
        s.append(
            Step(
                "Residual section (middle part): A, I1, I2",
                f"{v['area'][i]:,.0f} mm2, {v['res_i1'][i]:.4g} mm4, {v['res_i2'][i]:.4g} mm4",
                "common practice: decayed and charred wood has no strength",
            )
        )
        s.append(
            Step(
                "d_eff = sqrt(12 I / A) per axis",
                f"{q.length(v['d_eff1'][i])}, {q.length(v['d_eff2'][i])}",
                "mechanics; used for λ (EN 1995-1-1 §6.3.2)"
                if b.method[i] == EC5
                else "mechanics; NDS 2018 §3.6.3 net section in Cp [M]",
            )
        )
        ec5 = b.method[i] == EC5
        s.append(
            Step(
                "Net section (all losses) / end area at the top / at the bottom",
                f"{v['area_net'][i]:,.0f} / {v['area_top'][i]:,.0f} / {v['area_bottom'][i]:,.0f} "
                "mm2",
                "EN 1995-1-1 §6.1.4" if ec5 else "NDS 2018 §3.6.3 [M], §3.10.1",
            )
        )
    if int(v["split_axis"][i]):
        s.append(
            Step(
                "Through split: I / 4",
                f"axis {int(v['split_axis'][i])}",
                "mechanics: two halves acting separately",
            )
        )
    if v["sr_recorded"][i]:
        tname = SLOPE_TABLES[int(b.slope_table[i])]
        # the values the ratios reduce, as the method writes them (EC5: EN 338's symbols)
        fc, fb = ("f_c,0,k", "f_m,k") if b.method[i] == EC5 else ("Fc", "Fb")
        applied = (
            "applied" if b.sr_applies[i] else "not applied (graded member, stated within its grade)"
        )
        s.append(
            Step(
                f"Strength ratio, lowest of knot and slope ({tname} table), {applied}",
                f"{fc} x {v['strength_ratio'][i]:.4f}, {fb} x {v['sr_bending'][i]:.4f}",
                "ASTM D245 principle (from memory); "
                + (
                    "ASTM D245 slope table (from memory)"
                    if tname == "grading"
                    else "Wood Handbook Table 5-12"
                ),
            )
        )
    if b.material_assumed[i] or b.data_level[i] >= 0:
        lvl = int(b.data_level[i])
        s.append(
            Step(
                "Knowledge factor kappa"
                + (
                    f" (data level {DATA_LEVELS[lvl]})"
                    if lvl >= 0
                    else " (default values: species or grade unknown)"
                ),
                f"{b.knowledge[i]:.2f}",
                "ASCE 41 data collection (secondary); judgement",
            )
        )
    if v["ecc_checked"][i] and b.method[i] != EC5:  # EC5: in the EN 1995-1-1 working
        s.append(
            Step(
                "Eccentricity e1, e2; bow at mid-height",
                f"{q.length(v['ecc1'][i])}, {q.length(v['ecc2'][i])}; "
                f"{q.length(v['bow1'][i])}, {q.length(v['bow2'][i])}",
                "initially curved bar (Timoshenko & Gere ch. 1); judgement",
            )
        )
        s.append(
            Step(
                "Fb* (Fb x factors x strength ratio), CL, FbE",
                f"{v['fb_star'][i]:.3f} MPa, {v['cl'][i]:.4f}, {v['fbe'][i]:.4g} MPa",
                "NDS 2018 §3.3.3",
            )
        )
    if np.isfinite(v["sw_velocity"][i]):
        s.append(
            Step(
                "Stress wave: v = path / time; E_d = rho v^2; time / sound time",
                f"{v['sw_velocity'][i]:,.0f} m/s; {v['sw_ed_mpa'][i]:,.0f} MPa; "
                f"{v['sw_ratio'][i]:.2f}",
                "stress-wave timing practice (thresholds from memory)",
            )
        )
    s.append(
        Step(
            "Condition (what was seen)",
            CONDITIONS[int(v["condition"][i])],
            "judgement: what was seen, kept apart from the action",
        )
    )
    return s


def bench_fields(
    rng: np.random.Generator, n: int, d1: np.ndarray, d2: np.ndarray
) -> dict[str, np.ndarray]:
    """Every condition input in use, for bench/engine.py --conditions."""
    u = rng.uniform
    return {
        "decay_1p_mm": u(0, 0.1, n) * d1,
        "decay_2p_mm": u(0, 0.1, n) * d2,
        "decay_2m_mm": u(0, 0.05, n) * d2,
        "decay_zone": rng.integers(0, 4, n),
        "hollow_mm": u(0, 0.2, n) * d2,
        "char_1m_mm": u(0, 10, n),
        "char_zone": rng.integers(0, 4, n),
        "wane_mm": u(0, 10, n),
        "wane_corners": rng.integers(0, 5, n),
        "notch_mm": u(0, 0.1, n) * d2,
        "notch_face": rng.integers(0, 2, n),
        "notch_z_mm": u(0, 2000, n),
        "hole_mm": u(0, 0.1, n) * d2,
        "hole_face": rng.integers(0, 2, n),
        "hole_z_mm": u(0, 2000, n),
        "knot_mm": u(0, 0.3, n) * d2,
        "knot_face": rng.integers(0, 2, n),
        "slope_n": u(4, 30, n),
        "slope_table": rng.integers(0, 2, n),
        "split": rng.integers(0, 3, n),
        "split_faces": rng.integers(0, 3, n),
        "crushed_end": rng.integers(0, 4, n),
        "bow1_mm": u(0, 20, n),
        "bow2_mm": u(0, 20, n),
        "plumb1_mm": u(0, 30, n),
        "plumb2_mm": u(0, 30, n),
        "offset1_mm": u(0, 15, n),
        "offset2_mm": u(0, 15, n),
        "fb_mpa": u(5, 10, n),
        "sw_time_us": u(300, 900, n),
        "sw_path_mm": d2,
        "sw_sound_us": np.full(n, 400.0),
        "density_kgm3": u(400, 600, n),
        "end_contact": u(0.6, 1.0, n),
    }


CONDITION = Stage(
    name="condition",
    inputs=(
        *LOSS_FIELDS,
        *ECC_FIELDS,
        "split",
        "split_zone",
        "crushed_end",
        "crushing_active",
        "settling_sill",
        "post_moving",
        "moisture_pct",
        "sr_applies",
        "sw_time_us",
        "sw_path_mm",
        "sw_sound_us",
        "density_kgm3",
        "sw_suspect",
        "sw_advanced",
        "data_level",
    ),
    checks=("net_section", "eccentric"),
    flags=FLAGS,
    run=add_checks,
    raise_flags=condition_flags,
    summary=summary_keys,
    steps=working_lines,
)
