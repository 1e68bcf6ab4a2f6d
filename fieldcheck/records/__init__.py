"""Posts as typed -> one PostBatch, and rating in one call.

A record is a ``dict[str, str]`` keyed by column name (see columns.py). Bad values never stop the
other rows: each problem is a :class:`RowError` naming its row and column, and the rows without
errors are rated together in one engine pass.

    parsed = parse_records(rows)        # Parsed(batch, errors, ok, rows, meta)
    rating, errors = rate_records(rows) # rating covers the rows where parsed.ok is True
"""

from __future__ import annotations

import operator
import re
from dataclasses import dataclass, field
from functools import lru_cache
from typing import Any

import numpy as np

from fieldcheck.engine.batch import PostBatch, make_batch
from fieldcheck.records.builders import bearing_wet
from fieldcheck.records.columns import BUILDERS, COLUMNS, GROUPS, Column
from fieldcheck.row_error import RowError

UNRATED_COLUMNS = ("tag", "location", "notes")  # kept in the log, not seen by the engine
_UNRATED = frozenset(UNRATED_COLUMNS)

__all__ = [
    "COLUMNS",
    "GROUPS",
    "UNRATED_COLUMNS",
    "Column",
    "Parsed",
    "RowError",
    "parse_records",
    "parse_row",
    "rate_records",
]


@dataclass
class Parsed:
    batch: PostBatch  # the rows without errors, in order
    errors: list[RowError]
    ok: np.ndarray  # bool per input row
    meta: list[dict[str, Any]] = field(default_factory=list)  # per rated row: material text etc.

    @property
    def index(self) -> np.ndarray:
        """Input row index of each post in the batch."""
        return np.flatnonzero(self.ok)


@lru_cache(maxsize=1 << 16)
def _parse_cell(name: str, text: str) -> Any:
    """A column's parser is a pure function of the text: a bulk import repeats the same cells."""
    value = COLUMNS[name].parse(text)
    return tuple(value) if isinstance(value, list) else value


def parse_row(
    record: dict[str, str],
) -> tuple[dict[str, Any], dict[str, Any], list[tuple[str, str]]]:
    """One record -> (PostBatch field values, meta, [(column, message), ...])."""
    values: dict[str, Any] = {}
    problems: list[tuple[str, str]] = []
    for name, text in record.items():
        if text is None:
            continue
        text = str(text)
        if not text.strip():
            continue
        if name not in COLUMNS:
            continue  # unknown columns are kept in the log but not rated (e.g. a site's own notes)
        try:
            values[name] = _parse_cell(name, text)
        except ValueError as exc:
            problems.append((name, own_field(name, str(exc), text)))
    if problems:
        return {}, {}, problems
    fields: dict[str, Any] = {}
    meta: dict[str, Any] = {}
    for build in BUILDERS:
        try:
            fields.update(build(values, meta))
        except RowError as exc:
            return {}, {}, [(exc.column, exc.message)]
        except ValueError as exc:
            return {}, {}, [(getattr(build, "column", "input"), str(exc))]
    return fields, meta, []


_PREFIX = re.compile(r"^(?:[a-z][a-z0-9_ -]{0,30}: )+")


def own_field(name: str, message: str, text: str | None = None) -> str:
    """A column's message as the user should read it: named for the column itself (a parser
    shared by two columns names its own field, e.g. ply's nominal size said "size:"), once
    (never "height: height:"), the typed value quoted short and without terminal escapes."""
    from fieldcheck import units

    body = _PREFIX.sub("", message, count=1)
    return units.clean_message(f"{name}: {body}", text)


def _rated_key(rec: dict[str, str]) -> tuple:
    """What the engine sees of a record: every rated column's text (tags and notes left out)."""
    # in the record's own order: rows from one file or log share it; another order only costs
    # a parse
    return tuple([(k, v) for k, v in rec.items() if v and k not in _UNRATED])


PARSE_CACHE_LIMIT = 1 << 14  # distinct records a caller's cache keeps across chunks

# The column-wise path. The measured numbers that differ on nearly every post are lifted: each
# column's distinct texts are parsed once, and the values go into their PostBatch fields as one
# array. The builders run once per distinct combination of the other columns (a representative
# record of each, through parse_row), never per record. A lifted number reaches the fields named
# here and nothing else ONLY while the record holds no column outside LIFT_SAFE (braces, springs,
# condition, tributary loads and EC5 read the height, load or moisture in other ways): any other
# record takes the distinct-record path. tests/records/test_columnwise.py holds the two paths
# equal.
LIFTED: dict[str, tuple[tuple[str, Any], ...]] = {
    "height": (("height_mm", None),),
    "load": (("load_n", None),),
    "moisture": (("moisture_pct", None), ("bearing_wet", bearing_wet)),
    "temperature": (("temp_c", None),),
}
LIFT_SAFE = frozenset(
    (
        *UNRATED_COLUMNS,
        *LIFTED,
        "size",
        "section",
        "diameter",
        "plies",
        "ply",
        "fastening",
        "top",
        "bottom",
        "k_theoretical",
        "species",
        "grade",
        "method",
        "duration",
        "incised",
        "construction",
        "cap_species",
        "cap_bearing",
        "cap_end_distance",
        "sill_species",
        "sill_bearing",
        "sill_end_distance",
        "end_contact",
        "end_plate",
    )
)
_NOT_LIFT_SAFE = frozenset(COLUMNS) - LIFT_SAFE  # unknown columns are kept, never rated
_NO_LIFT_METHODS = frozenset({"ec5"})  # EC5 reads the moisture and temperature in its own way


class _Units:
    """The distinct parses of one call: (fields, meta, problems) per unit, each row's unit, and
    per lifted column the rows whose unit's fields take the row's own value."""

    def __init__(self, n: int):
        self.uniq: list[tuple[dict[str, Any], dict[str, Any], list[tuple[str, str]]]] = []
        self.row_uid = np.full(n, -1, dtype=np.intp)
        self.lifted: dict[str, tuple[np.ndarray, np.ndarray]] = {}

    def add(self, parse: tuple) -> int:
        self.uniq.append(parse)
        return len(self.uniq) - 1


def _distinct(texts: list) -> tuple[list, np.ndarray]:
    """A column's distinct texts (first-seen order) and each row's index into them."""
    index = {t: j for j, t in enumerate(dict.fromkeys(texts))}
    codes = np.fromiter(map(index.__getitem__, texts), dtype=np.intp, count=len(texts))
    return list(index), codes


@lru_cache(maxsize=1 << 16)
def _lifted_cell(name: str, text: object) -> float | None:
    """A lifted column's value: the number, NaN when the cell is blank (not given), None when
    the text does not parse (the row then takes the record-by-record path for its error)."""
    if _blank(text):
        return np.nan
    try:
        return float(_parse_cell(name, str(text)))
    except (ValueError, TypeError):
        return None


def _lift_column(name: str, texts: list) -> tuple[np.ndarray, np.ndarray]:
    """A lifted column's values per row (NaN: blank) and the rows whose text does not parse.
    The plain texts are read at once by the column's own ``many`` (units.parse_many: the same
    numbers as its cell parser); the rest, distinct text by distinct text, by the cell parser."""
    many = getattr(COLUMNS[name].parse, "many", None)
    if many is not None:
        vals, done = many(texts)
        rest = np.flatnonzero(~done)
    else:
        vals, rest = np.empty(len(texts)), np.arange(len(texts))
    fails = np.zeros(len(texts), dtype=bool)
    if rest.size:
        distinct, codes = _distinct(
            texts if rest.size == len(texts) else list(map(texts.__getitem__, rest.tolist()))
        )
        got = [_lifted_cell(name, t) for t in distinct]
        fail = np.fromiter((g is None for g in got), dtype=bool, count=len(got))
        v = np.array([np.nan if g is None else g for g in got], dtype=np.float64)
        vals[rest] = v[codes]
        fails[rest] = fail[codes]
    return vals, fails


def _blank(t: object) -> bool:
    return t is None or not str(t).strip()


def _lift_shape(
    rows: list, idx: list[int], names: tuple[str, ...], units: _Units, cache: dict | None
) -> list[int]:
    """Rows sharing one column order (``names``: no rated column outside LIFT_SAFE) through the
    column-wise path; returns the rows left for the distinct-record path (a text that does not
    parse, or a combination the builders refuse: those get their errors row by row)."""
    n = len(idx)
    recs = rows if n == len(rows) else list(map(rows.__getitem__, idx))
    rated = [c for c in names if c not in _UNRATED and c in COLUMNS]
    keyed = [c for c in rated if c not in LIFTED]
    cols = {c: list(map(operator.itemgetter(c), recs)) for c in rated if c in LIFTED}
    if keyed:
        # the other columns together: one code per distinct combination of their texts
        get = operator.itemgetter(*keyed)
        combos, codes = _distinct(list(map(get, recs) if len(keyed) > 1 else zip(map(get, recs))))
    del recs
    bad = np.zeros(n, dtype=bool)
    key_codes: list[np.ndarray] = []
    key_names: list[str] = []  # the rated columns: the keyed ones first, then the lifted ones
    lifted: dict[str, tuple[np.ndarray, np.ndarray]] = {}  # column -> (value, present) per row
    if keyed:
        key_codes.append(codes)
        key_names.extend(keyed)
        if "method" in key_names:
            m = key_names.index("method")
            for j, combo in enumerate(combos):
                t = combo[m]
                try:
                    if not _blank(t) and _parse_cell("method", str(t)) in _NO_LIFT_METHODS:
                        bad |= codes == j
                except ValueError:
                    bad |= codes == j
    for name, col in cols.items():
        vals, fails = _lift_column(name, col)
        present = ~fails & ~np.isnan(vals)
        bad |= fails
        lifted[name] = (vals, present)
        key_codes.append(present.astype(np.intp))
        key_names.append(name)
    good = np.flatnonzero(~bad)
    left = [idx[k] for k in np.flatnonzero(bad).tolist()]
    if good.size == 0:
        return left
    # one dense code per distinct combination: the columns' codes combined as digits of one
    # number (made dense again only before it could overflow), then one np.unique
    combined = np.zeros(good.size, dtype=np.int64)
    span = 1
    for c in key_codes:
        base = int(c.max(initial=0)) + 1
        if span * base >= 1 << 62:
            _, combined = np.unique(combined, return_inverse=True)
            combined = combined.reshape(-1)
            span = int(combined.max(initial=0)) + 1
        combined = combined * base + c[good]
        span *= base
    _, inverse = np.unique(combined, return_inverse=True)
    inverse = inverse.reshape(-1)
    n_groups = int(inverse.max(initial=-1)) + 1
    first = np.full(n_groups, good.size, dtype=np.intp)
    np.minimum.at(first, inverse, np.arange(good.size))
    group_uid = np.empty(n_groups, dtype=np.intp)
    refused = np.zeros(n_groups, dtype=bool)
    for g in range(n_groups):
        rep = idx[int(good[first[g]])]
        key = (
            "\0columns",
            tuple(sorted((c, rows[rep][c]) for c in key_names if c not in LIFTED)),
            tuple(sorted(c for c in LIFTED if c in key_names and not _blank(rows[rep][c]))),
        )
        got = None if cache is None else cache.get(key)
        if got is None:
            got = parse_row(rows[rep])
            # a lifted column given must have reached every field it names, or the rows take
            # the distinct-record path
            lift_ok = all(f in got[0] for c in key[2] for f, _ in LIFTED[c])
            got = (got, lift_ok)
            if cache is not None:
                cache[key] = got
        parse, lift_ok = got
        if parse[2] or not lift_ok:
            refused[g] = True
        else:
            group_uid[g] = units.add(parse)
    sel = ~refused[inverse]
    for k in np.flatnonzero(~sel).tolist():
        left.append(idx[int(good[k])])
    rows_here = np.asarray(idx, dtype=np.intp)[good[sel]]
    units.row_uid[rows_here] = group_uid[inverse[sel]]
    for name, (vals, present) in lifted.items():
        v, p = units.lifted.setdefault(
            name, (np.full(len(units.row_uid), np.nan), np.zeros(len(units.row_uid), dtype=bool))
        )
        v[rows_here] = vals[good[sel]]
        p[rows_here] = present[good[sel]]
    return left


def parse_records(rows: list[dict[str, str]], cache: dict | None = None) -> Parsed:
    """Rows -> one PostBatch, column-wise: rows are taken by their column order; each column's
    distinct texts are parsed once, the measured numbers lifted into the arrays, and the
    builders run per distinct combination of the other columns (see LIFTED). Other records are
    parsed once per distinct record (a row of identical shores, a re-rated log) and gathered by
    index. Every record's errors are its own, row by row.

    ``cache`` (a dict the caller keeps) carries the distinct parses from one call to the next,
    so a file read in chunks parses each distinct record (or combination) once; it is emptied
    when it holds PARSE_CACHE_LIMIT entries (memory stays flat)."""
    n = len(rows)
    if cache is not None and len(cache) > PARSE_CACHE_LIMIT:
        cache.clear()
    units = _Units(n)
    order = list(map(tuple, rows))  # each record's columns, in order
    shapes: dict[tuple, list[int]] = dict.fromkeys(order)  # type: ignore[assignment]
    if len(shapes) == 1:  # one column order (a file, a log's import): no grouping
        shapes[order[0]] = list(range(n))
    else:
        shapes = {}
        for i, names in enumerate(order):
            shapes.setdefault(names, []).append(i)
    del order
    slow: list[int] = []
    for names, idx in shapes.items():
        if _NOT_LIFT_SAFE.isdisjoint(names):
            try:
                slow.extend(_lift_shape(rows, idx, names, units, cache))
                continue
            except TypeError:  # a value that is not text (unhashable): record by record
                pass
        slow.extend(idx)
    uid_of: dict[tuple, int] = {}
    for i in sorted(slow):
        rec = rows[i]
        key = _rated_key(rec)
        u = uid_of.get(key)
        if u is None:
            got = None if cache is None else cache.get(key)
            if got is None:
                got = parse_row(rec)
                if cache is not None:
                    cache[key] = got
            u = uid_of[key] = units.add(got)
        units.row_uid[i] = u
    uniq, row_uid = units.uniq, units.row_uid
    errors: list[RowError] = []
    if slow:
        for i in sorted(slow):
            problems = uniq[row_uid[i]][2]
            if problems:
                errors.extend(RowError(c, m, row=i) for c, m in problems)
    bad_u = np.array([bool(p) for _, _, p in uniq], dtype=bool)
    ok = ~bad_u[row_uid] if n else np.zeros(0, dtype=bool)
    good_rows = row_uid[ok]
    metas = [uniq[u][1] for u in good_rows.tolist()]
    if good_rows.size == 0:
        return Parsed(make_batch(n=0), errors, ok, metas)
    # arrays over the distinct good units, then gathered per row
    good_u = np.flatnonzero(~bad_u)
    remap = np.full(len(uniq), -1, dtype=np.intp)
    remap[good_u] = np.arange(good_u.size)
    fields_u = [uniq[u][0] for u in good_u.tolist()]
    keys = set().union(*fields_u)
    from fieldcheck.engine.batch import DEFAULTS, DTYPES

    per_u = {
        k: np.asarray([f.get(k, DEFAULTS[k]) for f in fields_u], dtype=DTYPES[k]) for k in keys
    }
    take = remap[good_rows]
    arrays = {k: a[take] for k, a in per_u.items()}
    for name, (vals, present) in units.lifted.items():
        here = present[ok]
        if not here.any():
            continue
        v = vals[ok][here]
        for fld, rule in LIFTED[name]:
            arrays[fld][here] = v if rule is None else rule(v)
    return Parsed(make_batch(n=int(take.size), **arrays), errors, ok, metas)


def rate_records(rows: list[dict[str, str]], cache: dict | None = None):
    """Parse and rate in one engine pass: (Rating of the rows without errors, errors).

    Rating post j is input row ``np.flatnonzero(ok)[j]`` where ok excludes the rows named in
    the errors; use :func:`parse_records` and ``rate(parsed.batch)`` to keep the mapping at hand.
    """
    from fieldcheck.engine.rating import rate

    parsed = parse_records(rows, cache)
    return rate(parsed.batch), parsed.errors
