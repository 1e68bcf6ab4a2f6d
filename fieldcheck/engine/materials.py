"""Species and grade reference values and the NDS adjustment factors that depend on them.

Lookups here run once per distinct (species, grade, size) and are cached; the per-post
arithmetic on arrays lives in nds.py. Values come from data/nds_reference_values.csv (psi) and
are returned in MPa.
"""

from __future__ import annotations

import math
import re
from functools import cache, lru_cache

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


PROPERTIES = ("fb", "fc", "fc_perp", "e", "emin")  # psi columns of the table, MPa out
_WIDE = 10**6  # an empty max_width_in: every width


@cache
def _rows() -> dict[tuple[str, str, str], tuple[dict[str, str], ...]]:
    """(species, grade, category) -> its rows, narrowest width first (one row unless by width)."""
    out: dict[tuple[str, str, str], list[dict[str, str]]] = {}
    for r in table("nds_reference_values"):
        out.setdefault((r["species"], r["grade"], r["category"]), []).append(r)
    return {k: tuple(sorted(v, key=_max_width)) for k, v in out.items()}


def _max_width(r: dict[str, str]) -> int:
    return int(r["max_width_in"]) if r.get("max_width_in") else _WIDE


def _at_width(rows: tuple[dict[str, str], ...], width_nom: int | None) -> dict[str, str]:
    """The row for a nominal width (NDS Supplement Table 4B rows by width); wider than the last
    row: the last row (its size factor is size_factors'). No width known: the lowest value of
    every property over the rows, each with the weakest status of its column (conservative)."""
    if len(rows) == 1:
        return rows[0]
    if width_nom is not None:
        return next((r for r in rows if width_nom <= _max_width(r)), rows[-1])
    low = dict(rows[-1])
    for p in PROPERTIES:
        low[f"{p}_psi"] = str(min(float(r[f"{p}_psi"]) for r in rows))
        low[f"{p}_status"] = max((r[f"{p}_status"] for r in rows), key=_STATUS_ORDER.index)
    low["table"] = rows[0]["table"].split(" (")[0] + " (lowest of every width)"
    return low


# Grades held only for 2" to 4" wide dimension lumber (NDS Supplement Table 4A)
NARROW_ONLY = ("construction", "standard")
_STATUS_ORDER = ("read", "secondary", "memory")  # weakest last
# Product classes by nominal size (NDS 2018 §4.1.3; NDS Supplement Tables 4A, 4D)
CATEGORY_WORDS = {
    "dimension": "dimension lumber (2 to 4 in nominal thick)",
    "timber": "Posts and Timbers (5x5 and larger, width not more than 2 in over thickness)",
    "beams-stringers": "Beams and Stringers (5 in and thicker, width more than 2 in over "
    "thickness)",
}


# Each reference value's status, packed into one small integer per post (PostBatch.value_status)
STATUS_KEYS = ("fb", "fc", "fc_perp", "e", "emin", "g")
STATUS_NAMES = {"fb": "Fb", "fc": "Fc", "fc_perp": "Fc-perp", "e": "E", "emin": "Emin", "g": "G"}
# what a value's status adds where the value is shown (as the EN 338 values in the EC5 working)
STATUS_NOTE = {"read": "", "secondary": " (secondary)", "memory": " (from memory)"}


def pack_statuses(statuses: dict[str, str]) -> int:
    """{fb: 'secondary', ...} -> an int (2 bits a value, in STATUS_KEYS order)."""
    code = 0
    for k, key in enumerate(STATUS_KEYS):
        code |= _STATUS_ORDER.index(statuses[key]) << (2 * k)
    return code


def unpack_statuses(code: int) -> dict[str, str] | None:
    """The inverse of pack_statuses; None for -1 (no NDS values, e.g. EC5)."""
    if code < 0:
        return None
    return {key: _STATUS_ORDER[(code >> (2 * k)) & 3] for k, key in enumerate(STATUS_KEYS)}


def status_text(statuses: dict[str, str]) -> str:
    """'all secondary', or each value's: 'Fb memory, Fc secondary, ...'."""
    if len(set(statuses.values())) == 1:
        return "all " + next(iter(statuses.values()))
    return ", ".join(f"{STATUS_NAMES.get(k, k)} {v}" for k, v in statuses.items())


def size_class(thick_nom: int, width_nom: int) -> str:
    """The product class of a nominal size (NDS 2018 §4.1.3; NDS Supplement Table 4D):
    'dimension' 2 to 4 in thick; 'beams-stringers' 5 in and thicker with the width more than
    2 in greater than the thickness; 'timber' (Posts and Timbers) the other 5 in and thicker."""
    if thick_nom < 5:
        return "dimension"
    return "beams-stringers" if width_nom > thick_nom + 2 else "timber"


def weakest(statuses) -> str:
    """The weakest of some statuses (read < secondary < memory)."""
    return max(statuses, key=_STATUS_ORDER.index)


@cache
def reference_values(
    species: str,
    grade: str,
    category: str,
    width_nom: int | None = None,
    thick_nom: int | None = None,
) -> dict:
    """Reference values in MPa for a species group, grade and category (dimension | timber |
    beams-stringers), at a nominal width where the table gives values by width (Southern Pine,
    NDS Supplement Table 4B; no width: the lowest over the widths).

    ``statuses``: each value's own status (read, secondary or memory); ``status`` the weakest.

    ``species`` or ``grade`` 'unknown': a true lower bound. Each property is the lowest over
    every species group and every grade held for that size and category (No.3, Stud,
    Construction and Standard included where held; the unknown part only), each value with its
    own size factor CF folded in when the nominal size is given (``cf_included``: the caller
    takes CF = 1.0), with the knowledge factor for default values on top (ASCE 41 data
    collection; judgement). A data-collection level may raise kappa to at most 1.0, never the
    values above this bound. Each bound value takes the weakest status of the values it is the
    lowest of.
    """
    wide_stud = width_nom is not None and width_nom > 6
    if grade == "stud" and wide_stud:
        grade = "no3"  # NDS Supplement Table 4A note: Stud wider than 6 in takes No.3 values
    if species == "unknown" or grade == "unknown":
        pool = []
        for (s_, g_, c_), rows in _rows().items():
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
            pool.append((_at_width(rows, width_nom), cf_fc, cf_fb))
        if not pool:
            raise ValueError(
                f"grade: no {category} values held for {species} {grade}; choose another grade."
            )
        cf = {"fc": 1, "fb": 2}  # CF applies to Fc and Fb only (NDS Supplement Table 4A)
        out: dict = {}
        for p in PROPERTIES:
            k = cf.get(p)
            out[p] = (
                min(
                    float(r[f"{p}_psi"]) * (1.0 if k is None else (c1, c2)[k - 1])
                    for r, c1, c2 in pool
                )
                * PSI
            )
        statuses = {p: weakest(r[f"{p}_status"] for r, _, _ in pool) for p in (*PROPERTIES, "g")}
        out.update(
            g=min(float(r["g"]) for r, _, _ in pool),
            wet_tabulated=False,
            knowledge=KAPPA_DEFAULT_VALUES,
            table="lowest of " + ", ".join(sorted({r["table"] for r, _, _ in pool})),
            statuses=statuses,
            status=weakest(statuses.values()),
            assumed=True,
            cf_included=width_nom is not None and thick_nom is not None,
        )
        return out
    rows = _rows().get((species, grade, category))
    if rows is None:
        held = sorted({gr for (s, gr, c) in _rows() if s == species and c == category})
        if not held:  # the species has no values at all for this size category
            words = {
                "dimension": "dimension sizes (2 to 4 in nominal thick)",
                "timber": "timber sizes (5x5 and larger)",
                "beams-stringers": "Beams and Stringers sizes (5 in and thicker, width more "
                "than 2 in over thickness)",
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
    row = _at_width(rows, width_nom)
    out = {p: float(row[f"{p}_psi"]) * PSI for p in PROPERTIES}
    statuses = {p: row[f"{p}_status"] for p in (*PROPERTIES, "g")}
    out.update(
        g=float(row["g"]),
        wet_tabulated=row["wet_tabulated"] == "1",
        knowledge=1.0,
        table=row["table"],
        statuses=statuses,
        status=weakest(statuses.values()),
        assumed=False,
        cf_included=False,
    )
    return out


def _table_names(parts: list[dict]) -> list[str]:
    """The tables some value sets came from, once each ('lowest of' and the like left out)."""
    names = (
        t
        for v in parts
        for t in re.sub(
            r"^(the lowest|lowest of|lower of|round post: lower of) ", "", v["table"]
        ).split(", ")
    )
    return list(dict.fromkeys(names))


def _lower(parts: list[dict], table_words: str) -> dict:
    """Each property the lowest over some value sets, with the weakest status of its column."""
    out: dict = {p: min(v[p] for v in parts) for p in (*PROPERTIES, "g")}
    statuses = {p: weakest(v["statuses"][p] for v in parts) for p in (*PROPERTIES, "g")}
    out.update(
        wet_tabulated=all(v["wet_tabulated"] for v in parts),  # else CM applies: conservative
        knowledge=min(v["knowledge"] for v in parts),
        table=table_words + " of " + ", ".join(_table_names(parts)),
        statuses=statuses,
        status=weakest(statuses.values()),
        assumed=any(v["assumed"] for v in parts),
        cf_included=True,
        timber=any(v.get("timber", False) for v in parts),
    )
    return out


@cache
def round_values(species: str, grade: str) -> dict:
    """Values for a round post (MPa): no table is for round sawn posts, so each property is the
    lower of the dimension-lumber value (the lowest over the widths, no size factor) and the
    Posts and Timbers value of the species and grade, where each is held (judgement,
    conservative; NDS 2018 §3.7.3 stays for its stability). The same at every diameter, so a
    larger round post never rates lower. ``timber``: the Posts and Timbers values are among them
    (the wet service factors of timbers then apply).
    """
    parts = []
    for cat in ("dimension", "timber"):
        try:
            v = dict(reference_values(species, grade, cat))
        except ValueError:
            if cat == "dimension":
                raise
            v = _lowest_timber(species)  # a grade not held as timber: never above a timber
        v["timber"] = cat == "timber"
        parts.append(v)
    if species == "unknown":
        # never above a species held: one whose grade is not held as timber takes the lowest
        # timber of all (_lowest_timber), lower than the timbers of the species that hold it
        for sp in SPECIES:
            try:
                parts.append(round_values(sp, grade))
            except ValueError:
                continue  # the grade is not held for this species
    return {**_lower(parts, "round post: lower"), "class_unknown": True}  # wet CM the lowest


def _lowest_timber(species: str) -> dict:
    """The lowest Posts and Timbers value of each property over the grades held for the species,
    or over every species where the species has none (a round post of a grade or species not
    held as timber is never rated above a timber; judgement, conservative)."""
    pool = [
        r for (s, _, c), rows in _rows().items() if c == "timber" and s == species for r in rows
    ]
    if not pool:
        pool = [r for (_, _, c), rows in _rows().items() if c == "timber" for r in rows]
    out: dict = {p: min(float(r[f"{p}_psi"]) for r in pool) * PSI for p in PROPERTIES}
    statuses = {p: weakest(r[f"{p}_status"] for r in pool) for p in (*PROPERTIES, "g")}
    out.update(
        g=min(float(r["g"]) for r in pool),
        wet_tabulated=all(r["wet_tabulated"] == "1" for r in pool),
        knowledge=1.0,
        table="the lowest " + ", ".join(sorted({r["table"] for r in pool})),
        statuses=statuses,
        status=weakest(statuses.values()),
        assumed=False,
        cf_included=False,
    )
    return out


def _folded(species: str, grade: str, category: str, width_nom: int, thick_nom: int):
    """Values (MPa) with the size factors folded into Fc and Fb, or None where the species and
    grade are not graded at that size."""
    try:
        rv = dict(reference_values(species, grade, category, width_nom, thick_nom))
        cf_fc, cf_fb = (
            (1.0, 1.0) if rv["cf_included"] else size_factors(species, grade, width_nom, thick_nom)
        )
    except ValueError:
        return None
    rv["fc"] *= cf_fc
    rv["fb"] *= cf_fb
    rv["timber"] = category != "dimension"
    return rv


def _timber_lower(species: str, grade: str, depth_in: float):
    """A timber of unknown class (a measured one): the lower of Posts and Timbers and Beams and
    Stringers values (Cfu on Fb of the latter), with CF = (12/d)^(1/9) on Fb for the depth d
    past 12 in taken continuously (NDS 2018 §4.3.6.2). None where no timber values are held."""
    parts = [
        v
        for v in (
            _folded(species, grade, "timber", 12, 12),
            _folded(species, grade, "beams-stringers", 12, 5),
        )
        if v is not None
    ]
    if not parts:
        return None
    out = _lower(parts, "lower")
    if depth_in > 12.0:
        out["fb"] *= (12.0 / depth_in) ** (1.0 / 9.0)
    return out


def dressed_width_in(nominal: int) -> float:
    """Dressed width of dimension lumber (NDS Supplement Table 1A): nominal - 1/2 in up to 6 in,
    - 3/4 in from 8 in."""
    return nominal - 0.5 if nominal <= 6 else nominal - 0.75


TIMBER_MIN_IN = 4.5 - 1.0 / 25.4  # sections.is_timber: 5 in nominal, 4.5 in dressed, 1 mm slack
_WIDEST_STEP = 14  # no size factor or width row changes past 12 in nominal


@lru_cache(maxsize=4096)  # measured sizes vary: a bounded cache
def measured_values(species: str, grade: str, d1_in: float, d2_in: float) -> dict:
    """Values (MPa, size factors folded in) for a measured section with no nominal size.

    Its grading class is not known, so a measured post never rates above a larger section of the
    same description (judgement, conservative): each value is no more than that of any larger
    section where the values step down, scaled by what the check takes of the section (area for
    Fc; area x d^2 for E and Emin, the Euler load about the thin side d, which governs when both
    axes are restrained alike; the smaller section modulus for Fb). Those sections are
    the start of every wider nominal-width band (its size factor or Southern Pine width row,
    NDS Supplement Tables 4A, 4B) and the smallest timber that holds the post (4.5 in thick,
    NDS Supplement Table 4D; the lower of Posts and Timbers and Beams and Stringers). A measured
    timber takes that lower of the two timber classes. ``capped``: the values a larger section
    held down ('' none, 'wider', 'timber').
    """
    if d2_in >= TIMBER_MIN_IN:
        own = _timber_lower(species, grade, d1_in)
        if own is None:
            reference_values(species, grade, "timber")  # raises the message naming what is held
            raise ValueError(f"grade: no timber values held for {species} {grade}.")
        return {**own, "capped": "", "table": own["table"] + " (measured timber)"}
    n = math.ceil(d1_in + (0.5 if d1_in <= 5.5 + 1e-6 else 0.75) - 1e-6)
    own = _folded(species, grade, "dimension", n, 4)
    if own is None:
        reference_values(species, grade, "dimension", n, 4)  # raises its own message
        size_factors(species, grade, n, 4)
        raise ValueError(f"size: {species} {grade} is not graded at {n} in nominal width.")
    corners = []
    for m in range(n + 1, _WIDEST_STEP + 1):
        v = _folded(species, grade, "dimension", m, 4)
        if v is not None:
            corners.append(("wider", dressed_width_in(m - 1), d2_in, v))
    big = max(d1_in, TIMBER_MIN_IN)  # the thinnest section rated as a timber
    tl = _timber_lower(species, grade, big)
    if tl is not None:
        corners.append(("timber", big, TIMBER_MIN_IN, tl))
    out = dict(own)
    out["capped"] = ""
    a = d1_in * d2_in
    s1, s2 = d2_in * d1_in * d1_in, d1_in * d2_in * d2_in
    for why, c1, c2, v in corners:
        ac = c1 * c2
        euler = ac / a * (c2 / d2_in) ** 2  # about the thin side, which buckles first
        bend = min(c2 * c1 * c1 / s1, c1 * c2 * c2 / s2)
        for p, scale in (
            ("fc", ac / a),
            ("fc_perp", ac / a),
            ("e", euler),
            ("emin", euler),
            ("fb", bend),
        ):
            cap = v[p] * scale
            if cap < out[p] * (1.0 - 1e-12):
                out[p] = cap
                out["statuses"] = {
                    **out["statuses"],
                    p: weakest((out["statuses"][p], v["statuses"][p])),
                }
                if p == "fc":  # Fc decides the class the post is rated in
                    out["capped"], out["timber"] = why, v["timber"]
                elif not out["capped"]:
                    out["capped"] = why
    out["status"] = weakest(out["statuses"].values())
    out["class_unknown"] = True  # thinner than a timber, no nominal size: wet CM the lowest
    return out


# Flat use factor Cfu on Fb of Beams and Stringers loaded on the wide face (NDS Supplement
# Table 4D adjustment factors; from memory). The engine has one Fb for bending about either
# axis, so Beams and Stringers take it always (conservative).
CFU_BEAMS_STRINGERS = {"select-structural": 0.86, "no1": 0.74, "no2": 1.0}
CF_WIDER_THAN_12_SP = 0.9  # NDS Supplement Table 4B footnote: over 12 in, the 12 in row x 0.9


@cache
def size_factors(
    species: str, grade: str, nominal_width_in: int, thickness_in: int
) -> tuple[float, float]:
    """(CF for Fc, CF for Fb): NDS Supplement Table 4A size factors for dimension lumber.

    Southern Pine dimension lumber (Table 4B): values by width already, CF 1.0; wider than
    12 in, the 12 in row x 0.9 on Fc and Fb (the Table 4B footnote, from memory; the
    permitted 1.1 on Fb for 4 in thick, 8 in and wider is not taken: conservative).
    Timbers (Table 4D): CF 1.0 for Fc; for Fb (12/d)^(1/9) when the depth d exceeds 12 in
    (NDS 2018 §4.3.6.2), and for Beams and Stringers the flat use factor Cfu on top.
    Stud grade wider than 6 in takes the No.3 factors (the table's own rule), which are the
    'structural' row here.
    """
    if thickness_in >= 5:
        depth_in = float(nominal_width_in) - 0.5  # dressed depth (NDS Supplement Table 1B)
        cf_fb = (12.0 / depth_in) ** (1.0 / 9.0) if depth_in > 12.0 else 1.0
        if size_class(thickness_in, nominal_width_in) == "beams-stringers":
            # a grade without its own factor (unknown) takes the lowest
            cf_fb *= CFU_BEAMS_STRINGERS.get(grade, min(CFU_BEAMS_STRINGERS.values()))
        return 1.0, cf_fb
    if species == "southern-pine":
        return (CF_WIDER_THAN_12_SP,) * 2 if nominal_width_in > 12 else (1.0, 1.0)
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
    return fc_perp_held(species)[0]


@cache
def fc_perp_held(species: str) -> tuple[float, str]:
    """Fc-perp (MPa) of a species group for a cap, beam or sill (the lowest over its grades and
    sizes: the grade of a cap is rarely known; judgement) and its status: the weakest of every
    row's, since the lowest is only as sure as each value it was taken over."""
    pool = [
        r
        for (s, _, _), rows in _rows().items()
        for r in rows
        if species == "unknown" or s == species
    ]
    low = min(float(r["fc_perp_psi"]) for r in pool)
    status = weakest(r["fc_perp_status"] for r in pool)
    return low * PSI, status
