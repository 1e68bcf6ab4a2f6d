"""The interface driven with Textual's Pilot: open the demo, add a post by typing, watch the rating
follow the height, save, reopen and find it with its history; bad values keep the form; 80 x 24.
"""

from __future__ import annotations

import sqlite3
from pathlib import Path

import pytest
from textual.widgets import DataTable, Input, Static

from fieldcheck.tui.app import FieldcheckApp


async def settle(app, pilot) -> None:
    for _ in range(3):
        await pilot.pause()
        await app.workers.wait_for_complete()
    await pilot.pause()


def text(app, selector: str) -> str:
    return str(app.screen.query_one(selector, Static).content)


async def type_into(app, pilot, field: str, value: str) -> None:
    inp = app.screen.query_one(f"#f-{field}", Input)
    inp.focus()
    await pilot.pause()
    inp.value = ""
    await pilot.press(*value)
    await pilot.pause()


@pytest.fixture
def db(tmp_path: Path) -> Path:
    return tmp_path / "survey.fieldcheck"


async def test_first_screen_lists_the_demo_with_counts(db: Path) -> None:
    app = FieldcheckApp(db=db)
    async with app.run_test(size=(100, 30)) as pilot:
        await settle(app, pilot)
        table = app.screen.query_one("#visits", DataTable)
        assert table.row_count == 2  # the demo survey has two visits  # store/demo.py
        rows = [table.get_row_at(i) for i in range(table.row_count)]
        assert all(row[0] == "14 Alder Row" for row in rows)
        total = sum(int(r[-2]) for r in rows)
        assert total == 9  # posts counted by action add up to the posts  # store/demo.py


async def test_add_a_post_by_typing_rating_follows_height_save_reopen_history(db: Path) -> None:
    app = FieldcheckApp(db=db)
    async with app.run_test(size=(120, 40)) as pilot:
        await settle(app, pilot)
        await pilot.press("enter")  # open the first visit
        await settle(app, pilot)
        assert type(app.screen).__name__ == "VisitScreen"
        before = app.screen.query_one("#posts", DataTable).row_count
        await pilot.press("ctrl+n")
        await settle(app, pilot)
        editor = app.screen
        assert type(editor).__name__ == "PostEditor"
        await type_into(app, pilot, "tag", "T9")
        await type_into(app, pilot, "size", "4x4")
        await type_into(app, pilot, "species", "douglas-fir-larch")
        await type_into(app, pilot, "grade", "no2")
        await type_into(app, pilot, "load", "3000 lbf")
        await type_into(app, pilot, "height", "6ft")
        short = editor.summary["allowable_load_kN"]
        ratio_short = editor.summary["demand_capacity_ratio"]
        assert "Capacity" in text(app, "#rating-head")
        await type_into(app, pilot, "height", "12ft")
        tall = editor.summary["allowable_load_kN"]
        # a taller post buckles sooner: less capacity, higher ratio  # NDS 2018 §3.7.1
        assert tall < short
        assert editor.summary["demand_capacity_ratio"] > ratio_short
        assert "12ft" in editor.record["height"]
        await pilot.press("ctrl+s")
        await settle(app, pilot)
        assert editor.member_id is not None
        assert not editor.dirty
        member = editor.member_id
        await pilot.press("escape")
        await settle(app, pilot)
        table = app.screen.query_one("#posts", DataTable)
        assert table.row_count == before + 1
    # the saved revision is on disk  (reopened with plain sqlite3)
    con = sqlite3.connect(db)
    assert con.execute("select count(*) from sqlite_master").fetchone()[0] > 0
    con.close()

    app = FieldcheckApp(db=db)
    async with app.run_test(size=(120, 40)) as pilot:
        await settle(app, pilot)
        await pilot.press("enter")
        await settle(app, pilot)
        screen = app.screen
        screen.query_one("#filter", Input).focus()
        await pilot.press(*"T9")
        await settle(app, pilot)
        table = screen.query_one("#posts", DataTable)
        assert table.row_count == 1
        assert table.get_row_at(0)[0] == "T9"
        screen.query_one("#posts").focus()
        await pilot.press("o")
        await settle(app, pilot)
        editor = app.screen
        assert editor.member_id == member
        assert editor.record["height"] == "12ft"
        await type_into(app, pilot, "height", "10ft")
        await pilot.press("ctrl+s")
        await settle(app, pilot)
        await pilot.press("f6")
        await settle(app, pilot)
        history = text(app, "#history-panel")
        assert "2 revisions" in history  # saving appends a revision; nothing is overwritten
        assert "height = 10ft" in history


async def test_bad_value_shows_its_message_and_keeps_the_form(db: Path) -> None:
    app = FieldcheckApp(db=db)
    async with app.run_test(size=(120, 40)) as pilot:
        await settle(app, pilot)
        await pilot.press("enter")
        await settle(app, pilot)
        await pilot.press("o")
        await settle(app, pilot)
        editor = app.screen
        before = dict(editor.record)
        good_summary = editor.summary
        await type_into(app, pilot, "height", "tall")
        msg = str(editor.query_one("#m-height", Static).content)
        assert "height" in msg.lower()  # the field's own message  # records/columns.py
        assert editor.query_one("#m-height").display
        assert editor.query_one("#f-height", Input).has_class("-bad")
        # everything else is kept as typed
        for name, value in before.items():
            if name != "height":
                assert editor.query_one(f"#f-{name}", Input).value == value
        assert "NOT RATED" in text(app, "#rating-head")
        assert editor.summary is good_summary  # the last good rating stays beside it
        await pilot.press("ctrl+z")  # undo the last change
        await settle(app, pilot)
        assert editor.query_one("#f-height", Input).value == before["height"]
        assert "height" not in editor.errors


async def test_leaving_with_changes_keeps_a_draft(db: Path) -> None:
    app = FieldcheckApp(db=db)
    async with app.run_test(size=(120, 40)) as pilot:
        await settle(app, pilot)
        await pilot.press("enter")
        await settle(app, pilot)
        await pilot.press("o")
        await settle(app, pilot)
        editor = app.screen
        member = editor.member_id
        await type_into(app, pilot, "notes", "checked again")
        await pilot.press("escape")
        await settle(app, pilot)
        assert type(app.screen).__name__ == "LeaveDialog"
        await pilot.press("k")  # keep as draft
        await settle(app, pilot)
        assert type(app.screen).__name__ == "VisitScreen"
        assert app.drafts[member]["notes"] == "checked again"
        await pilot.press("o")
        await settle(app, pilot)
        assert app.screen.query_one("#f-notes", Input).value == "checked again"


async def test_copy_and_withdraw(db: Path) -> None:
    app = FieldcheckApp(db=db)
    async with app.run_test(size=(120, 40)) as pilot:
        await settle(app, pilot)
        await pilot.press("enter")
        await settle(app, pilot)
        table = app.screen.query_one("#posts", DataTable)
        n = table.row_count
        await pilot.press("c")
        await settle(app, pilot)
        assert table.row_count == n + 1
        await pilot.press("w")
        await settle(app, pilot)
        await pilot.press(*"removed", "enter")
        await settle(app, pilot)
        assert table.row_count == n


async def test_usable_at_80_by_24(db: Path) -> None:
    app = FieldcheckApp(db=db)
    async with app.run_test(size=(80, 24)) as pilot:
        await settle(app, pilot)
        screen = app.screen
        region = screen.region

        def inside(widget) -> bool:
            r = widget.region
            return r.width > 0 and r.height > 0 and region.contains_region(r)

        assert inside(screen.query_one("#visits"))
        await pilot.press("enter")
        await settle(app, pilot)
        table = app.screen.query_one("#posts", DataTable)
        assert inside(table)
        # tag, ratio and action are the first columns: fully visible at 80 columns
        widths = [c.get_render_width(table) for c in list(table.columns.values())[:3]]
        assert sum(widths) < 80
        await pilot.press("o")
        await settle(app, pilot)
        editor = app.screen
        for sel in (
            "#form",
            "#side",
            "#editor-title",
            "#f-tag",
            "#rating-panel-scroll",
            "#rating-head",
        ):
            assert inside(editor.query_one(sel)), sel
        panel = editor.query_one("#rating-head")
        # the head of the rating (action, capacity, demand, ratio, governing) is on screen
        assert panel.region.right <= 80
        assert panel.region.y + 5 <= region.bottom
        await pilot.press("f4")
        await settle(app, pilot)
        plot = editor.query_one("#plot-panel")
        lines = str(plot.content).splitlines()
        assert max(len(s) for s in lines) <= editor.query_one("#side").region.width
        await pilot.press("f1")
        await settle(app, pilot)
        assert type(app.screen).__name__ == "HelpScreen"
        assert any("Keys on this screen" in str(w.content) for w in app.screen.query(Static))


async def test_every_bound_action_is_in_the_command_palette(db: Path) -> None:
    app = FieldcheckApp(db=db)
    async with app.run_test(size=(100, 30)) as pilot:
        await settle(app, pilot)
        await pilot.press("enter")
        await settle(app, pilot)
        titles = {c.title for c in app.get_system_commands(app.screen)}
        for needed in (
            "Open",
            "Add",
            "Copy",
            "Withdraw",
            "Sort",
            "Worst",
            "Filter",
            "Help",
            "Sync",
            "Report",
            "Conflicts",
        ):
            assert needed in titles, needed


async def test_report_and_sync_from_the_interface(db: Path, tmp_path: Path) -> None:
    pytest.importorskip("fieldcheck.report.html")
    pytest.importorskip("fieldcheck.store.sync")
    app = FieldcheckApp(db=db)
    async with app.run_test(size=(100, 30)) as pilot:
        await settle(app, pilot)
        await pilot.press("enter")
        await settle(app, pilot)
        await pilot.press("f10")
        await settle(app, pilot)
        out = tmp_path / "visit.html"
        field = app.screen.query_one("#report-path", Input)
        field.value = str(out)
        field.focus()
        await pilot.press("enter")
        await settle(app, pilot)
        assert out.exists() and out.stat().st_size > 0
        assert "Report written" in app.last_summary
        await pilot.press("escape")
        await settle(app, pilot)
        await pilot.press("f9")
        await settle(app, pilot)
        office = app.screen.query_one("#office", Input)
        office.value = str(tmp_path / "office.fieldcheck")
        office.focus()
        await pilot.press("enter")
        await settle(app, pilot)
        assert app.last_summary and "failed" not in app.last_summary.lower(), app.last_summary
