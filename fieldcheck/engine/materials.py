"""Species and grade reference values and the NDS adjustment factors that depend on them.

Lookups here run once per distinct (species, grade, size) and are cached; the per-post
arithmetic on arrays lives in nds.py. Values come from data/nds_reference_values.csv (psi) and
are returned in MPa.
"""

from __future__ import annotations

from functools import cache

from fieldcheck.engine.customary import PSI
from fieldcheck.engine.refdata import table

SPECIES = ("douglas-fir-larch", "hem-fir", "spruce-pine-fir", "southern-pine")
SPECIES_ALIASES = {
    "douglas-fir-larch": "douglas-fir-larch",
    "df-l": "douglas-fir-larch",
    "dfl": "douglas-fir-larch",
    "douglas-fir": "douglas-fir-larch",
    "df": "douglas-fir-larch",
    "hem-fir": "hem-fir",
    "hf": "hem-fir",
    "spruce-pine-fir": "spruce-pine-fir",
    "spf": "spruce-pine-fir",
    "southern-pine": "southern-pine",
    "sp": "southern-pine",
    "syp": "southern-pine",
    "southern-yellow-pine": "southern-pine",
    "unknown": "unknown",
    "?": "unknown",
}
GRADES = ("select-structural", "no1-btr", "no1", "no2", "no3", "stud", "construction", "standard")
GRADE_ALIASES = {
    "select-structural": "select-structural",
    "ss": "select-structural",
    "sel-str": "select-structural",
    "no1-btr": "no1-btr",
    "no1&btr": "no1-btr",
    "no1-and-better": "no1-btr",
    "no1": "no1",
    "no.1": "no1",
    "#1": "no1",
    "1": "no1",
    "no2": "no2",
    "no.2": "no2",
    "#2": "no2",
    "2": "no2",
    "no3": "no3",
    "no.3": "no3",
    "#3": "no3",
    "3": "no3",
    "stud": "stud",
    "construction": "construction",
    "const": "construction",
    "standard": "standard",
    "std": "standard",
    "unknown": "unknown",
    "?": "unknown",
}
# Lowest structural grade assumed when the grade is unknown (ASCE 41 data collection; judgement).
DEFAULT_GRADE = "no2"
# Knowledge factor with default (assumed) values: ASCE 41 data-collection table (secondary).
KAPPA_DEFAULT_VALUES = 0.75


def _key(text: str) -> str:
    return "-".join(text.strip().lower().replace("_", "-").replace(" ", "-").split("-")).strip("-")


def normalise_species(text: str) -> str:
    key = SPECIES_ALIASES.get(_key(text))
    if key is None:
        raise ValueError(
            f"species: '{text}' is not a species group we hold; use one of {', '.join(SPECIES)} "
            "or unknown."
        )
    return key


def normalise_grade(text: str) -> str:
    key = GRADE_ALIASES.get(
        _key(text).replace(".", "") if _key(text) not in GRADE_ALIASES else _key(text)
    )
    if key is None:
        raise ValueError(
            f"grade: '{text}' is not a grade we hold; use one of {', '.join(GRADES)} (no2, ss, "
            "stud ...) or unknown."
        )
    return key


@cache
def _rows() -> dict[tuple[str, str, str], dict[str, str]]:
    return {(r["species"], r["grade"], r["category"]): r for r in table("nds_reference_values")}


# Grades held only for 2" to 4" wide dimension lumber (NDS Supplement Table 4A)
NARROW_ONLY = ("construction", "standard")
_STATUS_ORDER = ("read", "secondary", "memory")  # weakest last


@cache
def reference_values(
    species: str,
    grade: str,
    category: str,
    width_nom: int | None = None,
    thick_nom: int | None = None,
) -> dict[str, float | str | bool]:
    """Reference values in MPa for a species group, grade and category (dimension | timber).

    ``species`` or ``grade`` 'unknown': a true lower bound. Each property is the lowest over
    every species group and every grade held for that size and category (No.3, Stud,
    Construction and Standard included where held; the unknown part only), each value with its
    own size factor CF folded in when the nominal size is given (``cf_included``: the caller
    takes CF = 1.0), with the knowledge factor for default values on top (ASCE 41 data
    collection; judgement). A data-collection level may raise kappa to at most 1.0, never the
    values above this bound.
    """
    wide_stud = width_nom is not None and width_nom > 6
    if grade == "stud" and wide_stud:
        grade = "no3"  # NDS Supplement Table 4A note: Stud wider than 6 in takes No.3 values
    if species == "unknown" or grade == "unknown":
        pool = []
        for (s_, g_, c_), r in _rows().items():
            if c_ != category or (species != "unknown" and s_ != species):
                continue
            if grade != "unknown" and g_ != grade:
                continue
            if width_nom is not None and g_ in NARROW_ONLY and width_nom > 4:
                continue  # not graded at this width
            if g_ == "stud" and wide_stud:
                continue  # takes the No.3 values, which are in the pool
            cf_fc = cf_fb = 1.0
            if width_nom is not None and thick_nom is not None:
                try:
                    cf_fc, cf_fb = size_factors(s_, g_, width_nom, thick_nom)
                except ValueError:
                    continue  # not graded at this width
            pool.append((r, cf_fc, cf_fb))
        if not pool:
            raise ValueError(
                f"grade: no {category} values held for {species} {grade}; choose another grade."
            )
        cf = {"fc": 1, "fb": 2}  # CF applies to Fc and Fb only (NDS Supplement Table 4A)
        out: dict = {}
        for p in ("fb", "fc", "fc_perp", "e", "emin"):
            k = cf.get(p)
            out[p] = (
                min(
                    float(r[f"{p}_psi"]) * (1.0 if k is None else (c1, c2)[k - 1])
                    for r, c1, c2 in pool
                )
                * PSI
            )
        statuses = {r["status"] for r, _, _ in pool}
        out.update(
            g=min(float(r["g"]) for r, _, _ in pool),
            wet_tabulated=False,
            knowledge=KAPPA_DEFAULT_VALUES,
            table="lowest of " + ", ".join(sorted({r["table"] for r, _, _ in pool})),
            status=max(statuses, key=_STATUS_ORDER.index),
            assumed=True,
            cf_included=width_nom is not None and thick_nom is not None,
        )
        return out
    row = _rows().get((species, grade, category))
    if row is None:
        held = sorted({gr for (s, gr, c) in _rows() if s == species and c == category})
        if not held:  # the species has no values at all for this size category
            words = {
                "dimension": "dimension sizes (2 to 4 in nominal thick)",
                "timber": "timber sizes (5x5 and larger)",
            }
            cats = sorted({words.get(c, c) for (s, _, c) in _rows() if s == species})
            raise ValueError(
                f"grade: the tables hold no {species} values for {words.get(category, category)},"
                f" the size given; {species} is held for {' and '.join(cats) or 'no sizes'}: "
                "give such a size, or another species."
            )
        raise ValueError(
            f"grade: {species} {grade} is not held for {category} sizes; held grades: "
            f"{', '.join(held)}."
        )
    out = {p: float(row[f"{p}_psi"]) * PSI for p in ("fb", "fc", "fc_perp", "e", "emin")}
    out.update(
        g=float(row["g"]),
        wet_tabulated=row["wet_tabulated"] == "1",
        knowledge=1.0,
        table=row["table"],
        status=row["status"],
        assumed=False,
        cf_included=False,
    )
    return out


@cache
def size_factors(
    species: str, grade: str, nominal_width_in: int, thickness_in: int
) -> tuple[float, float]:
    """(CF for Fc, CF for Fb) for dimension lumber (NDS Supplement Table 4A size factors).

    Southern Pine (Table 4B) and timbers (Table 4D, Fc) take 1.0. Stud grade wider than 6 in takes
    the No.3 factors (the table's own rule), which are the 'structural' row here.
    """
    if species == "southern-pine" or thickness_in >= 5:
        return 1.0, 1.0
    if grade == "unknown" or species == "unknown":
        return 1.0, 1.0  # the unknown lower bound carries each candidate's own CF
    g = grade
    group = {"stud": "stud", "construction": "construction", "standard": "construction"}.get(
        g, "structural"
    )
    if group == "stud" and nominal_width_in > 6:
        group = "structural"
    rows = [r for r in table("nds_size_factors") if r["grade_group"] == group]
    for r in rows:
        if nominal_width_in <= float(r["max_width_in"]):
            fb_col = "cf_fb_thick_4" if thickness_in >= 4 else "cf_fb_thick_2_3"
            return float(r["cf_fc"]), float(r[fb_col])
    raise ValueError(f"size: {grade} is not graded at {nominal_width_in} in nominal width.")


def fc_perp_of(species: str) -> float:
    """Fc-perp (MPa) of a species group, for a cap, beam or sill it bears on (any grade)."""
    if species == "unknown":
        return min(float(r["fc_perp_psi"]) for r in _rows().values()) * PSI
    return min(float(r["fc_perp_psi"]) for (s, _, _), r in _rows().items() if s == species) * PSI
