"""Capacity against height as a small inline SVG (no scripts, no external files, prints in black).

Meaning never rests on colour: the curve, the demand line and the post are each labelled in words
and drawn with different strokes (solid, dashed, a ringed dot).
"""

from __future__ import annotations

import math
from html import escape

import numpy as np

from fieldcheck.units import LBF_N

W, H = 380, 230
LEFT, RIGHT, TOP, BOTTOM = 62, 14, 14, 42
FT_MM = 304.8


def nice_ticks(lo: float, hi: float, n: int = 5) -> list[float]:
    """Round tick values covering [lo, hi] (1, 2, 5 x 10^k steps)."""
    if not (math.isfinite(lo) and math.isfinite(hi)) or hi <= lo:
        hi = lo + 1.0
    raw = (hi - lo) / max(n, 1)
    mag = 10 ** math.floor(math.log10(raw))
    step = next(m * mag for m in (1, 2, 5, 10) if m * mag >= raw)
    first = math.floor(lo / step + 1e-9)
    last = math.ceil(hi / step - 1e-9)  # the last tick is at or beyond hi: the data fits inside
    return [round(k * step, 10) for k in range(first, max(last, first + 1) + 1)]


def _tick_text(v: float) -> str:
    return f"{v:,.0f}" if abs(v) >= 100 else f"{v:g}"


def capacity_plot(
    heights_mm: np.ndarray,
    caps_n: np.ndarray,
    post_h_mm: float,
    post_cap_n: float,
    demand_n: float | None,
    units: str = "us",
    label: str = "",
) -> str:
    """One SVG element: capacity (lbf or kN) against height (ft or m), this post ringed."""
    if units == "us":
        xs, xu = np.asarray(heights_mm) / FT_MM, "ft"
        ys, yu = np.asarray(caps_n) / LBF_N, "lbf"
        px, py = post_h_mm / FT_MM, post_cap_n / LBF_N
        dy = None if demand_n is None or not math.isfinite(demand_n) else demand_n / LBF_N
    else:
        xs, xu = np.asarray(heights_mm) / 1000.0, "m"
        ys, yu = np.asarray(caps_n) / 1000.0, "kN"
        px, py = post_h_mm / 1000.0, post_cap_n / 1000.0
        dy = None if demand_n is None or not math.isfinite(demand_n) else demand_n / 1000.0
    ok = np.isfinite(xs) & np.isfinite(ys)
    if not ok.any() or not (math.isfinite(px) and math.isfinite(py)):
        return '<p class="muted">No capacity curve: the height or capacity is not defined.</p>'
    xs, ys = xs[ok], ys[ok]
    xt = nice_ticks(float(min(xs.min(), px)), float(max(xs.max(), px)))
    top = max(float(ys.max()), py, dy or 0.0) * 1.05
    yt = nice_ticks(0.0, top)
    x0, x1, y0, y1 = xt[0], xt[-1], 0.0, yt[-1]
    pw, ph = W - LEFT - RIGHT, H - TOP - BOTTOM

    def sx(v: float) -> float:
        return LEFT + (v - x0) / (x1 - x0) * pw

    def sy(v: float) -> float:
        return TOP + ph - (v - y0) / (y1 - y0) * ph

    parts = [
        f'<svg class="plot" width="{W}" height="{H}" viewBox="0 0 {W} {H}" role="img" '
        f'aria-label="capacity against height{escape(" for " + label) if label else ""}">',
        f"<title>Capacity against height{escape(', ' + label) if label else ''}</title>",
        f'<rect x="{LEFT}" y="{TOP}" width="{pw}" height="{ph}" fill="none" stroke="#444"/>',
    ]
    for v in xt:
        X = sx(v)
        parts.append(
            f'<line x1="{X:.1f}" y1="{TOP + ph}" x2="{X:.1f}" y2="{TOP + ph + 4}" stroke="#444"/>'
        )
        parts.append(
            f'<text x="{X:.1f}" y="{TOP + ph + 15}" text-anchor="middle">{_tick_text(v)}</text>'
        )
    for v in yt:
        Y = sy(v)
        parts.append(
            f'<line x1="{LEFT - 4}" y1="{Y:.1f}" x2="{LEFT + pw}" y2="{Y:.1f}" stroke="#ddd"/>'
        )
        parts.append(
            f'<text x="{LEFT - 6}" y="{Y + 3:.1f}" text-anchor="end">{_tick_text(v)}</text>'
        )
    parts.append(
        f'<text x="{LEFT + pw / 2:.1f}" y="{H - 6}" text-anchor="middle">height ({xu})</text>'
    )
    parts.append(
        f'<text x="12" y="{TOP + ph / 2:.1f}" text-anchor="middle" '
        f'transform="rotate(-90 12 {TOP + ph / 2:.1f})">capacity ({yu})</text>'
    )
    pts = " ".join(
        f"{sx(a):.1f},{sy(b):.1f}" for a, b in zip(xs.tolist(), ys.tolist(), strict=True)
    )
    parts.append(f'<polyline points="{pts}" fill="none" stroke="#000" stroke-width="1.6"/>')
    if dy is not None and dy <= y1:
        Y = sy(dy)
        parts.append(
            f'<line x1="{LEFT}" y1="{Y:.1f}" x2="{LEFT + pw}" y2="{Y:.1f}" stroke="#000" '
            f'stroke-dasharray="5 4"/>'
        )
        parts.append(
            f'<text x="{LEFT + pw - 4}" y="{Y - 4:.1f}" text-anchor="end">demand (dashed)</text>'
        )
    X, Y = sx(px), sy(py)
    parts.append(
        f'<circle cx="{X:.1f}" cy="{Y:.1f}" r="5" fill="#fff" stroke="#000" stroke-width="1.6"/>'
    )
    parts.append(f'<circle cx="{X:.1f}" cy="{Y:.1f}" r="1.8" fill="#000"/>')
    anchor = "start" if LEFT + pw * 0.6 > X else "end"
    dx = 8 if anchor == "start" else -8
    parts.append(
        f'<text x="{X + dx:.1f}" y="{Y - 8:.1f}" text-anchor="{anchor}">'
        f"this post{escape(' (' + label + ')') if label else ''}</text>"
    )
    parts.append("</svg>")
    return "".join(parts)
