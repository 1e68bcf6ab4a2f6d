"""The office export: a fixed, documented column set (the same header whatever the data), in CSV
or JSON, streamed row by row.

Schema version 1 (``SCHEMA_VERSION``), in this order:

- ``tag``, ``location``: as typed.
- ``site``, ``visit``, ``visit_date`` (YYYY-MM-DD).
- every input column of the record registry (``Log.record_columns()``), in registry order, as
  typed; ``height`` is followed by ``height_in`` (US customary) or ``height_mm`` (metric), and
  ``load`` by ``load_lbf`` or ``load_kN``: the typed text read as a number (blank when it does
  not read).
- ``notes``: as typed.
- ``state``: ``rated``, ``not rated: load missing`` or ``not rated`` (no stored rating).
- ``action``: no-action, monitor, repair-or-brace, make-safe-now, not-rated.
- ``due_date``: visit date + the action's interval (blank: no deadline, or not rated).
- ``ratio`` (3 decimals), ``capacity_lbf``/``capacity_kN``, ``demand_lbf``/``demand_kN``.
- ``governing``: the governing check's key (``column``, ``end_bearing``, ...).
- ``engine_version``, ``revised_at``, ``member_id``, ``observation_id``, ``schema_version``.

Rounding: lbf to 1 lbf, kN to 0.01 kN, inches to 0.01 in, mm to 1 mm, ratio to 0.001. The values
are the log's latest stored rating of each post's current revision.

CSV: a cell of text that begins with ``=``, ``+``, ``-``, ``@``, a tab or a carriage return (and
is not a plain number) is written with a leading apostrophe, so a spreadsheet shows it as text
instead of running it as a formula. Optional UTF-8 byte-order mark for spreadsheets that need it.
JSON: ``{"schema": "fieldcheck-export", "schema_version": 1, "units": ..., "columns": [...],
"posts": [{...}, ...]}``, numbers as numbers, blanks as null, text as typed.
"""

from __future__ import annotations

import csv
import datetime as _dt
import json
import re
from collections.abc import Iterable, Iterator

from fieldcheck.engine.customary import LBF
from fieldcheck.engine.result import ACTIONS, DUE_DAYS, NOT_RATED

SCHEMA_VERSION = 1
SCHEMA = "fieldcheck-export"
FIRST = ("tag", "location", "site", "visit", "visit_date")
UNIT_COLUMNS = {
    "us": {"height": "height_in", "load": "load_lbf", "force": "lbf"},
    "metric": {"height": "height_mm", "load": "load_kN", "force": "kN"},
}
# every column an export adds beside the record (both unit systems): an importer knows them
ADDED = (
    "site",
    "visit",
    "visit_date",
    "height_in",
    "height_mm",
    "load_lbf",
    "load_kN",
    "state",
    "action",
    "due_date",
    "ratio",
    "capacity_lbf",
    "capacity_kN",
    "demand_lbf",
    "demand_kN",
    "governing",
    "engine_version",
    "revised_at",
    "member_id",
    "observation_id",
    "schema_version",
)
_FORMULA = ("=", "+", "-", "@", "\t", "\r")
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
    f = u["force"]
    out += [
        "notes",
        "state",
        "action",
        "due_date",
        "ratio",
        f"capacity_{f}",
        f"demand_{f}",
        "governing",
        "engine_version",
        "revised_at",
        "member_id",
        "observation_id",
        "schema_version",
    ]
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
        if not isinstance(text, str) or not text.strip():
            return None
        if text not in self.seen:
            try:
                self.seen[text] = _round(self.parse(text) / self.scale, self.nd)
            except ValueError:
                self.seen[text] = None
        return self.seen[text]


def _visit_dates(log) -> dict[tuple[str, str], str]:
    """(site name, visit name) -> visit date (YYYY-MM-DD)."""
    sites = {s.id: s.name for s in log.sites()}
    out = {}
    for v in log.visits():
        try:
            day = _dt.datetime.fromisoformat(v.started_at).date().isoformat()
        except (TypeError, ValueError):
            day = ""
        out[(sites.get(v.site_id, ""), v.name)] = day
    return out


def _action(label: object) -> int | None:
    if label in ACTIONS:
        return ACTIONS.index(label)
    if isinstance(label, str) and label.isdigit():
        return int(label)
    return None


def rows(log, units: str = "us", visit_id: str | None = None) -> tuple[list[str], Iterator[dict]]:
    """(header, iterator of one dict per current post in header order), from the log's streamed
    export (store: Log.export_iter)."""
    from fieldcheck import units as u

    cols = columns(units, log.record_columns())
    us = units == "us"
    height = _Reader(u.parse_length, u.IN_MM if us else 1.0, 2 if us else 0)
    load = _Reader(u.parse_force, LBF if us else 1000.0, 0 if us else 2)
    fscale, fnd, f = (LBF, 0, "lbf") if us else (1000.0, 2, "kN")
    dates = _visit_dates(log)
    _, src = log.export_iter(visit_id, record_columns=False)  # the columns are fixed here

    def gen() -> Iterator[dict]:
        for r in src:
            row = {c: r.get(c, "") for c in cols}
            row[UNIT_COLUMNS[units]["height"]] = height(r.get("height"))
            row[UNIT_COLUMNS[units]["load"]] = load(r.get("load"))
            day = dates.get((r.get("site", ""), r.get("visit", "")), "")
            row["visit_date"] = day
            act = _action(r.get("action"))
            ratio = r.get("ratio")
            if act is None:
                state, act_text = "not rated", ""
            elif act == NOT_RATED:
                state, act_text = "not rated: load missing", ACTIONS[NOT_RATED]
            else:
                state, act_text = "rated", ACTIONS[act]
            row["state"], row["action"] = state, act_text
            due = ""
            if act is not None and act < len(DUE_DAYS) and DUE_DAYS[act] is not None and day:
                due = (_dt.date.fromisoformat(day) + _dt.timedelta(days=DUE_DAYS[act])).isoformat()
            row["due_date"] = due
            row["ratio"] = _round(ratio, 3) if isinstance(ratio, float | int) else None
            for k in ("capacity", "demand"):
                kn = r.get(f"{k}_kN")
                row[f"{k}_{f}"] = None if kn is None else _round(kn * 1000.0 / fscale, fnd)
            row["schema_version"] = SCHEMA_VERSION
            yield row

    return cols, gen()


def write_csv(out, cols: list[str], data: Iterable[dict], *, bom: bool = False, progress=None):
    """CSV, streamed; formula-like text neutralised; None written empty. Returns rows written."""
    if bom:
        out.write("\ufeff")
    w = csv.writer(out)
    w.writerow(cols)
    n = 0
    for row in data:
        w.writerow(["" if v is None else neutralise(v) for v in row.values()])
        n += 1
        if progress is not None and n % 1000 == 0:
            progress(n, 0, "exporting")
    return n


def write_json(out, cols: list[str], data: Iterable[dict], *, units: str = "us", progress=None):
    """The JSON form (see the module docstring), one post per line, streamed."""
    head = {"schema": SCHEMA, "schema_version": SCHEMA_VERSION, "units": units, "columns": cols}
    out.write(json.dumps(head, ensure_ascii=False)[:-1] + ',\n "posts": [')
    n = 0
    for row in data:
        clean = {k: (None if v == "" else v) for k, v in row.items()}
        out.write(("\n  " if n == 0 else ",\n  ") + json.dumps(clean, ensure_ascii=False))
        n += 1
        if progress is not None and n % 1000 == 0:
            progress(n, 0, "exporting")
    out.write("\n ]\n}\n")
    return n
