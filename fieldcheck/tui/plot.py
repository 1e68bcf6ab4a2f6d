"""A terminal plot of capacity against height, drawn with braille dots (no plotting library).

The curve is braille; the demand is a dashed line of `╌`; this post is `◆` with its height and
ratio written beside, so nothing depends on colour.
"""

from __future__ import annotations

import math
from collections.abc import Callable, Sequence

_DOT = ((0x01, 0x08), (0x02, 0x10), (0x04, 0x20), (0x40, 0x80))  # [row][col] bits of a cell


def braille_plot(
    xs: Sequence[float],
    ys: Sequence[float],
    *,
    width: int = 40,
    height: int = 10,
    mark: tuple[float, float] | None = None,
    hline: float | None = None,
    xfmt: Callable[[float], str] = lambda v: f"{v:g}",
    yfmt: Callable[[float], str] = lambda v: f"{v:g}",
) -> str:
    """Plain text: a y-axis label column, the plot area (width x height cells) and an x-axis."""
    pts = [
        (float(x), float(y))
        for x, y in zip(xs, ys, strict=False)
        if math.isfinite(x) and math.isfinite(y)
    ]
    if not pts:
        return "(nothing to plot)"
    x0, x1 = min(p[0] for p in pts), max(p[0] for p in pts)
    ymax = max([p[1] for p in pts] + [hline or 0.0, mark[1] if mark else 0.0]) * 1.05 or 1.0
    ymin = 0.0
    W, H = width * 2, height * 4
    grid = [[0] * width for _ in range(height)]
    text: dict[tuple[int, int], str] = {}

    def px(x: float) -> int:
        return 0 if x1 == x0 else max(0, min(W - 1, round((x - x0) / (x1 - x0) * (W - 1))))

    def py(y: float) -> int:  # 0 at the top
        return max(0, min(H - 1, round((1 - (y - ymin) / (ymax - ymin)) * (H - 1))))

    def dot(cx: int, cy: int) -> None:
        grid[cy // 4][cx // 2] |= _DOT[cy % 4][cx % 2]

    prev = None
    for x, y in pts:
        cur = (px(x), py(y))
        if prev is not None:  # join the points so steep parts stay continuous
            steps = max(abs(cur[0] - prev[0]), abs(cur[1] - prev[1]), 1)
            for k in range(steps + 1):
                dot(
                    round(prev[0] + (cur[0] - prev[0]) * k / steps),
                    round(prev[1] + (cur[1] - prev[1]) * k / steps),
                )
        else:
            dot(*cur)
        prev = cur
    if hline is not None and math.isfinite(hline):
        row = py(hline) // 4
        for c in range(0, width, 2):
            if grid[row][c] == 0:
                text[(row, c)] = "╌"
        text[(row, width - 1)] = "D"
    if mark is not None and all(math.isfinite(v) for v in mark):
        text[(py(mark[1]) // 4, px(mark[0]) // 2)] = "◆"
    ylab = [yfmt(ymax), yfmt((ymax + ymin) / 2), yfmt(ymin)]
    lw = max(len(s) for s in ylab)
    out = []
    for r in range(height):
        label = (
            ylab[0]
            if r == 0
            else ylab[1]
            if r == height // 2
            else ylab[2]
            if r == height - 1
            else ""
        )
        cells = "".join(text.get((r, c), chr(0x2800 + grid[r][c])) for c in range(width))
        out.append(f"{label:>{lw}} ┤{cells}")
    out.append(" " * lw + " └" + "─" * width)
    left, right = xfmt(x0), xfmt(x1)
    out.append(" " * (lw + 2) + left + " " * max(1, width - len(left) - len(right)) + right)
    return "\n".join(out)
