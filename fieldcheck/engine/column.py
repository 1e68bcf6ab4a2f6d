"""The end-conditions stage and the column stage (NDS 2018 Chapter 3, Appendix G).

``ENDS``: end conditions -> Ke per axis (NDS 2018 Appendix G), spring-restrained ends and braced
posts that sway solved exactly (spring_ends.py, stability.py), unbraced lengths.

``COLUMN``: the adjusted design values (NDS 2018 Table 4.3.1), the residual section of the post
as found (condition.residual), column stability (NDS 2018 §3.7.1; built-up §15.3), end-grain
bearing (§3.10.1) and bearing across the grain of the cap and sill (§3.10.2, §3.10.4); its flags
are the rating's general warnings (load, slenderness, moisture, material, ends).
"""

from __future__ import annotations

import numpy as np

from fieldcheck.engine import condition, nds, spring_ends
from fieldcheck.engine.batch import EC5, LRFD, PostBatch
from fieldcheck.engine.bearing_area import bearing_length
from fieldcheck.engine.blocks import distinct, filled, is_one, prod, scaled
from fieldcheck.engine.restraint import end_pair, modes_of_pairs
from fieldcheck.engine.result import Check
from fieldcheck.engine.stage import Flag, FlagSet, Stage


def _unbraced(lu: np.ndarray, h: np.ndarray, sway: np.ndarray) -> np.ndarray:
    """Unbraced length: the given one, or the full height where none is given or the ends sway."""
    if np.isnan(distinct(lu)).all():
        return h.copy()  # a fresh array: braced solutions write into it
    return np.where(sway | np.isnan(lu), h, lu)


def _axis_ke(
    ke_given: np.ndarray, braced: np.ndarray, sway: np.ndarray, k_ends: np.ndarray
) -> np.ndarray:
    """Ke about one axis: as given; 1.0 between brace points of a no-sway post; else the ends."""
    if np.isnan(distinct(ke_given)).all() and not distinct(braced).any():
        return k_ends.copy()
    return np.where(np.isnan(ke_given), np.where(braced & ~sway, 1.0, k_ends), ke_given)


def run_ends(b: PostBatch, checks: dict, values: dict) -> None:
    """Effective length factors and unbraced lengths (NDS 2018 §3.7.1.2, Appendix G)."""
    n = b.n
    theoretical = distinct(b.theoretical_k)  # one answer for the block: one value
    mode, sway, k_ends = modes_of_pairs(
        end_pair(b.bottom, b.top), theoretical[0] if theoretical.size == 1 else theoretical
    )
    k_solved = np.full(n, np.nan)
    if np.isnan(distinct(b.r_top)).all() and np.isnan(distinct(b.r_bottom)).all():
        springs = filled(False, n)  # no spring-restrained end in the block
    else:
        springs = ~(np.isnan(b.r_top) & np.isnan(b.r_bottom))
    if springs.any():  # spring-restrained ends: K solved numerically (stability.py)
        idx = np.flatnonzero(springs)
        kd, ks, sway_s = spring_ends.spring_ke(b, idx)
        k_ends[idx], k_solved[idx], sway[idx] = kd, ks, sway_s
        mode[idx] = np.where(np.isnan(kd), -1, spring_ends.SPRING_MODE)
    h = b.height_mm
    lu1 = _unbraced(b.lu1_mm, h, sway)
    lu2 = _unbraced(b.lu2_mm, h, sway)
    # between brace points a braced (no-sway) segment is taken as pinned-pinned, Ke = 1.0
    ke1 = _axis_ke(b.ke1, b.braced1, sway, k_ends)
    ke2 = _axis_ke(b.ke2, b.braced2, sway, k_ends)
    # braces on a post that sways or has spring ends: solved with the braces (stability.py), K
    # over the full height, with the NDS margins of the bracketing ideal cases (design_k)
    braced_solved = np.zeros(n, dtype=bool)
    if distinct(b.braced1).any() or distinct(b.braced2).any():
        solve_braced = (
            (b.braced1 | b.braced2) & (sway | springs) & np.isnan(b.ke1) & np.isnan(b.ke2)
        )
    else:
        solve_braced = filled(False, n)  # no braces in the block: nothing to solve
    if solve_braced.any():
        for axis, ke_ax, lu_ax, braced_ax in ((1, ke1, lu1, b.braced1), (2, ke2, lu2, b.braced2)):
            idx = np.flatnonzero(solve_braced & braced_ax)
            if idx.size:
                kd, _ = spring_ends.braced_ke(b, idx, axis)
                good = ~np.isnan(kd)
                ke_ax[idx[good]], lu_ax[idx[good]] = kd[good], h[idx[good]]
                braced_solved[idx[good]] = True
    values.update(
        mode=mode,
        sway=sway,
        k_solved=k_solved,
        ke1=ke1,
        ke2=ke2,
        lu1=lu1,
        lu2=lu2,
        braced_solved=braced_solved,
    )


ENDS = Stage(
    name="ends",
    inputs=(
        "top",
        "bottom",
        "theoretical_k",
        "r_top",
        "r_bottom",
        "height_mm",
        "lu1_mm",
        "lu2_mm",
        "ke1",
        "ke2",
        "braced1",
        "braced2",
    ),
    checks=(),
    flags=(),
    run=run_ends,
)


def run_column(b: PostBatch, checks: dict, values: dict) -> None:
    """Adjusted values, the residual section, column stability and bearing at both ends."""
    n = b.n
    lrfd = b.method == LRFD
    measured = ~np.isnan(b.moisture_pct)
    wet = measured & (b.moisture_pct > 19.0)  # NDS Supplement: dry service is 19 % or less

    # ---- adjusted design values (NDS 2018 Table 4.3.1) --------------------------------------
    # a factor of exactly 1.0 for the whole block is the shared filled(1.0, n): prod skips it
    one = filled(1.0, n)
    if wet.any():
        cm_fc, cm_e = nds.wet_service_factors(
            b.product, b.fc_mpa, b.cf_fc, wet, b.wet_tabulated, b.class_unknown
        )
    else:
        cm_fc = cm_e = one
    if np.isnan(b.temp_c).all():
        ct_f = ct_e = one
    else:
        ct_f, ct_e = nds.temperature_factors(b.temp_c, wet)
    ci_f, ci_e = nds.incising_factors(b.incised) if b.incised.any() else (one, one)
    # ASD: x CD (NDS 2018 §2.3.2); LRFD: x KF phi lambda (NDS 2018 Appendix N)
    any_lrfd = bool(lrfd.any())
    time_fc = np.where(lrfd, nds.KF_FC * nds.PHI_C * b.lam, b.cd) if any_lrfd else b.cd
    fc_untimed = prod(b.fc_mpa, cm_fc, ct_f, b.cf_fc, ci_f)  # all but the duration factor
    fc_star = prod(fc_untimed, time_fc)  # NDS 2018 §3.7.1: Fc*
    emin_p = prod(
        b.emin_mpa,
        cm_e,
        ct_e,
        ci_e,
        np.where(lrfd, nds.KF_EMIN * nds.PHI_S, 1.0) if any_lrfd else one,
    )
    ke1, ke2, lu1, lu2 = values["ke1"], values["ke2"], values["lu1"], values["lu2"]

    # ---- the post as found: residual section and strength ratios (engine/condition.py) ------
    # loss in the middle part enters the stability check through d_eff = sqrt(12 I / A);
    # knots and slope reduce Fc* by the lowest strength ratio (exactly 1.0 and d for a sound post)
    le1, le2 = ke1 * lu1, ke2 * lu2  # effective lengths
    cond = condition.residual(b, le1, le2)
    fc_star = prod(fc_star, cond["strength_ratio"])
    le_d1 = le1 / cond["d_eff1"]
    le_d2 = le2 / cond["d_eff2"]

    # ---- column stability (NDS 2018 §3.7.1; built-up §15.3) ---------------------------------
    c = nds.C_BY_PRODUCT.take(b.product.astype(np.intp))
    fce1, fce2 = nds.euler_stresses(emin_p, le_d1, le_d2)
    cp1, cp2, axis2, cp = _stability(fce1, fce2, fc_star, c, b.kf)
    area = cond["area"]  # residual area of the middle part (NDS 2018 §3.6.3 as remembered [M])
    kappa = b.knowledge
    p_column = scaled(cp * fc_star * area, kappa)

    # ---- end-grain bearing on the post (NDS 2018 §3.10.1) ------------------------------------
    # each end's residual area x contact share; a crushed or broomed end bears on part of it
    crushed = b.crushed_end.any()
    a_top = prod(
        cond["area_top"],
        b.end_contact,
        np.where(b.crushed_end & 1, condition.CRUSHED_AREA, 1.0) if crushed else one,
    )
    a_bot = prod(
        cond["area_bottom"],
        b.end_contact,
        np.where(b.crushed_end & 2, condition.CRUSHED_AREA, 1.0) if crushed else one,
    )
    a_contact = np.minimum(a_top, a_bot)
    p_end = scaled(fc_star * a_contact, kappa)

    # ---- bearing perpendicular to grain on the cap and the sill (NDS 2018 §3.10.2, §3.10.4) --
    # CD does not apply to Fc-perp (NDS 2018 Table 2.3.2 footnote); LRFD KF phi (Appendix N);
    # lambda on Fc-perp applied only where it reduces (judgement: not verified).
    perp_time = (
        np.where(lrfd, nds.KF_FCP * nds.PHI_FCP * np.minimum(b.lam, 1.0), 1.0) if any_lrfd else one
    )
    cm_bear = np.where(b.bearing_wet, 0.67, 1.0) if b.bearing_wet.any() else one
    # bearing length lb along the cap's or sill's grain: the post's width d1 unless given, and
    # never more than the post (it bears only where it stands). It sets Cb and the bearing area
    # (NDS 2018 §3.10.4: Cb for lb < 6 in; §3.10.2: fc-perp = P / bearing area): the post's end
    # area x lb / d1 (NaN compares False: the post's width)
    lb_top, share_top = bearing_length(b.top_lb_mm, b.d1_mm, one)
    lb_bot, share_bot = bearing_length(b.bottom_lb_mm, b.d1_mm, one)
    ratio_top = nds.bearing_area_ratio(lb_top)
    ratio_bot = ratio_top if lb_bot is lb_top else None  # both the post's width: once
    cb_top = nds.bearing_area_factor(lb_top, b.top_cb, ratio_top)
    cb_bot = nds.bearing_area_factor(lb_bot, b.bottom_cb, ratio_bot)
    p_cap = prod(b.top_fc_perp_mpa, cm_bear, ct_f, perp_time, cb_top, a_top, share_top)
    p_sill = prod(b.bottom_fc_perp_mpa, cm_bear, ct_f, perp_time, cb_bot, a_bot, share_bot)

    load = b.load_n
    checks["column"] = Check(
        "column", "column buckling and crushing", "NDS 2018 §3.7.1", p_column, load
    )
    checks["end_bearing"] = Check(
        "end_bearing", "end-grain bearing of the post", "NDS 2018 §3.10.1", p_end, load
    )
    checks["cap_bearing"] = Check(
        "cap_bearing", "bearing on the cap or beam above", "NDS 2018 §3.10.2, §3.10.4", p_cap, load
    )
    checks["sill_bearing"] = Check(
        "sill_bearing",
        "bearing on the sill or plate below",
        "NDS 2018 §3.10.2, §3.10.4",
        p_sill,
        load,
    )
    values.update(
        fc_star=fc_star,
        fc_untimed=fc_untimed,
        emin_prime=emin_p,
        cm_fc=cm_fc,
        cm_e=cm_e,
        ct_f=ct_f,
        ct_e=ct_e,
        ci_f=ci_f,
        ci_e=ci_e,
        time_fc=time_fc,
        le_d1=le_d1,
        le_d2=le_d2,
        fce1=fce1,
        fce2=fce2,
        cp1=cp1,
        cp2=cp2,
        cp=cp,
        c=c,
        area=area,
        axis=np.add(axis2, 1, dtype=np.int8),
        cb_top=cb_top,
        cb_bot=cb_bot,
        perp_time=perp_time,
        cm_bear=cm_bear,
        a_contact=a_contact,
        a_top=a_top,
        a_bottom=a_bot,
        wet=wet,
    )
    values.update(cond)
    values["area"] = area


def _stability(fce1, fce2, fc_star, c, kf):
    """(Cp1, Cp2, axis 2 governs, Cp) about both axes (NDS 2018 §3.7.1; built-up §15.3.2: Kf
    on Cp2). A Kf of exactly 1.0 throughout is not multiplied; Cp is the smaller of the two
    (np.minimum: the same value as choosing it), Cp1 where either is NaN (as chosen)."""
    two_c = 2.0 * c
    cp1 = nds.column_stability_factor(fce1, fc_star, c, two_c)
    cp2 = nds.column_stability_factor(fce2, fc_star, c, two_c)
    cp2 = scaled(cp2, kf)  # NDS 2018 §15.3.2: Kf
    axis2 = cp2 < cp1
    if np.isnan(cp2).any():
        return cp1, cp2, axis2, np.where(axis2, cp2, cp1)
    return cp1, cp2, axis2, np.minimum(cp1, cp2)


def capacity_at(b: PostBatch, v: dict, idx: np.ndarray, time_fc: np.ndarray):
    """(column capacity, Cp, Fc*) of posts ``idx`` of a rated block with the duration part of
    Fc* (CD, or KF phi lambda) replaced by ``time_fc``: the steps of run_column, in the same
    order, for another load combination (engine/combinations.py)."""

    def at(a):  # one value for the block (distinct): that value, else the posts' own
        d = distinct(a)
        return d[0] if d.shape[0] == 1 and a.shape[0] > 1 else a.take(idx)

    fc_star = at(v["fc_untimed"]) * time_fc
    sr = v["strength_ratio"]
    if not is_one(sr):
        fc_star = fc_star * at(sr)
    _, _, _, cp = _stability(at(v["fce1"]), at(v["fce2"]), fc_star, at(v["c"]), at(b.kf))
    return scaled(cp * fc_star * at(v["area"]), at(b.knowledge)), cp, fc_star


def column_flags(b: PostBatch, values: dict, flag: FlagSet) -> None:
    """The slenderness limit (NDS 2018 §3.7.1.4) and the rating's general warnings.

    Runs after every stage's checks: le/d is then the governing method's (EC5 included).
    """
    n = b.n
    le_d_max = np.maximum(values["le_d1"], values["le_d2"])
    con = distinct(b.construction)
    if con.size == 1 and n > 1:  # one answer for the block
        limit = filled(nds.LE_D_LIMIT_CONSTRUCTION if con[0] else nds.LE_D_LIMIT, n)
    else:
        limit = np.where(b.construction, nds.LE_D_LIMIT_CONSTRUCTION, nds.LE_D_LIMIT)
    values["le_d_max"], values["le_d_limit"] = le_d_max, limit

    load = b.load_n
    has_load = ~np.isnan(load)
    over = le_d_max > limit
    kappa = b.knowledge
    mode, sway = values["mode"], values["sway"]
    u = distinct  # a field nobody gave: its one value stands for the block (a mask of length one)
    flag("no_load", ~has_load)
    if u(b.construction).any():
        flag("slender_construction", b.construction & (le_d_max > nds.LE_D_LIMIT) & ~over)
    flag("slender_limit", over)
    # NDS 2018 §3.10.1.3: fc > 0.75 Fc* needs a steel plate (NaN load compares False)
    flag(
        "end_plate",
        ~u(b.end_plate)
        & (load > nds.END_BEARING_PLATE_RATIO * values["fc_star"] * values["a_contact"]),
    )
    flag("dry_assumed", np.isnan(b.moisture_pct))
    flag("wet", values["wet"] & (b.method != EC5))  # NDS wet service: never on an EC5 rating
    if (u(kappa) < 1.0).any():
        flag("assumed_material", (kappa < 1.0) & (b.material_assumed | (b.data_level < 0)))
    if u(b.material_assumed).any():  # never dropped by a data-collection level (judgement)
        flag("assumed_material", b.material_assumed)
    flag("cap_unchecked", np.isnan(u(b.top_fc_perp_mpa)))
    flag("sill_unchecked", np.isnan(u(b.bottom_fc_perp_mpa)))
    flag("theoretical_k", u(b.theoretical_k))
    if (u(b.braced1) | u(b.braced2)).any():
        flag("sway_braces", sway & (b.braced1 | b.braced2) & ~values["braced_solved"])
    flag("mechanism", mode == -1)
    flag("base_fixity", sway & (mode != -1))  # judgement: the K of a sway case needs the fixity
    flag("ends_assumed", u(b.ends_assumed))
    flag("duration_assumed", u(b.duration_assumed) & has_load)
    flag("built_up", u(b.kf) < 1.0)


COLUMN = Stage(
    name="column",
    inputs=(
        "method",
        "moisture_pct",
        "product",
        "fc_mpa",
        "emin_mpa",
        "cf_fc",
        "wet_tabulated",
        "class_unknown",
        "temp_c",
        "incised",
        "lam",
        "cd",
        "kf",
        "knowledge",
        "crushed_end",
        "end_contact",
        "bearing_wet",
        "top_lb_mm",
        "bottom_lb_mm",
        "d1_mm",
        "top_cb",
        "bottom_cb",
        "top_fc_perp_mpa",
        "bottom_fc_perp_mpa",
        "load_n",
        "construction",
        "end_plate",
        "material_assumed",
        "data_level",
        "theoretical_k",
        "braced1",
        "braced2",
        "duration_assumed",
        "ends_assumed",
    ),
    checks=("column", "end_bearing", "cap_bearing", "sill_bearing"),
    flags=(
        Flag(
            "no_load",
            "No load given: the capacity is shown at the load duration stated, else as for a "
            "permanent load (CD 0.9; LRFD lambda 0.6), the lowest; no decision can be made "
            "without the load.",
        ),
        Flag(
            "slender_construction",
            "le/d exceeds 50: admissible only as a construction-stage member (NDS 2018 §3.7.1.4 "
            "allows 75).",
        ),
        Flag(
            "slender_limit",
            "le/d exceeds the NDS 2018 §3.7.1.4 limit (50, or 75 during construction): brace it "
            "or replace it.",
        ),
        # a requirement of the NDS not met, not a failure: at least monitor (judgement)
        Flag(
            "end_plate",
            "End-grain bearing stress exceeds 0.75 Fc* with no steel plate recorded: bear the end "
            "on one (NDS 2018 §3.10.1.3); until then look at both ends for crushing or brooming "
            "at every visit.",
            1,
        ),
        Flag("dry_assumed", "Moisture not measured: dry service (19 % or less) assumed."),
        Flag(
            "wet",
            "Wet service: moisture above 19 %, wet-service factors CM applied (NDS Supplement).",
        ),
        Flag(
            "assumed_material",
            "Material unknown (species or grade): the lowest value of every species group and "
            "grade held for this size is used (No.3 and Stud included), with a knowledge factor "
            "on top (ASCE 41); a data-collection level may raise the factor, never the values.",
        ),
        Flag("cap_unchecked", "Bearing on the cap or beam above not checked: give what it is."),
        Flag("sill_unchecked", "Bearing on the sill or plate below not checked: give what it is."),
        Flag(
            "theoretical_k",
            "Theoretical K used instead of the NDS recommended design Ke, as you chose.",
        ),
        Flag(
            "sway_braces",
            "Braces ignored for a sway case (the ends can move sideways): full height used, "
            "conservative.",
        ),
        Flag(
            "mechanism",
            "The end conditions make a mechanism: the post cannot carry load as described.",
            escalates_to=3,
        ),
        Flag(
            "built_up",
            "Built-up post: Kf applied about the axis across the plies (NDS 2018 §15.3).",
        ),
        Flag(
            "base_fixity",
            "Sway case (flagpole or an end free to move sideways): the rating rests on the fixed "
            "end being truly fixed against rotation (NDS 2018 Appendix G); a base that can rotate "
            "makes the post a mechanism. Confirm the fixity (embedment, bolted base, moment "
            "connection) on site.",
        ),
        Flag(
            "ends_assumed",
            "End condition not stated (top, bottom or both): taken as pinned, held sideways and "
            "free to turn (NDS 2018 Appendix G). A post whose top can move sideways is far weaker "
            "(a flagpole: Ke 2.1): give --top and --bottom as seen.",
            escalates_to=1,  # judgement: the column rests on an end nobody saw; never 'no action'
        ),
        Flag(
            "duration_assumed",
            "No load duration stated: the load is taken as permanent (CD 0.9, lambda 0.6, EC5 "
            "permanent), the conservative choice for an existing post (NDS 2018 Table 2.3.2). "
            "Give --duration to use another, e.g. --duration seven-days for a construction load "
            "or --duration ten-years for occupancy live load.",
        ),
    ),
    run=run_column,
    raise_flags=column_flags,
)
