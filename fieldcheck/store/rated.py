"""What the log keeps of a rating: the engine's arrays turned into rows, in one engine pass.

The records layer parses and rates (``fieldcheck.records.rate_records``); here we only lift the
arrays into column lists (vectorised: ``tolist`` per array, no per-post engine work) and stamp
each rating with the engine version and the reference-data editions it used, so an old rating
can be shown as it was and re-rated on demand.
"""

from __future__ import annotations

import hashlib
import json
import math
from dataclasses import dataclass
from functools import cache

import numpy as np

from fieldcheck.row_error import RowError

# the engine's names (fieldcheck.engine.rating.ACTIONS); repeated here so reading a log never
# needs the engine
ACTION_LABELS = ("no-action", "monitor", "repair-or-brace", "make-safe-now")


@dataclass(frozen=True)
class RatedRows:
    """Per input row: a tuple of rating columns (see RATING_COLUMNS) or None when it has errors."""

    rows: list[tuple | None]
    errors: list[RowError]


# the columns of a stored rating that come from the engine, in RATING_COLS order
RATING_COLUMNS = (
    "capacity_n",
    "demand_n",
    "ratio",
    "action",
    "governing",
    "flags",
    "summary_json",
)


@cache
def engine_stamp() -> tuple[str, str, str]:
    """(stamp id, engine version, JSON of {table: edition}) recorded with every stored rating;
    the id is a hash of the other two, so every device names the same stamp alike."""
    from fieldcheck import ENGINE_VERSION
    from fieldcheck.engine.refdata import editions

    eds = json.dumps(editions(), sort_keys=True, separators=(",", ":"))
    sid = hashlib.sha256(f"{ENGINE_VERSION}\n{eds}".encode()).hexdigest()[:32]
    return sid, ENGINE_VERSION, eds


# most urgent first, the report's order (report/model.py URGENCY): make safe now, then not rated
# (no load, or a field error: unknown is never read as safe), repair, monitor, no action. The
# head a conflict shows (repo.HEAD_ORDER) and the visit list's worst first rank by it.
URGENCY = ("make-safe-now", "not rated", "repair-or-brace", "monitor", "no-action")


def urgency_sql(action: str) -> str:
    """SQL: the rank in URGENCY (0 the most urgent) of the action number ``action`` (NULL, 4 or
    any other number: not rated)."""
    whens = " ".join(f"WHEN {i} THEN {URGENCY.index(a)}" for i, a in enumerate(ACTION_LABELS))
    return f"CASE {action} {whens} ELSE {URGENCY.index('not rated')} END"


def action_label(action: int | None) -> str:
    if action is None or action == 4:  # 4: engine.rating.NOT_RATED (no load given)
        return "not rated"
    return ACTION_LABELS[action] if 0 <= action < len(ACTION_LABELS) else str(action)


def _floats(a) -> list[float | None]:
    """Floats for SQLite REAL columns; NaN or inf (no value) becomes NULL."""
    arr = np.asarray(a, dtype=np.float64)
    out = arr.tolist()
    for i in np.flatnonzero(~np.isfinite(arr)).tolist():  # only the few missing values in Python
        out[i] = None
    return out


def _json_default(o):
    if isinstance(o, np.generic):
        return o.item()
    if isinstance(o, np.ndarray):
        return o.tolist()
    return str(o)


def _clean(o):
    """JSON has no NaN: turn non-finite floats into null (nested)."""
    if isinstance(o, float):
        return o if math.isfinite(o) else None
    if isinstance(o, dict):
        return {k: _clean(v) for k, v in o.items()}
    if isinstance(o, (list, tuple)):
        return [_clean(v) for v in o]
    if isinstance(o, np.generic):
        return _clean(o.item())
    return o


def summary_json(rating, i: int) -> str:
    """The post's summary as stored (the cautions are constant text: shown, not stored)."""
    from fieldcheck.engine import explain  # here: reading a log never loads the engine

    s = dict(explain.summary(rating, i))
    s.pop("cautions", None)
    return json.dumps(_clean(s), default=_json_default, separators=(",", ":"))


def parse_and_rate(records: list[dict[str, str]]):
    """(Parsed, Rating or None): the records parsed into one batch and rated in one engine call."""
    from fieldcheck.engine.rating import rate as rate_batch
    from fieldcheck.records import parse_records

    parsed = parse_records(records)
    return parsed, (rate_batch(parsed.batch) if parsed.batch.n else None)


@dataclass(frozen=True)
class RatedColumns:
    """The ratings of many records as columns: ``ok`` lists the input rows rated (in order) and
    ``columns`` holds one list per RATING_COLUMNS entry, over those rows; the other rows have
    errors."""

    ok: list[int]
    columns: tuple[list, ...]
    errors: list[RowError]


def rate_columns(
    records: list[dict[str, str]], *, summaries: bool = True, cache: dict | None = None
) -> RatedColumns:
    """Rate every record in ONE engine call, lifted into columns (``tolist`` per array: no
    per-post work but the summaries' JSON, when asked). ``cache``: the records layer's distinct
    parses, kept by the caller across chunks."""
    from fieldcheck.engine.rating import rate as rate_batch
    from fieldcheck.records import parse_records

    parsed = parse_records(records, cache)
    errs = list(parsed.errors)  # RowError, placed at their row by the records layer
    m = parsed.batch.n
    if m == 0:
        return RatedColumns([], tuple([] for _ in RATING_COLUMNS), errs)
    rating = rate_batch(parsed.batch)
    cap = _floats(rating.capacity_n)
    if len(cap) != m:
        raise RuntimeError(f"the engine returned {len(cap)} ratings for {m} valid records")
    names = np.asarray(list(rating.check_names), dtype=object)
    summ = [summary_json(rating, j) for j in range(m)] if summaries else [None] * m
    columns = (
        cap,
        _floats(rating.demand_n),
        _floats(rating.ratio),
        np.asarray(rating.action).astype(np.int64).tolist(),
        names[np.asarray(rating.governing, dtype=np.int64)].tolist(),
        np.asarray(rating.flags).astype(np.int64).tolist(),
        summ,
    )
    return RatedColumns(parsed.index.tolist(), columns, errs)


def rate(
    records: list[dict[str, str]], *, summaries: bool = True, cache: dict | None = None
) -> RatedRows:
    """Rate every record in ONE engine call; rows with field errors get None and their errors.
    ``cache``: the records layer's distinct-record parses, kept by the caller across chunks."""
    got = rate_columns(records, summaries=summaries, cache=cache)
    out: list[tuple | None] = [None] * len(records)
    for i, row in zip(got.ok, zip(*got.columns, strict=True), strict=True):
        out[i] = row
    return RatedRows(out, got.errors)
