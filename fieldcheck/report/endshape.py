"""The end-condition drawing model shared by the interface's text drawing (tui/drawing.py) and
the report's SVG sketch (report/svg.py): the four end kinds, and the schematic buckled first mode
of a post between two ends (judgement: the point is which way it bows and whether the top sways).

Nothing here draws; ``buckled_shape(bottom, top)`` gives the deflection along the height.
"""

from __future__ import annotations

import math
from collections.abc import Callable

ENDS = ("pinned", "fixed", "free", "guided")

# what each end does, in words (the same in the interface and the report)
END_WORDS = {
    "pinned": "pinned: turns, does not move sideways",
    "fixed": "fixed: neither turns nor moves",
    "free": "free: nothing holds it",
    "guided": "guided: held square, slides sideways",
}


def _table() -> dict[tuple[str, str], tuple[Callable[[float], float], str]]:
    s, c, pi = math.sin, math.cos, math.pi
    return {
        ("pinned", "pinned"): (lambda t: s(pi * t), "bows in one half-wave"),
        ("fixed", "fixed"): (lambda t: (1 - c(2 * pi * t)) / 2, "bows between the fixed ends"),
        ("fixed", "pinned"): (lambda t: s(pi * t) * t / 0.62, "bows nearer the pinned top"),
        ("pinned", "fixed"): (
            lambda t: s(pi * t) * (1 - t) / 0.62,
            "bows nearer the pinned bottom",
        ),
        ("fixed", "free"): (lambda t: 1 - c(pi * t / 2), "flagpole: the free top sways"),
        ("free", "fixed"): (lambda t: 1 - c(pi * (1 - t) / 2), "flagpole: the free bottom sways"),
        ("fixed", "guided"): (lambda t: (1 - c(pi * t)) / 2, "the guided top sways, held square"),
        ("guided", "fixed"): (
            lambda t: (1 + c(pi * t)) / 2,
            "the guided bottom sways, held square",
        ),
        ("pinned", "guided"): (lambda t: s(pi * t / 2), "the guided top sways; the bottom turns"),
        ("guided", "pinned"): (
            lambda t: s(pi * (1 - t) / 2),
            "the guided bottom sways; the top turns",
        ),
    }


_SHAPES = _table()


def buckled_shape(bottom: str, top: str) -> tuple[Callable[[float], float], str] | None:
    """(deflection along the height t in [0, 1], bottom to top, peak about 1; its description),
    or None when the pair has no buckled shape (a mechanism: free-free, free-pinned, ...)."""
    return _SHAPES.get((bottom, top))


def end_kind(text: str | None) -> str | None:
    """The end kind a record's text names, or None when it names none of the four."""
    t = (text or "").strip().lower()
    return t if t in ENDS else None
