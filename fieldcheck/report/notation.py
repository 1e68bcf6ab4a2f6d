"""Engineering notation for the report: significant figures, the user's unit system first, and
the symbols as an engineer writes them (F-prime-c, E-prime-min, le/d, lambda-rel) in HTML.

The engine's working speaks SI first with the customary value in brackets and up to seven
digits (``2757.903 MPa (400,000.0 psi)``). The report shows four significant figures at most and,
for US customary users, the customary value first: ``400,000 psi (2,758 MPa)``.
"""

from __future__ import annotations

import math
import re
from functools import lru_cache
from html import escape

SIG = 4  # significant figures in the report (judgement: a field measurement has no more)

_NUM = re.compile(r"(?<![\w.§])(-?(?:\d{1,3}(?:,\d{3})+|\d+)(?:\.\d+)?)(?![\w.]*\d)")
_METRIC = ("mm2", "mm", "MPa", "kN", "N", "m", "kPa", "N/mm2")
_US = ("in2", "in", "psi", "lbf", "kip", "ft", "psf")
_PAIR = re.compile(
    r"(?P<a>-?[\d,]+(?:\.\d+)?) (?P<ua>" + "|".join(_METRIC) + r")\b"
    r" \((?P<b>-?[\d,]+(?:\.\d+)?) (?P<ub>" + "|".join(_US) + r")\)"
)


def sig(x: float, n: int = SIG, grouping: bool = True) -> str:
    """``x`` to ``n`` significant figures, thousands grouped, no trailing zeros after a point."""
    if x is None or not math.isfinite(x):
        return ""
    if x == 0:
        return "0"
    digits = n - 1 - math.floor(math.log10(abs(x)))
    v = round(x, digits)
    # rounding can carry into the next decade (9999.6 -> 10000): recount
    digits = max(0, n - 1 - math.floor(math.log10(abs(v)))) if v else 0
    text = f"{v:,.{digits}f}" if grouping else f"{v:.{digits}f}"
    if "." in text:
        text = text.rstrip("0").rstrip(".")
    return text


def _round_match(m: re.Match[str]) -> str:
    s = m.group(1)
    if "." not in s:
        return s  # whole numbers (counts, 400,000) stand as written
    x = float(s.replace(",", ""))
    return sig(x, SIG, grouping="," in s or abs(x) >= 9999.5)


def round_text(text: str) -> str:
    """Every decimal number in ``text`` to four significant figures; clause numbers untouched."""
    return _NUM.sub(_round_match, text)


def units_first(text: str, units: str) -> str:
    """``12.3 kN (2,775 lbf)`` written ``2,775 lbf (12.3 kN)`` for a US customary user."""
    if units != "us":
        return text
    return _PAIR.sub(lambda m: f"{m['b']} {m['ub']} ({m['a']} {m['ua']})", text)


def value_text(text: str, units: str) -> str:
    """A working value as the report prints it (plain text, not yet escaped)."""
    return units_first(round_text(text), units)


# symbols as the engine's labels write them -> as an engineer writes them (HTML after escaping)
_SYMBOLS = (
    (re.compile(r"\bFc\*"), "F<sub>c</sub>*"),
    (re.compile(r"\bFc&#x27;"), "F\u2032<sub>c</sub>"),
    (re.compile(r"\bFc\b(?!E)"), "F<sub>c</sub>"),
    (re.compile(r"\bFcE\b"), "F<sub>cE</sub>"),
    (re.compile(r"\bEmin&#x27;"), "E\u2032<sub>min</sub>"),
    (re.compile(r"\bEmin\b"), "E<sub>min</sub>"),
    (re.compile(r"\ble/d\b"), "\u2113<sub>e</sub>/d"),
    (re.compile(r"\ble\b"), "\u2113<sub>e</sub>"),
    (re.compile(r"\blu\b"), "\u2113<sub>u</sub>"),
    (re.compile(r"\bCp\b"), "C<sub>P</sub>"),
    (re.compile(r"\bCD\b"), "C<sub>D</sub>"),
    (re.compile(r"\bCM\b"), "C<sub>M</sub>"),
    (re.compile(r"\bCt\b"), "C<sub>t</sub>"),
    (re.compile(r"\bCF\b"), "C<sub>F</sub>"),
    (re.compile(r"\bCi\b"), "C<sub>i</sub>"),
    (re.compile(r"\bKe\b"), "K<sub>e</sub>"),
    (re.compile(r"\bkappa\b"), "\u03ba"),
    (re.compile(r"\blambda_rel\b|\blambda rel\b|\blam_rel\b"), "\u03bb<sub>rel</sub>"),
    (re.compile(r"\bk_c\b|\bkc\b"), "k<sub>c</sub>"),
    (re.compile(r"\bk_mod\b|\bkmod\b"), "k<sub>mod</sub>"),
    (re.compile(r"\b(mm|in)2\b"), "\\1\u00b2"),
    (re.compile(r"\)\^2"), ")\u00b2"),
)


# a literal each pattern needs (its first two letters; "k" and "2" where spellings differ), so
# most patterns are skipped without running them
_TRIGGERS = tuple(
    "k"
    if "k_c" in pat.pattern or "kmod" in pat.pattern
    else "2"
    if "2" in pat.pattern
    else pat.pattern.replace("\\b", "")[:2]
    for pat, _ in _SYMBOLS
)


@lru_cache(maxsize=8192)
def symbols(text: str) -> str:
    """Escape ``text`` for HTML, then set the engineering symbols in it (subscripts, primes).
    Labels repeat from post to post: the result is cached."""
    out = escape(text, quote=True)
    for (pat, rep), trig in zip(_SYMBOLS, _TRIGGERS, strict=True):
        if trig in out:
            out = pat.sub(rep, out)
    return out


@lru_cache(maxsize=8192)
def notation(text: str, units: str) -> str:
    """A working value or label: rounded, the user's units first, symbols set; HTML."""
    return symbols(value_text(text, units))
