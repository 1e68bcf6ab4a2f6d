"""Posts as typed -> one PostBatch, and rating in one call.

A record is a ``dict[str, str]`` keyed by column name (see columns.py). Bad values never stop the
other rows: each problem is a :class:`FieldError` naming its row and column, and the rows without
errors are rated together in one engine pass.

    parsed = parse_records(rows)        # Parsed(batch, errors, ok, rows, meta)
    rating, errors = rate_records(rows) # rating covers the rows where parsed.ok is True
"""

from __future__ import annotations

import re
from dataclasses import dataclass, field
from functools import lru_cache
from typing import Any

import numpy as np

from fieldcheck.engine.batch import PostBatch, make_batch
from fieldcheck.records.builders import RowError
from fieldcheck.records.columns import BUILDERS, COLUMNS, GROUPS, Column

UNRATED_COLUMNS = ("tag", "location", "notes")  # kept in the log, not seen by the engine
_UNRATED = frozenset(UNRATED_COLUMNS)

__all__ = [
    "COLUMNS",
    "GROUPS",
    "UNRATED_COLUMNS",
    "Column",
    "FieldError",
    "Parsed",
    "parse_records",
    "parse_row",
    "rate_records",
]


@dataclass(frozen=True)
class FieldError:
    row: int  # 0-based index into the rows given
    column: str
    message: str

    def __str__(self) -> str:
        return f"row {self.row + 1}: {self.sentence()}"

    def sentence(self) -> str:
        """The message named for its column once (never "height: height: ...")."""
        return field_sentence(self.column, self.message)


def field_sentence(column: str, message: str) -> str:
    """``column: message``, unless the message already names the column (or a field) first."""
    return message if re.match(r"^[a-z][a-z0-9_ -]{0,30}: ", message) else f"{column}: {message}"


@dataclass
class Parsed:
    batch: PostBatch  # the rows without errors, in order
    errors: list[FieldError]
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
            return {}, {}, [(exc.column, str(exc))]
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


def parse_records(rows: list[dict[str, str]], cache: dict | None = None) -> Parsed:
    """Rows -> one PostBatch. Identical records (a row of identical shores, a re-rated log) are
    parsed once: the builders run per distinct record, the arrays are gathered by index.

    ``cache`` (a dict the caller keeps) carries the distinct records' parses from one call to
    the next, so a file read in chunks parses each distinct record once; it is emptied when it
    holds PARSE_CACHE_LIMIT records (memory stays flat)."""
    errors: list[FieldError] = []
    uid_of: dict[tuple, int] = {}
    uniq: list[tuple[dict[str, Any], dict[str, Any], list[tuple[str, str]]]] = []
    row_uid = np.empty(len(rows), dtype=np.intp)
    if cache is not None and len(cache) > PARSE_CACHE_LIMIT:
        cache.clear()
    for i, rec in enumerate(rows):
        key = _rated_key(rec)
        u = uid_of.get(key)
        if u is None:
            u = uid_of[key] = len(uniq)
            if cache is None:
                uniq.append(parse_row(rec))
            else:
                got = cache.get(key)
                if got is None:
                    got = cache[key] = parse_row(rec)
                uniq.append(got)
        row_uid[i] = u
        problems = uniq[u][2]
        if problems:
            errors.extend(FieldError(i, c, m) for c, m in problems)
    bad_u = np.array([bool(p) for _, _, p in uniq], dtype=bool)
    ok = ~bad_u[row_uid] if len(rows) else np.zeros(0, dtype=bool)
    good_rows = row_uid[ok]
    metas = [uniq[u][1] for u in good_rows.tolist()]
    if good_rows.size == 0:
        return Parsed(make_batch(n=0), errors, ok, metas)
    # arrays over the distinct good records, then gathered per row
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
    return Parsed(
        make_batch(n=int(take.size), **{k: a[take] for k, a in per_u.items()}), errors, ok, metas
    )


def rate_records(rows: list[dict[str, str]], cache: dict | None = None):
    """Parse and rate in one engine pass: (Rating of the rows without errors, errors).

    Rating post j is input row ``np.flatnonzero(ok)[j]`` where ok excludes the rows named in
    the errors; use :func:`parse_records` and ``rate(parsed.batch)`` to keep the mapping at hand.
    """
    from fieldcheck.engine.rating import rate

    parsed = parse_records(rows, cache)
    return rate(parsed.batch), parsed.errors
