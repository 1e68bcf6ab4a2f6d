"""EN 1995-1-1 in the rating: the posts whose method is EC5 get EC5 checks in place of NDS ones.

Effective lengths are the same Ke x lu as the NDS path (EN 1995-1-1 tabulates no buckling-length
factors; the NDS recommended design values are used, judgement). The knowledge factor applies
to the post's own capacities as in the NDS path.
"""

from __future__ import annotations

import numpy as np

from fieldcheck.engine import ec5, en338
from fieldcheck.engine import quantities as q
from fieldcheck.engine.batch import EC5, ROUND, PostBatch
from fieldcheck.engine.bearing_area import bearing_length, plate_bearing
from fieldcheck.engine.blocks import distinct
from fieldcheck.engine.restraint import MODE_KEYS, MODES
from fieldcheck.engine.result import Rating, Step
from fieldcheck.engine.spring_ends import SPRING_MODE
from fieldcheck.engine.stage import Stage


def apply_ec5(b: PostBatch, checks: dict, values: dict) -> None:
    m = b.method == EC5
    v = values
    area = v["area"]
    lef1 = v["ke1"] * v["lu1"]
    lef2 = v["ke2"] * v["lu2"]
    i1 = v.get("i_gyr1", b.d1_mm / np.sqrt(12.0))  # rectangle: i = h / sqrt(12)
    i2 = v.get("i_gyr2", b.d2_mm / np.sqrt(12.0))
    round_post = b.shape == ROUND
    if distinct(round_post).any():
        # a round post's own radius of gyration is D/4 (mechanics: I = pi D^4/64, A = pi D^2/4),
        # not that of the equivalent square (side D sqrt(pi)/2): i x (D/4) / (d/sqrt(12))
        k_round = 0.25 * np.sqrt(12.0) / (np.sqrt(np.pi) / 2.0)
        i1 = np.where(round_post, i1 * k_round, i1)
        i2 = np.where(round_post, i2 * k_round, i2)
    fc0k = b.fc_mpa * v.get("strength_ratio", 1.0)
    col = ec5.column_resistance(
        area, lef1, lef2, i1, i2, fc0k, b.emin_mpa, b.kmod, b.gamma_m, b.product
    )
    kappa = b.knowledge
    # built-up posts: NDS 2018 §15.3 Kf on the axis across the plies (no EC5 rule held; judgement)
    n_rd2 = col.n_rd2 * b.kf
    n_rd = np.minimum(col.n_rd1, n_rd2) * kappa  # EN 1995-1-1 §6.3.2: N_Rd = k_c f_c,0,d A
    axis2 = n_rd2 < col.n_rd1
    kc_gov = np.where(axis2, col.kc2 * b.kf, col.kc1)
    checks["column"].capacity_n = np.where(m, n_rd, checks["column"].capacity_n)
    checks["column"].clause = _mixed(m, checks["column"].clause, "EN 1995-1-1 §6.3.2")
    # end-grain compression: sigma_c,0,d <= f_c,0,d (EN 1995-1-1 §6.1.4)
    end = col.fc0d * v["a_contact"] * kappa
    checks["end_bearing"].capacity_n = np.where(m, end, checks["end_bearing"].capacity_n)
    checks["end_bearing"].clause = _mixed(m, checks["end_bearing"].clause, "EN 1995-1-1 §6.1.4")
    # bearing across the grain of the cap and sill (EN 1995-1-1 §6.1.5), k_c,90 = 1 (general).
    # The contact area is the post's end as the NDS path takes it: its residual area at that end
    # (decay, char, a crushed end) x the contact share, over the bearing length along the
    # cap's or sill's grain, which is never more than the post's width d1 (it bears only where
    # it stands): A = a_end x l / d1, as b = a_end / d1 times l (no 30 mm extension: the end
    # distance and the next contact are not known, judgement). Steel plates at both ends: the
    # plate length along the grain (at least the post's width) x the post's thickness across,
    # as the NDS path takes them (plates stiff enough to spread the load, judgement)
    plates = plate_bearing(b)
    for end_name, key, lb, a_end in (
        ("top", "cap_bearing", "top_lb_mm", v["a_top"]),
        ("bottom", "sill_bearing", "bottom_lb_mm", v["a_bottom"]),
    ):
        fc90k = getattr(b, f"{end_name}_fc_perp_mpa")
        length, _ = bearing_length(getattr(b, lb), b.d1_mm, None)
        width = a_end / b.d1_mm
        if plates is not None:
            plate, plate_length, _ = plates
            length = np.where(plate, plate_length, length)
            width = np.where(plate, b.d2_mm, width)
        br = ec5.bearing_perp_resistance(
            width,
            length,
            fc90k,
            b.kmod,
            b.gamma_m,
            a_mm=np.nan,
            l1_mm=np.nan,
        )
        checks[key].capacity_n = np.where(m, br.n_rd, checks[key].capacity_n)
        checks[key].clause = _mixed(m, checks[key].clause, "EN 1995-1-1 §6.1.5")
    # crushing of the net section where a loss near an end leaves less than the middle part:
    # sigma_c,0,d <= f_c,0,d on the net area (EN 1995-1-1 §6.1.4), as the NDS path checks it
    net = checks.get("net_section")
    if net is not None and "area_net" in v:
        short = m & (v["area_net"] < area)
        if short.any():
            p_net = np.where(short, col.fc0d * v["area_net"] * kappa, np.nan)
            net.capacity_n = np.where(m, p_net, net.capacity_n)
            net.clause = _mixed(m, net.clause, "EN 1995-1-1 §6.1.4 (net section)")
    values.update(
        ec5_mask=m,
        ec5_lef1=lef1,
        ec5_lef2=lef2,
        ec5_i1=i1,
        ec5_i2=i2,
        ec5_lam1=col.lam1,
        ec5_lam2=col.lam2,
        ec5_lam_rel1=col.lam_rel1,
        ec5_lam_rel2=col.lam_rel2,
        ec5_k1=col.k1,
        ec5_k2=col.k2,
        ec5_kc1=col.kc1,
        ec5_kc2=col.kc2,
        ec5_fc0d=col.fc0d,
        ec5_beta_c=col.beta_c,
    )
    _combined(b, checks, values, m, col, kappa)
    v["cp"] = np.where(m, kc_gov, v["cp"])
    v["axis"] = np.where(m, np.where(axis2, 2, 1), v["axis"]).astype(np.int8)


def straightness_limit(height_mm, product) -> np.ndarray:
    """The largest bow within EN 1995-1-1 §10.2 (mm): L/300 solid timber, L/500 glulam and LVL."""
    pr = ec5.product_code(product)
    return np.asarray(height_mm, dtype=np.float64) / np.where(pr == ec5.SOLID, 300.0, 500.0)


def bow_moment_terms(
    n, area, fc0d, kc, short, b1, b2, g1, g2, ncr1, ncr2, km
) -> tuple[np.ndarray, np.ndarray]:
    """The two interaction sums of EN 1995-1-1 Eq. 6.23 / 6.24 (or 6.19 / 6.20) at load n (N).

    Bending per unit N: b* from the end eccentricity (first order), g* from a bow beyond the
    §10.2 limit, amplified for second order by 1 / (1 - N / N_cr) (initially curved bar).
    """
    with np.errstate(divide="ignore", invalid="ignore"):
        amp1 = np.where(g1 > 0, 1.0 / (1.0 - n / ncr1), 1.0)
        amp2 = np.where(g2 > 0, 1.0 / (1.0 - n / ncr2), 1.0)
    m1 = n * (b1 + g1 * amp1)  # sigma_m,y,d / f_m,y,d
    m2 = n * (b2 + g2 * amp2)  # sigma_m,z,d / f_m,z,d
    kc1, kc2 = kc
    ax1 = np.where(short, (n / (area * fc0d)) ** 2, n / (area * kc1 * fc0d))  # Eq. 6.19 / 6.23
    ax2 = np.where(short, (n / (area * fc0d)) ** 2, n / (area * kc2 * fc0d))  # Eq. 6.20 / 6.24
    return ax1 + m1 + km * m2, ax2 + km * m1 + m2


def _combined(b: PostBatch, checks: dict, v: dict, m: np.ndarray, col, kappa: np.ndarray) -> None:
    """Eccentricity and bow of the condition inputs, checked by EN 1995-1-1 §6.3.2(3).

    The end eccentricity (load off centre, a sway post's lean) gives a first-order moment N e.
    A bow within the straightness limit of EN 1995-1-1 §10.2 (L/300 solid timber, L/500
    glulam) is allowed for by beta_c in k_c (§6.3.2 Eq. 6.29) and adds no moment. A bow beyond
    it adds the moment N e_bow of the whole measured bow (judgement: conservative, beta_c already
    allows for part of it), amplified for second order by 1 / (1 - N / N_cr), the initially
    curved bar (Timoshenko & Gere ch. 1), with N_cr = pi^2 E_d I / L_ef^2 and E_d the lower of
    E_0,mean / gamma_M (EN 1995-1-1 §2.4.1 Eq. 2.15) and E_0,05 (judgement).

    The moments go into EN 1995-1-1 Eq. 6.23 / 6.24 (lambda_rel > 0.3 on an axis), or Eq. 6.19 /
    6.20 (§6.2.4) when lambda_rel <= 0.3 on both axes. Without an amplified bow the equations are
    linear (or quadratic) in N and solved in closed form; with one, the largest N is found by
    bisection (each sum rises with N up to N_cr).
    """
    wanted = np.asarray(v.get("ecc_wanted", False)) & m
    if not np.any(wanted):
        return
    idx = np.flatnonzero(wanted)
    bow1, bow2 = np.asarray(v["bow1"])[idx], np.asarray(v["bow2"])[idx]
    limit = straightness_limit(b.height_mm[idx], b.product[idx])  # EN 1995-1-1 §10.2
    beyond1, beyond2 = bow1 > limit, bow2 > limit
    e1 = np.asarray(v["ecc1"])[idx]
    e2 = np.asarray(v["ecc2"])[idx]
    area = v["area"][idx]
    fmd = ec5.bending_design_strength(
        b.fb_mpa[idx] * v.get("sr_bending", np.ones(b.n))[idx], b.kmod[idx], b.gamma_m[idx]
    )  # EN 1995-1-1 §2.4.1, k_h = 1 (conservative)
    km = ec5.km(b.shape[idx])  # EN 1995-1-1 §6.1.6(2)
    fc0d = col.fc0d[idx]
    s1, s2 = v["s1"][idx], v["s2"][idx]
    b1 = e1 / (s1 * fmd)  # sigma_m,y / f_m,y,d per unit N (first order)
    b2 = e2 / (s2 * fmd)
    g1 = np.where(beyond1, bow1, 0.0) / (s1 * fmd)  # the bow's, before amplification
    g2 = np.where(beyond2, bow2, 0.0) / (s2 * fmd)
    kc1, kc2 = col.kc1[idx], col.kc2[idx] * b.kf[idx]
    # N_cr = pi^2 E_d I / L_ef^2 per axis (Euler), I = A i^2 of the section the column check
    # uses; E_d = min(E_0,mean / gamma_M, E_0,05) (EN 1995-1-1 §2.4.1 Eq. 2.15; judgement)
    e_d = np.minimum(b.e_mpa[idx] / b.gamma_m[idx], b.emin_mpa[idx])
    ncr1 = np.pi**2 * e_d * area * v["ec5_i1"][idx] ** 2 / v["ec5_lef1"][idx] ** 2
    ncr2 = np.pi**2 * e_d * area * v["ec5_i2"][idx] ** 2 / v["ec5_lef2"][idx] ** 2 * b.kf[idx]
    # first order: EN 1995-1-1 Eq. 6.23 / 6.24, N (1/(A kc fc0d) + ...) = 1
    q1, q2 = b1 + g1 + km * (b2 + g2), km * (b1 + g1) + b2 + g2
    n1 = 1.0 / (1.0 / (area * kc1 * fc0d) + q1)
    n2 = 1.0 / (1.0 / (area * kc2 * fc0d) + q2)
    # EN 1995-1-1 Eq. 6.19 / 6.20 (no buckling): (N/(A fc0d))^2 + N (...) = 1
    a = 1.0 / (area * fc0d) ** 2
    r1 = 2.0 / (q1 + np.sqrt(q1 * q1 + 4.0 * a))
    r2 = 2.0 / (q2 + np.sqrt(q2 * q2 + 4.0 * a))
    short = (col.lam_rel1[idx] <= ec5.LAM_REL_LIMIT) & (col.lam_rel2[idx] <= ec5.LAM_REL_LIMIT)
    n0 = np.where(short, np.minimum(r1, r2), np.minimum(n1, n2))
    amplified = beyond1 | beyond2
    if amplified.any():
        # the amplified sums rise with N from 0 up to the first N_cr, and are never below the
        # first-order ones: the root lies below n0 and below that N_cr
        pole = np.minimum(np.where(beyond1, ncr1, np.inf), np.where(beyond2, ncr2, np.inf))
        lo = np.zeros_like(n0)
        hi = np.where(amplified, np.minimum(n0, pole), n0)
        for _ in range(60):  # bisection: 2^-60 of the bracket
            mid = 0.5 * (lo + hi)
            t1, t2 = bow_moment_terms(
                mid, area, fc0d, (kc1, kc2), short, b1, b2, g1, g2, ncr1, ncr2, km
            )
            over = (np.maximum(t1, t2) > 1.0) | (mid >= pole)
            hi = np.where(over, mid, hi)
            lo = np.where(over, lo, mid)
        n0 = np.where(amplified, lo, n0)
    n_rd = n0 * kappa[idx]
    c = checks["eccentric"]
    cap = np.array(c.capacity_n, dtype=np.float64)  # a writable copy (may be a shared view)
    cap[idx] = n_rd
    c.capacity_n = cap
    c.clause = _mixed(m, c.clause, "EN 1995-1-1 §6.3.2(3), §6.2.4, §10.2")
    checked = np.array(v["ecc_checked"], dtype=bool)
    checked[idx] = True
    v["ecc_checked"] = checked
    n = b.n
    for name, part in (
        ("ec5_bow_limit", limit),
        ("ec5_ncr1", ncr1),
        ("ec5_ncr2", ncr2),
        ("ec5_bow_amplified1", beyond1),
        ("ec5_bow_amplified2", beyond2),
        ("ec5_fmd", fmd),
    ):
        full = np.full(n, False) if part.dtype == bool else np.full(n, np.nan)
        full[idx] = part
        v[name] = full


def clause_for(clause: str, method: int) -> str:
    """A check's clause for one post: a block of NDS and EC5 posts shares one clause text
    ("NDS ... / EN 1995-1-1 ..."); each post is shown only its own method's part."""
    if " / " not in clause:
        return clause
    parts = clause.split(" / ")
    own = [p for p in parts if p.startswith("EN 1995-1-1") == (method == EC5)]
    return " / ".join(own) if own else clause


def _mixed(mask: np.ndarray, nds_clause: str, ec5_clause: str) -> str:
    if mask.all():
        return ec5_clause
    if not mask.any():
        return nds_clause
    return f"{nds_clause} / {ec5_clause}"


PRODUCT_TEXT = {
    ec5.SOLID: "solid timber (EN 14081-1)",
    ec5.GLULAM: "glued laminated timber (EN 14080)",
    ec5.LVL: "LVL (EN 14374)",
}
GAMMA_M = "\u03b3_M"  # the partial factor as EN 1995-1-1 writes it
_STATUS_NOTE = {"read": "", "secondary": " (secondary)", "memory": " (from memory)"}


def _held(b: PostBatch, i: int) -> dict | None:
    code = int(b.strength_row[i])
    return en338.row(code) if code >= 0 else None


def _value(held: dict | None, column: str, mpa: float, fmt: str) -> tuple[str, str]:
    """(value with its status, clause naming the table) for one EN 338 / EN 14080 value."""
    if held is None:
        return f"{mpa:{fmt}} MPa", "EN 338"
    table_no = "Table 5" if held["edition"].startswith("EN 14080") else "Table 1"
    if held["edition"] == en338.EN338_2016 and held["class"].startswith("D"):
        table_no = "Table 3"
    return (
        f"{mpa:{fmt}} MPa{_STATUS_NOTE.get(held['statuses'][column], '')}",
        f"{held['edition']} {table_no}",
    )


def ec5_steps(r: Rating, i: int) -> list[Step]:
    """The EN 1995-1-1 column working of post i, in EC5's own terms."""
    b, v = r.batch, r.values
    held = _held(b, i)
    pr = int(ec5.product_code(b.product[i : i + 1])[0])
    s = []
    if held is not None:
        s.append(
            Step(
                "Strength class",
                f"{held['class']}, {PRODUCT_TEXT[pr]}, values {held['status']}",
                held["edition"],
            )
        )
    val, clause = _value(held, "fc0k_mpa", b.fc_mpa[i], ".2f")
    s.append(Step("f_c,0,k", val, clause))
    val, clause = _value(held, "e005_mpa", b.emin_mpa[i], ",.0f")
    s.append(Step("E_0,05", val, clause))
    s.append(Step("k_mod", f"{b.kmod[i]:.2f}", "EN 1995-1-1 Table 3.1 (§2.3.1.3, Table 2.1)"))
    s.append(
        Step(
            GAMMA_M,
            f"{b.gamma_m[i]:.2f}",
            "EN 1995-1-1 Table 2.3, recommended value (a National Annex may set another)",
        )
    )
    s.append(
        Step(
            f"f_c,0,d = k_mod f_c,0,k / {GAMMA_M}",
            f"{v['ec5_fc0d'][i]:.3f} MPa",
            "EN 1995-1-1 §2.4.1 Eq. 2.14",
        )
    )
    s.append(
        Step(
            "End conditions",
            mode_text(int(v["mode"][i])),
            "buckling lengths: NDS 2018 Appendix G Table G1 recommended values (EN 1995-1-1 "
            "gives none; judgement)",
        )
    )
    for ax in (1, 2):
        s.append(
            Step(
                f"Axis {ax}: L_ef = β L",
                f"{q.length(v[f'ec5_lef{ax}'][i])} (β {v[f'ke{ax}'][i]:.3g}, L "
                f"{q.length(v[f'lu{ax}'][i])})",
                "EN 1995-1-1 §6.3.2; judgement",
            )
        )
        s.append(
            Step(
                f"Axis {ax}: λ = L_ef / i",
                f"{v[f'ec5_lam{ax}'][i]:.2f} (i {v[f'ec5_i{ax}'][i]:.2f} mm)",
                "EN 1995-1-1 §6.3.2(1)",
            )
        )
        s.append(
            Step(
                f"Axis {ax}: λ_rel = λ / π sqrt(f_c,0,k / E_0,05)",
                f"{v[f'ec5_lam_rel{ax}'][i]:.4f}",
                "EN 1995-1-1 Eq. 6.21/6.22",
            )
        )
        kf = f" x Kf {b.kf[i]:.2f}" if ax == 2 and b.kf[i] < 1 else ""
        s.append(
            Step(
                f"Axis {ax}: k = {v[f'ec5_k{ax}'][i]:.4f}; k_c (β_c {v['ec5_beta_c'][i]:.1f}){kf}",
                f"{v[f'ec5_kc{ax}'][i]:.6f}",
                "EN 1995-1-1 Eq. 6.25-6.29"
                + (
                    " (λ_rel <= 0.3: k_c = 1, §6.3.2(2))"
                    if v[f"ec5_lam_rel{ax}"][i] <= ec5.LAM_REL_LIMIT
                    else ""
                )
                + (", NDS 2018 §15.3 (judgement)" if kf else ""),
            )
        )
    s.append(
        Step(
            "Governing axis, k_c",
            f"axis {int(v['axis'][i])}, k_c = {v['cp'][i]:.6f}",
            "EN 1995-1-1 §6.3.2",
        )
    )
    s.append(
        Step(
            "N_Rd = k_c f_c,0,d A",
            q.force(r.checks["column"].capacity_n[i]),
            "EN 1995-1-1 §6.3.2(3) Eq. 6.23/6.24 without bending",
        )
    )
    if b.knowledge[i] < 1:
        s.append(Step("Knowledge factor kappa", f"{b.knowledge[i]:.2f}", "ASCE 41 data collection"))
    s.extend(_combined_steps(r, i))
    return s


def _combined_steps(r: Rating, i: int) -> list[Step]:
    """The eccentricity and bow of post i in EN 1995-1-1's terms (when the check was made)."""
    v = r.values
    if not bool(np.asarray(v.get("ecc_checked", False))[i]) or "ec5_bow_limit" not in v:
        return []
    if np.isnan(v["ec5_bow_limit"][i]):
        return []
    s = [
        Step(
            "End eccentricity e_y, e_z: moment N e (first order)",
            f"{q.length(v['ecc1'][i])}, {q.length(v['ecc2'][i])}",
            "EN 1995-1-1 §6.3.2(3)",
        ),
        Step(
            f"f_m,d = k_mod f_m,k / {GAMMA_M} (k_h = 1)",
            f"{v['ec5_fmd'][i]:.3f} MPa",
            "EN 1995-1-1 §2.4.1 Eq. 2.14, §3.2",
        ),
        Step(
            "Bow limit (straightness)",
            f"{q.length(v['ec5_bow_limit'][i])} (L/300 solid timber, L/500 glulam)",
            "EN 1995-1-1 §10.2; within it β_c allows for the bow (Eq. 6.29)",
        ),
    ]
    for ax in (1, 2):
        bow = v[f"bow{ax}"][i]
        if not bow > 0:
            continue
        if v[f"ec5_bow_amplified{ax}"][i]:
            s.append(
                Step(
                    f"Axis {ax}: bow {q.length(bow)} beyond the limit: M = N e_bow / (1 - N/N_cr),"
                    f" N_cr = π² E_d I / L_ef²",
                    f"N_cr = {q.force(v[f'ec5_ncr{ax}'][i])}",
                    "initially curved bar (Timoshenko & Gere ch. 1); E_d = min(E_0,mean / "
                    f"{GAMMA_M} "
                    "(EN 1995-1-1 §2.4.1 Eq. 2.15), E_0,05): judgement",
                )
            )
        else:
            s.append(
                Step(
                    f"Axis {ax}: bow {q.length(bow)} within the limit",
                    "no moment added (k_c allows for it)",
                    "EN 1995-1-1 §6.3.2 Eq. 6.29, §10.2",
                )
            )
    return s


def mode_text(i_mode: int) -> str:
    """The end conditions of an EC5 post in words (restraint and spring_ends codes)."""
    if i_mode == SPRING_MODE:
        return (
            "spring-restrained ends: buckling length solved numerically (stability.py), with "
            "the NDS 2018 Appendix G design margins (judgement)"
        )
    if i_mode < 0:
        return "mechanism"
    key = MODE_KEYS[i_mode]
    return f"as NDS 2018 Table G1 case ({key}) {MODES[key][0]}"


def ec5_summary(r: Rating, i: int, out: dict) -> None:
    """Summary hook: an EC5 post's --json speaks EN 1995-1-1 (λ, λ_rel, k_c, β_c, N_Rd and N_Ed
    in kN) in place of the NDS keys (Ke, le/d and its limit of 50, Cp)."""
    b, v = r.batch, r.values
    if int(b.method[i]) != EC5:
        return
    for key in (
        "effective_length_factor",
        "effective_length_factors",
        "slenderness_ratio",
        "slenderness_ratios",
        "slenderness_limit",
        "within_slenderness_limit",
        "stability_factor",
    ):
        out.pop(key, None)
    held = _held(b, i)
    pair = lambda k, nd: [round(float(v[f"{k}1"][i]), nd), round(float(v[f"{k}2"][i]), nd)]  # noqa: E731
    ec5_keys = {
        "N_Rd_kN": out.get("allowable_load_kN"),
        "N_Ed_kN": out.get("demand_kN"),
        "strength_class": held["class"] if held else None,
        "strength_class_edition": held["edition"] if held else None,
        "strength_values_status": dict(held["statuses"]) if held else None,
        "k_mod": round(float(b.kmod[i]), 4),
        "gamma_M": round(float(b.gamma_m[i]), 4),
        "f_c0d_MPa": round(float(v["ec5_fc0d"][i]), 4),
        "buckling_length_factors": pair("ke", 4),
        "buckling_lengths_mm": pair("ec5_lef", 1),
        "lambda": pair("ec5_lam", 3),
        "lambda_rel": pair("ec5_lam_rel", 4),
        "k_c": pair("ec5_kc", 6),
        "k_c_governing": round(float(v["cp"][i]), 6),
        "beta_c": round(float(v["ec5_beta_c"][i]), 2),
    }
    if "ec5_bow_limit" in v and np.isfinite(v["ec5_bow_limit"][i]):
        ec5_keys["bow_limit_mm"] = round(float(v["ec5_bow_limit"][i]), 2)
        ec5_keys["bow_amplified"] = [
            bool(v["ec5_bow_amplified1"][i]),
            bool(v["ec5_bow_amplified2"][i]),
        ]
        ec5_keys["N_cr_kN"] = [round(float(v[f"ec5_ncr{ax}"][i]) / 1000.0, 4) for ax in (1, 2)]
    # kN first: the EC5 keys right after the method and state, the lbf ones last
    first = {k: out.pop(k) for k in ("method", "state")}
    lbf = {k: out.pop(k) for k in list(out) if k.endswith("_lbf")}
    rest = dict(out)
    out.clear()
    out.update(first, **ec5_keys, **rest, **lbf)


# The warnings of an EC5 post in EN 1995-1-1's terms, in place of the NDS wording of the same
# flags (explain.warnings); a flag not listed reads the same under both methods.
EC5_WARNINGS = {
    "no_load": (
        "No load given: N_Rd is shown at the k_mod of the load duration stated, else of the "
        "permanent class, the lowest (EN 1995-1-1 Table 3.1); no decision can be made without "
        "the load."
    ),
    "dry_assumed": (
        "Moisture not measured: the service class given (or 1) is used (EN 1995-1-1 §2.3.1.3: "
        "class 1 about 12 % or less, class 2 about 20 % or less, class 3 wetter; from memory). "
        "Measure it: a wetter reading takes the wetter class and a lower k_mod."
    ),
    "ends_assumed": (
        "End condition not stated (top, bottom or both): taken as pinned, held sideways and free "
        "to turn (β 1.0). A post whose top can move sideways is far weaker (a flagpole: β 2.1 as "
        "NDS 2018 Appendix G, judgement): give --top and --bottom as seen."
    ),
    "duration_assumed": (
        "No load duration stated: the load is taken as permanent (EN 1995-1-1 Table 2.1, the "
        "k_mod of the permanent class), the conservative choice for an existing post. Give "
        "--duration to use another, e.g. --duration seven-days (short-term) for a construction "
        "load or --duration two-months (medium-term)."
    ),
    "slender_construction": (
        "Very slender: L_ef / d above 50 (λ above 173). EN 1995-1-1 sets no limit; the NDS 2018 "
        "§3.7.1.4 limit of 75 for construction-stage members is kept (judgement)."
    ),
    "slender_limit": (
        "Very slender: L_ef / d above 50 (λ above 173). EN 1995-1-1 sets no limit, but a post "
        "this slender is kept to the NDS 2018 §3.7.1.4 limit (judgement): brace it or replace it."
    ),
    "end_plate": (
        "End-grain bearing stress above 0.75 of the compression strength with no steel plate "
        "recorded: bear the end on one (judgement after NDS 2018 §3.10.1.3; EN 1995-1-1 §6.1.4 "
        "is checked); until then look at both ends for crushing or brooming at every visit."
    ),
    "theoretical_k": (
        "Theoretical buckling-length factor used instead of the recommended design value, as "
        "you chose."
    ),
    "built_up": (
        "Built-up post: the NDS 2018 §15.3 factor Kf is applied about the axis across the plies "
        "(EN 1995-1-1 has no rule for it here; judgement)."
    ),
    "base_fixity": (
        "Sway case (flagpole or an end free to move sideways): the rating rests on the fixed "
        "end being truly fixed against rotation (buckling length as NDS 2018 Appendix G; "
        "judgement); a base that can rotate makes the post a mechanism. Confirm the fixity "
        "(embedment, bolted base, moment connection) on site."
    ),
    "sr_applied": (
        "Knots or slope of grain reduce f_c,0,k and f_m,k by the lowest strength ratio (ASTM "
        "D245 principle, from memory; EN 338 classes assume graded timber: judgement)."
    ),
    "eccentric": (
        "Eccentric load or bow: combined axial load and bending checked (EN 1995-1-1 §6.3.2(3) "
        "Eq. 6.23/6.24); a bow beyond the §10.2 straightness limit (L/300 solid timber, L/500 "
        "glulam) is amplified for second order, 1 / (1 - N/N_cr)."
    ),
}


def run_ec5(b: PostBatch, checks: dict, values: dict) -> None:
    """EN 1995-1-1 capacities in place of the NDS ones, for the EC5 posts of the block."""
    if np.any(b.method == EC5):
        apply_ec5(b, checks, values)


# the EC5 posts of a block: the column, end-grain, cap and sill checks by EN 1995-1-1, and the
# combined check of the condition's eccentricity and bow (its working: ec5_steps, in place of
# the NDS factors)
EC5_STAGE = Stage(
    name="ec5",
    inputs=(
        "method",
        "fc_mpa",
        "emin_mpa",
        "fb_mpa",
        "kmod",
        "gamma_m",
        "product",
        "shape",
        "kf",
        "knowledge",
        "end_contact",
        "d1_mm",
        "d2_mm",
        "top_lb_mm",
        "bottom_lb_mm",
        "plate_lb_mm",
        "top_fc_perp_mpa",
        "bottom_fc_perp_mpa",
        "strength_row",
        "e_mpa",
        "height_mm",
    ),
    checks=("column", "end_bearing", "cap_bearing", "sill_bearing", "eccentric", "net_section"),
    flags=(),
    run=run_ec5,
    summary=ec5_summary,
)
