"""Quantities at the boundary: the only place that parses and formats field input.

Parsing is our own tolerant front end (mixed fractions, feet-inches, primes, unicode
fractions, allow-listed unit spellings) in front of one lazily built pint registry. pint
is the source of truth for every conversion factor: the first parse builds the registry
and a table ``unit -> (scale, offset)`` from it; after that, parsing is plain Python on
that table (fast for bulk CSV imports, and cached per string).

Why not hand the string to pint: pint 0.25 silently reads ``3 1/2 in`` as 1.5 in,
``8 ft 6 in`` as an area, ``3,5 mm`` as 35 mm, ``89 MM`` as megamolar and ``8' 6"`` as
dimensionless (judgement). Here every unit spelling is on an allow-list,
upper case is accepted only where it cannot mean a prefix, and commas in numbers are refused.

Internal units (what the parse functions return): mm, N, MPa, kPa (area loads and soil
pressures), N*mm/rad, percent, mm^2, degrees C, microseconds.

Formatting is plain Python on the exact constants below (no pint needed).

Importing this module does not import pint or numpy (start-up speed).
"""

from __future__ import annotations

import math
import re
import threading
from dataclasses import dataclass
from functools import lru_cache
from typing import Any

__all__ = [
    "FT_MM",
    "IN_MM",
    "LBF_N",
    "PSF_KPA",
    "PSI_MPA",
    "UnitInputError",
    "format_area_load",
    "format_force",
    "format_length",
    "format_stress",
    "parse_area",
    "parse_area_load",
    "parse_force",
    "parse_heights",
    "parse_length",
    "parse_nominal",
    "parse_percent",
    "parse_section",
    "parse_stiffness",
    "parse_stress",
    "parse_temperature",
    "parse_time",
    "registry",
]

# --- exact conversion constants (NIST SP 811 Appendix B; international inch and pound, 1959)
IN_MM = 25.4  # 1 in = 25.4 mm exactly
FT_MM = 12.0 * IN_MM  # 1 ft = 304.8 mm exactly
LBF_N = 4.4482216152605  # 1 lbf = 0.45359237 kg x 9.80665 m/s^2 exactly
PSI_MPA = LBF_N / IN_MM**2  # 0.00689475729... MPa
PSF_KPA = LBF_N / FT_MM**2 * 1000.0  # 0.0478802589... kPa


class UnitInputError(ValueError):
    """A field value we will not guess at. ``str(err)`` is one sentence naming the field."""

    def __init__(self, field: str, text: str, message: str) -> None:
        super().__init__(message)
        self.field = field
        self.text = text


class _Refusal(Exception):
    """Internal: why a string was refused, before the field name is known."""

    def __init__(self, reason: str, suggestion: str | None = None) -> None:
        super().__init__(reason)
        self.reason = reason
        self.suggestion = suggestion


# --- the allow-list ------------------------------------------------------------------------


@dataclass(frozen=True)
class _Kind:
    name: str  # key
    noun: str  # "a length", used in messages
    si: str  # internal unit label for messages
    target: str  # pint unit of the internal value
    exact: dict[str, str]  # spelling -> pint expression, case-sensitive
    anycase: dict[str, str]  # lower-cased spelling -> pint expression
    example: str  # "e.g. 10 ft, 8' 6\" or 2.44 m"


def _kind(name, noun, si, target, example, exact=None, anycase=None) -> _Kind:
    return _Kind(name, noun, si, target, dict(exact or {}), dict(anycase or {}), example)


_INCH, _FOOT = "inch", "foot"
_KINDS: dict[str, _Kind] = {
    k.name: k
    for k in (
        _kind(
            "length",
            "a length",
            "mm",
            "millimeter",
            "e.g. 10 ft, 8' 6\" or 2.44 m",
            anycase={
                "in": _INCH,
                "inch": _INCH,
                "inches": _INCH,
                '"': _INCH,
                "ft": _FOOT,
                "foot": _FOOT,
                "feet": _FOOT,
                "'": _FOOT,
                "mm": "millimeter",
                "millimeter": "millimeter",
                "millimeters": "millimeter",
                "millimetre": "millimeter",
                "millimetres": "millimeter",
                "cm": "centimeter",
                "centimeter": "centimeter",
                "centimeters": "centimeter",
                "centimetre": "centimeter",
                "centimetres": "centimeter",
                "m": "meter",
                "meter": "meter",
                "meters": "meter",
                "metre": "meter",
                "metres": "meter",
            },
        ),
        _kind(
            "force",
            "a force",
            "N",
            "newton",
            "e.g. 4000 lbf, 4 kip or 17.8 kN",
            exact={"MN": "meganewton"},  # never "mn": milli or mega?
            anycase={
                "n": "newton",
                "newton": "newton",
                "newtons": "newton",
                "kn": "kilonewton",
                "kilonewton": "kilonewton",
                "kilonewtons": "kilonewton",
                "lbf": "pound_force",
                "lb": "pound_force",
                "lbs": "pound_force",
                "pound": "pound_force",
                "pounds": "pound_force",
                "kip": "kip",
                "kips": "kip",
            },
        ),
        _kind(
            "stress",
            "a stress",
            "MPa",
            "megapascal",
            "e.g. 1350 psi or 9.31 MPa",
            exact={"MPa": "megapascal", "Mpa": "megapascal", "MPA": "megapascal"},
            anycase={
                "psi": "psi",
                "ksi": "ksi",
                "kpa": "kilopascal",
                "gpa": "gigapascal",
                "n/mm2": "newton/millimeter**2",
            },
        ),
        _kind(
            "area_load",
            "an area load or pressure",
            "kPa",
            "kilopascal",
            "e.g. 40 psf or 1.9 kPa",
            anycase={
                "psf": "pound_force/foot**2",
                "lb/ft2": "pound_force/foot**2",
                "lbf/ft2": "pound_force/foot**2",
                "lbs/ft2": "pound_force/foot**2",
                "ksf": "kip/foot**2",
                "kip/ft2": "kip/foot**2",
                "kpa": "kilopascal",
                "kn/m2": "kilonewton/meter**2",
                "pa": "pascal",
                "n/m2": "newton/meter**2",
            },
            exact={"MPa": "megapascal", "Mpa": "megapascal", "MPA": "megapascal"},
        ),
        _kind(
            "stiffness",
            "a rotational stiffness",
            "N*mm/rad",
            "newton*millimeter/radian",
            "e.g. 500 kip-in/rad or 56 kN*m/rad",
            exact={"Nm/rad": "newton*meter/radian"},  # never "nm": nanometre
            anycase={
                "kipin/rad": "kip*inch/radian",
                "kipsin/rad": "kip*inch/radian",
                "kipft/rad": "kip*foot/radian",
                "kipsft/rad": "kip*foot/radian",
                "lbfin/rad": "pound_force*inch/radian",
                "lbin/rad": "pound_force*inch/radian",
                "lbsin/rad": "pound_force*inch/radian",
                "lbfft/rad": "pound_force*foot/radian",
                "lbft/rad": "pound_force*foot/radian",
                "knm/rad": "kilonewton*meter/radian",
                "knmm/rad": "kilonewton*millimeter/radian",
                "nmm/rad": "newton*millimeter/radian",
            },
        ),
        _kind(
            "percent",
            "a percentage",
            "%",
            "percent",
            "e.g. 24%",
            anycase={"%": "percent", "pct": "percent", "percent": "percent", "": "percent"},
        ),
        _kind(
            "area",
            "an area",
            "mm2",
            "millimeter**2",
            "e.g. 120 ft2 or 11.1 m2",
            anycase={
                "ft2": "foot**2",
                "sqft": "foot**2",
                "sq ft": "foot**2",
                "in2": "inch**2",
                "sqin": "inch**2",
                "sq in": "inch**2",
                "m2": "meter**2",
                "sq m": "meter**2",
                "cm2": "centimeter**2",
                "mm2": "millimeter**2",
                "sq mm": "millimeter**2",
            },
        ),
        _kind(
            "temperature",
            "a temperature",
            "degC",
            "degC",
            "e.g. 100 F or 38 C",
            anycase={
                "f": "degF",
                "°f": "degF",
                "degf": "degF",
                "deg f": "degF",
                "fahrenheit": "degF",
                "c": "degC",
                "°c": "degC",
                "degc": "degC",
                "deg c": "degC",
                "celsius": "degC",
            },
        ),
        _kind(
            "time",
            "a time",
            "us",
            "microsecond",
            "e.g. 250 us or 0.25 ms",
            anycase={
                "us": "microsecond",
                "µs": "microsecond",
                "usec": "microsecond",
                "microsecond": "microsecond",
                "microseconds": "microsecond",
                "ms": "millisecond",
                "msec": "millisecond",
                "millisecond": "millisecond",
                "milliseconds": "millisecond",
                "s": "second",
                "sec": "second",
                "second": "second",
                "seconds": "second",
            },
        ),
    )
}


def _unit_key(kind: str, unit: str) -> str:
    """Normalise a unit spelling for lookup: spacing, powers, separators."""
    u = re.sub(r"\s+", " ", unit.strip())
    u = u.replace("^2", "2").replace("²", "2").replace("**2", "2")
    u = re.sub(r"\s*/\s*", "/", u)
    if kind == "stiffness":
        u = re.sub(r"[\s*·⋅.-]", "", u)
    return u


def _lookup(kind: _Kind, unit: str) -> str | None:
    key = _unit_key(kind.name, unit)
    if key in kind.exact:
        return kind.exact[key]
    return kind.anycase.get(key.lower())


# --- pint: one registry, built on first use ------------------------------------------------

_LOCK = threading.Lock()
_REGISTRY: Any = None
_FACTORS: dict[tuple[str, str], tuple[float, float]] | None = None


def registry() -> Any:
    """The one pint UnitRegistry (built on first call; thread-safe). Use it read-only."""
    global _REGISTRY
    if _REGISTRY is None:
        with _LOCK:
            if _REGISTRY is None:
                import pint  # lazy: start-up speed

                folder = _cache_folder()
                try:
                    _REGISTRY = pint.UnitRegistry(cache_folder=folder)
                except Exception:
                    # a cache folder that cannot be written, or pint's own cache files damaged
                    # (a pickle cut short by a full disk or a killed process raises pickle's own
                    # errors): no cache, the same units from pint's definitions
                    _REGISTRY = pint.UnitRegistry(cache_folder=None)
    return _REGISTRY


def _cache_folder() -> Any:
    """pint's definitions cache in the user's cache folder (platformdirs), or None (no cache)
    when that folder cannot be made or written, e.g. an unwritable home folder."""
    import os
    from pathlib import Path

    try:
        import platformdirs

        folder = Path(platformdirs.user_cache_dir("fieldcheck", appauthor=False)) / "pint"
        folder.mkdir(parents=True, exist_ok=True)
        if not os.access(folder, os.W_OK):
            return None
        return folder
    except (OSError, ImportError):
        return None


def _factors() -> dict[tuple[str, str], tuple[float, float]]:
    """(kind, pint expression) -> (scale, offset) into the internal unit, from pint; kept in
    the user's cache folder (``_stored_factors``), so a later run parses without importing
    pint at all."""
    global _FACTORS
    if _FACTORS is None:
        stored = _stored_factors()
        if stored is not None:
            with _LOCK:
                _FACTORS = _FACTORS or stored
            return _FACTORS
        ureg = registry()
        with _LOCK:
            if _FACTORS is None:
                table: dict[tuple[str, str], tuple[float, float]] = {}
                for kind in _KINDS.values():
                    target = ureg.Unit(kind.target)  # prebuilt Unit objects (pint 0.25 speed)
                    for expr in set(kind.exact.values()) | set(kind.anycase.values()):
                        unit = ureg.Unit(expr)
                        if unit.dimensionality != target.dimensionality:
                            raise RuntimeError(f"units table: {expr} is not {kind.noun}")
                        zero = ureg.Quantity(0.0, unit).m_as(target)
                        one = ureg.Quantity(1.0, unit).m_as(target)
                        table[(kind.name, expr)] = (one - zero, zero)
                _FACTORS = table
                _store_factors(table)
    return _FACTORS


def _pint_stamp() -> str:
    """Which pint is installed, found without importing pint or importlib.metadata (start-up
    speed): the path, size and modification time of the pint package that ``import pint`` would
    load (an upgrade or reinstall writes it anew), else its distribution's version."""
    import os
    import sys

    for entry in sys.path:
        init = os.path.join(entry or os.curdir, "pint", "__init__.py")
        try:
            st = os.stat(init)
        except OSError:
            continue
        return f"{os.path.abspath(init)} {st.st_size} {st.st_mtime_ns}"
    from importlib import metadata

    try:
        return metadata.version("pint")
    except metadata.PackageNotFoundError:
        return "unknown"


def _factors_file() -> Any:
    """The stored factor table for this units table and this pint (a change of either names
    another file), or None when there is no usable cache folder."""
    import hashlib

    folder = _cache_folder()
    if folder is None:
        return None
    pint_version = _pint_stamp()
    spec = sorted(
        (k.name, k.target, sorted(set(k.exact.values()) | set(k.anycase.values())))
        for k in _KINDS.values()
    )
    key = hashlib.sha256(repr((pint_version, spec)).encode()).hexdigest()[:24]
    return folder / f"unit-factors-{key}.json"


def _factors_digest(rows: list) -> str:
    import hashlib
    import json

    return hashlib.sha256(json.dumps(rows, separators=(",", ":")).encode()).hexdigest()


def _stored_factors() -> dict[tuple[str, str], tuple[float, float]] | None:
    """The stored table when it is whole: every expression of the units table present, finite
    numbers, a positive scale and its checksum right; otherwise None (pint rebuilds it). A
    cache never makes a command fail."""
    import json

    try:
        path = _factors_file()
        if path is None or not path.is_file():
            return None
        data = json.loads(path.read_text(encoding="utf-8"))
        rows = data["factors"]
        if data.get("sha256") != _factors_digest(rows):
            return None
        table = {(str(k), str(e)): (float(a), float(b)) for k, e, a, b in rows}
    except (OSError, ValueError, TypeError, KeyError):
        return None
    want = {
        (k.name, e)
        for k in _KINDS.values()
        for e in set(k.exact.values()) | set(k.anycase.values())
    }
    if set(table) != want or not all(
        math.isfinite(a) and math.isfinite(b) and a > 0 for a, b in table.values()
    ):
        return None
    return table


def _store_factors(table: dict[tuple[str, str], tuple[float, float]]) -> None:
    """Write the table beside pint's own cache (atomically; any failure only means no cache)."""
    import json
    import os

    try:
        path = _factors_file()
        if path is None:
            return
        rows = [[k, e, a, b] for (k, e), (a, b) in sorted(table.items())]
        tmp = path.with_name(f".{path.name}.{os.getpid()}.part")
        tmp.write_text(
            json.dumps({"factors": rows, "sha256": _factors_digest(rows)}), encoding="utf-8"
        )
        os.replace(tmp, path)
    except (OSError, ValueError):
        return


def _factor(kind: str, expr: str) -> tuple[float, float]:
    """(scale, offset) taking a value in pint unit ``expr`` to the internal unit of ``kind``."""
    return _factors()[(kind, expr)]


# --- the tolerant number grammar -----------------------------------------------------------

_NUM = r"(?:\d+(?:\.\d*)?|\.\d+)(?:[eE][+-]?\d+)?"


def _mag(p: str) -> str:
    """A magnitude: mixed number 3-1/2 or 3 1/2, a fraction 1/2, or a decimal 3.5."""
    return (
        rf"(?:(?P<{p}w>\d+)(?:\s*-\s*|\s+)(?P<{p}n>\d+)\s*/\s*(?P<{p}d>\d+)"
        rf"|(?P<{p}fn>\d+)\s*/\s*(?P<{p}fd>\d+)"
        rf"|(?P<{p}x>{_NUM}))"
    )


_QTY = re.compile(rf"(?P<sign>[-+])?\s*{_mag('a')}\s*(?P<unit>.*?)", re.ASCII | re.DOTALL)
_FT = r"(?:'|ft|feet|foot)"
_IN = r"(?:\"|in|inch|inches)"
_FTIN = re.compile(
    rf"(?P<sign>[-+])?\s*(?P<ft>{_NUM})\s*{_FT}\s*(?:-\s*)?{_mag('b')}\s*{_IN}?",
    re.ASCII | re.IGNORECASE,
)
_NOMINAL = re.compile(r"\s*(\d{1,2})\s*[xX×]\s*(\d{1,2})\s*")  # noqa: RUF001 (the look-alikes we replace)
_SECTION_SPLIT = re.compile(r"\s*[xX×]\s*")  # noqa: RUF001 (the look-alikes we replace)

_FRACTIONS = {
    "½": "1/2",
    "⅓": "1/3",
    "⅔": "2/3",
    "¼": "1/4",
    "¾": "3/4",
    "⅕": "1/5",
    "⅖": "2/5",
    "⅗": "3/5",
    "⅘": "4/5",
    "⅙": "1/6",
    "⅚": "5/6",
    "⅛": "1/8",
    "⅜": "3/8",
    "⅝": "5/8",
    "⅞": "7/8",
}
_CHARS = {
    "′": "'",  # noqa: RUF001 (the look-alikes we replace)
    "’": "'",  # noqa: RUF001 (the look-alikes we replace)
    "‘": "'",  # noqa: RUF001 (the look-alikes we replace)
    "″": '"',
    "“": '"',
    "”": '"',
    "−": "-",  # noqa: RUF001 (the look-alikes we replace)
    "–": "-",  # noqa: RUF001 (the look-alikes we replace)
    "⁄": "/",  # noqa: RUF001 (the look-alikes we replace)
    "μ": "µ",
    "º": "°",
    "\u00a0": " ",
}


def _normalise(text: str) -> str:
    t = text.strip()
    for a, b in _CHARS.items():
        t = t.replace(a, b)
    t = t.replace("''", '"')
    for a, b in _FRACTIONS.items():
        t = t.replace(a, f" {b}")
    return t.strip()


def _magnitude(m: re.Match[str], p: str) -> float:
    g = m.groupdict()
    if g[f"{p}x"] is not None:
        return float(g[f"{p}x"])
    if g[f"{p}w"] is not None:
        num, den = int(g[f"{p}n"]), int(g[f"{p}d"])
        if den == 0 or num >= den:
            raise _Refusal("has a mixed number whose fraction is not a proper fraction")
        return int(g[f"{p}w"]) + num / den
    num, den = int(g[f"{p}fn"]), int(g[f"{p}fd"])
    if den == 0:
        raise _Refusal("divides by zero")
    return num / den


def _check_text(text: object) -> str:
    if not isinstance(text, str):
        raise _Refusal("is not text")
    t = _normalise(text)
    if not t:
        raise _Refusal("is empty")
    if len(t) > 80:
        raise _Refusal("is too long to be one value")
    if re.search(r"\d,\d{3}(?!\d)", t, re.ASCII):
        m = re.search(r"(\d+),(\d{3})(?!\d)", t, re.ASCII)
        assert m is not None
        a, b = m.group(1), m.group(2)
        raise _Refusal(
            "has a comma in the number, which could be a thousands separator or a decimal comma",
            f"{t.replace(f'{a},{b}', a + b, 1)} or {t.replace(f'{a},{b}', f'{a}.{b}', 1)}",
        )
    if re.search(r"\d,\d", t, re.ASCII):
        raise _Refusal("uses a decimal comma", re.sub(r"(\d),(\d)", r"\1.\2", t))
    if "," in t:
        raise _Refusal("has a comma")
    return t


def _split(t: str) -> tuple[float, str]:
    """'<magnitude> <unit>' -> (signed value, raw unit text); raises _Refusal."""
    m = _QTY.fullmatch(t)
    if m is None:
        raise _Refusal("")
    value = _magnitude(m, "a")
    if m.group("sign") == "-":
        value = -value
    return value, m.group("unit")


def _to_si(kind: _Kind, value: float, unit: str) -> float:
    expr = _lookup(kind, unit)
    if expr is None:
        if unit == "":
            raise _Refusal("has no unit")
        for other in _KINDS.values():
            if other is not kind and other.name != "percent" and _lookup(other, unit):
                raise _Refusal(f"is {other.noun}, not {kind.noun}")
        raise _Refusal(f"has a unit '{unit}' that is not accepted for {kind.noun}")
    scale, offset = _factor(kind.name, expr)
    return value * scale + offset


@lru_cache(maxsize=8192)
def _parse(kind_name: str, text: str) -> float:
    """Text -> signed value in the internal unit (no sign or range checks). Cached."""
    kind = _KINDS[kind_name]
    t = _check_text(text)
    if kind_name == "length":
        if _NOMINAL.fullmatch(t):
            raise _Refusal("looks like a nominal size, not a measured length")
        m = _FTIN.fullmatch(t)
        if m is not None:
            inches = _magnitude(m, "b")
            if inches >= 12.0:
                raise _Refusal("has an inches part of 12 or more")
            value = (
                float(m.group("ft")) * _factor("length", _FOOT)[0]
                + inches * _factor("length", _INCH)[0]
            )
            return -value if m.group("sign") == "-" else value
    try:
        value, unit = _split(t)
    except _Refusal as r:
        if r.reason:
            raise
        raise _Refusal(f"is not {kind.noun}") from None
    return _to_si(kind, value, unit)


# --- a column of plain quantities at once --------------------------------------------------

_MANY_DIGITS = 15  # digits of a number the column parser reads itself (below 2**53, exact)
_MANY_UNIT = 8  # characters of a unit it reads itself (one 64-bit key of ASCII)
_MANY_WIDTH = 40  # characters of a text it reads itself


def _char_classes() -> Any:
    """Byte -> what it is in a plain quantity: 1 a digit or the point, 2 a space, 3 a unit's
    letter (or %), 9 anything else (NUL too: the end of a text is marked apart, 4)."""
    import numpy as np

    table = np.full(256, 9, dtype=np.int8)
    table[ord("0") : ord("9") + 1] = 1
    table[ord(".")] = 1
    table[ord(" ")] = 2
    table[ord("a") : ord("z") + 1] = 3
    table[ord("A") : ord("Z") + 1] = 3
    table[ord("%")] = 3
    return table


def parse_many(
    kind_name: str, texts: list, *, lo: float | None = None, hi: float | None = None
) -> tuple[Any, Any]:
    """A column of texts -> (values, ok), two numpy arrays: where ``ok``, the value is exactly
    what this kind's own parser (parse_length, parse_force, parse_percent, parse_temperature)
    gives for that text with this ``lo`` and ``hi``; elsewhere nothing is claimed and the caller
    parses that cell on its own (for its value or its message).

    Read here, column-wise, is only the plain form: optional spaces, an unsigned decimal number
    of at most 15 digits (no exponent), optional spaces, an ASCII unit of letters or % (at most
    8) that the kind accepts, nothing after; a value above zero, finite, inside ``lo``..``hi``.
    The number is the integer of its digits divided by a power of ten: both exact in binary, so
    the one rounding is the division's, which is what ``float`` of the text gives. The unit's
    factor is the same table lookup as the cell parser's (``value * scale + offset``)."""
    import numpy as np

    kind = _KINDS[kind_name]
    n = len(texts)
    values = np.zeros(n)
    ok = np.zeros(n, dtype=bool)
    if n == 0:
        return values, ok
    # the texts one after another, one byte per character (anything not ASCII is "?": not
    # plain), each followed by a line feed; a text holding one is measured alone
    try:
        joined = "\n".join(texts)
    except TypeError:  # a cell that is not text: the cell parser says so
        return values, ok
    raw = np.frombuffer((joined + "\n").encode("ascii", "replace"), dtype=np.uint8)
    ends = np.flatnonzero(raw == 10)
    if ends.size == n:
        start = np.empty(n, dtype=np.intp)
        start[0] = 0
        start[1:] = ends[:-1] + 1
        lens = ends - start
    else:
        lens = np.fromiter(map(len, texts), np.intp, count=n)
        start = np.cumsum(lens + 1) - lens - 1
    classes = _char_classes()[raw]
    classes[ends] = 9  # a line feed inside a text is not plain
    classes = np.append(classes, np.int8(4))  # one past the last text: a text's end
    chars = np.append(raw, np.uint8(0))
    width = min(int(lens.max()), _MANY_WIDTH)
    end_at = raw.size
    # one position of every text at a time (vectors over the rows): the phase may only grow:
    # leading spaces 0, number 1, spaces 2, unit 3, past the end 4
    last = np.zeros(n, dtype=np.int8)
    whole = np.zeros(n, dtype=np.int64)
    decimals = np.zeros(n, dtype=np.int64)
    digits = np.zeros(n, dtype=np.int64)
    points = np.zeros(n, dtype=np.int64)
    key = np.zeros(n, dtype=np.uint64)
    unit_len = np.zeros(n, dtype=np.uint64)
    form = lens <= _MANY_WIDTH
    for j in range(width):
        at = np.where(j < lens, start + j, end_at)
        ph = classes[at]
        ch = chars[at]
        ph = np.where(ph == 2, np.where(last >= 1, 2, 0), ph).astype(np.int8)
        form &= ph >= last
        is_digit = (ph == 1) & (ch != 46)
        is_point = ch == 46
        whole = np.where(is_digit, whole * 10 + (ch.astype(np.int64) - 48), whole)
        decimals += is_digit & (points > 0)
        digits += is_digit
        points += is_point
        is_unit = ph == 3
        shift = np.minimum(unit_len, np.uint64(_MANY_UNIT - 1)) * np.uint64(8)
        key |= np.where(is_unit, ch.astype(np.uint64) << shift, np.uint64(0))
        unit_len += is_unit
        last = ph
    form &= (last >= 3) & (last != 9) & (unit_len <= _MANY_UNIT)
    form &= (digits >= 1) & (digits <= _MANY_DIGITS) & (points <= 1)
    ten = 10.0 ** np.arange(_MANY_DIGITS + 1)  # exact in binary
    number = whole.astype(np.float64) / ten[np.minimum(decimals, _MANY_DIGITS)]
    # the unit: its characters packed into one integer, looked up once per distinct unit
    key = np.where(form, key, np.uint64(0))
    keys, which = np.unique(key, return_inverse=True)
    scale = np.full(keys.size, np.nan)
    offset = np.zeros(keys.size)
    for u, k in enumerate(keys.tolist()):
        unit = "".join(chr((k >> (8 * i)) & 0xFF) for i in range(_MANY_UNIT)).rstrip("\0")
        expr = _lookup(kind, unit) if unit else None
        if expr is not None:
            scale[u], offset[u] = _factor(kind_name, expr)
    which = which.reshape(-1)
    with np.errstate(invalid="ignore", over="ignore"):
        values = number * scale[which] + offset[which]  # as _to_si: value * scale + offset
        ok = form & np.isfinite(values) & (values > 0)
        if lo is not None:
            ok &= values >= lo
        if hi is not None:
            ok &= values <= hi
    return values, ok


# --- public parsers ------------------------------------------------------------------------


def _num(x: float, grouping: bool = False, sig: int = 3) -> str:
    """x to ``sig`` significant figures (whole numbers kept whole), trailing zeros dropped."""
    if x == 0 or not math.isfinite(x):
        return "0" if x == 0 else str(x)
    if abs(x) < 1e-6 or abs(x) >= 1e15:  # powers of ten, not hundreds of digits: 1e-320, 1e300
        return f"{x:.{sig}g}"
    decimals = max(0, sig - 1 - math.floor(math.log10(abs(x))))
    s = f"{x:,.{decimals}f}" if grouping else f"{x:.{decimals}f}"
    if "." in s:
        s = s.rstrip("0").rstrip(".")
    return "0" if s in ("-0", "") else s


def _fail(
    kind: _Kind, field: str, text: object, reason: str, suggestion: str | None = None, rng: str = ""
) -> UnitInputError:
    shown = text.strip() if isinstance(text, str) else repr(text)
    head = f"{field}: '{shown}' {reason}" if shown else f"{field}: no value given"
    tail = f"write {suggestion}" if suggestion else f"write {kind.example}"
    return UnitInputError(field, shown, f"{head}{rng}; {tail}.")


def _in_range_example(kind: _Kind, lo: float | None, hi: float | None) -> str | None:
    """A round value inside the accepted range, in US and metric units (lengths and forces)."""
    if hi is None or hi <= 0 or kind.name not in ("length", "force"):
        return None  # no upper bound to keep under: the unit's own example
    if lo is None or lo <= 0:  # a range from nothing (a bow, an offset): a tenth of the top
        lo = hi / 100.0
    mid = math.sqrt(lo * hi)  # a typical middle on a log scale

    def snap(step: float) -> float:
        v = max(round(mid / step), 1) * step
        return v if lo <= v <= hi else mid

    def sig2(x: float) -> float:
        return float(f"{x:.2g}")

    if kind.name == "length":
        us = snap(FT_MM) if mid >= 2 * FT_MM else snap(IN_MM)
        return (
            f"a value in that range, e.g. {format_length(us, 'us')} or "
            f"{format_length(sig2(mid), 'metric')}"
        )
    us = snap(1000 * LBF_N) if mid >= 1000 * LBF_N else snap(100 * LBF_N)
    return (
        f"a value in that range, e.g. {format_force(us, 'us', grouping=False)} or "
        f"{format_force(sig2(mid), 'metric', grouping=False)}"
    )


MESSAGE_SYSTEM = ["us"]  # the unit system messages give ranges in (set_message_system)


def set_message_system(system: str | None) -> None:
    """Give ranges in messages in the user's unit system ("us" or "metric")."""
    if system in ("us", "metric"):
        MESSAGE_SYSTEM[0] = system


def _in_units(kind: _Kind, value: float) -> str:
    """A value of ``kind`` (internal unit) in the message system's units."""
    system = MESSAGE_SYSTEM[0]
    fmt = {
        "length": format_length,
        "force": format_force,
        "stress": format_stress,
        "area_load": format_area_load,
    }.get(kind.name)
    if fmt is None or not math.isfinite(value) or (system == "metric" and kind.name == "length"):
        return f"{_num(value, sig=6)} {kind.si}"
    if kind.name == "length" and 0 < abs(value) < 0.1 * IN_MM:  # below what format_length shows
        return f"{_num(value / IN_MM, sig=2)} in"
    return fmt(value, system)


def _range_text(kind: _Kind, lo: float | None, hi: float | None) -> str:
    """The accepted range in the user's units, e.g. '4 in to 65\' 7-3/8"'; '' when open."""
    if lo is not None and hi is not None:
        a, b = _in_units(kind, lo), _in_units(kind, hi)
        unit = f" {kind.si}"
        if a.endswith(unit) and b.endswith(unit):  # one unit for both: '5 to 40 %'
            a = a.removesuffix(unit)
        return f"{a} to {b}"
    if lo is not None:
        return f"at least {_in_units(kind, lo)}"
    if hi is not None:
        return f"at most {_in_units(kind, hi)}"
    return ""


def _check_value(
    kind: _Kind,
    value: float,
    text: object,
    field: str,
    lo: float | None,
    hi: float | None,
    positive: bool,
    nonnegative: bool,
    what: str = "",
) -> float:
    """Sign, finiteness and range checks on a parsed value; ``what`` prefixes the reason."""
    ok = math.isfinite(value) and not (positive and value <= 0) and not (nonnegative and value < 0)
    ok = ok and not (kind.name == "temperature" and value < -273.15)
    if ok and not ((lo is not None and value < lo) or (hi is not None and value > hi)):
        return value  # the common case: no message to build
    r = _range_text(kind, lo, hi)
    rng = f" (accepted range: {r})" if r else ""
    # the example given is inside the accepted range (the unit's own, e.g. 10 ft, may not be)
    ex = _in_range_example(kind, lo, hi) if r else None
    if not math.isfinite(value):
        raise _fail(kind, field, text, f"{what}is not a finite number", suggestion=ex, rng=rng)
    if positive and value <= 0:
        raise _fail(kind, field, text, f"{what}must be greater than zero", suggestion=ex, rng=rng)
    if nonnegative and value < 0:
        raise _fail(kind, field, text, f"{what}must not be negative", suggestion=ex, rng=rng)
    if kind.name == "temperature" and value < -273.15:
        raise _fail(kind, field, text, f"{what}is below absolute zero", rng=rng)
    if (lo is not None and value < lo) or (hi is not None and value > hi):
        raise _fail(
            kind,
            field,
            text,
            f"{what}is {_in_units(kind, value) if abs(value) < 1e9 else _num(value, sig=4)}"
            f"{'' if abs(value) < 1e9 else ' ' + kind.si}, outside the accepted range ({r})",
            suggestion=_in_range_example(kind, lo, hi),
        )
    return value


def _parse_checked(
    kind_name: str,
    text: str,
    field: str,
    *,
    lo: float | None,
    hi: float | None,
    positive: bool,
    nonnegative: bool,
) -> float:
    kind = _KINDS[kind_name]
    try:
        value = _parse(kind_name, text)
    except _Refusal as r:
        suggestion = r.suggestion
        if r.reason == "has no unit" and isinstance(text, str):
            n = _normalise(text)
            suggestion = {
                "length": f"e.g. {n} in, {n} ft or {n} mm",
                "force": f"e.g. {n} lbf or {n} kN",
                "stress": f"e.g. {n} psi or {n} MPa",
                "area_load": f"e.g. {n} psf or {n} kPa",
                "stiffness": f"e.g. {n} kip-in/rad or {n} kN*m/rad",
                "area": f"e.g. {n} ft2 or {n} m2",
                "temperature": f"e.g. {n} F or {n} C",
                "time": f"e.g. {n} us",
            }.get(kind_name)
        r_text = _range_text(kind, lo, hi)
        rng = f" (accepted range: {r_text})" if r_text else ""
        if suggestion is None and r_text:  # an example inside the range, as for a bad value
            suggestion = _in_range_example(kind, lo, hi)
        raise _fail(kind, field, text, r.reason, suggestion, rng) from None
    except TypeError:  # unhashable, e.g. a list
        raise _fail(kind, field, text, "is not text") from None
    return _check_value(kind, value, text, field, lo, hi, positive, nonnegative)


def parse_length(
    text: str, field: str = "length", *, lo: float | None = None, hi: float | None = None
) -> float:
    """Length in mm from `3-1/2 in`, `3½"`, `8' 6"`, `8 ft 6 in`, `96in`, `2.44 m`, `89 mm`.

    Refuses a bare number, unknown units, commas in numbers, zero, negatives, NaN/inf.
    ``lo``/``hi`` (mm, inclusive) are an optional accepted range.
    """
    return _parse_checked("length", text, field, lo=lo, hi=hi, positive=True, nonnegative=True)


def parse_force(
    text: str, field: str = "load", *, lo: float | None = None, hi: float | None = None
) -> float:
    """Force in N from `4000 lbf`, `4000 lb(s)`, `4 kip(s)`, `17.8 kN`, `500 N`, `1 MN`. >= 0."""
    return _parse_checked("force", text, field, lo=lo, hi=hi, positive=False, nonnegative=True)


def parse_stress(
    text: str, field: str = "stress", *, lo: float | None = None, hi: float | None = None
) -> float:
    """Stress in MPa from psi, ksi, MPa, N/mm2, N/mm^2, kPa, GPa. > 0."""
    return _parse_checked("stress", text, field, lo=lo, hi=hi, positive=True, nonnegative=True)


def parse_area_load(
    text: str, field: str = "area load", *, lo: float | None = None, hi: float | None = None
) -> float:
    """Area load or soil pressure in kPa from psf, ksf, lb/ft2, kPa, kN/m2, Pa. >= 0."""
    return _parse_checked("area_load", text, field, lo=lo, hi=hi, positive=False, nonnegative=True)


def parse_stiffness(
    text: str, field: str = "stiffness", *, lo: float | None = None, hi: float | None = None
) -> float:
    """Rotational spring stiffness in N*mm/rad from `kip-in/rad`, `kN*m/rad`, `N*mm/rad`... >= 0."""
    return _parse_checked("stiffness", text, field, lo=lo, hi=hi, positive=False, nonnegative=True)


def parse_percent(
    text: str, field: str = "percent", *, lo: float | None = 0.0, hi: float | None = 200.0
) -> float:
    """Percent from `24%`, `24 %` or a bare `24`; accepted range ``lo``..``hi`` (inclusive). A
    bare number between 0 and 1 (``0.24``) is refused: it reads as a fraction written for 24 %
    as often as a true 0.24 %, and the two rate differently (wet or dry)."""
    if isinstance(text, str):
        bare = re.fullmatch(r"\s*(0?\.\d+)\s*", text)
        if bare and 0 < float(bare.group(1)) < 1:
            pct = _num(float(bare.group(1)) * 100)
            raise ValueError(
                f"{field}: '{text.strip()}' is ambiguous (a fraction or a percent?); write "
                f"{pct}% for {pct} percent, or {text.strip()}% if you mean less than one percent."
            )
    return _parse_checked("percent", text, field, lo=lo, hi=hi, positive=False, nonnegative=False)


_ESCAPES = re.compile(r"\x1b\[[0-?]*[ -/]*[@-~]|\x1b\][^\x07\x1b]*(\x07|\x1b\\)?|\x1b.?")
QUOTE_MAX = 60  # characters of a typed value quoted back in a message


def shown(text: str, limit: int = QUOTE_MAX) -> str:
    """A typed value as a message may quote it: terminal escape codes and control characters
    removed, at most ``limit`` characters (an ellipsis marks the cut)."""
    t = _ESCAPES.sub("", str(text))
    t = "".join(ch if ch.isprintable() else "?" for ch in t)
    return t if len(t) <= limit else t[: limit - 1] + "…"


def clean_message(message: str, text: str | None = None) -> str:
    """A message safe to print: the typed value in it shortened (``shown``), escape codes and
    control characters removed from the whole."""
    if text is not None and len(text) > 0 and text != shown(text):
        message = message.replace(text, shown(text))
        message = message.replace(text.strip(), shown(text.strip()))
    return shown(message, limit=1000)


def parse_area(
    text: str, field: str = "area", *, lo: float | None = None, hi: float | None = None
) -> float:
    """Area in mm^2 from `120 ft2`, `120 sq ft`, `120 ft^2`, `11.1 m2`, `12.25 in2`. > 0."""
    return _parse_checked("area", text, field, lo=lo, hi=hi, positive=True, nonnegative=True)


def parse_temperature(
    text: str, field: str = "temperature", *, lo: float | None = None, hi: float | None = None
) -> float:
    """Temperature in degrees C from `100 F`, `100 °F`, `38 C`, `38 °C` (negatives allowed)."""
    return _parse_checked(
        "temperature", text, field, lo=lo, hi=hi, positive=False, nonnegative=False
    )


def parse_time(
    text: str, field: str = "time", *, lo: float | None = None, hi: float | None = None
) -> float:
    """Time in microseconds from `250 us`, `250 µs`, `0.25 ms`. > 0."""
    return _parse_checked("time", text, field, lo=lo, hi=hi, positive=True, nonnegative=True)


def parse_nominal(text: str) -> tuple[int, int] | None:
    """`4x4` -> (4, 4), `2 x 6` -> (2, 6); None unless plain whole numbers joined by x."""
    if not isinstance(text, str):
        return None
    m = _NOMINAL.fullmatch(text)
    if m is None:
        return None
    a, b = int(m.group(1)), int(m.group(2))
    return (a, b) if a > 0 and b > 0 else None


@lru_cache(maxsize=4096)
def _section(text: str, field: str, lo: float | None, hi: float | None) -> tuple[float, float]:
    kind = _KINDS["length"]
    example = "e.g. 3.5 x 5.5 in, 3-1/2 x 5-1/2 in or 89 x 140 mm"
    t = _normalise(text)
    if parse_nominal(t) is not None:
        raise _fail(
            kind, field, text, "has no unit (a nominal size?)", f"the measured size, {example}"
        )
    parts = _SECTION_SPLIT.split(t)
    if len(parts) != 2 or not all(parts):
        raise _fail(kind, field, text, "is not a section size (two sides joined by x)", example)
    first, second = parts
    try:
        _, unit2 = _split(second)
        _, unit1 = _split(first)
    except _Refusal:
        unit1 = unit2 = "?"
    if unit1 == "" and unit2 != "":
        first = f"{first} {unit2}"
    elif unit2 == "" and unit1 != "":
        raise _fail(kind, field, text, "has a unit on the first side only", example)
    out = []
    for part in (first, second):
        what = f"has a side '{part}' that "
        try:
            value = _parse("length", part)
        except _Refusal as r:
            raise _fail(kind, field, text, what + r.reason, r.suggestion or example) from None
        out.append(_check_value(kind, value, text, field, lo, hi, True, True, what))
    return out[0], out[1]


def parse_section(
    text: str, field: str = "section", *, lo: float | None = None, hi: float | None = None
) -> tuple[float, float]:
    """Two sides in mm, as typed: `3.5 x 5.5 in`, `3-1/2 x 5-1/2 in`, `89x89mm`, `3.5" x 5.5"`.

    A unit on the last side applies to both; a nominal `4x4` is refused (use parse_nominal).
    """
    if not isinstance(text, str):
        raise _fail(_KINDS["length"], field, text, "is not text")
    if not text.strip():
        raise _fail(_KINDS["length"], field, text, "is empty", "e.g. 3.5 x 5.5 in or 89 x 140 mm")
    return _section(text, field, lo, hi)


def parse_heights(
    text: str, field: str = "heights", *, lo: float | None = None, hi: float | None = None
) -> list[float]:
    """Several lengths in mm separated by `;` (`4ft; 8ft`), in the order typed. Blank -> []."""
    if not isinstance(text, str):
        raise _fail(_KINDS["length"], field, text, "is not text")
    if not text.strip():
        return []
    if "," in text and not re.search(r"\d,\d", text):
        raise _fail(
            _KINDS["length"],
            field,
            text,
            "uses a comma between heights",
            text.strip().replace(",", ";"),
        )
    return [parse_length(p, field, lo=lo, hi=hi) for p in text.split(";") if p.strip()]


# --- formatting (plain Python on the exact constants) --------------------------------------

_SYSTEMS = ("us", "metric")


def _system(system: str) -> str:
    if system not in _SYSTEMS:
        raise ValueError(f"unit system: '{system}' is not known; write us or metric.")
    return system


def _finite(x: object) -> bool:
    try:
        return math.isfinite(float(x))  # type: ignore[arg-type]
    except (TypeError, ValueError):
        return False


def format_length(mm: float, system: str = "us") -> str:
    """us: `8' 6-1/2"` from 24 in up (nearest 1/16 in), else `3.5 in` (2 decimals);
    metric: `88.9 mm` (3 significant figures) below 1 m, else `2.44 m`."""
    _system(system)
    if not _finite(mm):
        return "n/a"
    mm = float(mm)
    sign = "-" if mm < 0 else ""
    a = abs(mm)
    if system == "metric":
        return f"{sign}{_num(a / 1000.0)} m" if a >= 1000.0 else f"{sign}{_num(a)} mm"
    inches = a / IN_MM
    if inches < 24.0 - 1e-9:  # 24 in computed as 23.99999... still shows 2' 0"
        return f"{sign}{_num(round(inches, 2), sig=15)} in"
    sixteenths = round(inches * 16)
    feet, rest = divmod(sixteenths, 192)
    whole, frac = divmod(rest, 16)
    if frac:
        g = math.gcd(frac, 16)
        return f"{sign}{feet}' {whole}-{frac // g}/{16 // g}\""
    return f"{sign}{feet}' {whole}\""


def format_force(n: float, system: str = "us", *, grouping: bool = True) -> str:
    """us: `4,665 lbf`; metric: `500 N` below 1 kN, else `20.8 kN` (3 significant figures).

    ``grouping=False`` drops thousands separators (for text a user may edit and re-parse:
    the parser refuses commas in numbers).
    """
    _system(system)
    if not _finite(n):
        return "n/a"
    n = float(n)
    if system == "us":
        return f"{_num(n / LBF_N, grouping)} lbf"
    return f"{_num(n, grouping)} N" if abs(n) < 1000.0 else f"{_num(n / 1000.0, grouping)} kN"


def format_stress(mpa: float, system: str = "us", *, grouping: bool = True) -> str:
    """us: `1,350 psi`; metric: `9.31 MPa` (3 significant figures)."""
    _system(system)
    if not _finite(mpa):
        return "n/a"
    mpa = float(mpa)
    if system == "us":
        return f"{_num(mpa / PSI_MPA, grouping)} psi"
    return f"{_num(mpa, grouping)} MPa"


def format_area_load(kpa: float, system: str = "us", *, grouping: bool = True) -> str:
    """us: `40 psf`; metric: `1.92 kPa` (3 significant figures)."""
    _system(system)
    if not _finite(kpa):
        return "n/a"
    kpa = float(kpa)
    if system == "us":
        return f"{_num(kpa / PSF_KPA, grouping)} psf"
    return f"{_num(kpa, grouping)} kPa"
