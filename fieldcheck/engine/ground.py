"""The ground under a post, bearing plates, the governing load combination and bracing demand.

The ``GROUND`` stage of the rating (rating.STAGES), so these are part of the same rating:

- ``soil_bearing`` check: a mudsill or pad on soil, capacity = q_allow x A_eff
  (IBC 2012 Table 1806.2 presumptive values, secondary). Unknown or unprepared soil and a pad
  without a size give no capacity: the check is "not verified", a warning is raised and the
  action is at least monitor (unknown class, no pad size) or repair-or-brace (unprepared ground).
- effective pad area: the load spreads through a pad or mudsill of thickness t at 1:1 (45 deg),
  so each plan side counts up to post side + 2 t (judgement, common practice; a stiff timber
  sill spreads further by bending, which we do not count). Thickness not given: the whole pad
  area counts (a rigid pad) and the rating says so.
- steel bearing plate: cap and sill bearing use the plate length along their grain times the
  post's thickness across (the cap or sill may be no wider than the post: judgement), with Cb
  for the plate length (NDS 2018 §3.10.2, §3.10.4); the plate is assumed stiff enough to spread
  the load (judgement: at least 1/2 in steel, engineer to confirm).
- bracing demand (not a capacity check): what the shore's bracing must carry, from
  :func:`fieldcheck.engine.loads.lateral_demand`, in ``values['lateral_n']``.
- the JSON summary: ``load_combination``, ``ground`` and ``bracing`` keys.

Why these action levels (judgement): unprepared ground (mud, organic soil, uncompacted fill) has
no presumptive value at all in IBC 2012 §1806.2 and soft ground under a mudsill is a
stop-and-escalate condition in field practice, so the post needs work before the due date
(repair-or-brace). An unclassified soil may well be adequate but cannot be shown to be; it is
flagged and the post is at least monitored until the soil is classified or the 1,500 psf default
(24 CFR 3285.202(e)) is accepted explicitly. Neither ever passes silently.
"""

from __future__ import annotations

from functools import cache

import numpy as np

from fieldcheck.engine import loads, nds
from fieldcheck.engine import quantities as q
from fieldcheck.engine.batch import EC5, LRFD, PostBatch
from fieldcheck.engine.blocks import filled
from fieldcheck.engine.customary import FT, LBF
from fieldcheck.engine.refdata import table
from fieldcheck.engine.result import Check, Rating, Step
from fieldcheck.engine.stage import Flag, FlagSet, Stage

FT2 = FT**2  # mm^2 per ft^2
PSF = loads.PSF_KPA  # kPa per psf

# judgement, see the module docstring: unknown class / no pad size -> monitor; unprepared -> repair
# a pad of unknown thickness is taken as rigid, which may overstate the area on the soil: the
# soil check cannot be relied on until the thickness is measured (judgement), so repair level
FLAGS = (
    Flag(
        "soil_unknown",
        "Soil under the pad not classified: no presumptive bearing value, the ground is not "
        "verified "
        "(IBC 2012 §1806.2); classify it or accept the 1,500 psf default explicitly (soil_default "
        "yes), "
        "and watch for settlement.",
        escalates_to=1,
    ),
    Flag(
        "soil_unprepared",
        "Mud, organic soil or unprepared fill under the pad: no presumptive bearing value (IBC "
        "2012 "
        "§1806.2); set the mudsill on firm, prepared ground before the due date.",
        escalates_to=2,
    ),
    Flag(
        "soil_assumed",
        "Soil class not determined: the 1,500 psf default of 24 CFR 3285.202(e) is used, as you "
        "chose.",
    ),
    Flag(
        "pad_missing",
        "Soil given but no pad or mudsill size: the ground is not verified; give the pad size.",
        escalates_to=1,
    ),
    Flag(
        "pad_rigid",
        "Pad thickness not given: the whole pad area is taken as bearing on the soil (a rigid "
        "pad), "
        "which a thin pad does not give; the soil check is not relied on (repair level) until the "
        "thickness is measured.",
        escalates_to=2,
    ),
    Flag(
        "plate",
        "Steel bearing plates: cap and sill bearing over the plate length along their grain and "
        "the "
        "post's thickness across; plates assumed stiff enough to spread the load (judgement).",
    ),
    Flag(
        "shared",
        "Load shared by posts side by side: each carries an equal share only under a stiff cap "
        "(judgement); check the cap.",
    ),
)


@cache
def combination_rows() -> tuple[dict[str, str], ...]:
    """Rows of data/load_combinations.csv; PostBatch.combo indexes this tuple."""
    return tuple(table("load_combinations"))


@cache
def lateral_rows() -> tuple[dict[str, str], ...]:
    """Rows of data/shore_lateral.csv; PostBatch.lateral_rule indexes this tuple."""
    return tuple(table("shore_lateral"))


def effective_pad_area_mm2(b: PostBatch) -> np.ndarray:
    """Pad area that carries the load to the soil, mm^2 (NaN: no pad given).

    With the pad thickness t, each side counts up to the post side + 2 t (1:1 spread, judgement);
    the post may stand either way round on a rectangular pad, so the smaller pairing is taken.
    Pad given as an area only: the area, but not more than (d1 + 2t)(d2 + 2t).
    """
    a = b.pad_area_mm2
    t = b.pad_t_mm
    s1, s2 = b.d1_mm + 2.0 * t, b.d2_mm + 2.0 * t  # 1:1 spread through the pad, judgement
    sides = ~np.isnan(b.pad_l1_mm) & ~np.isnan(b.pad_l2_mm)
    pair_a = np.minimum(b.pad_l1_mm, s1) * np.minimum(b.pad_l2_mm, s2)
    pair_b = np.minimum(b.pad_l1_mm, s2) * np.minimum(b.pad_l2_mm, s1)
    spread = np.where(sides, np.minimum(pair_a, pair_b), np.minimum(a, s1 * s2))
    return np.where(np.isnan(t), a, spread)


def _block_is_plain(b: PostBatch) -> bool:
    """No pad, soil, plate, lateral rule or shared load anywhere in this block."""
    return (
        np.isnan(b.pad_area_mm2).all()
        and np.isnan(b.soil_kpa).all()
        and not b.soil_flags.any()
        and np.isnan(b.plate_lb_mm).all()
        and not np.any(b.lateral_rule >= 0)
        and not np.any(b.shared_by > 1)
    )


def _ground_checks(b: PostBatch, checks: dict, values: dict) -> None:
    if _block_is_plain(b):
        nan = filled(np.nan, b.n)
        values.update(
            pad_area_eff=nan,
            soil_capacity=nan,
            soil_given=filled(False, b.n),
            lateral_n=nan,
            lateral_min_n=nan,
            lateral_thrust_n=nan,
            ground_plain=True,
        )
        checks["soil_bearing"] = Check(
            "soil_bearing", "mudsill or pad on the soil", "IBC 2012 Table 1806.2", nan, b.load_n
        )
        return
    sf = b.soil_flags.astype(np.int64)
    q = b.soil_kpa
    soil_given = ~np.isnan(q) | (sf != 0)
    a_eff = effective_pad_area_mm2(b)
    # IBC 2012 Table 1806.2: capacity = presumptive allowable pressure x bearing area
    cap = q * loads.KPA_N_PER_MM2 * a_eff
    values["pad_area_eff"] = a_eff
    values["soil_capacity"] = cap
    values["soil_given"] = soil_given
    checks["soil_bearing"] = Check(
        "soil_bearing", "mudsill or pad on the soil", "IBC 2012 Table 1806.2", cap, b.load_n
    )

    # steel bearing plate at the cap and sill (NDS 2018 §3.10.2, §3.10.4); not for EC5 posts
    plate = ~np.isnan(b.plate_lb_mm) & (b.method != EC5)
    if plate.any():
        lb = np.maximum(np.where(plate, b.plate_lb_mm, b.d1_mm), b.d1_mm)
        a_plate = lb * b.d2_mm  # plate length along the grain x post thickness across, judgement
        common = values["cm_bear"] * values["ct_f"] * values["perp_time"] * a_plate
        p_cap = b.top_fc_perp_mpa * nds.bearing_area_factor(lb, b.top_cb) * common
        p_sill = b.bottom_fc_perp_mpa * nds.bearing_area_factor(lb, b.bottom_cb) * common
        for name, p in (("cap_bearing", p_cap), ("sill_bearing", p_sill)):
            c = checks.get(name)
            if c is not None:
                c.capacity_n = np.where(plate, p, c.capacity_n)
        values["plate_area"] = np.where(plate, a_plate, np.nan)

    # bracing demand: what the bracing must carry, not a capacity (loads.lateral_demand)
    lat = np.full(b.n, np.nan)
    lat_min = np.full(b.n, np.nan)
    lat_thrust = np.full(b.n, np.nan)
    has_load = ~np.isnan(b.load_n)
    for r, row in enumerate(lateral_rows()):
        m = (b.lateral_rule == r) & has_load
        if not m.any():
            continue
        edge = b.lateral_edge_mm[m]
        lean = np.nan_to_num(b.lean_mm[m], nan=0.0)
        d = loads.lateral_demand(
            b.load_n[m],
            row["key"],
            offset_mm=lean,
            height_mm=b.height_mm[m],
            dead_n=b.load_n[m],
            floor_edge_mm=np.nan_to_num(edge, nan=0.0) if row["key"] == "cal-osha" else None,
        )
        bad = np.isnan(edge) if row["key"] == "cal-osha" else np.zeros(edge.shape, bool)
        lat[m] = np.where(bad, np.nan, d.total_n)
        lat_min[m] = np.where(bad, np.nan, d.minimum_n)
        lat_thrust[m] = d.thrust_n
    values["lateral_n"], values["lateral_min_n"], values["lateral_thrust_n"] = (
        lat,
        lat_min,
        lat_thrust,
    )


def _ground_flags(b: PostBatch, values: dict, flag: FlagSet) -> None:
    if values.get("ground_plain"):
        return
    sf = b.soil_flags.astype(np.int64)
    has_pad = ~np.isnan(b.pad_area_mm2)
    soil_given = values["soil_given"]
    involved = has_pad | soil_given
    # a pad with no soil stated is unknown soil: never assumed good
    unknown = involved & (((sf & loads.SOIL_UNKNOWN) != 0) | (has_pad & ~soil_given))
    flag("soil_unknown", unknown)
    flag("soil_unprepared", involved & ((sf & loads.SOIL_UNPREPARED) != 0))
    flag("soil_assumed", involved & ((sf & loads.SOIL_ASSUMED) != 0))
    flag("pad_missing", soil_given & ~np.isnan(b.soil_kpa) & ~has_pad)
    flag("pad_rigid", has_pad & np.isnan(b.pad_t_mm))
    flag("plate", ~np.isnan(b.plate_lb_mm) & (b.method != EC5))
    flag("shared", b.shared_by > 1)


# ---- per post, on demand: working and summary ------------------------------------------------


def _lbf(x: float) -> float | None:
    return None if np.isnan(x) else round(float(x) / LBF, 1)


def _kn(x: float) -> float | None:
    return None if np.isnan(x) else round(float(x) / 1000.0, 4)


def _factor_name(method: int) -> str:
    return {LRFD: "lambda", EC5: "kmod"}.get(method, "CD")


def load_combination(r: Rating, i: int) -> dict:
    """The governing combination of post i (or the load as given) with its factor."""
    b = r.batch
    method = int(b.method[i])
    fname = _factor_name(method)
    factor = float({LRFD: b.lam, EC5: b.kmod}.get(method, b.cd)[i])
    k = int(b.combo[i])
    out = {
        "factor_name": fname,
        "factor": round(factor, 4),
        "load_lbf": _lbf(b.load_n[i]),
        "load_kN": _kn(b.load_n[i]),
        "shared_by": int(b.shared_by[i]),
    }
    if k < 0:
        out.update(name="as given (--load)", key=None, clause="")
    else:
        row = combination_rows()[k]
        clause = row["clause"] + ("; NDS 2018 §2.3.2" if fname == "CD" else "")
        out.update(name=row["name"], key=row["key"], clause=clause)
    return out


def ground_summary(r: Rating, i: int) -> dict | None:
    b, v = r.batch, r.values
    has_pad = not np.isnan(b.pad_area_mm2[i])
    if not (has_pad or bool(v["soil_given"][i])):
        return None
    cap = float(v["soil_capacity"][i])
    c = r.checks["soil_bearing"]
    q = float(b.soil_kpa[i])
    return {
        "soil_check": "not verified" if np.isnan(cap) else "verified",
        "allowable_psf": None if np.isnan(q) else round(q / PSF, 0),
        "allowable_kPa": None if np.isnan(q) else round(q, 3),
        "pad_area_ft2": None if not has_pad else round(float(b.pad_area_mm2[i]) / FT2, 3),
        "effective_area_ft2": None if not has_pad else round(float(v["pad_area_eff"][i]) / FT2, 3),
        "capacity_lbf": _lbf(cap),
        "capacity_kN": _kn(cap),
        "ratio": None if np.isnan(c.ratio[i]) else round(float(c.ratio[i]), 4),
        "clause": "IBC 2012 Table 1806.2",
    }


def bracing_summary(r: Rating, i: int) -> dict | None:
    b, v = r.batch, r.values
    k = int(b.lateral_rule[i])
    if k < 0:
        return None
    row = lateral_rows()[k]
    return {
        "rule": row["key"],
        "clause": row["source"],
        "minimum_lbf": _lbf(v["lateral_min_n"][i]),
        "thrust_lbf": _lbf(v["lateral_thrust_n"][i]),
        "total_lbf": _lbf(v["lateral_n"][i]),
        "total_kN": _kn(v["lateral_n"][i]),
        "note": "what the bracing must carry in each direction; not a capacity check",
    }


def _summary(r: Rating, i: int, out: dict) -> None:
    out["load_combination"] = load_combination(r, i)
    g = ground_summary(r, i)
    if g is not None:
        out["ground"] = g
    br = bracing_summary(r, i)
    if br is not None:
        out["bracing"] = br


def ground_steps(r: Rating, i: int) -> list[Step]:
    b, v = r.batch, r.values
    s: list[Step] = []
    lc = load_combination(r, i)
    if lc["key"] is not None:
        s.append(
            Step(
                f"Governing load combination (every combination rated for every check; this "
                f"one gives the largest ratio of the governing check, {lc['factor_name']})",
                f"{lc['name']}: {q.force(b.load_n[i] * b.shared_by[i])}, {lc['factor_name']} = "
                f"{lc['factor']}",
                lc["clause"],
            )
        )
    if b.shared_by[i] > 1:
        s.append(
            Step(
                "Load per post, shared equally under a stiff cap",
                f"1/{int(b.shared_by[i])}: {q.force(b.load_n[i])}",
                "judgement",
            )
        )
    g = ground_summary(r, i)
    if g is not None:
        if g["pad_area_ft2"] is not None:
            t = b.pad_t_mm[i]
            how = (
                "rigid pad (thickness not given)"
                if np.isnan(t)
                else f"sides up to post + 2 x {t:.0f} mm"
            )
            s.append(
                Step(
                    "Pad on the soil: area, effective area",
                    f"{g['pad_area_ft2']:.3f} ft2, {g['effective_area_ft2']:.3f} ft2 ({how})",
                    "judgement: 1:1 spread through the pad",
                )
            )
        qtxt = (
            "none (not verified)"
            if g["allowable_psf"] is None
            else f"{g['allowable_psf']:,.0f} psf"
        )
        s.append(Step("Soil: presumptive allowable pressure", qtxt, "IBC 2012 Table 1806.2"))
        if g["capacity_lbf"] is not None:
            s.append(
                Step(
                    "Soil capacity q x A_eff",
                    q.force(v["soil_capacity"][i]),
                    "IBC 2012 Table 1806.2",
                )
            )
    br = bracing_summary(r, i)
    if br is not None and br["total_lbf"] is not None:
        s.append(
            Step(
                "Bracing must carry (minimum + out-of-plumb thrust)",
                f"{q.force(v['lateral_min_n'][i])} + {q.force(v['lateral_thrust_n'][i])} = "
                f"{q.force(v['lateral_n'][i])}",
                br["clause"] + "; statics P x lean / h",
            )
        )
    return s


# the ground under the post, and the loads it carries: the governing combination, a load shared
# under a stiff cap, and what the bracing must carry
GROUND = Stage(
    name="ground",
    inputs=(
        "pad_area_mm2",
        "pad_l1_mm",
        "pad_l2_mm",
        "pad_t_mm",
        "soil_kpa",
        "soil_flags",
        "plate_lb_mm",
        "lateral_rule",
        "lateral_edge_mm",
        "lean_mm",
        "shared_by",
        "combo",
        "load_n",
        "height_mm",
        "method",
    ),
    checks=("soil_bearing",),
    flags=FLAGS,
    run=_ground_checks,
    raise_flags=_ground_flags,
    summary=_summary,
    steps=ground_steps,
)
