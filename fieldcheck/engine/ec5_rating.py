"""EN 1995-1-1 in the rating: the posts whose method is EC5 get EC5 checks in place of NDS ones.

Effective lengths are the same Ke x lu as the NDS path (EN 1995-1-1 tabulates no buckling-length
factors; the NDS recommended design values are used, judgement). The knowledge factor applies
to the post's own capacities as in the NDS path.
"""

from __future__ import annotations

import numpy as np

from fieldcheck.engine import ec5
from fieldcheck.engine.batch import EC5, ROUND, PostBatch
from fieldcheck.engine.blocks import distinct
from fieldcheck.engine.result import Rating, Step
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
    # bearing across the grain of the cap and sill (EN 1995-1-1 §6.1.5), k_c,90 = 1 (general)
    for end_name, key, lb in (
        ("top", "cap_bearing", "top_lb_mm"),
        ("bottom", "sill_bearing", "bottom_lb_mm"),
    ):
        fc90k = getattr(b, f"{end_name}_fc_perp_mpa")
        length = np.where(np.isnan(getattr(b, lb)), b.d1_mm, getattr(b, lb))
        br = ec5.bearing_perp_resistance(
            b.d2_mm * np.sqrt(b.end_contact),
            length * np.sqrt(b.end_contact),
            fc90k,
            b.kmod,
            b.gamma_m,
            a_mm=np.nan,
            l1_mm=np.nan,
        )
        checks[key].capacity_n = np.where(m, br.n_rd, checks[key].capacity_n)
        checks[key].clause = _mixed(m, checks[key].clause, "EN 1995-1-1 §6.1.5")
    _combined(b, checks, values, m, col, kappa)
    values.update(
        ec5_mask=m,
        ec5_lam_rel1=col.lam_rel1,
        ec5_lam_rel2=col.lam_rel2,
        ec5_kc1=col.kc1,
        ec5_kc2=col.kc2,
        ec5_fc0d=col.fc0d,
        ec5_beta_c=col.beta_c,
    )
    v["cp"] = np.where(m, kc_gov, v["cp"])
    v["axis"] = np.where(m, np.where(axis2, 2, 1), v["axis"]).astype(np.int8)


def _combined(b: PostBatch, checks: dict, v: dict, m: np.ndarray, col, kappa: np.ndarray) -> None:
    """Eccentricity and bow of the condition inputs, checked by EN 1995-1-1 §6.3.2(3).

    The end eccentricity plus the measured bow (judgement: first-order moments at mid-height, taken
    together, conservative) give sigma_m = N e / W on the residual section. With lambda_rel > 0.3 on
    an axis Eq. 6.23/6.24 are linear in N, so the largest N is 1 / (the sum of the terms per unit
    N);
    otherwise Eq. 6.19/6.20 (§6.2.4) are quadratic in N, solved in closed form.
    """
    wanted = np.asarray(v.get("ecc_wanted", False)) & m
    if not np.any(wanted):
        return
    idx = np.flatnonzero(wanted)
    e1 = (np.asarray(v["ecc1"]) + np.asarray(v["bow1"]))[idx]
    e2 = (np.asarray(v["ecc2"]) + np.asarray(v["bow2"]))[idx]
    area = v["area"][idx]
    fmd = ec5.bending_design_strength(
        b.fb_mpa[idx] * v.get("sr_bending", np.ones(b.n))[idx], b.kmod[idx], b.gamma_m[idx]
    )  # EN 1995-1-1 §2.4.1, k_h = 1 (conservative)
    km = ec5.km(b.shape[idx])  # EN 1995-1-1 §6.1.6(2)
    fc0d = col.fc0d[idx]
    b1 = e1 / (v["s1"][idx] * fmd)  # sigma_m,y / f_m,y,d per unit N
    b2 = e2 / (v["s2"][idx] * fmd)
    kc1, kc2 = col.kc1[idx], col.kc2[idx] * b.kf[idx]
    # EN 1995-1-1 Eq. 6.23 / 6.24: N (1/(A kc fc0d) + ...) = 1
    n1 = 1.0 / (1.0 / (area * kc1 * fc0d) + b1 + km * b2)
    n2 = 1.0 / (1.0 / (area * kc2 * fc0d) + km * b1 + b2)
    # EN 1995-1-1 Eq. 6.19 / 6.20 (no buckling): (N/(A fc0d))^2 + N (...) = 1
    a = 1.0 / (area * fc0d) ** 2
    q1, q2 = b1 + km * b2, km * b1 + b2
    s1 = 2.0 / (q1 + np.sqrt(q1 * q1 + 4.0 * a))
    s2 = 2.0 / (q2 + np.sqrt(q2 * q2 + 4.0 * a))
    short = (col.lam_rel1[idx] <= ec5.LAM_REL_LIMIT) & (col.lam_rel2[idx] <= ec5.LAM_REL_LIMIT)
    n_rd = np.where(short, np.minimum(s1, s2), np.minimum(n1, n2)) * kappa[idx]
    c = checks["eccentric"]
    cap = np.array(c.capacity_n, dtype=np.float64)  # a writable copy (may be a shared view)
    cap[idx] = n_rd
    c.capacity_n = cap
    c.clause = _mixed(m, c.clause, "EN 1995-1-1 §6.3.2(3), §6.2.4")
    checked = np.array(v["ecc_checked"], dtype=bool)
    checked[idx] = True
    v["ecc_checked"] = checked


def _mixed(mask: np.ndarray, nds_clause: str, ec5_clause: str) -> str:
    if mask.all():
        return ec5_clause
    if not mask.any():
        return nds_clause
    return f"{nds_clause} / {ec5_clause}"


def ec5_steps(r: Rating, i: int) -> list[Step]:
    b, v = r.batch, r.values
    s = [
        Step("f_c,0,k (strength class)", f"{b.fc_mpa[i]:.2f} MPa", "EN 338"),
        Step("E_0,05", f"{b.emin_mpa[i]:,.0f} MPa", "EN 338"),
        Step(
            "k_mod, gamma_M",
            f"{b.kmod[i]:.2f}, {b.gamma_m[i]:.2f}",
            "EN 1995-1-1 Table 3.1, Table 2.3",
        ),
        Step(
            "f_c,0,d = k_mod f_c,0,k / gamma_M",
            f"{v['ec5_fc0d'][i]:.3f} MPa",
            "EN 1995-1-1 §2.4.1 Eq. 2.17",
        ),
    ]
    for ax in (1, 2):
        s.append(
            Step(
                f"Axis {ax}: L_ef = Ke x lu",
                f"{v[f'ke{ax}'][i] * v[f'lu{ax}'][i]:.0f} mm (Ke {v[f'ke{ax}'][i]:.3g}, NDS "
                "Table G1 values)",
                "EN 1995-1-1 §6.3.2; judgement",
            )
        )
        s.append(
            Step(
                f"Axis {ax}: lambda_rel",
                f"{v[f'ec5_lam_rel{ax}'][i]:.4f}",
                "EN 1995-1-1 Eq. 6.21/6.22",
            )
        )
        s.append(
            Step(
                f"Axis {ax}: k_c (beta_c {v['ec5_beta_c'][i]:.1f})",
                f"{v[f'ec5_kc{ax}'][i]:.6f}",
                "EN 1995-1-1 Eq. 6.25-6.29",
            )
        )
    s.append(
        Step(
            "Governing axis, k_c",
            f"axis {int(v['axis'][i])}, k_c = {v['cp'][i]:.6f}",
            "EN 1995-1-1 §6.3.2",
        )
    )
    return s


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
        "top_fc_perp_mpa",
        "bottom_fc_perp_mpa",
    ),
    checks=("column", "end_bearing", "cap_bearing", "sill_bearing", "eccentric"),
    flags=(),
    run=run_ec5,
)
