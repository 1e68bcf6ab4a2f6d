"""The office export: fixed documented columns with a schema version, numbers with their unit in
the header beside the text as typed, the due date, rounding, formula-safe CSV, optional BOM."""

from __future__ import annotations

import csv
import datetime as dt
import io
import json

from fieldcheck.cli import main
from fieldcheck.engine.result import DUE_DAYS
from fieldcheck.records import COLUMNS
from fieldcheck.report import export_format as ef
from fieldcheck.store import Log


def _csv(capsys, argv) -> list[dict]:
    assert main(argv) == 0
    return list(csv.DictReader(io.StringIO(capsys.readouterr().out)))


def test_the_header_is_the_same_whatever_the_data(demo_log, empty_log, capsys):
    demo = _csv(capsys, ["export", "--db", str(demo_log.path)])
    assert main(["export", "--db", str(empty_log.path)]) == 0
    header = capsys.readouterr().out.splitlines()[0]
    assert header.split(",") == list(demo[0]) == ef.columns("us", COLUMNS)
    metric = ef.columns("metric", COLUMNS)
    assert len(metric) == len(ef.columns("us", COLUMNS))
    assert metric[metric.index("height") + 1] == "height_mm"
    assert metric[metric.index("load") + 1] == "load_kN"
    assert {"capacity_kN", "demand_kN"} <= set(metric)
    assert all(r["schema_version"] == str(ef.SCHEMA_VERSION) for r in demo)


def test_numbers_beside_the_text_and_the_due_date(demo_log, capsys):
    rows = {r["tag"]: r for r in _csv(capsys, ["export", "--db", str(demo_log.path)])}
    b1 = rows["B1"]
    assert (b1["height"], b1["height_in"]) == ("7ft 2in", "86.0")  # 7 ft 2 in = 86 in
    assert (b1["load"], b1["load_lbf"]) == ("7000lbf", "7000")
    for r in rows.values():
        assert r["state"] == "rated"
        assert len(r["ratio"].split(".")[-1]) <= 3  # three decimals at most
        assert "." not in r["capacity_lbf"]  # whole pounds
        days = DUE_DAYS[
            ("no-action", "monitor", "repair-or-brace", "make-safe-now").index(r["action"])
        ]
        want = (
            ""
            if days is None
            else (dt.date.fromisoformat(r["visit_date"]) + dt.timedelta(days=days)).isoformat()
        )
        assert r["due_date"] == want, r["tag"]
    metric = {
        r["tag"]: r
        for r in _csv(capsys, ["export", "--db", str(demo_log.path), "--units", "metric"])
    }
    assert metric["B1"]["height_mm"] == "2184"  # 86 in x 25.4 = 2184.4 mm
    assert metric["B1"]["load_kN"] == "31.14"  # 7000 lbf x 4.448 N/lbf


def test_formula_cells_are_written_as_text(empty_log, capsys, tmp_path):
    site = empty_log.add_site("=cmd|' /C calc'!A0")
    v = empty_log.add_visit(site.id, "R. Okafor", name="@SUM(1+1)")
    base = {"size": "4x4", "height": "8ft", "species": "spf", "grade": "no2", "load": "1kip"}
    empty_log.save_post(v.id, {"tag": "+1+1", "location": "-2+3", "notes": "=HYPERLINK(1)", **base})
    empty_log.save_post(v.id, {"tag": "\tTAB", "location": "-5", **base})
    rows = _csv(capsys, ["export", "--db", str(empty_log.path)])
    cells = [c for r in rows for c in r.values()]
    for bad in ("=", "+", "@", "\t"):
        assert not any(c.startswith(bad) for c in cells), bad
    assert rows[0]["tag"] == "'+1+1" and rows[0]["notes"] == "'=HYPERLINK(1)"
    assert rows[0]["site"].startswith("'=") and rows[0]["visit"] == "'@SUM(1+1)"
    assert rows[0]["location"] == "'-2+3"
    assert rows[1]["location"] == "-5"  # a plain number stays a number
    # JSON carries the text as typed (no spreadsheet reads it)
    assert main(["export", "--db", str(empty_log.path), "--format", "json"]) == 0
    data = json.loads(capsys.readouterr().out)
    assert data["posts"][0]["tag"] == "+1+1"


def test_json_has_the_schema_and_numbers_as_numbers(demo_log, capsys):
    assert main(["export", "--db", str(demo_log.path), "--format", "json", "--out", "-"]) == 0
    data = json.loads(capsys.readouterr().out)
    assert (data["schema"], data["schema_version"], data["units"]) == ("fieldcheck-export", 2, "us")
    assert data["columns"] == ef.columns("us", COLUMNS)
    b1 = next(p for p in data["posts"] if p["tag"] == "B1")
    assert b1["height_in"] == 86.0 and b1["load_lbf"] == 7000 and b1["diameter"] is None
    assert list(b1) == data["columns"]


def test_an_office_override_in_force_is_exported_beside_the_rating(empty_log, capsys):
    # judgement: an engineer's override that raises a post's action is what the office's
    # spreadsheet must act on, as the report does (report/model.py): office_action holds it and
    # the due date follows it; action stays the rating's (what was found on site). An override
    # never lowers a rating, and one of a revision since replaced is not in force
    # (store/reviews.py)
    v = empty_log.add_visit(
        empty_log.add_site("S").id, "R. Okafor", name="V", started_at="2026-03-02T09:00:00Z"
    )
    base = {"size": "6x6", "height": "8ft", "species": "douglas-fir-larch", "grade": "no1"}
    base |= {"top": "pinned", "bottom": "pinned", "load": "2000lbf", "duration": "ten-years"}
    base |= {"cap_species": "none", "sill_species": "none"}
    up = empty_log.save_post(v.id, {"tag": "U1", **base})
    down = empty_log.save_post(v.id, {"tag": "D1", **base, "load": "40000lbf"})
    old = empty_log.save_post(v.id, {"tag": "R1", **base})
    empty_log.review_post(up.member_id, "override", "sill crushed on site", "make-safe-now")
    empty_log.review_post(down.member_id, "override", "looked fine", "no-action")
    empty_log.review_post(old.member_id, "override", "split at the cap", "repair-or-brace")
    empty_log.save_post(v.id, {"tag": "R1", **base, "notes": "cap replaced"}, old.member_id)
    rows = {r["tag"]: r for r in _csv(capsys, ["export", "--db", str(empty_log.path)])}
    assert (rows["U1"]["action"], rows["U1"]["office_action"]) == ("no-action", "make-safe-now")
    assert (
        rows["U1"]["due_date"] == (dt.date(2026, 3, 2) + dt.timedelta(days=DUE_DAYS[3])).isoformat()
    )
    assert rows["D1"]["action"] == "make-safe-now" and rows["D1"]["office_action"] == ""
    assert rows["R1"]["office_action"] == ""  # the override was of the revision replaced
    assert main(["export", "--db", str(empty_log.path), "--format", "json"]) == 0
    posts = {p["tag"]: p for p in json.loads(capsys.readouterr().out)["posts"]}
    assert posts["U1"]["office_action"] == "make-safe-now" and posts["D1"]["office_action"] is None
    # Log.export_rows (the store's own flat rows) carries it too, and the first screen's counts
    # count the post under the action in force
    flat = {r["tag"]: r for r in empty_log.export_rows().rows}
    assert flat["U1"]["office_action"] == "make-safe-now" and flat["R1"]["office_action"] == ""
    counts = empty_log.counts_by_action(v.id)
    assert counts["make-safe-now"] == 2 and counts["no-action"] == 1, counts


def test_optional_byte_order_mark(demo_log, tmp_path):
    out = tmp_path / "x.csv"
    assert main(["export", "--db", str(demo_log.path), "--out", str(out), "--bom"]) == 0
    assert out.read_bytes().startswith(b"\xef\xbb\xbftag,")
    assert main(["export", "--db", str(demo_log.path), "--out", str(out)]) == 0
    assert out.read_bytes().startswith(b"tag,")


def test_an_export_imports_again(demo_log, tmp_path):
    out = tmp_path / "x.csv"
    assert main(["export", "--db", str(demo_log.path), "--out", str(out), "--bom"]) == 0
    db = tmp_path / "again.db"
    assert main(["import", "--db", str(db), str(out), "--site", "A", "--visit", "V"]) == 0
    with Log.open(db, readonly=True) as lg:
        assert sorted(p.tag for p in lg.posts()) == sorted(p.tag for p in demo_log.posts())


def test_a_post_with_no_load_says_so(empty_log, capsys):
    # the documented state of a post the engine could not rate for want of a load (module doc)
    v = empty_log.add_visit(empty_log.add_site("S").id, "R. Okafor", name="V")
    base = {"size": "4x4", "height": "8ft", "species": "spf", "grade": "no2"}
    empty_log.save_post(v.id, {"tag": "L0", **base, "load": ""}, allow_errors=True)
    empty_log.save_post(v.id, {"tag": "L1", **base, "load": "1kip"})
    rows = {r["tag"]: r for r in _csv(capsys, ["export", "--db", str(empty_log.path)])}
    assert (rows["L0"]["state"], rows["L0"]["action"]) == ("not rated: load missing", "not-rated")
    assert rows["L0"]["due_date"] == "" and rows["L0"]["ratio"] == ""
    assert rows["L1"]["state"] == "rated"


def test_visits_of_the_same_name_keep_their_own_dates(empty_log, capsys):
    # a weekly visit named the same each time: each post's visit date and due date follow the
    # visit it was recorded on, never another visit of that name
    site = empty_log.add_site("S")
    base = {"size": "4x4", "height": "8ft", "species": "spf", "grade": "no2", "load": "9kip"}
    for day, tag in (("2026-01-05", "A"), ("2026-02-02", "B")):
        v = empty_log.add_visit(site.id, "R. Okafor", name="weekly", started_at=f"{day}T09:00:00Z")
        empty_log.save_post(v.id, {"tag": tag, **base})
    rows = {r["tag"]: r for r in _csv(capsys, ["export", "--db", str(empty_log.path)])}
    assert rows["A"]["visit_date"] == "2026-01-05" and rows["B"]["visit_date"] == "2026-02-02"
    for r in rows.values():
        days = DUE_DAYS[
            ("no-action", "monitor", "repair-or-brace", "make-safe-now").index(r["action"])
        ]
        assert days is not None  # 9 kip on a 4x4 at 8 ft is not adequate as found
        want = dt.date.fromisoformat(r["visit_date"]) + dt.timedelta(days=days)
        assert r["due_date"] == want.isoformat()


def test_json_posts_are_what_the_json_module_writes():
    # the JSON writer encodes only the filled cells; each post must still read back exactly as
    # json.dumps writes it (RFC 8259 text, the json module's spacing)
    cols = ["a", "b", "c", "d", "e", "f", "g"]
    data = [
        ["x", None, 1, 2.5, 'é "q" \\ \n\t\u2028', True, [1, "z"]],
        [None] * 7,
        ["", 0, -0.0, 1e300, 12345678901234567890, False, {"k": None}],
    ]
    out = io.StringIO()
    assert ef.write_json(out, cols, [list(r) for r in data]) == 3
    text = out.getvalue()
    for r in data:
        assert json.dumps(dict(zip(cols, r, strict=True)), ensure_ascii=False) in text
    assert json.loads(text)["posts"][0]["e"] == data[0][4]


def test_a_post_with_field_errors_is_not_rated_in_the_action_column_too(empty_log, capsys):
    # judgement: a post saved with a field error has no rating; its action is "not-rated",
    # never blank (a spreadsheet filter on the action would pass a blank as nothing to do)
    v = empty_log.add_visit(empty_log.add_site("S").id, "R. Okafor", name="V")
    base = {"size": "4x4", "height": "8ft", "species": "spf", "grade": "no2", "load": "1kip"}
    empty_log.save_post(v.id, {"tag": "E0", **base, "height": "tall"}, allow_errors=True)
    for fmt in ("csv", "json"):
        if fmt == "csv":
            rows = {r["tag"]: r for r in _csv(capsys, ["export", "--db", str(empty_log.path)])}
        else:
            assert main(["export", "--db", str(empty_log.path), "--format", "json"]) == 0
            rows = {p["tag"]: p for p in json.loads(capsys.readouterr().out)["posts"]}
        assert (rows["E0"]["state"], rows["E0"]["action"]) == ("not rated", "not-rated")
        assert rows["E0"]["due_date"] in ("", None) and rows["E0"]["ratio"] in ("", None)
