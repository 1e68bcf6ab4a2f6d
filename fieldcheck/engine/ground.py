"""The ground under a post and bearing plates.

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
- the JSON summary: the ``ground`` key. (The governing load combination, a shared load and the
  bracing demand are the load stages', engine/load_stages.py.)

Why these action levels (judgement): unprepared ground (mud, organic soil, uncompacted fill) has
no presumptive value at all in IBC 2012 §1806.2 and soft ground under a mudsill is a
stop-and-escalate condition in field practice, so the post needs work before the due date
(repair-or-brace). An unclassified soil may well be adequate but cannot be shown to be; it is
flagged and the post is at least monitored until the soil is classified or the 1,500 psf default
(24 CFR 3285.202(e)) is accepted explicitly. Neither ever passes silently.
"""

from __future__ import annotations

import numpy as np

from fieldcheck.engine import loads, nds
from fieldcheck.engine import quantities as q
from fieldcheck.engine.batch import EC5, PostBatch
from fieldcheck.engine.bearing_area import plate_bearing
from fieldcheck.engine.blocks import filled
from fieldcheck.engine.customary import FT, LBF
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
)


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
    """No pad, soil or plate anywhere in this block."""
    return (
        np.isnan(b.pad_area_mm2).all()
        and np.isnan(b.soil_kpa).all()
        and not b.soil_flags.any()
        and np.isnan(b.plate_lb_mm).all()
    )


def _ground_checks(b: PostBatch, checks: dict, values: dict) -> None:
    if _block_is_plain(b):
        nan = filled(np.nan, b.n)
        values.update(
            pad_area_eff=nan,
            soil_capacity=nan,
            soil_given=filled(False, b.n),
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
    plates = plate_bearing(b)
    plate = None if plates is None else plates[0] & (b.method != EC5)
    if plate is not None and plate.any():
        _, lb, a_plate = plates
        common = values["cm_bear"] * values["ct_f"] * values["perp_time"] * a_plate
        p_cap = b.top_fc_perp_mpa * nds.bearing_area_factor(lb, b.top_cb) * common
        p_sill = b.bottom_fc_perp_mpa * nds.bearing_area_factor(lb, b.bottom_cb) * common
        for name, p in (("cap_bearing", p_cap), ("sill_bearing", p_sill)):
            c = checks.get(name)
            if c is not None:
                c.capacity_n = np.where(plate, p, c.capacity_n)
        values["plate_area"] = np.where(plate, a_plate, np.nan)


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
    flag("plate", ~np.isnan(b.plate_lb_mm))  # NDS here, EC5 in ec5_rating: both apply them


# ---- per post, on demand: working and summary ------------------------------------------------


def _lbf(x: float) -> float | None:
    return None if np.isnan(x) else round(float(x) / LBF, 1)


def _kn(x: float) -> float | None:
    return None if np.isnan(x) else round(float(x) / 1000.0, 4)


def ground_summary(r: Rating, i: int) -> dict | None:
    b, v = r.batch, r.values
    has_pad = not np.isnan(b.pad_area_mm2[i])
    if not (has_pad or bool(v["soil_given"][i])):
        return None
    cap = float(v["soil_capacity"][i])
    c = r.checks["soil_bearing"]
    q = float(b.soil_kpa[i])
    # a pad of unknown thickness is taken as rigid: the check is made, but not relied on (the
    # pad_rigid flag, repair level; judgement, see FLAGS)
    rigid = has_pad and np.isnan(b.pad_t_mm[i])
    return {
        "soil_check": (
            "not verified"
            if np.isnan(cap)
            else "not relied on: pad thickness not given"
            if rigid
            else "verified"
        ),
        "allowable_psf": None if np.isnan(q) else round(q / PSF, 0),
        "allowable_kPa": None if np.isnan(q) else round(q, 3),
        "pad_area_ft2": None if not has_pad else round(float(b.pad_area_mm2[i]) / FT2, 3),
        "effective_area_ft2": None if not has_pad else round(float(v["pad_area_eff"][i]) / FT2, 3),
        "capacity_lbf": _lbf(cap),
        "capacity_kN": _kn(cap),
        "ratio": None if np.isnan(c.ratio[i]) else round(float(c.ratio[i]), 4),
        "clause": "IBC 2012 Table 1806.2",
    }


def _summary(r: Rating, i: int, out: dict) -> None:
    g = ground_summary(r, i)
    if g is not None:
        out["ground"] = g


def ground_steps(r: Rating, i: int) -> list[Step]:
    b, v = r.batch, r.values
    s: list[Step] = []
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
    return s


# the ground under the post (soil, pad) and steel bearing plates at the cap and sill
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
        "load_n",
        "d1_mm",
        "d2_mm",
        "top_fc_perp_mpa",
        "bottom_fc_perp_mpa",
        "top_cb",
        "bottom_cb",
        "method",
    ),
    checks=("soil_bearing",),
    flags=FLAGS,
    run=_ground_checks,
    raise_flags=_ground_flags,
    summary=_summary,
    steps=ground_steps,
)
