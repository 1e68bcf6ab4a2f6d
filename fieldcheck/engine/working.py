"""The column's working for one post, step by step, each step with its clause, and the closing
steps (the checks, the governing check, the action). explain.working puts each stage's steps
between them.

Built on demand from the arrays a Rating keeps, for the one post a person is looking at.
"""

from __future__ import annotations

import numpy as np

from fieldcheck.engine import materials
from fieldcheck.engine import quantities as q
from fieldcheck.engine.batch import (
    DIMENSION,
    EC5,
    LRFD,
    METHOD_NAMES,
    PRODUCT_NAMES,
    ROUND,
    TIMBER,
)
from fieldcheck.engine.customary import IN
from fieldcheck.engine.ec5_rating import clause_for, ec5_steps
from fieldcheck.engine.loads import GIVEN
from fieldcheck.engine.restraint import MODE_KEYS, MODES
from fieldcheck.engine.result import ACTION_TEXT, Rating, Step
from fieldcheck.engine.spring_ends import SPRING_MODE

# the NDS Supplement tables of each product class's reference values (NDS 2018 §4.1.3); the
# table and row a post took are named in full by its material text (records)
PRODUCT_TABLES = {DIMENSION: "NDS Supplement Tables 4A, 4B", TIMBER: "NDS Supplement Table 4D"}


def mode_label(i_mode: int) -> str:
    """The end conditions of a post in words (restraint.modes_of_pairs and spring_ends codes)."""
    if i_mode == SPRING_MODE:
        return (
            "spring-restrained ends: K solved numerically (stability.py), design value per "
            "NDS 2018 Appendix G margins"
        )
    if i_mode < 0:
        return "mechanism"
    key = MODE_KEYS[i_mode]
    return f"NDS case ({key}) {MODES[key][0]}"


def column_steps(r: Rating, i: int) -> list[Step]:
    """The method, the section, the material and the column's own steps (NDS or EC5)."""
    b, v = r.batch, r.values
    method = int(b.method[i])
    s: list[Step] = []
    add = s.append
    ec = method == EC5
    add(
        Step(
            "Method",
            "EC5 (EN 1995-1-1:2004+A1:2008)"
            if ec
            else METHOD_NAMES[method].upper() + " (NDS 2018)",
            "",
        )
    )
    add(
        Step(
            "Section d1 x d2 (measured or dressed)",
            f"{q.length(b.d1_mm[i])} x {q.length(b.d2_mm[i])}",
            "axis 1 bends in the plane of d1 (EC5 y), axis 2 of d2 (z)"
            if ec
            else "NDS 2018 §3.7.1.3",
        )
    )
    if int(b.shape[i]) == ROUND:
        add(
            Step(
                "Round post: the square of equal area, d = D sqrt(pi) / 2",
                f"D = {q.length(b.d1_mm[i] * 2.0 / np.sqrt(np.pi))}",
                "NDS 2018 §3.7.3 (EC5: i = D/4, EN 1995-1-1 §6.3.2)"
                if int(b.method[i]) == EC5
                else "NDS 2018 §3.7.3",
            )
        )
    add(
        Step(
            "Area A used by the column check",
            f"{v['area'][i]:,.0f} mm2 ({v['area'][i] / IN**2:.3f} in2)",
            "",
        )
    )
    product = int(b.product[i])
    tables = PRODUCT_TABLES.get(product, "NDS Supplement")
    if not ec:  # EC5: the strength class step names the product
        add(Step("Product", PRODUCT_NAMES[product], "NDS 2018 §4.1.3"))
    if ec:
        s.extend(ec5_steps(r, i))
    else:
        fc = b.fc_mpa[i]
        st = materials.unpack_statuses(int(b.value_status[i]))
        note = (lambda k: materials.STATUS_NOTE[st[k]]) if st else (lambda k: "")
        add(Step("Reference Fc", q.stress(fc) + note("fc"), tables))
        add(Step("Reference Emin", q.stress(b.emin_mpa[i]) + note("emin"), tables))
        if st:
            add(
                Step(
                    "Status of the reference values",
                    materials.status_text(st),
                    "read: from the source; secondary: from a reproduction of it; memory: "
                    "recalled, not read (check before release)",
                )
            )
        tf = "KF phi lambda" if method == LRFD else "CD"
        add(
            Step(
                f"Factors on Fc: {tf} x CM x Ct x CF x Ci",
                f"{v['time_fc'][i]:.4g} x {v['cm_fc'][i]:.3g} x {v['ct_f'][i]:.3g} x "
                f"{b.cf_fc[i]:.3g} x {v['ci_f'][i]:.3g}",
                # Table 4A's size factor only where one other than 1 is applied
                "NDS 2018 Table 4.3.1; §2.3.2"
                + ("; Supplement Table 4A" if b.cf_fc[i] != 1 else ""),
            )
        )
        add(Step("Fc* (all factors but Cp)", q.stress(v["fc_star"][i]), "NDS 2018 §3.7.1"))
        add(
            Step(
                "Emin' = Emin x CM x Ct x Ci" + (" x KF phi" if method == LRFD else ""),
                q.stress(v["emin_prime"][i]),
                "NDS 2018 Table 4.3.1 (CD never applies to Emin)",
            )
        )
        add(Step("End conditions", mode_label(int(v["mode"][i])), "NDS 2018 Appendix G Table G1"))
        for ax in (1, 2):
            add(
                Step(
                    f"Axis {ax}: Ke, unbraced length lu",
                    f"Ke = {v[f'ke{ax}'][i]:.4g}, lu = {q.length(v[f'lu{ax}'][i])}",
                    "NDS 2018 §3.7.1.2, Appendix G",
                )
            )
            add(Step(f"Axis {ax}: le/d", f"{v[f'le_d{ax}'][i]:.3f}", "NDS 2018 §3.7.1.3"))
            add(
                Step(
                    f"Axis {ax}: FcE = 0.822 Emin' / (le/d)^2",
                    q.stress(v[f"fce{ax}"][i]),
                    "NDS 2018 §3.7.1",
                )
            )
            kf = f" x Kf {b.kf[i]:.2f}" if ax == 2 and b.kf[i] < 1 else ""
            add(
                Step(
                    f"Axis {ax}: Cp (c = {v['c'][i]:.2f}){kf}",
                    f"{v[f'cp{ax}'][i]:.6f}",
                    "NDS 2018 Eq. 3.7-1" + (", §15.3" if kf else ""),
                )
            )
        add(
            Step(
                "Governing axis, Cp",
                f"axis {int(v['axis'][i])}, Cp = {v['cp'][i]:.6f}",
                "NDS 2018 §3.7.1",
            )
        )
        add(Step("Fc' = Fc* x Cp", q.stress(v["fc_star"][i] * v["cp"][i]), "NDS 2018 §3.7.1"))
        if b.knowledge[i] < 1:
            add(
                Step(
                    "Knowledge factor kappa (default values assumed)",
                    f"{b.knowledge[i]:.2f}",
                    "ASCE 41 data collection",
                )
            )
        add(
            Step(
                "le/d, limit",
                f"{v['le_d_max'][i]:.2f} <= {v['le_d_limit'][i]:.0f}: "
                + ("within" if v["le_d_max"][i] <= v["le_d_limit"][i] else "EXCEEDED"),
                "NDS 2018 §3.7.1.4",
            )
        )
        if not np.isnan(b.top_fc_perp_mpa[i]):
            add(
                Step(
                    "Cap: Fc-perp' = Fc-perp x CM x Ct x Cb",
                    f"Cb = {v['cb_top'][i]:.4f}",
                    "NDS 2018 §3.10.2, §3.10.4",
                )
            )
        if not np.isnan(b.bottom_fc_perp_mpa[i]):
            add(
                Step(
                    "Sill: Fc-perp' = Fc-perp x CM x Ct x Cb",
                    f"Cb = {v['cb_bot'][i]:.4f}",
                    "NDS 2018 §3.10.2, §3.10.4",
                )
            )
    return s


def closing_steps(r: Rating, i: int) -> list[Step]:
    """Every check made, the governing check, demand over capacity and the action."""
    s: list[Step] = []
    add = s.append
    method = int(r.batch.method[i])
    for name, c in r.checks.items():
        cap = c.capacity_n[i]
        if np.isnan(cap):
            continue
        ratio = c.ratio[i]
        combo, factor = r.check_combination(name, i)
        fname = "lambda" if method == LRFD else "k_mod" if method == EC5 else "CD"
        rtxt = (
            ""
            if np.isnan(ratio)
            else f", ratio {ratio:.3f} under {combo} ({fname} {factor:.3g}, demand "
            f"{q.force(c.demand_n[i])})"
        )
        # every ASCE 7 combination is rated for every check; the largest ratio is kept
        given = combo == GIVEN
        clause = clause_for(c.clause, method) + (
            "" if given else "; ASCE 7 §2.4.1 / §2.3.1, NDS 2018 §2.3.2"
        )
        add(Step(f"Check: {c.label}", f"capacity {q.force(cap)}{rtxt}", clause))
    add(Step("Governing check", r.checks[r.governing_name(i)].label, ""))  # its label, never key
    if not np.isnan(r.ratio[i]):
        add(
            Step(
                "N_Ed / N_Rd" if method == EC5 else "Demand / capacity",
                f"{q.force(r.demand_n[i])} / {q.force(r.capacity_n[i])} = {r.ratio[i]:.3f}",
                "",
            )
        )
    add(
        Step(
            "Action",
            ACTION_TEXT[int(r.action[i])],
            "judgement: ratio bands 0.8 / 1.0 / 1.25 and condition flags",
        )
    )
    return s
