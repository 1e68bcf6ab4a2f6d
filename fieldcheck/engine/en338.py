"""Strength classes for EC5 ratings: EN 338 (solid timber, C and D classes) in two editions and
EN 14080 (homogeneous glulam, GL20h to GL32h), and the visual-grade-to-class list the user may
choose from.

Values in MPa (N/mm^2) and kg/m^3, from data/en338_classes.csv (one row per class and edition)
and data/en14080_glulam.csv. Every value carries its own status (read, secondary or memory).

EN 338:2016 is the default edition; EN 338:2009 stays selectable. The editions differ most in
the hardwood f_c,90,k (EN 338:2016 lowered them: D30 8.0 -> 5.3 MPa, D40 8.3 -> 5.5 MPa), so the
edition is kept with every rating. Glulam classes come from EN 14080:2013 whatever the EN 338
edition. The visual-grade list (data/visual_grade_to_class.csv) is offered to the user; nothing
here assigns a class automatically.

Each (class, edition) row has a code (:func:`row_code`), the PostBatch ``strength_row``, so that
the working can name the class, the edition and each value's status from the rating alone.
"""

from __future__ import annotations

from functools import cache

from fieldcheck.engine.refdata import table

_VALUE_COLUMNS = (
    "fmk_mpa",
    "fc0k_mpa",
    "fc90k_mpa",
    "e0mean_mpa",
    "e005_mpa",
    "rhok_kgm3",
    "rhomean_kgm3",
)
# the values as EN 338 and EN 14080 write them (glulam adds g: f_m,g,k ...; judgement: one name)
SYMBOLS = {
    "fmk_mpa": "f_m,k",
    "fc0k_mpa": "f_c,0,k",
    "fc90k_mpa": "f_c,90,k",
    "e0mean_mpa": "E_0,mean",
    "e005_mpa": "E_0,05",
    "rhok_kgm3": "rho_k",
    "rhomean_kgm3": "rho_mean",
}
EN338_2016, EN338_2009 = "EN 338:2016", "EN 338:2009"
EN14080 = "EN 14080:2013"
EDITIONS = (EN338_2016, EN338_2009)  # EN 338 editions held; the first is the default
DEFAULT_EDITION = EN338_2016
# what --en338-edition accepts, normalised (spaces dropped, lower case) -> edition
_EDITION_NAMES = {
    "2016": EN338_2016,
    "en338:2016": EN338_2016,
    "2009": EN338_2009,
    "en338:2009": EN338_2009,
}


def _key(name) -> str:
    return str(name).strip().upper().replace(" ", "")


@cache
def rows() -> tuple[dict, ...]:
    """Every (class, edition) row held, EN 338 then EN 14080; the index is the row code.

    Each row: class (as written in the table, e.g. 'GL24h'), edition, product ('solid' or
    'glulam'), values {column: float}, statuses {column: status}, status (the weakest), source.
    """
    out = []
    for name, product in (("en338_classes", "solid"), ("en14080_glulam", "glulam")):
        for r in table(name):
            out.append(
                {
                    "class": r["class"],
                    "edition": r["edition"],
                    "product": product,
                    "values": {c: float(r[c]) for c in _VALUE_COLUMNS},
                    "statuses": {c: r[c.rsplit("_", 1)[0] + "_status"] for c in _VALUE_COLUMNS},
                    "status": r["status"],
                    "source": r["source"],
                }
            )
    return tuple(out)


@cache
def _index() -> dict[tuple[str, str], int]:
    return {(_key(r["class"]), r["edition"]): i for i, r in enumerate(rows())}


def edition_name(text) -> str:
    """The EN 338 edition from what a person typed ('2016', '2009', 'EN 338:2009', any case)."""
    key = str(text).strip().lower().replace(" ", "")
    if key not in _EDITION_NAMES:
        raise ValueError(
            f"en338_edition: '{text}' is not an EN 338 edition we hold; use 2016 (the default) "
            "or 2009, for example --en338-edition 2009."
        )
    return _EDITION_NAMES[key]


def is_glulam(name: str) -> bool:
    """GL classes are glued laminated timber (EN 14080), rated as glulam in EN 1995-1-1."""
    return _key(name).startswith("GL")


def class_names() -> tuple[str, ...]:
    """The classes held in any edition, in table order (C14 ... C50, D18 ... D80, GL20h ...)."""
    return tuple(dict.fromkeys(r["class"] for r in rows()))


def row_code(name: str, edition: str | None = None) -> int:
    """The code of a class's row: its EN 338 edition (default EN 338:2016) or EN 14080:2013.

    A ValueError in one sentence names the classes held when the class is unknown, or the
    editions that hold it when the edition chosen does not.
    """
    key = _key(name)
    ed = EN14080 if key.startswith("GL") else (edition or DEFAULT_EDITION)
    code = _index().get((key, ed))
    if code is not None:
        return code
    held = [e for (k, e) in _index() if k == key]
    if not held:
        raise ValueError(
            f"strength class must be one of {', '.join(class_names())} (EN 338, EN 14080), "
            f"got {name!r}; for example --class C24."
        )
    raise ValueError(
        f"strength class {key} is not in {ed}; it is in {' and '.join(held)}, so choose that "
        f"edition (for example --en338-edition {held[0].rsplit(':', 1)[-1]}) or another class."
    )


def row(code: int) -> dict:
    """The row of a code from :func:`row_code` (class, edition, values, statuses, ...)."""
    return rows()[int(code)]


def strength_class(name: str, edition: str | None = None) -> dict[str, float]:
    """Characteristic values of a class, e.g. strength_class('C24') (EN 338:2016 Table 1).

    Keys: fmk_mpa (f_m,k), fc0k_mpa (f_c,0,k), fc90k_mpa (f_c,90,k), e0mean_mpa (E_0,mean),
    e005_mpa (E_0,05), rhok_kgm3 (rho_k), rhomean_kgm3 (rho_mean). A fresh dict each call.
    """
    return dict(row(row_code(name, edition))["values"])


def is_softwood(name: str) -> bool:
    """C classes are softwood (and poplar), D classes hardwood (EN 338), GL classes softwood
    glulam (EN 14080); decides k_c,90 > 1."""
    row_code(name)  # validates the name
    return not _key(name).startswith("D")


def batch_fields(name: str, edition: str | None = None) -> dict[str, float]:
    """PostBatch material fields for a class, in their EC5 meanings.

    Keys: fc_mpa, fc_perp_mpa, fb_mpa, e_mpa, emin_mpa, strength_row.
    """
    code = row_code(name, edition)
    v = row(code)["values"]
    return {
        "fc_mpa": v["fc0k_mpa"],  # f_c,0,k
        "fc_perp_mpa": v["fc90k_mpa"],  # f_c,90,k
        "fb_mpa": v["fmk_mpa"],  # f_m,k
        "e_mpa": v["e0mean_mpa"],  # E_0,mean
        "emin_mpa": v["e005_mpa"],  # E_0,05 (stability: EN 1995-1-1 §6.3.2 Eq. 6.21)
        "strength_row": code,
    }


def status(name: str, edition: str | None = None) -> str:
    """How sure the class's values are, the weakest of them: read, secondary or memory."""
    return row(row_code(name, edition))["status"]


def value_status(name: str, edition: str | None = None) -> dict[str, str]:
    """Each value's status {column: read/secondary/memory}."""
    return dict(row(row_code(name, edition))["statuses"])


def edition(name: str, edition: str | None = None) -> str:
    """The edition the class's values come from (e.g. 'EN 338:2016', 'EN 14080:2013')."""
    return row(row_code(name, edition))["edition"]


def grade_options(grade: str | None = None) -> list[dict[str, str]]:
    """Rows of the visual grade -> class list (all, or those whose grade matches, case-insensitive).

    Each row: grading_rule, grade, species_and_origin, strength_class, source, edition, status.
    For the user to choose from (status memory: confirm against EN 1912 and the grade stamp).
    """
    rows_ = [dict(r) for r in table("visual_grade_to_class")]
    if grade is None:
        return rows_
    g = str(grade).strip().upper()
    return [r for r in rows_ if r["grade"].upper() == g]
