"""Builders: one row of parsed column values -> PostBatch fields (SI scalars).

Each builder takes the parsed row (column name -> value; absent columns are missing) and returns
a dict of PostBatch field values, or raises ValueError naming the column. These are the core
builders; the registry (columns.py) lists every builder in the order they run.
"""

from __future__ import annotations

from collections.abc import Callable
from typing import Any

import numpy as np

from fieldcheck.engine import materials, nds, sections
from fieldcheck.engine.batch import (
    BUILT_UP,
    DIMENSION,
    EC5,
    END_NAMES,
    METHOD_NAMES,
    RECT,
    ROUND,
    TIMBER,
)
from fieldcheck.engine.customary import IN
from fieldcheck.engine.restraint import mechanism_reason, unbraced_length
from fieldcheck.row_error import RowError

Row = dict[str, Any]
Builder = Callable[[Row, dict[str, Any]], dict[str, Any]]

CD = {
    "permanent": 0.9,
    "ten-years": 1.0,
    "two-months": 1.15,
    "seven-days": 1.25,
    "ten-minutes": 1.6,
    "impact": 2.0,
}  # NDS 2018 Table 2.3.2
LAMBDA = {
    "permanent": 0.6,
    "ten-years": 0.8,
    "two-months": 0.8,
    "seven-days": 0.8,
    "ten-minutes": 1.0,
    "impact": 1.25,
}  # NDS 2018 Appendix N Table N3 (from memory), by the shortest load
CB_MIN_END_DISTANCE_MM = 3.0 * IN  # NDS 2018 §3.10.4


def section_fields(row: Row, out: dict[str, Any]) -> dict[str, Any]:
    """Section: measured wins; nominal fills; round -> equivalent square; built-up plies."""
    nominal = row.get("size")
    f: dict[str, Any] = {"shape": RECT}
    thick_nom = width_nom = None
    if "plies" in row and row["plies"] > 1:
        ply = row.get("ply")
        if ply is None:
            raise RowError(
                "ply", "ply: a built-up post needs the nominal size of one ply, e.g. --ply 2x6."
            )
        t_nom, w_nom = min(ply), max(ply)
        w_mm, t_mm = sections.nominal_dressed_mm(w_nom, t_nom)
        if "section" in row:  # measured overall size wins
            d1, d2 = max(row["section"]), min(row["section"])
        else:
            d1, d2 = w_mm, row["plies"] * t_mm
        kf = 0.75 if row.get("fastening", "nailed") == "bolted" else 0.6  # NDS 2018 §15.3.2
        f.update(shape=BUILT_UP, plies=row["plies"], kf=kf)
        thick_nom, width_nom = t_nom, w_nom
    elif "diameter" in row:
        d1 = d2 = float(
            sections.round_equivalent_side(np.array([row["diameter"]]))[0]
        )  # NDS 2018 §3.7.3
        f.update(shape=ROUND)
    elif "section" in row:
        d1, d2 = max(row["section"]), min(row["section"])
        if nominal is not None:
            thick_nom, width_nom = min(nominal), max(nominal)
    elif nominal is not None:
        thick_nom, width_nom = min(nominal), max(nominal)
        d1, d2 = sections.nominal_dressed_mm(width_nom, thick_nom)
    else:
        raise RowError(
            "size", "size: give a nominal size (e.g. 4x4), a measured --section or a --diameter."
        )
    class_from = "round" if "diameter" in row else "measured" if thick_nom is None else "nominal"
    if thick_nom is None:
        timber = bool(sections.is_timber(np.array([d2]))[0])
        thick_nom = 5 if timber else 4
        width_nom = int(sections.nominal_width_in(np.array([d1]))[0])
    f.update(d1_mm=d1, d2_mm=d2)
    out["_d1"], out["_d2"] = d1, d2
    # where the grading class comes from: the nominal size (its own table), a round post or a
    # measured section with no nominal size (materials.round_values / measured_values)
    out["_class_from"] = class_from
    # NDS 2018 §4.1.3: dimension lumber, Posts and Timbers or Beams and Stringers by size
    out["_category"] = materials.size_class(int(thick_nom), int(width_nom))
    out["_width_nom"], out["_thick_nom"] = int(width_nom), int(thick_nom)
    f["product"] = TIMBER if thick_nom >= 5 else DIMENSION
    return f


def height_fields(row: Row, out: dict[str, Any]) -> dict[str, Any]:
    if "height" not in row:
        raise RowError(
            "height", "height: the post's height is needed, e.g. --height 10ft or 8' 6\"."
        )
    h = row["height"]
    f: dict[str, Any] = {"height_mm": h}
    for col, axis in (("brace_strong", 1), ("brace_weak", 2)):
        pts = row.get(col) or []
        if pts:
            try:
                f[f"lu{axis}_mm"] = unbraced_length(h, pts, col)
            except ValueError as exc:
                raise RowError(col, str(exc)) from None
            f[f"braced{axis}"] = True
            first = sorted(pts)[:2]
            f[f"brace{axis}a_mm"] = first[0]
            if len(first) > 1:
                f[f"brace{axis}b_mm"] = first[1]
    return f


def end_fields(row: Row, out: dict[str, Any]) -> dict[str, Any]:
    top = END_NAMES.index(row.get("top", "pinned"))
    bottom = END_NAMES.index(row.get("bottom", "pinned"))
    springs = any(k in row for k in ("top_spring", "bottom_spring", "top_ratio", "bottom_ratio"))
    why = None if springs else mechanism_reason(bottom, top)  # spring ends: checked by the solver
    if why:
        raise RowError("top", why)
    # an end nobody stated (neither the end nor a spring at it) is taken as pinned, and the rating
    # says so (judgement: pinned holds the end sideways, which nobody saw)
    unstated = any(
        end not in row and f"{end}_spring" not in row and f"{end}_ratio" not in row
        for end in ("top", "bottom")
    )
    return {
        "top": top,
        "bottom": bottom,
        "theoretical_k": bool(row.get("k_theoretical", False)),
        "ends_assumed": unstated,
    }


def load_duration(row: Row) -> str:
    """The duration of a load given directly, or of the capacity shown where no load is given:
    as stated, else permanent (CD 0.9, lambda 0.6), the conservative choice for an existing post
    (NDS 2018 Table 2.3.2; Appendix N Table N3). Tributary loads take each combination's own
    (engine/combinations.py), whatever this says."""
    return row.get("duration") or "permanent"


def material_fields(row: Row, out: dict[str, Any]) -> dict[str, Any]:
    method = METHOD_NAMES.index(row.get("method", "asd"))
    duration = load_duration(row)
    f: dict[str, Any] = {"method": method, "cd": CD[duration], "lam": LAMBDA[duration]}
    if row.get("incised"):  # taken as treated: NDS 2018 Table 2.3.2 and Table N3 footnotes
        f["cd"] = min(f["cd"], nds.TREATED_CD_MAX)
        f["lam"] = min(f["lam"], nds.TREATED_LAMBDA_MAX)
    f["duration_assumed"] = "load" in row and "duration" not in row
    if method == EC5:
        return f  # the EC5 builder fills the material
    species = row.get("species", "unknown")
    grade = row.get("grade", "unknown")
    cat = out["_category"]
    class_from = out.get("_class_from", "nominal")
    w, t = out["_width_nom"], out["_thick_nom"]
    try:
        if class_from == "round":  # no table for round sawn posts: the lower class, no CF
            rv = materials.round_values(species, grade)
        elif class_from == "measured":  # class unknown: never above a larger section
            rv = materials.measured_values(
                species, grade, round(out["_d1"] / IN, 6), round(out["_d2"] / IN, 6)
            )
        else:
            rv = materials.reference_values(species, grade, cat, w, t)
            cf_fc, cf_fb = materials.size_factors(species, grade, w, t)
    except ValueError as exc:
        raise RowError("grade", str(exc)) from None
    if class_from != "nominal":
        f["product"] = TIMBER if rv["timber"] else DIMENSION
    if rv["cf_included"] or class_from != "nominal":
        cf_fc, cf_fb = 1.0, 1.0  # folded into the values (unknown bound, round, measured)
    f.update(
        fc_mpa=rv["fc"],
        fc_perp_mpa=rv["fc_perp"],
        fb_mpa=rv["fb"],
        e_mpa=rv["e"],
        emin_mpa=rv["emin"],
        cf_fc=cf_fc,
        cf_fb=cf_fb,
        wet_tabulated=rv["wet_tabulated"],
        class_unknown=rv.get("class_unknown", False),
        knowledge=rv["knowledge"],
        value_status=materials.pack_statuses(rv["statuses"]),
    )
    took = ""
    if grade == "stud" and w > 6 and class_from == "nominal":
        took = " (No.3 values: Stud wider than 6 in)"
    capped = {
        "wider": "; measured, no nominal size: no more than a wider piece's",
        "timber": "; measured, no nominal size: no more than the 4.5 in thick timber's",
    }.get(rv.get("capped", ""), "")
    if capped:  # the nominal size names the grading class, and its own table then applies
        capped += " (give the nominal size to rate it in its own class)"
    out["_material"] = f"{species} {grade}{took} ({rv['table']}{capped}, {rv['status']})"
    out["_value_statuses"] = dict(rv["statuses"])
    # where the values came from and how sure (read / secondary / memory), for every person
    # who sees the rating: CLI, --json, interface, report (meta of parse_records)
    out["_values_status"] = rv["status"]
    tab = rv["table"]  # '4A', '4B (5-6 in wide)', 'lowest of 4A, 4D ...', 'round post: ...'
    out["_values_source"] = (
        f"NDS Supplement 2018 Table {tab}" if tab[:1].isdigit() else f"NDS Supplement 2018, {tab}"
    )
    out["_e_mpa"] = rv["e"]
    return f


WET_MOISTURE_PCT = 19.0  # NDS Supplement: dry service is 19 % moisture content or less


def bearing_wet(moisture_pct):
    """The cap and sill share the post's exposure (judgement): wet above 19 % (a number or an
    array of them, so the column-wise path lifts the same rule)."""
    return moisture_pct > WET_MOISTURE_PCT


def service_fields(row: Row, out: dict[str, Any]) -> dict[str, Any]:
    f: dict[str, Any] = {}
    if "moisture" in row:
        f["moisture_pct"] = row["moisture"]
        f["bearing_wet"] = bearing_wet(row["moisture"])
    if "temperature" in row:
        f["temp_c"] = row["temperature"]
    f["incised"] = bool(row.get("incised", False))
    f["construction"] = bool(row.get("construction", False))
    if "load" in row:
        f["load_n"] = row["load"]
    return f


def bearing_fields(row: Row, out: dict[str, Any]) -> dict[str, Any]:
    f: dict[str, Any] = {}
    for end, col in (("top", "cap"), ("bottom", "sill")):
        sp = row.get(f"{col}_species")
        if f"{col}_species" in row and sp is None:  # stated none: not wood (steel, concrete)
            f[f"{end}_not_wood"] = True
        if sp:
            fc_perp, status = materials.fc_perp_held(sp)
            f[f"{end}_fc_perp_mpa"] = fc_perp
            # the cap's or sill's reference value and its status reach the person too
            out["_material"] = (
                f"{out.get('_material', '')}; {col} {sp}: Fc-perp {fc_perp / materials.PSI:.0f} "
                f"psi ({status}, the lowest of its grades)"
            )
        if f"{col}_bearing" in row:
            f[f"{end}_lb_mm"] = row[f"{col}_bearing"]
        dist = row.get(f"{col}_end_distance")
        f[f"{end}_cb"] = dist is not None and dist >= CB_MIN_END_DISTANCE_MM
    if "end_contact" in row:
        f["end_contact"] = row["end_contact"] / 100.0
    f["end_plate"] = bool(row.get("end_plate", False))
    return f
