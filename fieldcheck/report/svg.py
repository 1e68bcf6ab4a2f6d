"""Capacity against height as a small inline SVG (no scripts, no external files, prints in black).

Meaning never rests on colour: the curve, the demand line and the post are each labelled in words
and drawn with different strokes (solid, dashed, a ringed dot).
"""

from __future__ import annotations

import math
from functools import lru_cache
from html import escape

import numpy as np

from fieldcheck.units import FT_MM, LBF_N

W, H = 520, 270
LEFT, RIGHT, TOP, BOTTOM = 70, 16, 44, 46  # the legend sits above the frame, never on the curve


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
        f'<svg class="plot" viewBox="0 0 {W} {H}" role="img" '
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
        f'<text x="14" y="{TOP + ph / 2:.1f}" text-anchor="middle" '
        f'transform="rotate(-90 14 {TOP + ph / 2:.1f})">capacity ({yu})</text>'
    )
    pts = " ".join(
        f"{sx(a):.1f},{sy(b):.1f}" for a, b in zip(xs.tolist(), ys.tolist(), strict=True)
    )
    parts.append(f'<polyline points="{pts}" fill="none" stroke="#000" stroke-width="1.6"/>')
    if dy is not None and dy <= y1:
        Y = sy(dy)
        parts.append(
            f'<line x1="{LEFT}" y1="{Y:.1f}" x2="{LEFT + pw}" y2="{Y:.1f}" stroke="#000" '
            f'stroke-dasharray="6 4"/>'
        )
    X, Y = sx(px), sy(py)
    parts.append(
        f'<circle cx="{X:.1f}" cy="{Y:.1f}" r="5" fill="#fff" stroke="#000" stroke-width="1.6"/>'
    )
    parts.append(f'<circle cx="{X:.1f}" cy="{Y:.1f}" r="1.8" fill="#000"/>')
    # the legend: above the frame, so no label ever lies on the curve or the demand line
    ly = 16
    parts.append(
        f'<line x1="{LEFT}" y1="{ly - 4}" x2="{LEFT + 26}" y2="{ly - 4}" stroke="#000" '
        'stroke-width="1.6"/>'
        f'<text x="{LEFT + 32}" y="{ly}">capacity</text>'
    )
    if dy is not None:
        parts.append(
            f'<line x1="{LEFT + 110}" y1="{ly - 4}" x2="{LEFT + 136}" y2="{ly - 4}" '
            'stroke="#000" stroke-dasharray="6 4"/>'
            f'<text x="{LEFT + 142}" y="{ly}">demand</text>'
        )
    parts.append(
        f'<circle cx="{LEFT + 224}" cy="{ly - 4}" r="5" fill="#fff" stroke="#000" '
        'stroke-width="1.6"/>'
        f'<circle cx="{LEFT + 224}" cy="{ly - 4}" r="1.8" fill="#000"/>'
        f'<text x="{LEFT + 234}" y="{ly}">this post'
        f"{escape(' (' + label + ')') if label else ''}</text>"
    )
    parts.append("</svg>")
    return "".join(parts)


# ----------------------------------------------------------------------------- end sketch

SK_W, SK_H = 100, 200
SK_X, SK_TOP, SK_BOT, SK_AMP = 40.0, 34.0, 166.0, 30.0


def _end_symbol(kind: str | None, y: float, at_top: bool) -> list[str]:
    """An end's symbol at height ``y`` of the post (SVG elements)."""
    x, s = SK_X, -1.0 if at_top else 1.0  # s: away from the post
    if kind == "pinned":
        tip = y
        base = y + s * 14
        return [
            f'<circle cx="{x}" cy="{tip}" r="3.5" fill="#fff" stroke="#000"/>',
            f'<polygon points="{x},{tip + s * 3.5} {x - 10},{base} {x + 10},{base}" '
            'fill="none" stroke="#000"/>',
            f'<line x1="{x - 16}" y1="{base}" x2="{x + 16}" y2="{base}" stroke="#000"/>',
        ]
    if kind == "fixed":
        out = [
            f'<line x1="{x - 18}" y1="{y}" x2="{x + 18}" y2="{y}" stroke="#000" stroke-width="3"/>'
        ]
        out += [
            f'<line x1="{x - 18 + 6 * k}" y1="{y}" x2="{x - 24 + 6 * k}" y2="{y + s * 8}" '
            'stroke="#000"/>'
            for k in range(7)
        ]
        return out
    if kind == "guided":
        return [
            f'<line x1="{x - 16}" y1="{y}" x2="{x + 16}" y2="{y}" stroke="#000" stroke-width="3"/>',
            f'<circle cx="{x - 8}" cy="{y + s * 5}" r="3.5" fill="#fff" stroke="#000"/>',
            f'<circle cx="{x + 8}" cy="{y + s * 5}" r="3.5" fill="#fff" stroke="#000"/>',
            f'<line x1="{x - 20}" y1="{y + s * 9}" x2="{x + 20}" y2="{y + s * 9}" stroke="#000"/>',
            f'<path d="M{x + 22},{y} l8,0 m-3,-3 l3,3 l-3,3" fill="none" stroke="#000"/>',
        ]
    if kind == "free":
        return [f'<circle cx="{x}" cy="{y}" r="2.5" fill="#000"/>']
    return [f'<text x="{x + 6}" y="{y + 5}">?</text>']


def end_sketch(
    top: str | None,
    bottom: str | None,
    ke: float | None = None,
    *,
    given: tuple[bool, bool] = (True, True),
    k_symbol: str = "K<sub>e</sub>",
) -> str:
    """See ``_end_sketch``; posts share few end pairs, so the drawing is cached. ``given``: the
    top and bottom were typed (else the ends named are those the post was rated with, and the
    caption says they were not given); ``k_symbol``: the factor's symbol (EC5: β)."""
    k = None if ke is None or not math.isfinite(ke) else round(ke, 2)
    return _end_sketch(top, bottom, k, given, k_symbol)


@lru_cache(maxsize=1024)
def _end_sketch(
    top: str | None,
    bottom: str | None,
    ke: float | None,
    given: tuple[bool, bool],
    k_symbol: str,
) -> str:
    """The post's end conditions and its buckled first mode as a small SVG (the drawing model of
    the interface's text drawing: report.endshape), with its words in a caption beside it.
    Straight post dotted, buckled shape solid."""
    from fieldcheck.report.endshape import buckled_shape, end_kind

    tk, bk = end_kind(top), end_kind(bottom)
    top_t, bot_t = (
        (name or "not given") + ("" if typed or not name else " (not given)")
        for name, typed in ((top, given[0]), (bottom, given[1]))
    )
    parts = [
        f'<svg class="sketch" viewBox="0 0 {SK_W} {SK_H}" role="img" '
        f'aria-label="end conditions: top {escape(top_t)}, bottom {escape(bot_t)}">',
        f'<line x1="{SK_X}" y1="{SK_TOP}" x2="{SK_X}" y2="{SK_BOT}" stroke="#000" '
        'stroke-dasharray="2 3"/>',
        '<text x="2" y="12">top</text>',
        f'<text x="2" y="{SK_H - 2}">bottom</text>',
    ]
    parts += _end_symbol(tk, SK_TOP, True) + _end_symbol(bk, SK_BOT, False)
    shape = buckled_shape(bk, tk) if tk and bk else None
    if shape is not None:
        pts = []
        for k in range(41):
            t = k / 40
            x = SK_X + SK_AMP * max(0.0, min(1.2, shape[0](t)))
            pts.append(f"{x:.1f},{SK_BOT - t * (SK_BOT - SK_TOP):.1f}")
        parts.append(
            f'<polyline points="{" ".join(pts)}" fill="none" stroke="#000" stroke-width="1.8"/>'
        )
        words = shape[1]
    elif tk and bk:
        words = "a mechanism: no buckled shape"
    else:
        words = "not drawn: an end is not one of pinned, fixed, free, guided"
    parts.append("</svg>")
    ke_t = f"; {k_symbol} = {ke:.2f}" if ke is not None and math.isfinite(ke) else ""
    return (
        f'<figure class="sketchbox">{"".join(parts)}<figcaption>top {escape(top_t)}, '
        f"bottom {escape(bot_t)}{ke_t}; {escape(words)}</figcaption></figure>"
    )
