"""Reference tables from data/*.csv, read once per process.

The wheel ships data/ as fieldcheck/data; a source checkout (or an editable install) reads the
top-level data/ folder.
"""

from __future__ import annotations

import csv
from functools import cache
from pathlib import Path

_PKG = Path(__file__).resolve().parent.parent


@cache
def data_dir() -> Path:
    for cand in (_PKG / "data", _PKG.parent / "data"):
        if cand.is_dir():
            return cand
    raise FileNotFoundError(
        "fieldcheck reference data folder not found (data/ is missing from the install)"
    )


@cache
def table(name: str) -> tuple[dict[str, str], ...]:
    """Rows of data/<name>.csv as dicts of strings (lines starting with # are comments)."""
    path = data_dir() / f"{name}.csv"
    with path.open(newline="", encoding="utf-8") as fh:
        lines = [ln for ln in fh if not ln.startswith("#") and ln.strip()]
    return tuple(dict(r) for r in csv.DictReader(lines))


@cache
def editions() -> dict[str, str]:
    """{table name: 'edition; edition ...'} for every table, recorded with each stored rating."""
    out: dict[str, str] = {}
    for path in sorted(data_dir().glob("*.csv")):
        eds = sorted({r.get("edition", "") for r in table(path.stem)} - {""})
        out[path.stem] = "; ".join(eds)
    return out
