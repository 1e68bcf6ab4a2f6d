"""Words, symbols and bars for ratings: never colour alone.

Every action has a word and a symbol; colour (from the theme's variables, in content markup) is
only ever added beside them. Pure functions of plain values: no engine import here.
"""

from __future__ import annotations

import math
from typing import Any

# action label (store / engine name) -> (symbol, short word, theme variable)
ACTIONS: dict[str, tuple[str, str, str]] = {
    "no-action": ("✓", "no action", "$success"),
    "monitor": ("◔", "monitor", "$primary"),
    "repair-or-brace": ("▲", "repair/brace", "$warning"),
    "make-safe-now": ("✖", "MAKE SAFE NOW", "$error"),
    "not rated": ("?", "not rated", "$text-muted"),
}
ACTION_ORDER = ("make-safe-now", "repair-or-brace", "monitor", "no-action", "not rated")


def action_word(label: str) -> str:
    sym, word, _ = ACTIONS.get(label, ("?", label, ""))
    return f"{sym} {word}"


def action_markup(label: str) -> str:
    sym, word, var = ACTIONS.get(label, ("?", label, "$text"))
    return f"[bold {var}]{sym} {word}[/]"


def escape(text: str) -> str:
    """Escape user text for Textual content markup."""
    return str(text).replace("[", r"\[")


def ratio_text(ratio: float | None) -> str:
    if ratio is None or not math.isfinite(ratio):
        return "—"
    return f"{ratio:.2f}"


def ratio_word(ratio: float | None) -> str:
    if ratio is None or not math.isfinite(ratio):
        return "not rated"
    if ratio <= 0.8:
        return "OK"
    if ratio <= 1.0:
        return "near limit"
    if ratio <= 1.25:
        return "OVER"
    return "FAR OVER"


def ratio_bar(ratio: float | None, width: int = 20) -> str:
    """A text bar over 0..1.5 with a `|` at 1.0, the number and a word: `[#######|  ] 0.86 near limit`."""
    width = max(width, 6)
    if ratio is None or not math.isfinite(ratio):
        return "[" + "·" * width + "] — not rated"
    full = 1.5
    limit = round(width / full)  # the column where the ratio is 1.0
    fill = min(width, round(max(ratio, 0.0) / full * width))
    cells = []
    for i in range(width):
        if i == limit:
            cells.append("|" if i >= fill else "╫")
        else:
            cells.append("█" if i < fill else "·")
    over = "»" if ratio > full else ""
    return "[" + "".join(cells) + "]" + over + f" {ratio:.2f} {ratio_word(ratio)}"


def force(n: float | None, system: str) -> str:
    if n is None or not (isinstance(n, (int, float)) and math.isfinite(n)):
        return "—"
    from fieldcheck import units

    return units.format_force(float(n), system)


def length(mm: float | None, system: str) -> str:
    if mm is None or not math.isfinite(mm):
        return "—"
    from fieldcheck import units

    return units.format_length(float(mm), system)


def section_text(record: dict[str, str]) -> str:
    for key in ("section", "size", "diameter"):
        if record.get(key):
            text = record[key]
            return ("ø " + text) if key == "diameter" else text
    if record.get("ply"):
        return f"{record.get('plies', '1')}×{record['ply']}"
    return "—"


def ends_text(record: dict[str, str]) -> str:
    return f"{record.get('top') or 'pinned'}/{record.get('bottom') or 'pinned'}"


def material_text(record: dict[str, str]) -> str:
    if record.get("class"):
        return record["class"]
    sp = record.get("species") or "unknown"
    gr = record.get("grade") or "unknown"
    return f"{sp} {gr}" if (sp, gr) != ("unknown", "unknown") else "unknown"


def head_lines(summary: dict[str, Any] | None, system: str, width: int, status: str) -> list[str]:
    """Seven lines, always: status, action, capacity, demand, ratio bar, governing check, due.
    A fixed height lets a keystroke repaint them without a layout pass."""
    if summary is None:
        return [
            status,
            "Action    —",
            "Capacity  —",
            "Demand    —",
            "Ratio     —",
            "Governs   —",
            "Due       —",
        ]
    kn = 1000.0
    cap = summary.get("allowable_load_kN")
    dem = summary.get("demand_kN")
    ratio = summary.get("demand_capacity_ratio")
    label = summary.get("action") or "not rated"
    due = summary.get("due_days")
    due_text = "now" if due == 0 else (f"within {due} days" if due else "—")
    return [
        status,
        f"Action    {action_markup(label)}",
        f"Capacity  [b]{force(cap * kn if cap is not None else None, system)}[/b]",
        f"Demand    {force(dem * kn if dem is not None else None, system)}",
        "Ratio     " + ratio_bar(ratio, max(8, min(30, width - 27))),
        f"Governs   {escape(_check_label(summary))}",
        f"Due       {due_text}",
    ]


def check_lines(summary: dict[str, Any] | None) -> list[str]:
    out = ["[b]Checks[/b] (ratio, clause)"]
    for c in (summary or {}).get("checks") or []:
        r = c.get("ratio")
        mark = "✖" if (r is not None and r > 1.0) else "✓"
        out.append(
            f" {mark} {ratio_text(r)} {escape(c.get('label', c.get('name', '')))} "
            f"({escape(c.get('clause', ''))})"
        )
    return out


def detail_lines(summary: dict[str, Any] | None) -> list[str]:
    """Wrapped text under the checks: what to do, the load case, warnings."""
    if not summary:
        return []
    lines = []
    if summary.get("action_text"):
        lines.append(escape(summary["action_text"]))
    comb = summary.get("load_combination")
    if isinstance(comb, dict) and comb.get("name"):
        lines.append(f"Load case: {escape(comb['name'])}")
    warnings = summary.get("warnings") or []
    if warnings:
        lines.append(f"[b]Warnings ({len(warnings)})[/b]")
        lines.extend(f" ! {escape(w)}" for w in warnings)
    return lines


def _check_label(summary: dict[str, Any]) -> str:
    gov = summary.get("governing_check")
    for c in summary.get("checks") or []:
        if c.get("name") == gov:
            return f"{c.get('label', gov)} ({c.get('clause', '')})"
    return str(gov or "—")


def cautions_short() -> list[str]:
    from fieldcheck.engine.cautions import CAUTIONS

    return [f"⚠ {escape(c)}" for c in CAUTIONS]
