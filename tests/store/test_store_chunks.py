"""The bulk paths work in chunks inside one transaction: chunk boundaries change nothing (rows
numbered across chunks, the same ratings, the same export), and a failure rolls back it all."""

from __future__ import annotations

import pytest

from fieldcheck.store import Log


def _rows(shore, n: int) -> list[dict[str, str]]:
    rows = [{**shore, "tag": f"P{i}", "load": f"{2000 + 100 * i}lbf"} for i in range(n)]
    rows[4]["height"] = "tall"  # refused, in the second chunk of 3
    rows[9]["load"] = "heavy"  # refused, in the fourth
    return rows


def test_chunk_boundaries_change_nothing(tmp_path, shore):
    with (
        Log.open(tmp_path / "a.db", device="dev-a") as a,
        Log.open(tmp_path / "b.db", device="dev-b") as b,
    ):
        ra = a.import_rows(_rows(shore, 11), "S", "V", chunk=3)
        rb = b.import_rows(iter(_rows(shore, 11)), "S", "V")
        assert (ra.imported, ra.read) == (rb.imported, rb.read) == (9, 11)
        assert [(e.row, e.column) for e in ra.errors] == [(4, "height"), (9, "load")]
        assert [(e.row, e.column) for e in ra.errors] == [(e.row, e.column) for e in rb.errors]
        xa, xb = a.rerate_all(chunk=2), b.rerate_all()
        assert (xa.rated, xa.unrated) == (xb.rated, xb.unrated) == (9, 0)
        ca, rows_a = a.export_iter(chunk=2)
        cb, rows_b = b.export_iter()
        keep = [c for c in ca if c not in ("member_id", "observation_id", "revised_at")]
        assert ca == cb
        assert [[r[c] for c in keep] for r in rows_a] == [[r[c] for c in keep] for r in rows_b]


def test_a_failure_in_a_later_chunk_leaves_the_log_as_it_was(tmp_path, shore):
    def rows():
        yield from _rows(shore, 11)
        raise OSError("the file went away")

    with Log.open(tmp_path / "a.db") as log:
        with pytest.raises(OSError):
            log.import_rows(rows(), "S", "V", chunk=2)
        assert log.posts() == [] and log.sites() == []


def test_every_chunk_is_cleaned_alike(tmp_path, shore):
    # the rows as a caller hands them (not kept): blank cells and the export's own columns are
    # left out of the stored record in every chunk, not in the first one only
    rows = [{**shore, "tag": f"P{i}", "notes": " ", "ratio": "0.5"} for i in range(5)]
    with Log.open(tmp_path / "a.db") as log:
        log.import_rows(rows, "S", "V", chunk=2)
        stored = [p.record for p in log.posts()]
    assert len(stored) == 5
    assert all("notes" not in r and "ratio" not in r for r in stored), stored
