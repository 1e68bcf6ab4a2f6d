"""A small text drawing of a post's end conditions and its buckled shape (our own art).

The straight post is drawn with `┆`, the buckled shape with `•`, and each end with a symbol and
its word, so the drawing reads without colour. Shapes are schematic first modes (judgement):
the point is which way the post bows and whether the top sways.
"""

from __future__ import annotations

import math

from fieldcheck.report.endshape import ENDS, buckled_shape

# end symbol drawn at the top / bottom of the post (7 characters, centred on the post)
TOP_ART = {
    "pinned": "══○══",  # a pin under the cap: rotates, does not move sideways
    "fixed": "▀▀█▀▀",  # built in: neither rotates nor moves
    "free": "  ·  ",  # nothing holds it
    "guided": "═╤═»═",  # held square but free to slide sideways
}
BOTTOM_ART = {
    "pinned": " ╱○╲ ",  # noqa: RUF001 (box-drawing art)
    "fixed": "▄▄█▄▄",
    "free": "  ·  ",
    "guided": "═╧═»═",
}


def _shape(bottom: str, top: str):
    """Deflection along the height t in [0, 1] (bottom to top), normalised to a peak of 1."""
    return buckled_shape(bottom, top)


def ends_drawing(
    top: str, bottom: str, ke: float | None = None, height: int = 9, symbol: str = "Ke"
) -> str:
    """Plain text (no markup), about 24 columns by height + 4 rows."""
    top = top if top in ENDS else "pinned"
    bottom = bottom if bottom in ENDS else "pinned"
    shape = _shape(bottom, top)
    lines = [f"top: {top}", "  " + TOP_ART[top]]
    rows = max(height, 3)
    amp = 5
    for r in range(rows):
        t = 1 - (r + 0.5) / rows  # top row first
        row = [" "] * 12
        row[4] = "┆"
        if shape is not None:
            x = 4 + round(amp * max(0.0, min(1.2, shape[0](t))))
            row[min(x, 11)] = "•"
        lines.append("".join(row).rstrip())
    lines.append("  " + BOTTOM_ART[bottom])
    lines.append(f"bottom: {bottom}")
    if shape is None:
        lines.append("unstable: no buckled shape (a mechanism)")
    else:
        lines.append(shape[1])
    if ke is not None and math.isfinite(ke):
        lines.append(f"{symbol} = {ke:.2f}  (┆ straight, • buckled)")
    else:
        lines.append("(┆ straight, • buckled)")
    return "\n".join(lines)
