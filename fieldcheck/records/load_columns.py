"""Columns and builder for the load a post carries and the ground under it.

Instead of a direct ``load``, a post may be given a tributary area (``tributary`` or ``spacing``)
with area loads (``dead``, ``live`` or ``occupancy``, ``snow``, ``roof_live``, ``rain``) and point
loads from above; the builder forms the ASCE 7 combinations (ASD §2.4.1 or LRFD §2.3.1, by the
post's method) with :mod:`fieldcheck.engine.loads` and sets the governing load and its factor
(CD for ASD, NDS 2018 §2.3.2; lambda for LRFD, NDS 2018 Appendix N). The ground columns (pad,
soil, plate) and the bracing columns feed engine/ground.py.
"""

from __future__ import annotations

from typing import Any

import numpy as np

from fieldcheck import units
from fieldcheck.engine import loads, materials
from fieldcheck.engine.batch import EC5, METHOD_NAMES
from fieldcheck.engine.load_stages import lateral_rows
from fieldcheck.engine.refdata import table
from fieldcheck.records.core_columns import (
    DURATION_ALIASES,
    DURATIONS,
    Column,
    choice,
    count,
    yes_no,
)
from fieldcheck.row_error import RowError

AREA_LOADS = ("dead", "live", "occupancy", "snow", "roof_live", "rain")
POINT_LOADS = ("point", "point_live")
POSITIONS = loads.POSITION_NAMES


def _area_load(field: str):
    return lambda s: units.parse_area_load(s, field, lo=0.0, hi=1000.0)


def _dead(s: str) -> float:
    """Sum of parts joined by +, each a preset key or an area load (kPa)."""
    total = 0.0
    keys = loads.dead_load_keys()
    for part in s.split("+"):
        p = part.strip().lower().replace(" ", "-")
        if not p:
            raise ValueError(f"dead: '{s}' has an empty part; write e.g. floor-carpet + 5 psf.")
        if p in keys:
            total += loads.dead_load_kpa(p)
            continue
        try:
            total += units.parse_area_load(part, "dead", lo=0.0, hi=1000.0)
        except ValueError:
            raise ValueError(
                f"dead: '{part.strip()}' is neither an area load (e.g. 10 psf or 0.48 kPa) nor a "
                f"preset ({', '.join(keys)})."
            ) from None
    return total


def _pad(s: str) -> tuple[float, float, float]:
    """(area mm^2, side 1, side 2) from `2ft x 2ft` / `600 x 600 mm`, or an area (sides NaN)."""
    if "x" in s.lower():
        a, b = units.parse_section(s, "pad", lo=50.0, hi=10_000.0)
        return a * b, a, b
    try:
        return units.parse_area(s, "pad", lo=2500.0, hi=1e8), np.nan, np.nan
    except ValueError:
        raise ValueError(
            f"pad: '{s}' is not a pad size or area; write e.g. 2ft x 2ft, 600 x 600 mm or 4 ft2."
        ) from None


def _soil(s: str) -> str:
    keys = loads.soil_keys()
    k = s.strip().lower().replace(" ", "-").replace("_", "-")
    k = {r["class_no"]: r["key"] for r in loads.table("soil_bearing") if r["class_no"]}.get(k, k)
    if k not in keys:
        raise ValueError(
            f"soil: '{s}' is not a soil class we hold; use an IBC 2012 Table 1806.2 class 1-5 or "
            "one "
            f"of {', '.join(keys)}."
        )
    return k


def _lateral(s: str) -> str:
    keys = tuple(r["key"] for r in lateral_rows())
    return choice("lateral_rule", keys)(s)


_DUR = choice("duration", DURATIONS, DURATION_ALIASES)


def _duration(field: str):
    def parse(s: str) -> str:
        try:
            return _DUR(s)
        except ValueError:
            raise ValueError(
                f"{field}: '{s}' is not a load duration; use one of {', '.join(DURATIONS)}."
            ) from None

    return parse


COLUMNS: tuple[Column, ...] = (
    Column(
        "tributary",
        "load",
        "tributary area of floor or roof the post carries (instead of --load)",
        "120 sq ft",
        lambda s: units.parse_area(s, "tributary", lo=1e4, hi=1e10),
    ),
    Column(
        "spacing",
        "load",
        "post spacing both ways, for the tributary area (instead of --tributary)",
        "10ft x 12ft",
        lambda s: units.parse_section(s, "spacing", lo=100.0, hi=50_000.0),
    ),
    Column(
        "position",
        "load",
        "with --spacing: interior, edge (half) or corner (quarter) post",
        "interior",
        choice("position", POSITIONS),
        "interior",
        POSITIONS,
    ),
    Column(
        "dead",
        "load",
        "dead load per floor: an area load or a preset, joined by +",
        "floor-carpet + 5 psf",
        _dead,
    ),
    Column(
        "live",
        "load",
        "live load per floor, an area load (or give --occupancy)",
        "40 psf",
        _area_load("live"),
    ),
    Column(
        "occupancy",
        "load",
        "occupancy preset for the live load (ASCE 7 Table 4.3-1)",
        "residential",
        choice("occupancy", loads.live_load_keys()),
        "",
        loads.live_load_keys(),
    ),
    Column(
        "snow",
        "load",
        "roof snow load, an area load (take it from the local authority)",
        "30 psf",
        _area_load("snow"),
    ),
    Column("roof_live", "load", "roof live load, an area load", "20 psf", _area_load("roof_live")),
    Column(
        "rain",
        "load",
        "rain load, an area load (give --rain-duration too)",
        "5 psf",
        _area_load("rain"),
    ),
    Column(
        "rain_duration",
        "load",
        "duration of the rain load (NDS 2018 Table 2.3.2 has none)",
        "seven-days",
        _duration("rain_duration"),
        "",
        DURATIONS,
    ),
    Column(
        "point",
        "load",
        "point load from above, counted as dead load",
        "2000 lbf",
        lambda s: units.parse_force(s, "point", lo=0.0, hi=1e8),
    ),
    Column(
        "point_live",
        "load",
        "live part of a point load from above",
        "1000 lbf",
        lambda s: units.parse_force(s, "point_live", lo=0.0, hi=1e8),
    ),
    Column(
        "floors",
        "load",
        "floors (of the same build-up) carried over the tributary area",
        "1",
        count("floors", 1, 20),
        "1",
    ),
    Column(
        "live_duration",
        "load",
        "duration of the live load (seven-days for a construction load)",
        "ten-years",
        _duration("live_duration"),
        "ten-years",
        DURATIONS,
    ),
    Column(
        "live_reduction",
        "load",
        "reduce the live load by ASCE 7 §4.7 (default no for shoring)",
        "no",
        yes_no("live_reduction"),
        "no",
    ),
    Column(
        "shared_by",
        "load",
        "posts side by side under a stiff cap sharing the load equally",
        "1",
        count("shared_by", 1, 4),
        "1",
    ),
    Column(
        "lateral_rule",
        "load",
        "report what the bracing must carry by this rule",
        "fema-minimum",
        _lateral,
        "",
        tuple(r["key"] for r in lateral_rows()),
    ),
    Column(
        "brace_edge",
        "load",
        "with --lateral-rule cal-osha: length of floor edge braced",
        "20 ft",
        lambda s: units.parse_length(s, "brace_edge", lo=100.0, hi=1e6),
    ),
    Column(
        "lean",
        "load",
        "out of plumb over the height, for the bracing thrust",
        "1 in",
        lambda s: units.parse_length(s, "lean", lo=0.1, hi=2000.0),
    ),
    Column(
        "pad", "bearing", "mudsill or pad on the ground: both sides, or its area", "2ft x 2ft", _pad
    ),
    Column(
        "pad_thickness",
        "bearing",
        "thickness of the mudsill or pad (the load spreads 1:1 through it)",
        "3.5 in",
        lambda s: units.parse_length(s, "pad_thickness", lo=5.0, hi=3000.0),
    ),
    Column(
        "soil",
        "bearing",
        "soil under the pad: IBC class 1-5 or a key, unknown, unprepared",
        "sand",
        _soil,
        "",
        loads.soil_keys(),
    ),
    Column(
        "soil_default",
        "bearing",
        "soil class unknown: accept the 1,500 psf default (yes/no)",
        "no",
        yes_no("soil_default"),
        "no",
    ),
    Column(
        "plate",
        "bearing",
        "steel bearing plates at cap and sill: length along their grain",
        "8 in",
        lambda s: units.parse_length(s, "plate", lo=10.0, hi=2000.0),
    ),
)


def load_fields(row: dict[str, Any], out: dict[str, Any]) -> dict[str, Any]:
    """Tributary loads -> load_n, cd / lam, combo; ground, plate and bracing fields."""
    f: dict[str, Any] = {}
    shared = int(row.get("shared_by", 1))
    f["shared_by"] = shared
    area_given = [c for c in ("tributary", "spacing") if c in row]
    area_loads = [c for c in AREA_LOADS if c in row]
    points = [c for c in POINT_LOADS if c in row]
    computed = bool(area_given or area_loads or points)
    if len(area_given) == 2:
        raise RowError("spacing", "spacing: give the tributary area or the spacing, not both.")
    if computed and "load" in row:
        raise RowError(
            "load",
            "load: give either --load or a tributary area with area loads, not both "
            "(e.g. --tributary 120sqft --dead 10psf --live 40psf).",
        )
    if area_loads and not area_given:
        c = area_loads[0]
        raise RowError(
            c,
            f"{c}: an area load needs the tributary area; add --tributary (e.g. 120 sq ft) "
            "or --spacing (e.g. 10ft x 12ft).",
        )
    if area_given and not area_loads:
        c = area_given[0]
        raise RowError(c, f"{c}: give the area loads on it too, e.g. --dead 10psf --live 40psf.")
    if "live" in row and "occupancy" in row:
        raise RowError("occupancy", "occupancy: give the live load or the occupancy, not both.")
    if computed:
        if "duration" in row:
            raise RowError(
                "duration",
                "duration: with tributary loads the duration comes from the governing "
                "combination; use --live-duration to change the live load's.",
            )
        method = row.get("method", "asd")
        if METHOD_NAMES.index(method) == EC5:
            raise RowError(
                "method",
                "method: tributary loads use the ASCE 7 combinations (asd or lrfd); "
                "for ec5 give the design load with --load.",
            )
        if "spacing" in row:
            s1, s2 = row["spacing"]
            area = float(loads.tributary_area_grid_mm2(s1, s2, row.get("position", "interior"))[0])
        else:
            area = row.get("tributary", 0.0)
        nf = int(row.get("floors", 1))
        q_live = row.get(
            "live", loads.live_load_kpa(row["occupancy"]) if "occupancy" in row else 0.0
        )
        k = loads.KPA_N_PER_MM2 * area
        D = row.get("dead", 0.0) * k * nf + row.get("point", 0.0)  # common practice, no source
        L = q_live * k * nf + row.get("point_live", 0.0)
        Lr, S, R = (row.get(c, 0.0) * k for c in ("roof_live", "snow", "rain"))
        if R > 0 and "rain_duration" not in row:
            raise RowError(
                "rain_duration",
                "rain_duration: a rain load has no duration in NDS 2018 Table 2.3.2; "
                "state it, e.g. --rain-duration seven-days.",
            )
        # a dead load nobody stated is not zero: a floor or roof carries its own weight, and a
        # point load from above its dead part (judgement); refused until stated, 0 if truly none
        if area_given and "dead" not in row:
            raise RowError(
                "dead",
                "dead: a tributary area carries its own weight; give its dead load (e.g. --dead "
                "floor-wood + 5 psf or roof-asphalt, or --dead 0 psf if there is truly none).",
            )
        if not area_given and "point" not in row:
            raise RowError(
                "point",
                "point: give the dead part of the load from above too (e.g. --point 2000 lbf, "
                "or --point 0 lbf if there is truly none).",
            )
        reduce = (
            {"live_reduction_area_mm2": area, "floors": nf} if row.get("live_reduction") else {}
        )
        # NDS 2018 Appendix N Table N3: lambda of 1.2D+1.6L+0.5(Lr or S or R) by the kind of
        # live load: 0.7 from storage (a storage occupancy; a live load stated permanent,
        # judgement), 1.25 from impact, 0.8 from occupancy
        live_duration = row.get("live_duration", "ten-years")
        if live_duration == "impact":
            live_kind = "impact"
        elif live_duration == "permanent" or row.get("occupancy", "").startswith("storage"):
            live_kind = "storage"
        else:
            live_kind = "occupancy"
        f["live_kind"] = loads.LIVE_KINDS.index(live_kind)
        try:
            if method == "lrfd":
                c = loads.lrfd_combinations(D, L, Lr, S, R, live_kind=live_kind, **reduce)
            else:
                durations = {
                    "L": row.get("live_duration", "ten-years"),
                    "R": row.get("rain_duration"),
                }
                c = loads.asd_combinations(D, L, Lr, S, R, durations=durations, **reduce)
        except ValueError as exc:
            raise RowError("live_duration", f"live_duration: {exc}") from None
        # every combination is rated for every check by the engine (engine/combinations.py):
        # the nominal loads per post go in, with the live and rain durations
        L = L * float(c.live_reduction[0])  # ASCE 7 §4.7.2 (1.0 unless reduction is asked)
        for fld, x in zip(
            ("nom_d_n", "nom_l_n", "nom_lr_n", "nom_s_n", "nom_r_n"), (D, L, Lr, S, R), strict=True
        ):
            f[fld] = float(x) / shared
        cds = {r["key"]: float(r["cd"]) for r in table("load_durations")}
        f["cd_l"] = cds[row.get("live_duration", "ten-years")]
        if R > 0:
            f["cd_r"] = cds[row["rain_duration"]]
        f["load_n"] = float(np.max(c.load_n[:, 0])) / shared  # the largest; the engine decides
        out["_combination"] = c.rows(0)
    elif "load" in row and shared > 1:
        f["load_n"] = row["load"] / shared

    # ground under the post (engine/ground.py)
    if "pad" in row:
        f["pad_area_mm2"], f["pad_l1_mm"], f["pad_l2_mm"] = row["pad"]
    if "pad_thickness" in row:
        f["pad_t_mm"] = row["pad_thickness"]
    soil = row.get("soil")
    if row.get("soil_default") and soil in (None, "unknown"):
        soil = "unknown-hud-default"  # 24 CFR 3285.202(e), only when the user asks
    if soil is not None:
        check = loads.soil_check(0.0, 1.0, soil)
        f["soil_kpa"] = float(check.allowable_kpa[0])
        f["soil_flags"] = int(check.flags[0])
    if "plate" in row:
        f["plate_lb_mm"] = row["plate"]
        f["end_plate"] = True

    # bracing demand
    if "lateral_rule" in row:
        keys = [r["key"] for r in lateral_rows()]
        f["lateral_rule"] = keys.index(row["lateral_rule"])
        if row["lateral_rule"] == "cal-osha" and "brace_edge" not in row:
            raise RowError(
                "brace_edge",
                "brace_edge: the cal-osha rule needs the length of floor edge braced, "
                "e.g. --brace-edge 20ft.",
            )
    if "brace_edge" in row:
        f["lateral_edge_mm"] = row["brace_edge"]
    if "lean" in row:
        f["lean_mm"] = row["lean"]
    sp = row.get("species", "unknown")
    f["species_code"] = materials.SPECIES.index(sp) if sp in materials.SPECIES else -1
    return f


load_fields.column = "load"  # type: ignore[attr-defined]
