"""Inputs that contradict each other, or only mean something beside another input: refused in one
sentence, never silently ignored (the first builder; see columns.BUILDERS).

Each rule names the column it is reported on and says which options to give."""

from __future__ import annotations

from typing import Any

from fieldcheck.row_error import RowError


def _opt(column: str) -> str:
    return "--" + column.replace("_", "-")


# (column, needs one of these columns) : meaningless alone
NEEDS: tuple[tuple[str, tuple[str, ...]], ...] = (
    ("position", ("spacing",)),
    ("brace_edge", ("lateral_rule",)),
    ("rain_duration", ("rain",)),
    ("fastening", ("plies", "ply")),
    ("decay_at", ("decay_wide", "decay_wide2", "decay_narrow", "decay_narrow2")),
    ("decay_margin", ("decay_wide", "decay_wide2", "decay_narrow", "decay_narrow2")),
    ("hollow_at", ("hollow",)),
    ("char_at", ("char_wide", "char_wide2", "char_narrow", "char_narrow2")),
    ("wane_corners", ("wane",)),
    ("notch_face", ("notch",)),
    ("notch_height", ("notch",)),
    ("hole_face", ("hole",)),
    ("hole_height", ("hole",)),
    ("knot_face", ("knot",)),
    ("split_faces", ("split",)),
    ("split_at", ("split",)),
    ("stress_wave_path", ("stress_wave",)),
    ("stress_wave_sound", ("stress_wave",)),
    ("density", ("stress_wave",)),  # only for the stress wave's E_d = rho v^2
)
# (column, conflicts with) : two ways of saying one thing
EITHER: tuple[tuple[str, str], ...] = (
    ("diameter", "size"),
    ("diameter", "section"),
)
# a spring says how the end turns, and so does fixed; pinned (held sideways), guided and free
# (may sway) say how it moves sideways beside a spring
ROTATION_ENDS = ("fixed",)  # pinned with a spring: held sideways (the default end)
SPRINGS = {"top": ("top_ratio", "top_spring"), "bottom": ("bottom_ratio", "bottom_spring")}
EC5_ONLY = ("class", "en338_edition", "service_class", "cap_class", "sill_class")


def contradiction_fields(row: dict[str, Any], out: dict[str, Any]) -> dict[str, Any]:
    """No fields: raises RowError for the first contradiction found."""
    for column, other in EITHER:
        if column in row and other in row:
            raise RowError(
                column,
                f"{column}: {_opt(other)} and {_opt(column)} both say the same thing in two ways; "
                f"give one of them.",
            )
    for end, springs in SPRINGS.items():
        given = [c for c in springs if c in row]
        if given and str(row.get(end, "")) in ROTATION_ENDS:
            raise RowError(
                given[0],
                f"{given[0]}: --{end} {row[end]} and {_opt(given[0])} both say how the {end} "
                f"turns; give one of them (with a spring, --{end} guided or free says the {end} "
                "may sway).",
            )
    for column, needs in NEEDS:
        if column in row and not any(n in row for n in needs):
            also = " or ".join(_opt(n) for n in needs)
            raise RowError(
                column,
                f"{column}: {_opt(column)} means something only with {also}; "
                f"give {also} too, or leave {_opt(column)} out.",
            )
    method = str(row.get("method", "asd"))
    if method != "ec5":
        for column in EC5_ONLY:
            if column in row:
                raise RowError(
                    column,
                    f"{column}: {_opt(column)} is an EN 1995-1-1 input, and the method is "
                    f"{method.upper()}; add --method ec5 or leave {_opt(column)} out.",
                )
    return {}
