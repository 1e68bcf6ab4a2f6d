"""The column registry: every input of a post as the inspector types it.

A column has a name (the long option of `fieldcheck rate`, with `-` written `_`), a help text, an
accepted example, a group (how the interface lays out its form) and a parser from text to a
value. Builders (see builders.py) turn a row of parsed values into PostBatch fields.
"""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import dataclass
from typing import Any

from fieldcheck import units
from fieldcheck.engine import materials
from fieldcheck.engine.batch import END_NAMES, METHOD_NAMES

GROUPS = ("post", "section", "height", "ends", "material", "condition", "bearing", "load")


@dataclass(frozen=True)
class Column:
    name: str
    group: str
    help: str
    example: str
    parse: Callable[[str], Any]
    default: str = ""
    choices: tuple[str, ...] = ()
    flag: bool = False  # a yes/no column: `--name` alone means yes

    @property
    def option(self) -> str:
        return "--" + self.name.replace("_", "-")


def _text(_field: str) -> Callable[[str], str]:
    return lambda s: s.strip()


def choice(field: str, choices: tuple[str, ...], aliases: dict[str, str] | None = None):
    aliases = aliases or {}

    def parse(s: str) -> str:
        key = s.strip().lower().replace("_", "-").replace(" ", "-")
        key = aliases.get(key, key)
        if key not in choices:
            raise ValueError(f"{field}: '{s}' is not accepted; use one of {', '.join(choices)}.")
        return key

    return parse


def yes_no(field: str):
    def parse(s: str) -> bool:
        key = s.strip().lower()
        if key in ("yes", "y", "true", "1", "on"):
            return True
        if key in ("no", "n", "false", "0", "off", ""):
            return False
        raise ValueError(f"{field}: '{s}' is not yes or no.")

    return parse


def count(field: str, lo: int, hi: int):
    def parse(s: str) -> int:
        try:
            v = int(s.strip())
        except ValueError:
            raise ValueError(f"{field}: '{s}' is not a whole number; give {lo} to {hi}.") from None
        if not lo <= v <= hi:
            raise ValueError(f"{field}: {v} is out of range; give {lo} to {hi}.")
        return v

    return parse


def _nominal(s: str) -> tuple[int, int]:
    v = units.parse_nominal(s)
    if v is None:
        raise ValueError(
            f"size: '{s}' is not a nominal size; write e.g. 4x4 or 6x6 (or give --section with "
            "units)."
        )
    a, b = v
    if not (min(a, b) >= 2 and max(a, b) <= 16):
        raise ValueError(f"size: {a}x{b} is outside the sizes we hold (2x2 up to 16x16 nominal).")
    return v


@dataclass(frozen=True)
class Quantity:
    """A column of one kind of quantity with its accepted range (in the kind's internal unit):
    called on one cell, the kind's parser; ``many`` reads a whole column of plain texts at once
    (units.parse_many: the same numbers), leaving the other cells to the cell parser."""

    kind: str  # "length", "force", "percent" or "temperature"
    field: str
    lo: float | None = None
    hi: float | None = None

    def __call__(self, s: str) -> float:
        return _CELL_PARSERS[self.kind](s, self.field, lo=self.lo, hi=self.hi)

    def many(self, texts: list) -> tuple[Any, Any]:
        return units.parse_many(self.kind, texts, lo=self.lo, hi=self.hi)


_CELL_PARSERS: dict[str, Callable[..., float]] = {
    "length": units.parse_length,
    "force": units.parse_force,
    "percent": units.parse_percent,
    "temperature": units.parse_temperature,
}


def _length(field: str, lo: float = 1.0, hi: float = 30_000.0) -> Quantity:
    return Quantity("length", field, lo, hi)


DURATIONS = ("permanent", "ten-years", "two-months", "seven-days", "ten-minutes", "impact")
DURATION_ALIASES = {
    "dead": "permanent",
    "occupancy": "ten-years",
    "normal": "ten-years",
    "snow": "two-months",
    "construction": "seven-days",
    "wind": "ten-minutes",
    "earthquake": "ten-minutes",
    # EN 1995-1-1 Table 2.1 load-duration classes, mapped to the nearest NDS duration
    "long-term": "ten-years",
    "medium-term": "two-months",
    "short-term": "seven-days",
    "instantaneous": "ten-minutes",
}
ENDS_HELP = "pinned, fixed, free or guided (guided: rotation held, free to sway)"

# the core columns, in the order the CLI lists them (the registry, columns.py, adds the rest)
CORE: tuple[Column, ...] = (
    Column("tag", "post", "the tag painted on the post", "P3", _text("tag")),
    Column("location", "post", "where it stands", "basement, grid B/2", _text("location")),
    Column("notes", "post", "what you saw", "stamp not found", _text("notes")),
    Column(
        "size", "section", "nominal size; dressed sizes filled in unless measured", "4x4", _nominal
    ),
    Column(
        "section",
        "section",
        "measured section, both sides with units (wins over size)",
        "3.5inx3.5in",
        lambda s: units.parse_section(s, "section", lo=10.0, hi=1000.0),
    ),
    Column(
        "diameter",
        "section",
        "round post: measured diameter (rated as the equivalent square)",
        "7 in",
        _length("diameter", 20.0, 1000.0),
    ),
    Column(
        "plies",
        "section",
        "built-up post: number of plies (2 to 5)",
        "3",
        count("plies", 1, 5),
        "1",
    ),
    Column("ply", "section", "built-up post: nominal size of one ply", "2x6", _nominal),
    Column(
        "fastening",
        "section",
        "built-up post: how the plies are joined (NDS 2018 §15.3)",
        "nailed",
        choice("fastening", ("nailed", "bolted")),
        "nailed",
        ("nailed", "bolted"),
    ),
    Column(
        "height",
        "height",
        "unsupported height, top of sill to underside of cap",
        "10ft",
        _length("height", 100.0, 20_000.0),
    ),
    Column(
        "brace_weak",
        "height",
        "brace heights (from the bottom) stopping buckling across the thin side",
        "4ft",
        lambda s: units.parse_heights(s, "brace_weak"),
    ),
    Column(
        "brace_strong",
        "height",
        "brace heights stopping buckling across the wide side",
        "4ft",
        lambda s: units.parse_heights(s, "brace_strong"),
    ),
    Column(
        "top",
        "ends",
        f"what holds the top: {ENDS_HELP}",
        "pinned",
        choice("top", END_NAMES),
        "pinned",
        END_NAMES,
    ),
    Column(
        "bottom",
        "ends",
        f"what holds the bottom: {ENDS_HELP}",
        "pinned",
        choice("bottom", END_NAMES),
        "pinned",
        END_NAMES,
    ),
    Column(
        "k_theoretical",
        "ends",
        "use theoretical K instead of the NDS recommended design Ke (yes/no)",
        "no",
        yes_no("k_theoretical"),
        "no",
        flag=True,
    ),
    Column(
        "species",
        "material",
        "species group from the stamp, or unknown",
        "douglas-fir-larch",
        materials.normalise_species,
        "unknown",
        (*materials.SPECIES, "unknown"),
    ),
    Column(
        "grade",
        "material",
        "grade from the stamp, or unknown",
        "no2",
        materials.normalise_grade,
        "unknown",
        (*materials.GRADES, "unknown"),
    ),
    Column(
        "method",
        "material",
        "design method",
        "asd",
        choice("method", METHOD_NAMES),
        "asd",
        METHOD_NAMES,
    ),
    Column(
        "duration",
        "load",
        "load duration (NDS 2018 Table 2.3.2); a load given without one is permanent",
        "seven-days",
        choice("duration", DURATIONS, DURATION_ALIASES),
        "permanent",
        DURATIONS,
    ),
    Column(
        "moisture",
        "condition",
        "moisture content measured at depth",
        "24%",
        Quantity("percent", "moisture", 0.0, 200.0),
    ),
    Column(
        "temperature",
        "condition",
        "sustained service temperature (up to 150 F)",
        "70 F",
        Quantity("temperature", "temperature", -60.0, 65.6),
    ),
    Column(
        "incised",
        "material",
        "incised for preservative treatment (yes/no); taken as treated: CD at most 1.6, "
        "lambda at most 1.0",
        "no",
        yes_no("incised"),
        "no",
        flag=True,
    ),
    Column(
        "construction",
        "load",
        "a temporary, construction-stage member: le/d limit 75 (yes/no)",
        "no",
        yes_no("construction"),
        "no",
        flag=True,
    ),
    Column(
        "load",
        "load",
        "axial load on the post (service load; factored for LRFD)",
        "4000lbf",
        Quantity("force", "load", 0.0, 1e8),
    ),
    Column(
        "cap_species",
        "bearing",
        "species group of the cap or beam above (for its Fc-perp), or none",
        "douglas-fir-larch",
        lambda s: _none_or(s, materials.normalise_species),
    ),
    Column(
        "cap_bearing",
        "bearing",
        "bearing length along the cap's grain (default: the post's width)",
        "3.5 in",
        _length("cap_bearing", 5.0, 2000.0),
    ),
    Column(
        "cap_end_distance",
        "bearing",
        "distance from the cap's end to the post (Cb needs 3 in)",
        "12 in",
        _length("cap_end_distance", 0.0, 1e5),
    ),
    Column(
        "sill_species",
        "bearing",
        "species group of the sill or plate below, or none",
        "douglas-fir-larch",
        lambda s: _none_or(s, materials.normalise_species),
    ),
    Column(
        "sill_bearing",
        "bearing",
        "bearing length along the sill's grain",
        "3.5 in",
        _length("sill_bearing", 5.0, 2000.0),
    ),
    Column(
        "sill_end_distance",
        "bearing",
        "distance from the sill's end to the post",
        "12 in",
        _length("sill_end_distance", 0.0, 1e5),
    ),
    Column(
        "end_contact",
        "bearing",
        "share of the end area in full contact",
        "100%",
        lambda s: units.parse_percent(s, "end_contact", lo=1.0, hi=100.0),
    ),
    Column(
        "end_plate",
        "bearing",
        "the ends bear on steel plates (yes/no)",
        "no",
        yes_no("end_plate"),
        "no",
        flag=True,
    ),
)


def _none_or(s: str, fn: Callable[[str], str]) -> str | None:
    return None if s.strip().lower() in ("none", "no", "-", "") else fn(s)
