"""The office export: a fixed, documented column set (the same header whatever the data), in CSV
or JSON, streamed row by row.

Schema version 2 (``SCHEMA_VERSION``), in this order:

- ``tag``, ``location``: as typed.
- ``site``, ``visit``, ``visit_date`` (YYYY-MM-DD).
- every input column of the record registry (``Log.record_columns()``), in registry order, as
  typed; ``height`` is followed by ``height_in`` (US customary) or ``height_mm`` (metric), and
  ``load`` by ``load_lbf`` or ``load_kN``: the typed text read as a number (blank when it does
  not read).
- ``notes``: as typed.
- ``state``: ``rated``, ``not rated: load missing`` or ``not rated`` (no stored rating).
- ``action``: the stored rating's action: no-action, monitor, repair-or-brace, make-safe-now,
  not-rated (both states not rated).
- ``office_action``: the action an office engineer's override sets, where it is in force (the
  post's latest review, of its current revision, not in conflict) and more severe than
  ``action``; blank otherwise. An override never lowers a rating (store/reviews.py).
- ``due_date``: visit date + the interval of the action in force (``office_action`` where set,
  else ``action``; blank: no deadline, or not rated).
- ``ratio`` (3 decimals), ``capacity_lbf``/``capacity_kN``, ``demand_lbf``/``demand_kN``.
- ``governing``: the governing check's key (``column``, ``end_bearing``, ...).
- ``engine_version``, ``revised_at``, ``member_id``, ``observation_id``, ``schema_version``.

Rounding: lbf to 1 lbf, kN to 0.01 kN, inches to 0.01 in, mm to 1 mm, ratio to 0.001. The values
are the log's latest stored rating of each post's current revision.

Version 2 added ``office_action`` (and the due date follows it): in version 1 an override that
raised a post to make-safe-now left the export reading the rating's milder action and date.

CSV: a cell of text that begins with ``=``, ``+``, ``-``, ``@``, a tab or a carriage return (and
is not a plain number) is written with a leading apostrophe, so a spreadsheet shows it as text
instead of running it as a formula. Optional UTF-8 byte-order mark for spreadsheets that need it.
JSON: ``{"schema": "fieldcheck-export", "schema_version": 2, "units": ..., "columns": [...],
"posts": [{...}, ...]}``, numbers as numbers, blanks as null, text as typed.
"""

from __future__ import annotations

import csv
import datetime as _dt
import json
import math
import re
from collections.abc import Iterable, Iterator
from itertools import compress
from json.encoder import encode_basestring as _encode_text
from operator import is_not

from fieldcheck.engine.customary import LBF
from fieldcheck.engine.result import ACTIONS, DUE_DAYS, NOT_RATED

SCHEMA_VERSION = 2
SCHEMA = "fieldcheck-export"
FIRST = ("tag", "location", "site", "visit", "visit_date")
UNIT_COLUMNS = {
    "us": {"height": "height_in", "load": "load_lbf", "force": "lbf"},
    "metric": {"height": "height_mm", "load": "load_kN", "force": "kN"},
}


def _result_columns(force: str) -> tuple[str, ...]:
    """The columns after the record's, in an export whose forces are in ``force``."""
    return (
        "notes",
        "state",
        "action",
        "office_action",
        "due_date",
        "ratio",
        f"capacity_{force}",
        f"demand_{force}",
        "governing",
        "engine_version",
        "revised_at",
        "member_id",
        "observation_id",
        "schema_version",
    )


# every column an export adds beside the record (both unit systems): an importer knows them
ADDED = tuple(
    dict.fromkeys(
        c
        for u in UNIT_COLUMNS.values()
        for c in (*FIRST[2:], u["height"], u["load"], *_result_columns(u["force"]))
        if c != "notes"  # a record column
    )
)

_FORMULA = ("=", "+", "-", "@", "\t", "\r")
_FORMULA_FIRST = frozenset("".join(_FORMULA))
_NUMBER = re.compile(r"^[+-]?(\d+(\.\d*)?|\.\d+)([eE][+-]?\d+)?$")


def columns(units: str, record_columns: Iterable[str]) -> list[str]:
    """The header of an export in ``units``: the same whatever the log holds (``record_columns``:
    every rated record column in the registry's order, from the log: Log.record_columns())."""
    u = UNIT_COLUMNS[units]
    out = list(FIRST)
    for c in record_columns:
        if c in ("tag", "location", "notes"):
            continue
        out.append(c)
        if c in ("height", "load"):
            out.append(u[c])
    out += _result_columns(u["force"])
    return out


def neutralise(value: object) -> object:
    """A text cell a spreadsheet would run as a formula, written as text (leading apostrophe)."""
    if isinstance(value, str) and value.startswith(_FORMULA) and not _NUMBER.match(value):
        return "'" + value
    return value


def _round(x: float | None, nd: int) -> float | int | None:
    if x is None or x != x or x in (float("inf"), float("-inf")):
        return None
    return round(x) if nd == 0 else round(x, nd)


class _Reader:
    """Typed text -> number, each distinct text read once."""

    def __init__(self, parse, scale: float, nd: int):
        self.parse, self.scale, self.nd, self.seen = parse, scale, nd, {}

    def __call__(self, text: object):
        if not isinstance(text, str):
            return None
        if text not in self.seen:
            try:
                got = _round(self.parse(text) / self.scale, self.nd) if text.strip() else None
            except ValueError:
                got = None
            self.seen[text] = got
        return self.seen[text]


def rows(
    log, units: str = "us", visit_id: str | None = None, *, spreadsheet_safe: bool = False
) -> tuple[list[str], Iterator[list]]:
    """(header, iterator of one list per current post: its values in header order, None for a
    blank), from the log's streamed export (store: Log.export_chunks). ``spreadsheet_safe``:
    every text from the log that a spreadsheet would run as a formula is ``neutralise``d (for
    CSV).

    Built for a million posts: each row starts as a copy of a blank row and only the cells the
    post fills are set; what many posts share (names, dates, due dates, the readings of a typed
    height or load) is worked out once."""
    from fieldcheck import units as u

    cols = columns(units, log.record_columns())
    us = units == "us"
    height = _Reader(u.parse_length, u.IN_MM if us else 1.0, 2 if us else 0)
    load = _Reader(u.parse_force, LBF if us else 1000.0, 0 if us else 2)
    heights, loads = height.seen, load.seen
    fscale, fnd, f = (LBF, 0, "lbf") if us else (1000.0, 2, "kN")
    at = {c: i for i, c in enumerate(cols)}
    # the cells a record fills as typed (every other column is set below, whatever it holds)
    typed = {c: i for c, i in at.items() if c not in ADDED}.get
    i_height, i_load = at[UNIT_COLUMNS[units]["height"]], at[UNIT_COLUMNS[units]["load"]]
    i_site, i_visit, i_day, i_tail = at["site"], at["visit"], at["visit_date"], at["state"]
    tail = ("state", "action", "office_action", "due_date", "ratio", f"capacity_{f}")
    tail += (f"demand_{f}", "governing", "engine_version", "revised_at", "member_id")
    tail += ("observation_id", "schema_version")
    if tuple(cols[i_tail:]) != tail:  # the row's end is written in one step below
        raise AssertionError(f"the export's last columns changed: {cols[i_tail:]}")
    blank: list = [None] * len(cols)
    danger = _FORMULA_FIRST if spreadsheet_safe else frozenset()

    def cell(v):  # a value from the log: blank text is None
        if v.__class__ is str:
            return None if not v else neutralise(v) if v[0] in danger else v
        return v

    site_cell = {k: cell(n) for k, n in ((s.id, s.name) for s in log.sites())}
    visit_cell, days = {}, {}
    for v in log.visits():
        visit_cell[v.id] = cell(v.name)
        try:
            days[v.id] = _dt.datetime.fromisoformat(v.started_at).date().isoformat()
        except (TypeError, ValueError):
            days[v.id] = None
    states: dict[tuple, tuple] = {}  # (action, office, visit) -> (state, action, office, due date)

    def state(act, office, vid) -> tuple:
        """The cells state .. due_date. ``office``: OFFICE_ACTION (None, or an action above
        ``act``); the due date follows the action in force."""
        if act == NOT_RATED:
            out = ("not rated: load missing", ACTIONS[NOT_RATED], None, None)
        elif act is None or not 0 <= act < NOT_RATED:  # no rating, or a code unknown here
            # never a blank action a spreadsheet's filter reads as nothing to do (judgement)
            out = ("not rated", ACTIONS[NOT_RATED], None, None)
        else:
            raised = office if office is not None and act < office < NOT_RATED else None
            force = act if raised is None else raised
            day, due = days.get(vid), None
            if DUE_DAYS[force] is not None and day:
                due = (
                    _dt.date.fromisoformat(day) + _dt.timedelta(days=DUE_DAYS[force])
                ).isoformat()
            out = ("rated", ACTIONS[act], None if raised is None else ACTIONS[raised], due)
        states[act, office, vid] = out
        return out

    stamps: dict[tuple, tuple] = {}  # (governing, engine version) -> their cells

    def gen() -> Iterator[list]:
        for part in log.export_chunks(visit_id):
            for rec, fields in part:
                _, site, vid, mid, oid, when, _by, ratio, act, cap, dem, gov, ev, office = fields
                row = blank.copy()
                for k, v in rec.items():
                    i = typed(k)
                    if i is not None and v != "":
                        row[i] = neutralise(v) if v.__class__ is str and v[0] in danger else v
                h, w = rec.get("height"), rec.get("load")
                if h.__class__ is str:
                    row[i_height] = heights[h] if h in heights else height(h)
                if w.__class__ is str:
                    row[i_load] = loads[w] if w in loads else load(w)
                row[i_site] = site_cell.get(site)
                row[i_visit] = visit_cell.get(vid)
                row[i_day] = days.get(vid)
                st = states.get((act, office, vid)) or state(act, office, vid)
                ge = stamps.get((gov, ev))
                if ge is None:
                    ge = stamps[gov, ev] = (cell(gov), cell(ev))
                rc = ratio.__class__
                if rc is float:  # 3 decimals; NaN or infinite: blank
                    ratio = round(ratio, 3) if ratio - ratio == 0 else None
                elif rc is not int:
                    ratio = None
                if cap is not None:  # N -> kN -> the unit, as the office export always did
                    cap = cap / 1000.0 * 1000.0 / fscale
                    cap = (round(cap, fnd) if fnd else round(cap)) if cap - cap == 0 else None
                if dem is not None:
                    dem = dem / 1000.0 * 1000.0 / fscale
                    dem = (round(dem, fnd) if fnd else round(dem)) if dem - dem == 0 else None
                if danger and (when[:1] in danger or mid[:1] in danger or oid[:1] in danger):
                    when, mid, oid = cell(when), cell(mid), cell(oid)
                row[i_tail:] = (
                    *st,
                    ratio,
                    cap,
                    dem,
                    *ge,
                    when or None,
                    mid or None,
                    oid or None,
                    SCHEMA_VERSION,
                )
                yield row

    return cols, gen()


def write_csv(out, cols: list[str], data: Iterable[list], *, bom: bool = False, progress=None):
    """CSV, streamed; None written empty (``data``: rows as from ``rows(..., text=neutralise)``,
    so formula-like text is already neutralised). Returns rows written."""
    if bom:
        out.write("\ufeff")
    w = csv.writer(out)
    w.writerow(cols)
    n = 0
    for n, row in enumerate(data, 1):
        w.writerow(row)
        if progress is not None and n % 1000 == 0:
            progress(n, 0, "exporting")
    return n


def _json_float(v: float) -> str:
    """A float as the json module writes it."""
    if v != v:
        return "NaN"
    if v in (math.inf, -math.inf):
        return "Infinity" if v > 0 else "-Infinity"
    return float.__repr__(v)


def _json_value(v) -> str:
    """One value as ``json.dumps(v, ensure_ascii=False)`` writes it."""
    if v is None:
        return "null"
    if v.__class__ is str:
        return _encode_text(v)
    if v.__class__ is float:
        return _json_float(v)
    if v.__class__ is int:
        return int.__repr__(v)
    return json.dumps(v, ensure_ascii=False)


def write_json(out, cols: list[str], data: Iterable[list], *, units: str = "us", progress=None):
    """The JSON form (see the module docstring), one post per line, streamed; each post written
    exactly as ``json.dumps(dict(zip(cols, row)), ensure_ascii=False)`` would write it."""
    head = {"schema": SCHEMA, "schema_version": SCHEMA_VERSION, "units": units, "columns": cols}
    out.write(json.dumps(head, ensure_ascii=False)[:-1] + ',\n "posts": [')
    keys = [_encode_text(c) + ": " for c in cols]
    nulls = [k + "null" for k in keys]
    every, no = range(len(cols)), [None] * len(cols)
    n = 0
    for n, row in enumerate(data, 1):
        parts = nulls.copy()  # most cells are blank: only the filled ones are encoded
        for i in compress(every, map(is_not, row, no)):
            parts[i] = keys[i] + _json_value(row[i])
        out.write(("\n  {" if n == 1 else ",\n  {") + ", ".join(parts) + "}")
        if progress is not None and n % 1000 == 0:
            progress(n, 0, "exporting")
    out.write("\n ]\n}\n")
    return n
