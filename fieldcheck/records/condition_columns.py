"""Columns and builder for the post as found (engine/condition.py; common practice, no source).

Faces: a *wide* face is the face as wide as the post's larger side d1 (loss there reduces the
thickness d2); a *narrow* face is d2 wide. On a square post, "wide" and "narrow" are any two
adjacent faces. "weak" means across the thin side (buckling in the plane of d2), "strong" across
the wide side. Depths are measured from the original face; 0 means none.
"""

from __future__ import annotations

import re
from typing import Any

import numpy as np

from fieldcheck import units
from fieldcheck.engine import condition as cond
from fieldcheck.engine.refdata import table
from fieldcheck.records.core_columns import Column, choice, yes_no
from fieldcheck.row_error import RowError

IN = units.IN_MM  # mm per inch


def _depth(field: str, hi: float = 1000.0):
    def parse(s: str) -> float:
        if s.strip().lower() in ("0", "none", "no", "-"):
            return 0.0
        return units.parse_length(s, field, lo=0.0, hi=hi)

    return parse


def _slope(s: str) -> float:
    t = s.strip().lower()
    if t in ("straight", "none", "0", "-"):
        return float("inf")
    m = re.fullmatch(r"(?:1\s*(?:in|:|/)\s*)?(\d+(?:\.\d+)?)", t)
    if m is None:
        raise ValueError(
            f"slope: '{s}' is not a slope of grain; write it as 1 in n, e.g. 1 in 12 (or straight)."
        )
    n = float(m.group(1))
    if n < 1.0:
        raise ValueError(
            f"slope: 1 in {n:g} is flatter than 1 in 1; give 1 in n with n of 1 or more, e.g. 1 "
            "in 12."
        )
    return n


def _ratio(field: str):
    def parse(s: str) -> float:
        try:
            v = float(s.strip())
        except ValueError:
            raise ValueError(
                f"{field}: '{s}' is not a number; give a time ratio such as 1.3."
            ) from None
        if not 1.0 < v <= 5.0:
            raise ValueError(
                f"{field}: {v:g} is out of range; give a time ratio above 1 up to 5, e.g. 1.3."
            )
        return v

    return parse


def _density(s: str) -> float:
    t = s.strip().lower().replace(" ", "")
    m = re.fullmatch(r"(\d+(?:\.\d+)?)(kg/m3|kg/m\^3|pcf|lb/ft3|lb/ft\^3)?", t)
    if m is None:
        raise ValueError(f"density: '{s}' is not a density; give e.g. 500 kg/m3 or 31 pcf.")
    v = float(m.group(1)) * (1.0 if (m.group(2) or "kg").startswith("kg") else 16.01846337)
    if not 100.0 <= v <= 1400.0:
        raise ValueError(
            f"density: {v:.0f} kg/m3 is out of range; give 100 to 1400 kg/m3, e.g. 500 kg/m3."
        )
    return v


ZONE_HELP = "full (whole height), middle (middle half), top or bottom (at that end)"
FACES = cond.FACE_NAMES

COLUMNS: tuple[Column, ...] = (
    Column(
        "decay_wide",
        "condition",
        "decay or insect loss: probed depth on one wide face",
        "1 in",
        _depth("decay_wide"),
    ),
    Column(
        "decay_wide2",
        "condition",
        "decay or insect loss on the other wide face",
        "0",
        _depth("decay_wide2"),
    ),
    Column(
        "decay_narrow",
        "condition",
        "decay or insect loss on one narrow face",
        "1/2 in",
        _depth("decay_narrow"),
    ),
    Column(
        "decay_narrow2",
        "condition",
        "decay or insect loss on the other narrow face",
        "0",
        _depth("decay_narrow2"),
    ),
    Column(
        "decay_at",
        "condition",
        f"where the decay is: {ZONE_HELP}",
        "full",
        choice("decay_at", cond.ZONE_NAMES),
        "full",
        cond.ZONE_NAMES,
    ),
    Column(
        "decay_margin",
        "condition",
        "added past the probed decay boundary (judgement; default 1/2 in)",
        "1/2 in",
        _depth("decay_margin", 100.0),
        "1/2 in",
    ),
    Column(
        "hollow",
        "condition",
        "diameter of a hollow or decayed core (drilling, shell gauge)",
        "1.5 in",
        _depth("hollow"),
    ),
    Column(
        "hollow_at",
        "condition",
        f"where the hollow is: {ZONE_HELP}",
        "full",
        choice("hollow_at", cond.ZONE_NAMES),
        "full",
        cond.ZONE_NAMES,
    ),
    Column(
        "char_wide",
        "condition",
        "char depth on one wide face (7 mm zero-strength layer added)",
        "3/4 in",
        _depth("char_wide"),
    ),
    Column(
        "char_wide2", "condition", "char depth on the other wide face", "0", _depth("char_wide2")
    ),
    Column("char_narrow", "condition", "char depth on one narrow face", "0", _depth("char_narrow")),
    Column(
        "char_narrow2",
        "condition",
        "char depth on the other narrow face",
        "0",
        _depth("char_narrow2"),
    ),
    Column(
        "char_at",
        "condition",
        f"where the char is: {ZONE_HELP}",
        "full",
        choice("char_at", cond.ZONE_NAMES),
        "full",
        cond.ZONE_NAMES,
    ),
    Column(
        "wane",
        "condition",
        "wane: width missing at a corner, on each face",
        "1/2 in",
        _depth("wane"),
    ),
    Column(
        "wane_corners",
        "condition",
        "how many corners have that wane (1 to 4)",
        "2",
        choice("wane_corners", ("1", "2", "3", "4")),
        "1",
        ("1", "2", "3", "4"),
    ),
    Column("notch", "condition", "notch depth, cut across a whole face", "1 in", _depth("notch")),
    Column(
        "notch_face",
        "condition",
        "face the notch is cut into: wide or narrow",
        "wide",
        choice("notch_face", FACES),
        "wide",
        FACES,
    ),
    Column(
        "notch_height",
        "condition",
        "height of the notch above the bottom (default: mid-height)",
        "3 ft",
        _depth("notch_height", 20_000.0),
    ),
    Column("hole", "condition", "bored hole diameter, through the post", "1 in", _depth("hole")),
    Column(
        "hole_face",
        "condition",
        "faces the hole is bored through: wide or narrow",
        "wide",
        choice("hole_face", FACES),
        "wide",
        FACES,
    ),
    Column(
        "hole_height",
        "condition",
        "height of the hole above the bottom (default: mid-height)",
        "4 ft",
        _depth("hole_height", 20_000.0),
    ),
    Column("knot", "condition", "largest knot, measured across its face", "1 in", _depth("knot")),
    Column(
        "knot_face",
        "condition",
        "face the knot is on: wide or narrow",
        "wide",
        choice("knot_face", FACES),
        "wide",
        FACES,
    ),
    Column("slope", "condition", "slope of grain, 1 in n", "1 in 12", _slope),
    Column(
        "slope_table",
        "condition",
        "strength-ratio table for slope: grading (ASTM D245, from memory; "
        "the more severe) or clear-wood (Wood Handbook Table 5-12)",
        "grading",
        choice("slope_table", cond.SLOPE_TABLES),
        "grading",
        cond.SLOPE_TABLES,
    ),
    Column(
        "beyond_grade",
        "condition",
        "knots or slope exceed the stamped grade (default yes: deducted unless you "
        "state no, within the grade)",
        "no",
        yes_no("beyond_grade"),
    ),
    Column(
        "split",
        "condition",
        "worst split: none, check (one face), through (two faces) or opening (widening under load)",
        "check",
        choice("split", cond.SPLIT_NAMES),
        "none",
        cond.SPLIT_NAMES,
    ),
    Column(
        "split_faces",
        "condition",
        "faces a through split shows on: wide, narrow or unknown",
        "unknown",
        choice("split_faces", cond.SPLIT_FACE_NAMES),
        "unknown",
        cond.SPLIT_FACE_NAMES,
    ),
    Column(
        "split_at",
        "condition",
        f"where the split is: {ZONE_HELP}",
        "middle",
        choice("split_at", cond.ZONE_NAMES),
        "full",
        cond.ZONE_NAMES,
    ),
    Column(
        "crushed_end",
        "condition",
        "crushed or broomed end: none, top, bottom or both",
        "none",
        choice("crushed_end", cond.CRUSHED_NAMES),
        "none",
        cond.CRUSHED_NAMES,
    ),
    Column(
        "crushing",
        "condition",
        "crushing in progress: fresh fibres, indentation growing (yes/no)",
        "no",
        yes_no("crushing"),
        "no",
    ),
    Column(
        "settling_sill",
        "condition",
        "sill or pad settling, ground soft or undermined (yes/no)",
        "no",
        yes_no("settling_sill"),
        "no",
    ),
    Column(
        "moving",
        "condition",
        "post leaning or moving more than before (yes/no)",
        "no",
        yes_no("moving"),
        "no",
    ),
    Column(
        "bow_weak",
        "condition",
        "bow across the thin side: largest string-line offset",
        "1/2 in",
        _depth("bow_weak", 500.0),
    ),
    Column("bow_strong", "condition", "bow across the wide side", "0", _depth("bow_strong", 500.0)),
    Column(
        "plumb_weak",
        "condition",
        "out of plumb across the thin side: top offset over the height",
        "1 in",
        _depth("plumb_weak", 1000.0),
    ),
    Column(
        "plumb_strong",
        "condition",
        "out of plumb across the wide side",
        "0",
        _depth("plumb_strong", 1000.0),
    ),
    Column(
        "offset_weak",
        "condition",
        "load off the post's centre on the cap, across the thin side",
        "1/2 in",
        _depth("offset_weak", 500.0),
    ),
    Column(
        "offset_strong",
        "condition",
        "load off centre across the wide side",
        "0",
        _depth("offset_strong", 500.0),
    ),
    Column(
        "stress_wave",
        "condition",
        "stress-wave transit time across the post",
        "600 us",
        lambda s: units.parse_time(s, "stress_wave", lo=1.0, hi=1e6),
    ),
    Column(
        "stress_wave_path",
        "condition",
        "stress-wave path length (default: the thickness)",
        "5.5 in",
        lambda s: units.parse_length(s, "stress_wave_path", lo=10.0, hi=2000.0),
    ),
    Column(
        "stress_wave_sound",
        "condition",
        "transit time on sound wood of the same post, same path",
        "400 us",
        lambda s: units.parse_time(s, "stress_wave_sound", lo=1.0, hi=1e6),
    ),
    Column(
        "stress_wave_suspect",
        "condition",
        "time ratio for suspect decay (from memory; default 1.3)",
        "1.3",
        _ratio("stress_wave_suspect"),
        "1.3",
    ),
    Column(
        "stress_wave_advanced",
        "condition",
        "time ratio for advanced decay (from memory; default 1.5)",
        "1.5",
        _ratio("stress_wave_advanced"),
        "1.5",
    ),
    Column(
        "density", "condition", "density at the test moisture, for dynamic E", "500 kg/m3", _density
    ),
    Column(
        "data_level",
        "material",
        "ASCE 41 data collection: default-values (0.75), drawings (0.90), usual "
        "or comprehensive (1.0)",
        "default-values",
        choice("data_level", cond.DATA_LEVELS),
        "",
        cond.DATA_LEVELS,
    ),
)


def _kappa(level: str) -> float:
    return {r["level"]: float(r["kappa"]) for r in table("knowledge_factors")}[level]


def condition_fields(row: dict[str, Any], out: dict[str, Any]) -> dict[str, Any]:
    """Condition columns -> PostBatch fields, with one-sentence checks against the section."""
    unknown = row.get("species", "unknown") == "unknown" or row.get("grade", "unknown") == "unknown"
    if _CONDITION_NAMES.isdisjoint(row):  # nothing recorded about the condition: the defaults
        return {
            "sr_applies": unknown,
            "material_assumed": unknown and row.get("method", "asd") != "ec5",
        }
    g = lambda k, d=0.0: row.get(k, d)  # noqa: E731
    d1, d2 = out["_d1"], out["_d2"]  # set by builders.section_fields, which runs first
    h = row.get("height", np.nan)
    f: dict[str, Any] = {}

    def depth_pair(prefix: str, what: str) -> None:
        for col, fld, across, dim in (
            (f"{prefix}_wide", "2p", "thickness", d2),
            (f"{prefix}_wide2", "2m", "thickness", d2),
            (f"{prefix}_narrow", "1p", "width", d1),
            (f"{prefix}_narrow2", "1m", "width", d1),
        ):
            v = g(col)
            if v > 0.5 * dim:
                raise RowError(
                    col,
                    f"{col}: {v / IN:.3g} in of {what} is deeper than half the post's {across} "
                    f"({0.5 * dim / IN:.3g} in); give the depth from that face, e.g. 1 in.",
                )
            f[f"{prefix}_{fld}_mm"] = v
        for a, b_, dim, across in (
            (f"{prefix}_wide", f"{prefix}_wide2", d2, "thickness"),
            (f"{prefix}_narrow", f"{prefix}_narrow2", d1, "width"),
        ):
            if g(a) + g(b_) >= dim:
                raise RowError(
                    a,
                    f"{a}: {what} from both faces leaves nothing of the {across}; check the "
                    "depths.",
                )

    depth_pair("decay", "decay")
    depth_pair("char", "char")
    f["decay_zone"] = cond.ZONE_NAMES.index(row.get("decay_at", "full"))
    f["char_zone"] = cond.ZONE_NAMES.index(row.get("char_at", "full"))
    if "decay_margin" in row:
        f["decay_margin_mm"] = row["decay_margin"]
    if g("hollow") > 0:
        shell = min(
            d1 - f["decay_1p_mm"] - f["decay_1m_mm"], d2 - f["decay_2p_mm"] - f["decay_2m_mm"]
        )
        if g("hollow") >= shell:
            raise RowError(
                "hollow",
                f"hollow: a {g('hollow') / IN:.3g} in core leaves no sound shell in this post "
                f"({shell / IN:.3g} in left across); check the diameter, e.g. 1.5 in.",
            )
        f["hollow_mm"] = g("hollow")
        f["hollow_zone"] = cond.ZONE_NAMES.index(row.get("hollow_at", "full"))
    if g("wane") > 0:
        if g("wane") >= min(d1, d2):
            raise RowError(
                "wane",
                f"wane: {g('wane') / IN:.3g} in is as wide as a face; give the width missing, "
                "e.g. 1/2 in.",
            )
        corners = int(row.get("wane_corners", "1"))
        # the corner triangles (45 degrees, leg w) must not meet: two corners share the face
        # along d1 (corners 1, 2), three or four also the face along d2 (geometry)
        room = min(d1, d2) if corners == 1 else min(0.5 * d1, d2) if corners == 2 else 0.5 * d2
        if g("wane") > room:
            raise RowError(
                "wane",
                f"wane: {g('wane') / IN:.3g} in at {corners} corners overlaps across the "
                f"{d2 / IN:.3g} x {d1 / IN:.3g} in section and leaves no section that can be "
                f"rated (at most {room / IN:.3g} in at {corners} corners); measure the width "
                "missing on one face at one corner, e.g. 1/2 in.",
            )
        f["wane_mm"] = g("wane")
        f["wane_corners"] = corners
    for kind, depth_word in (("notch", "depth"), ("hole", "diameter")):
        v = g(kind)
        if v <= 0:
            continue
        face = FACES.index(row.get(f"{kind}_face", "wide"))
        across = (
            (d2 if face == cond.WIDE else d1)
            if kind == "notch"
            else (d1 if face == cond.WIDE else d2)
        )
        if v > 0.5 * across:
            raise RowError(
                kind,
                f"{kind}: a {depth_word} of {v / IN:.3g} in is more than half the post "
                f"({0.5 * across / IN:.3g} in); check it, e.g. 1 in.",
            )
        z = row.get(f"{kind}_height")
        if z is not None and not z < h:
            raise RowError(
                f"{kind}_height",
                f"{kind}_height: {z / IN:.3g} in is not below the top of the post; "
                "measure it up from the bottom.",
            )
        f[f"{kind}_mm"], f[f"{kind}_face"] = v, face
        if z is not None:
            f[f"{kind}_z_mm"] = z
    if g("knot") > 0:
        face = FACES.index(row.get("knot_face", "wide"))
        w = d1 if face == cond.WIDE else d2
        if g("knot") >= w:
            raise RowError(
                "knot",
                f"knot: {g('knot') / IN:.3g} in is as wide as the {FACES[face]} face "
                f"({w / IN:.3g} in); measure the knot across the face, e.g. 1 in.",
            )
        f["knot_mm"], f["knot_face"] = g("knot"), face
    f["slope_table"] = cond.SLOPE_TABLES.index(row.get("slope_table", "grading"))
    if "slope" in row:
        name = row.get("slope_table", "grading")
        steepest = min(float(cond.slope_rows(name, p)[0][0]) for p in ("compression", "bending"))
        if row["slope"] < steepest:
            raise RowError(
                "slope",
                f"slope: 1 in {row['slope']:g} is steeper than the published {name} table "
                f"(1 in {steepest:g}): outside the published data, treat it as unknown strength "
                "(replace the member or ask the engineer).",
            )
        f["slope_n"] = row["slope"]
    # a graded member's knots and slope are deducted unless stated within its grade: whether
    # they are is a decision input, never read as the safe answer (judgement)
    f["sr_applies"] = bool(row.get("beyond_grade", True))
    f["material_assumed"] = unknown and row.get("method", "asd") != "ec5"
    f["split"] = cond.SPLIT_NAMES.index(row.get("split", "none"))
    f["split_faces"] = cond.SPLIT_FACE_NAMES.index(row.get("split_faces", "unknown"))
    f["split_zone"] = cond.ZONE_NAMES.index(row.get("split_at", "full"))
    f["crushed_end"] = cond.CRUSHED_NAMES.index(row.get("crushed_end", "none"))
    f["crushing_active"] = bool(row.get("crushing", False))
    f["settling_sill"] = bool(row.get("settling_sill", False))
    f["post_moving"] = bool(row.get("moving", False))
    for axis, side, dim in (("2", "weak", d2), ("1", "strong", d1)):
        f[f"bow{axis}_mm"] = g(f"bow_{side}")
        f[f"plumb{axis}_mm"] = g(f"plumb_{side}")
        off = g(f"offset_{side}")
        if off > 0.5 * dim:
            raise RowError(
                f"offset_{side}",
                f"offset_{side}: {off / IN:.3g} in puts the load outside the post "
                f"({0.5 * dim / IN:.3g} in from the centre to the face); check it.",
            )
        f[f"offset{axis}_mm"] = off
    if "stress_wave" in row:
        f["sw_time_us"] = row["stress_wave"]
        f["sw_path_mm"] = row.get("stress_wave_path", d2)
        if "stress_wave_sound" in row:
            f["sw_sound_us"] = row["stress_wave_sound"]
    for col, fld in (
        ("stress_wave_suspect", "sw_suspect"),
        ("stress_wave_advanced", "sw_advanced"),
    ):
        if col in row:
            f[fld] = row[col]
    if f.get("sw_advanced", 1.5) < f.get("sw_suspect", 1.3):
        raise RowError(
            "stress_wave_advanced", "stress_wave_advanced: must not be below stress_wave_suspect."
        )
    if "density" in row:
        f["density_kgm3"] = row["density"]
    if "data_level" in row:
        f["data_level"] = cond.DATA_LEVELS.index(row["data_level"])
        f["knowledge"] = _kappa(row["data_level"])  # ASCE 41 data collection (secondary)
    _refuse_no_section(row, f, d1, d2, h)
    return f


# the loss columns, in the order a message names them
_LOSS_COLUMNS = (
    "decay_wide",
    "decay_wide2",
    "decay_narrow",
    "decay_narrow2",
    "char_wide",
    "char_wide2",
    "char_narrow",
    "char_narrow2",
    "hollow",
    "wane",
    "notch",
    "hole",
)


def _refuse_no_section(row: dict[str, Any], f: dict[str, Any], d1, d2, h) -> None:
    """Several losses that each fit the post may together leave nothing of it at some height
    (decay with its margin from two faces, a hole and wane...): such a post is refused in one
    sentence, never rated as a capacity of 0 (geometry; the engine's own residual section)."""
    given = [c for c in _LOSS_COLUMNS if row.get(c, 0.0) > 0]
    if not given:
        return
    from fieldcheck.engine.batch import DEFAULTS, FIELD_NAMES, make_batch

    post = make_batch(
        n=1, d1_mm=d1, d2_mm=d2, height_mm=h, **{k: v for k, v in f.items() if k in FIELD_NAMES}
    )
    with np.errstate(divide="ignore", invalid="ignore"):
        res = cond.residual(post)
    # an area left with no effective depth (a hollow core inside decay from both faces) has no
    # stiffness to buckle about: nothing that can be rated either
    kept = ("area", "area_net", "area_top", "area_bottom", "d_eff1", "d_eff2")
    left = min(float(res[k][0]) for k in kept)
    if left > 0:
        return
    rest = given[1:]
    others = ", ".join(rest[:-1]) + f" and {rest[-1]}" if len(rest) > 1 else "".join(rest)
    margin = float(f.get("decay_margin_mm", DEFAULTS["decay_margin_mm"]))
    past = (
        f" (decay counts {margin / IN:.3g} in past the probe)"
        if any(c.startswith("decay") for c in given)
        else ""
    )
    raise RowError(
        given[0],
        f"{given[0]}: {f'with {others} the losses' if others else 'the loss'} leave no section "
        f"of the {d2 / IN:.3g} x {d1 / IN:.3g} in post at some height{past}, so it cannot be "
        "rated; check the measurements, and if they are right make the post safe now and "
        "replace it.",
    )


condition_fields.column = "condition"  # type: ignore[attr-defined]
_CONDITION_NAMES = frozenset(c.name for c in COLUMNS)  # every column of this module
