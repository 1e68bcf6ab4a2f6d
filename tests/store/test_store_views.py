"""SQL views in the log, so an office can query the file directly (sqlite3, a spreadsheet's
database link): current posts with their latest rating and record fields, photos."""

from __future__ import annotations

import sqlite3

from fieldcheck.store import Log, seed_demo


def test_current_posts_view_agrees_with_the_store_api(tmp_path):
    path = tmp_path / "v.db"
    with Log.open(path, author="tester") as log:
        seed_demo(log)
        posts = {p.member_id: p for p in log.posts()}
        post = next(iter(posts.values()))
        log.rerate_all()  # a second rating: the view shows the latest
    con = sqlite3.connect(path)
    con.row_factory = sqlite3.Row
    rows = con.execute("SELECT * FROM current_posts").fetchall()
    assert {r["member_id"] for r in rows} == set(posts)  # current, withdrawn left out (demo S6)
    for r in rows:
        p = posts[r["member_id"]]
        assert (r["tag"], r["location"], r["height"]) == (
            p.tag,
            p.location,
            p.record.get("height"),
        )
        assert r["species"] == p.record.get("species")
        assert r["action_label"] in ("no-action", "monitor", "repair-or-brace", "make-safe-now")
        assert abs(r["capacity_kN"] * 1000.0 - p.capacity_n) <= 1e-6 * p.capacity_n
        assert r["visit_date"] and len(r["visit_date"]) == 10
    n_ratings = con.execute(
        "SELECT count(*) FROM ratings WHERE observation_id = ?", [post.observation_id]
    ).fetchone()[0]
    assert n_ratings == 2
    assert (
        con.execute(
            "SELECT count(*) FROM latest_ratings WHERE observation_id = ?", [post.observation_id]
        ).fetchone()[0]
        == 1
    )
    con.close()


def test_photos_view_names_the_post(tmp_path):
    from PIL import Image

    path = tmp_path / "v.db"
    with Log.open(path, author="tester") as log:
        seed_demo(log)
        s4 = next(p for p in log.posts() if p.tag == "S4")
        Image.new("RGB", (20, 10)).save(tmp_path / "p.jpg")
        a = log.attach_photo(s4.observation_id, tmp_path / "p.jpg", "cap crushing")
    con = sqlite3.connect(path)
    row = con.execute("SELECT tag, caption, sha256 FROM photos").fetchone()
    assert row == ("S4", "cap crushing", a.sha256)
    con.close()
