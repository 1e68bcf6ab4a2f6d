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
    "not-rated": ("?", "not rated", "$text-muted"),  # the engine's name (no load given)
    "not rated: load missing": ("?", "not rated: load missing", "$warning"),
}
LOAD_MISSING = "not rated: load missing"
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


_EIGHTHS = " ▏▎▍▌▋▊▉"


def ratio_bar(ratio: float | None, width: int = 20) -> str:
    """A text bar over 0..1.5 drawn in eighths of a cell, a `|` at 1.0, the number and a word:
    0.79 and 0.89 differ by at least one eighth of a cell from 8 cells up."""
    width = max(width, 6)
    if ratio is None or not math.isfinite(ratio):
        return "[" + "·" * width + "] — not rated"
    full = 1.5
    limit = round(width / full)  # the column where the ratio is 1.0
    eighths = min(width * 8, round(max(ratio, 0.0) / full * width * 8))
    cells = []
    for i in range(width):
        part = max(0, min(8, eighths - 8 * i))
        if i == limit and part < 8:
            cells.append("|" if part == 0 else "╫")
        elif part == 8:
            cells.append("█")
        elif part:
            cells.append(_EIGHTHS[part])
        else:
            cells.append("·")
    over = "»" if ratio > full else ""
    return "[" + "".join(cells) + "]" + over + f" {ratio:.2f} {ratio_word(ratio)}"


def force_kn_first(n: float | None, system: str) -> str:
    """Eurocode posts: kN first, the user's other unit after."""
    if n is None or not (isinstance(n, (int, float)) and math.isfinite(n)):
        return "—"
    kn = f"{sig(n / 1000.0)} kN"
    return kn if system != "us" else f"{kn} ({force(n, 'us')})"


def sig(x: float, digits: int = 4) -> str:
    """A number to ``digits`` significant figures, grouped, without trailing zeros."""
    if not math.isfinite(x):
        return "—" if math.isnan(x) else ("∞" if x > 0 else "-∞")
    if x == 0:
        return "0"
    decimals = max(0, digits - 1 - math.floor(math.log10(abs(x))))
    text = f"{round(x, decimals):,.{decimals}f}"
    if "." in text:
        text = text.rstrip("0").rstrip(".")
    return text


_NUMBER = None


def sig_text(text: str, digits: int = 4) -> str:
    """Every number in ``text`` with more than ``digits`` significant figures, rounded to that
    many: '2757.903 MPa (400,000.0 psi)' -> '2,758 MPa (400,000 psi)'. Exponents are kept."""
    import re

    global _NUMBER
    if _NUMBER is None:
        # a standard's number (EN 14081-1, EN 14080:2013, 24 CFR 3285.202) is a name, not a
        # value: never grouped or rounded
        _NUMBER = re.compile(
            r"(?<![\w.])(?<!EN )(?<!ISO )(?<!CFR )(?<!ASTM )"
            r"(\d{1,3}(?:,\d{3})+|\d+)(\.\d+)?(?![\w.]|e[+-]?\d)"
        )

    def one(m: re.Match[str]) -> str:
        whole, frac = m.group(1), m.group(2) or ""
        digits_in = len((whole.replace(",", "") + frac[1:]).lstrip("0"))
        if digits_in <= digits:
            return m.group(0)
        return sig(float(whole.replace(",", "") + frac), digits)

    return _NUMBER.sub(one, text)


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
        return f"{record.get('plies', '1')}×{record['ply']}"  # noqa: RUF001
    return "—"


def ends_text(record: dict[str, str]) -> str:
    return f"{record.get('top') or 'pinned'}/{record.get('bottom') or 'pinned'}"


def material_text(record: dict[str, str]) -> str:
    if record.get("class"):
        return record["class"]
    sp = record.get("species") or "unknown"
    gr = record.get("grade") or "unknown"
    return f"{sp} {gr}" if (sp, gr) != ("unknown", "unknown") else "unknown"


# the head's words: (capacity, demand, ratio) for NDS posts and in Eurocode terms for EC5 posts
HEAD_WORDS = {
    "nds": ("Capacity ", "Demand   ", "Ratio    "),
    "ec5": ("N_Rd     ", "N_Ed     ", "Use      "),
}


def load_missing(summary: dict[str, Any] | None) -> bool:
    """No load given: the post is not rated (capacity alone says nothing about safety)."""
    if not summary:
        return False
    if summary.get("state") == LOAD_MISSING:
        return True
    dem = summary.get("demand_kN")
    return dem is None or (isinstance(dem, float) and not math.isfinite(dem))


def head_lines(
    summary: dict[str, Any] | None, system: str, width: int, status: str, ec5: bool = False
) -> list[str]:
    """Seven lines, always: status, action, capacity, demand, ratio bar, governing check, due.
    A fixed height lets a keystroke repaint them without a layout pass. ``summary`` None (not
    rated): no old result is shown beside the status."""
    cap_w, dem_w, ratio_w = HEAD_WORDS["ec5" if ec5 else "nds"]
    if summary is None:
        return [
            status,
            "Action    ? not rated",
            f"{cap_w} —",
            f"{dem_w} —",
            f"{ratio_w} —",
            "Governs   —",
            "Due       —",
        ]
    kn = 1000.0
    fmt = force_kn_first if ec5 else force
    cap = summary.get("allowable_load_kN")
    dem = summary.get("demand_kN")
    ratio = summary.get("demand_capacity_ratio")
    label = summary.get("action") or "not rated"
    due = summary.get("due_days")
    due_text = "now" if due == 0 else (f"within {due} days" if due else "—")
    if load_missing(summary):
        label, due_text, ratio = LOAD_MISSING, "— (give the load)", None
    return [
        status,
        f"Action    {action_markup(label)}",
        f"{cap_w} [b]{fmt(cap * kn if cap is not None else None, system)}[/b]",
        f"{dem_w} {fmt(dem * kn if dem is not None else None, system)}",
        f"{ratio_w} " + ratio_bar(ratio, max(8, min(30, width - 27))),
        f"Governs   {escape(_check_label(summary))}",
        f"Due       {due_text}",
    ]


def check_lines(summary: dict[str, Any] | None) -> list[str]:
    from fieldcheck.engine.loads import GIVEN

    checks = (summary or {}).get("checks") or []
    combos = any(c.get("combination") not in (None, GIVEN) for c in checks)
    out = ["[b]Checks[/b] (ratio, " + ("combination, " if combos else "") + "clause)"]
    ground = (summary or {}).get("ground") or {}
    soil = ground.get("soil_check", "verified")
    for c in checks:
        r = c.get("ratio")
        # no ratio (no load: not rated) is never a tick; nor a check made on an assumed input
        # that the rating does not rely on (a pad of unknown thickness taken as rigid)
        doubt = c.get("name") == "soil_bearing" and soil != "verified"
        mark = "?" if r is None or r != r else ("✖" if r > 1.0 else "?" if doubt else "✓")
        note = f"; {soil}" if doubt else ""
        # every ASCE 7 combination is rated for every check: each names the one governing it
        if combos and r is not None and r == r:
            note = f"; under {c['combination']}{note}"
        out.append(
            f" {mark} {ratio_text(r)} {escape(c.get('label', c.get('name', '')))} "
            f"({escape(c.get('clause', ''))}{escape(note)})"
        )
    return out


def detail_lines(summary: dict[str, Any] | None) -> list[str]:
    """Wrapped text under the checks: what to do, the load case, warnings."""
    if not summary:
        return []
    lines = []
    if summary.get("action_text"):
        lines.append(escape(plain(summary["action_text"])))
    # the table the values came from, and how sure each value is (read, secondary, memory)
    if summary.get("material"):
        lines.append(f"Material: {escape(summary['material'])}")
    if summary.get("values_text"):  # explain.status_line, added by the editor
        lines.append(f"Values: {escape(summary['values_text'])}")
    comb = summary.get("load_combination")
    if isinstance(comb, dict) and comb.get("name"):
        lines.append(f"Load case: {escape(plain(comb['name']))}")
    warnings = summary.get("warnings") or []
    if warnings:
        lines.append(f"[b]Warnings ({len(warnings)})[/b]")
        lines.extend(f" ! {escape(plain(w))}" for w in warnings)
    return lines


def plain(text: str) -> str:
    """Text without command-line syntax: `--rain-duration` -> "rain duration"."""
    import re

    text = re.sub(r"\(--([a-z][a-z0-9-]*)\)", lambda m: "(" + m.group(1) + " field)", str(text))
    return re.sub(r"--([a-z][a-z0-9-]*)", lambda m: m.group(1).replace("-", " "), text)


def memory_note(label: str, clause: str, record: dict[str, str]) -> str:
    """' (from memory)' where the step's reference value was recalled, not read from its source
    (the status column of the reference table; [M] in a clause)."""
    if "[M]" in clause:
        return " (from memory)"
    # an NDS reference value's own status is in the step's value (explain/working.py)
    if "EN 338" in clause and record.get("class"):
        from fieldcheck.engine.refdata import table

        rows = [
            r
            for r in table("en338_classes")
            if r.get("class", "").lower() == record["class"].lower()
        ]
        if rows and all(r.get("status") == "memory" for r in rows):
            return " (from memory)"
    return ""


def reference_status(species: str, grade: str) -> str:
    """'memory' when every tabulated row for the species and grade (or the default values used
    for unknown ones) was recalled rather than read."""
    from fieldcheck.engine.refdata import table

    sp = (species or "unknown").strip().lower()
    gr = (grade or "unknown").strip().lower()
    rows = table("nds_reference_values")
    if sp != "unknown" and gr != "unknown":
        rows = tuple(r for r in rows if r["species"] == sp and r["grade"] == gr)
    if rows and all(r.get("status") == "memory" for r in rows):
        return "memory"
    return "read" if rows else "memory"


def _check_label(summary: dict[str, Any]) -> str:
    gov = summary.get("governing_check")
    for c in summary.get("checks") or []:
        if c.get("name") == gov:
            return f"{c.get('label', gov)} ({c.get('clause', '')})"
    return str(gov or "—")


def cautions_short() -> list[str]:
    from fieldcheck.engine.cautions import CAUTIONS

    return [f"⚠ {escape(c)}" for c in CAUTIONS]


# sync row counts by table -> the inspector's words (tables of bookkeeping are left out)
_SYNC_WORDS = (
    ("sites", "site", "sites"),
    ("visits", "visit", "visits"),
    ("members", "new post", "new posts"),
    ("observations", "post record", "post records"),
    ("proposals", "remedy proposed", "remedies proposed"),
    ("remedied", "remedy done", "remedies done"),
    ("attachments", "photo", "photos"),
    ("reviews", "office note", "office notes"),
)


def _moved(counts: dict[str, int]) -> str:
    parts = []
    for table, one, many in _SYNC_WORDS:
        n = int(counts.get(table, 0) or 0)
        if n:
            parts.append(f"{n:,} {one if n == 1 else many}")
    return ", ".join(parts) if parts else "nothing"


def sync_sentence(result: Any) -> str:
    """A sync summary in the inspector's words: what went to the office and what came back."""
    sent = dict(getattr(result, "sent", {}) or {})
    received = dict(getattr(result, "received", {}) or {})
    if not any(sent.values()) and not any(received.values()):
        s = "Already in step with the office: nothing to send or take"
    else:
        s = f"Sent {_moved(sent)}; took back {_moved(received)}"
    conflicts = list(getattr(result, "conflicts", []) or [])
    if conflicts:
        n = len(conflicts)
        s += (
            f"; {n} post{'s' if n != 1 else ''} revised in two places without seeing each other "
            "(F7 lists them)"
        )
    refused = list(getattr(result, "refused", []) or [])
    if refused:
        s += f"; {len(refused)} transfer{'s' if len(refused) != 1 else ''} refused"
    return s + "."
