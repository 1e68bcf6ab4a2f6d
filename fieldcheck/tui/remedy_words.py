"""Remedies in the inspector's words, and in the order an inspector would try them.

The engine offers each remedy as a kind, a ratio and the record changes it stands for; this turns
one into a short instruction ("brace at mid-height on the weak axis, 4' 0" up", "bear on a steel
plate 6 x 6 x 1/2 in at the cap and the sill", "add a post beside it") and ranks a remedy that
passes with no margin below one that leaves some. Pure functions of plain values.
"""

from __future__ import annotations

import math
from typing import Any

# a remedy whose expected ratio is above this passes with no margin worth the name (judgement: a
# field measurement is seldom better than 5 %)
NO_MARGIN = 0.95
X = " \u00d7 "  # the multiplication sign between a plate's sides

_SPECIES = {
    "douglas-fir-larch": "Douglas fir-larch",
    "hem-fir": "hem-fir",
    "spruce-pine-fir": "spruce-pine-fir",
    "southern-pine": "southern pine",
}
_GRADES = {
    "select-structural": "Select Structural",
    "no1-btr": "No.1 & Btr",
    "no1": "No.1",
    "no2": "No.2",
    "no3": "No.3",
    "stud": "Stud",
}


def _mm(text: str | None) -> float | None:
    """'1524 mm' (the engine's record text) -> 1524.0."""
    if not text:
        return None
    try:
        return float(str(text).split()[0])
    except ValueError:
        return None


def _length(mm: float | None, units: str) -> str:
    if mm is None or not math.isfinite(mm):
        return "?"
    from fieldcheck import units as u

    return u.format_length(mm, units)


def _plate_side(mm: float, units: str) -> str:
    """A plate dimension as a stock size: whole inches (US) or millimetres."""
    if units == "us":
        return f"{mm / 25.4:.0f}"
    return f"{mm:.0f}"


def margin_ok(rem: dict[str, Any]) -> bool:
    r = rem.get("ratio")
    return isinstance(r, (int, float)) and math.isfinite(r) and r <= NO_MARGIN


def ranked(rems: list[dict[str, Any]]) -> list[dict[str, Any]]:
    """The engine's order (cheapest kind first), with every remedy that passes with no margin
    moved below those that leave some."""
    return sorted(rems, key=lambda r: not margin_ok(r))


def words(rem: dict[str, Any], units: str = "us", width_mm: float | None = None) -> str:
    """One remedy as the inspector would say it."""
    kind = rem.get("kind", "")
    ch = rem.get("record_changes") or {}
    if kind == "brace-weak":
        up = _length(_mm(ch.get("brace_weak")), units)
        return f"brace at mid-height on the weak axis ({up} up)"
    if kind == "brace-both":
        up = _length(_mm(ch.get("brace_strong") or ch.get("brace_weak")), units)
        return f"brace at mid-height both ways ({up} up)"
    if kind == "plate":
        length = _mm(ch.get("plate")) or width_mm
        wide = width_mm or length
        if length is None or wide is None:
            return "bear on steel plates at the cap and the sill, at least 1/2 in thick"
        if units == "us":
            size = f"{_plate_side(length, units)}{X}{_plate_side(wide, units)}{X}1/2 in"
        else:
            size = f"{_plate_side(length, units)}{X}{_plate_side(wide, units)}{X}12 mm"
        return f"bear on a steel plate {size} at the cap and the sill"
    if kind == "pad":
        side = _length(_mm(ch.get("pad")), units)
        thick = _length(_mm(ch.get("pad_thickness")), units)
        return f"set it on a pad {side} square, {thick} thick"
    if kind == "second-post":
        n = ch.get("shared_by") or "2"
        return f"add a post beside it ({n} sharing the load under a stiff cap)"
    if kind == "replace":
        size = ch.get("size") or "new"
        sp = _SPECIES.get(ch.get("species", ""), ch.get("species", ""))
        gr = _GRADES.get(ch.get("grade", ""), ch.get("grade", ""))
        return " ".join(x for x in ("replace it with a new", size, sp, gr, "post") if x)
    text = str(rem.get("description") or rem.get("text") or "a remedy")
    return text[:1].lower() + text[1:].rstrip(".")


def line(rem: dict[str, Any], units: str = "us", width_mm: float | None = None) -> str:
    """The remedy with what it leaves: 'brace at mid-height ... → 0.72'."""
    r = rem.get("ratio")
    tail = f" → {r:.2f}" if isinstance(r, (int, float)) and math.isfinite(r) else ""
    if tail and not margin_ok(rem):
        tail += " (passes with no margin)"
    return words(rem, units, width_mm) + tail
