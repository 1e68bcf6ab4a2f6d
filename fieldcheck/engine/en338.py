"""EN 338 strength classes and the visual-grade-to-class list the user may choose from.

Values in MPa (N/mm^2) and kg/m^3, from data/en338_classes.csv (edition and status per row).
The visual-grade list (data/visual_grade_to_class.csv) is offered to the user; nothing here
assigns a class automatically.
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


@cache
def _classes() -> dict[str, dict[str, float]]:
    return {
        r["class"].upper(): {c: float(r[c]) for c in _VALUE_COLUMNS} for r in table("en338_classes")
    }


def class_names() -> tuple[str, ...]:
    """The strength classes held, in table order (e.g. ('C14', 'C16', ..., 'D40'))."""
    return tuple(_classes())


def strength_class(name: str) -> dict[str, float]:
    """Characteristic values of an EN 338 class (EN 338 Table 1), e.g. strength_class('C24').

    Keys: fmk_mpa (f_m,k), fc0k_mpa (f_c,0,k), fc90k_mpa (f_c,90,k), e0mean_mpa (E_0,mean),
    e005_mpa (E_0,05), rhok_kgm3 (rho_k), rhomean_kgm3 (rho_mean). A fresh dict each call.
    """
    key = str(name).strip().upper().replace(" ", "")
    found = _classes().get(key)
    if found is None:
        raise ValueError(
            f"strength class must be one of {', '.join(class_names())} (EN 338), "
            f"got {name!r}; for example --class C24."
        )
    return dict(found)


def is_softwood(name: str) -> bool:
    """C classes are softwood (and poplar), D classes hardwood (EN 338); decides k_c,90 > 1."""
    strength_class(name)  # validates the name
    return str(name).strip().upper().startswith("C")


def batch_fields(name: str) -> dict[str, float]:
    """PostBatch material fields for a class, in their EC5 meanings.

    Keys: fc_mpa, fc_perp_mpa, fb_mpa, e_mpa, emin_mpa.
    """
    v = strength_class(name)
    return {
        "fc_mpa": v["fc0k_mpa"],  # f_c,0,k
        "fc_perp_mpa": v["fc90k_mpa"],  # f_c,90,k
        "fb_mpa": v["fmk_mpa"],  # f_m,k
        "e_mpa": v["e0mean_mpa"],  # E_0,mean
        "emin_mpa": v["e005_mpa"],  # E_0,05 (stability: EN 1995-1-1 §6.3.2 Eq. 6.21)
    }


def status(name: str) -> str:
    """How sure the class's values are: read, secondary or memory (data/en338_classes.csv)."""
    key = str(name).strip().upper().replace(" ", "")
    strength_class(name)
    return next(r["status"] for r in table("en338_classes") if r["class"].upper() == key)


def edition(name: str) -> str:
    """The EN 338 edition the class's values come from (e.g. 'EN 338:2009')."""
    key = str(name).strip().upper().replace(" ", "")
    strength_class(name)
    return next(r["edition"] for r in table("en338_classes") if r["class"].upper() == key)


def grade_options(grade: str | None = None) -> list[dict[str, str]]:
    """Rows of the visual grade -> class list (all, or those whose grade matches, case-insensitive).

    Each row: grading_rule, grade, species_and_origin, strength_class, source, edition, status.
    For the user to choose from (status memory: confirm against EN 1912 and the grade stamp).
    """
    rows = [dict(r) for r in table("visual_grade_to_class")]
    if grade is None:
        return rows
    g = str(grade).strip().upper()
    return [r for r in rows if r["grade"].upper() == g]
