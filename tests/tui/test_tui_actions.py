"""The interface driven with Textual's Pilot, part two: applying a remedy, switching units, open
conflicts from a real sync, a new visit, drafts kept on disk while typing, the footer at 80 x 24.
"""

from __future__ import annotations

import json
from pathlib import Path

import pytest
from textual.widgets import DataTable, Footer, Input, Static

from fieldcheck.tui.app import FieldcheckApp


async def settle(app, pilot, delay: float = 0.0) -> None:
    if delay:
        await pilot.pause(delay)
    for _ in range(3):
        await pilot.pause()
        await app.workers.wait_for_complete()
    await pilot.pause()


def text(app, selector: str) -> str:
    return str(app.screen.query_one(selector, Static).content)


async def open_post(app, pilot, tag: str) -> None:
    """From the first screen: open the visit holding ``tag`` and the post itself."""
    await settle(app, pilot)
    table = app.screen.query_one("#visits", DataTable)
    for row in range(table.row_count):
        table.move_cursor(row=row)
        await pilot.press("enter")
        await settle(app, pilot)
        posts = app.screen.query_one("#posts", DataTable)
        tags = [str(posts.get_row_at(i)[0]).lstrip("✎ ") for i in range(posts.row_count)]
        if tag in tags:
            posts.move_cursor(row=tags.index(tag))
            posts.focus()
            await pilot.press("o")
            await settle(app, pilot, 0.3)  # the full summary (remedies) follows a pause
            assert type(app.screen).__name__ == "PostEditor"
            return
        await pilot.press("escape")
        await settle(app, pilot)
    raise AssertionError(f"no post {tag} in the demo")


@pytest.fixture
def db(tmp_path: Path) -> Path:
    return tmp_path / "survey.fieldcheck"


async def test_ctrl_r_applies_a_remedy_as_a_new_revision_and_the_post_then_passes(db: Path) -> None:
    app = FieldcheckApp(db=db)
    async with app.run_test(size=(120, 40)) as pilot:
        await open_post(app, pilot, "B3")  # bowed, ratio about 1.25  # store/demo.py
        editor = app.screen
        assert editor.summary["demand_capacity_ratio"] > 1.0
        assert editor.summary["remedies"], "the engine offers a remedy for a failing post"
        await pilot.press("f5")
        await settle(app, pilot)
        assert editor.query_one("#remedy-list").option_count == len(editor.summary["remedies"])
        first = editor.summary["remedies"][0]["record_changes"]
        await pilot.press("ctrl+r")
        await settle(app, pilot, 0.3)
        assert not editor.dirty  # saved
        for name, value in first.items():
            assert editor.saved_record.get(name, "") == str(value)
        # the post now passes  # remedies.py: a remedy is offered only if it makes the post pass
        assert editor.summary["demand_capacity_ratio"] <= 1.0
        member = editor.member_id
        hist = await app.store.call(lambda log: log.history(member))
        assert len(hist) == 2  # a new revision; the first kept
        post = next(
            p for p in await app.store.call(lambda log: log.posts()) if p.member_id == member
        )
        assert post.ratio is not None and post.ratio <= 1.0
        # the remedy's changed field is on the form, even if its section was closed
        for name, value in first.items():
            if str(value):
                assert editor.query_one(f"#f-{name}", Input).value == str(value)


async def test_f8_switches_the_displayed_units(db: Path) -> None:
    app = FieldcheckApp(db=db, units="us")
    async with app.run_test(size=(120, 40)) as pilot:
        await open_post(app, pilot, "B1")
        head = text(app, "#rating-head")
        assert "lbf" in head and "kN" not in head
        await pilot.press("f8")
        await settle(app, pilot)
        assert app.units == "metric"
        head = text(app, "#rating-head")
        assert "kN" in head and "lbf" not in head
        await pilot.press("escape")  # the visit table follows too
        await settle(app, pilot)
        table = app.screen.query_one("#posts", DataTable)
        loads = [str(table.get_row_at(i)[-1]) for i in range(table.row_count)]
        assert any("kN" in s for s in loads) and not any("lbf" in s for s in loads)
        await pilot.press("f8")
        await settle(app, pilot)
        loads = [str(table.get_row_at(i)[-1]) for i in range(table.row_count)]
        assert any("lbf" in s for s in loads)


async def test_conflicts_screen_lists_a_post_revised_in_two_places(
    db: Path, tmp_path: Path
) -> None:
    pytest.importorskip("fieldcheck.store.sync")
    from fieldcheck.store import Log, seed_demo
    from fieldcheck.store.sync import sync

    office = tmp_path / "office.fieldcheck"
    field = Log.open(db)
    seed_demo(field)
    visit = field.visits()[0]
    post = next(p for p in field.posts(visit.id) if p.tag == "B1")
    sync(field, office)
    other = Log.open(office)  # the office revises B1 ...
    other.save_post(
        visit.id,
        {**post.record, "notes": "office: re-measured 7ft 1in"},
        post.member_id,
        allow_errors=True,
    )
    other.close()
    # ... and so does the field, without seeing it; the next sync brings both together
    field.save_post(
        visit.id,
        {**post.record, "notes": "field: shimmed at the top"},
        post.member_id,
        allow_errors=True,
    )
    sync(field, office)
    assert field.conflicts() == [post.member_id]  # store/sync.py: kept, never resolved silently
    field.close()

    app = FieldcheckApp(db=db)
    async with app.run_test(size=(100, 30)) as pilot:
        await settle(app, pilot)
        assert "⚡ 1 conflict" in text(app, "#sites-status")
        await pilot.press("f7")
        await settle(app, pilot)
        assert type(app.screen).__name__ == "ConflictsScreen"
        listing = text(app, "#conflicts-list")
        assert "⚡ 1 post" in listing
        assert "B1" in listing and "3 revisions" in listing
        await pilot.press("escape")
        await settle(app, pilot)
        assert type(app.screen).__name__ == "SitesScreen"


async def test_new_visit_dialog_makes_a_visit_and_opens_it(db: Path) -> None:
    app = FieldcheckApp(db=db)
    async with app.run_test(size=(100, 30)) as pilot:
        await settle(app, pilot)
        before = app.screen.query_one("#visits", DataTable).row_count
        await pilot.press("ctrl+n")
        await settle(app, pilot)
        assert type(app.screen).__name__ == "NewVisitDialog"
        await pilot.press(*"9 Birch Lane", "enter")  # Enter moves on to the visit name
        await settle(app, pilot)
        assert app.screen.focused is app.screen.query_one("#visit", Input)
        await pilot.press("enter")  # both names are needed: nothing made yet
        await settle(app, pilot)
        assert type(app.screen).__name__ == "NewVisitDialog"
        await pilot.press(*"reshoring day 1", "enter")
        await settle(app, pilot)
        assert type(app.screen).__name__ == "VisitScreen"
        title = text(app, "#visit-title")
        assert "9 Birch Lane" in title and "reshoring day 1" in title
        assert app.screen.query_one("#posts", DataTable).row_count == 0
        await pilot.press("escape")
        await settle(app, pilot)
        table = app.screen.query_one("#visits", DataTable)
        assert table.row_count == before + 1
        # Esc cancels without making anything
        await pilot.press("ctrl+n")
        await settle(app, pilot)
        await pilot.press("escape")
        await settle(app, pilot)
        assert type(app.screen).__name__ == "SitesScreen"
        assert table.row_count == before + 1


async def test_a_draft_reaches_disk_a_second_after_typing_and_survives_a_restart(db: Path) -> None:
    drafts_file = db.with_suffix(".drafts.json")
    app = FieldcheckApp(db=db)
    async with app.run_test(size=(120, 40)) as pilot:
        await open_post(app, pilot, "B1")
        member = app.screen.member_id
        inp = app.screen.query_one("#f-notes", Input)
        inp.focus()
        await pilot.pause()
        inp.value = ""
        await pilot.press(*"loose shim")
        await settle(app, pilot, 1.3)  # one second after the last key, on disk
        # read while the app still runs: what a crash at this moment would leave
        on_disk = json.loads(drafts_file.read_text(encoding="utf-8"))
        assert on_disk[member]["notes"] == "loose shim"
        assert not list(db.parent.glob("*.tmp"))  # written through a renamed temporary file
    app = FieldcheckApp(db=db)
    async with app.run_test(size=(120, 40)) as pilot:
        await open_post(app, pilot, "B1")
        assert app.screen.query_one("#f-notes", Input).value == "loose shim"
        assert app.screen.dirty  # a draft, not saved: ctrl+s saves it


def footer_keys(app) -> dict[str, str]:
    """Footer keys drawn in full and not under the palette key docked at the right."""
    footer = app.screen.query_one(Footer)
    keys = list(footer.query("FooterKey"))
    palette = [k for k in keys if k.action == "command_palette"]
    limit = min([k.region.x for k in palette] + [app.size.width])
    return {
        k.description: k.key_display or k.key
        for k in keys
        if k.region.width > 0 and k.region.right <= limit
    }


async def test_footer_at_80_by_24_shows_the_main_keys_of_each_screen(db: Path) -> None:
    app = FieldcheckApp(db=db)
    async with app.run_test(size=(80, 24)) as pilot:
        await settle(app, pilot)
        shown = footer_keys(app)
        for needed in ("Open", "New visit", "Help"):
            assert needed in shown, (needed, shown)
        await open_post(app, pilot, "B1")
        shown = footer_keys(app)
        for needed in ("Save", "Back", "Help", "Undo"):
            assert needed in shown, (needed, shown)
        await pilot.press("escape")
        await settle(app, pilot)
        assert type(app.screen).__name__ == "VisitScreen"
        shown = footer_keys(app)
        for needed in ("Open", "Add", "Back", "Help"):
            assert needed in shown, (needed, shown)
        # every key, shown or not, is in the help screen
        await pilot.press("f1")
        await settle(app, pilot)
        helptext = "\n".join(str(w.content) for w in app.screen.query(Static))
        for word in (
            "Copy",
            "Withdraw",
            "Sort",
            "Worst",
            "Filter",
            "Sync",
            "Report",
            "Units",
            "Conflicts",
        ):
            assert word in helptext, word


async def test_closed_sections_are_built_when_opened_and_validate_like_the_rest(db: Path) -> None:
    from textual.widgets._collapsible import CollapsibleTitle

    from fieldcheck.tui.form import FieldGroup

    app = FieldcheckApp(db=db)
    async with app.run_test(size=(120, 40)) as pilot:
        await settle(app, pilot)
        await pilot.press("enter")
        await settle(app, pilot)
        await pilot.press("ctrl+n")
        await settle(app, pilot)
        editor = app.screen
        for name, value in (
            ("size", "4x4"),
            ("height", "8ft"),
            ("species", "spf"),
            ("grade", "no2"),
            ("load", "2000 lbf"),
        ):
            inp = editor.query_one(f"#f-{name}", Input)
            inp.focus()
            await pilot.pause()
            await pilot.press(*value)
        await settle(app, pilot, 0.3)
        assert not editor.stale and editor.summary is not None
        group = editor.query_one("#g-condition", FieldGroup)
        assert group.collapsed and not group.query(Input)  # nothing built while closed
        group.query_one(CollapsibleTitle).focus()
        await pilot.press("enter")
        await settle(app, pilot)
        assert editor.query_one("#f-moisture", Input)
        more = editor.query_one("#more-condition", FieldGroup)
        assert more.collapsed and not more.query(Input)
        more.query_one(CollapsibleTitle).focus()
        await pilot.press("enter")
        await settle(app, pilot)
        decay = editor.query_one("#f-decay_wide", Input)
        decay.focus()
        await pilot.pause()
        await pilot.press(*"lots")
        await settle(app, pilot)
        msg = str(editor.query_one("#m-decay_wide", Static).content)
        assert "decay" in msg.lower()  # the field's own message  # records/columns.py
        assert decay.has_class("-bad")
        assert "NOT RATED" in text(app, "#rating-head")
        assert editor.query_one("#f-size", Input).value == "4x4"  # the rest kept
        await pilot.press("ctrl+z")
        await settle(app, pilot)
        assert decay.value == "" and "decay_wide" not in editor.errors
        assert not editor.query_one("#m-decay_wide").display
        assert not editor.stale


async def test_working_and_plot_follow_a_change_made_on_the_rating_pane(db: Path) -> None:
    from fieldcheck.tui import present

    app = FieldcheckApp(db=db)
    async with app.run_test(size=(120, 40)) as pilot:
        await open_post(app, pilot, "B1")
        editor = app.screen
        await pilot.press("f3")
        await settle(app, pilot)
        before = text(app, "#working-panel")
        assert "Working" in before
        await pilot.press("f2")
        await settle(app, pilot)
        inp = editor.query_one("#f-height", Input)
        inp.focus()
        await pilot.pause()
        inp.value = ""
        await pilot.press(*"12ft")
        await settle(app, pilot, 0.3)
        await pilot.press("f3")  # drawn when shown, from the rating of 12ft
        await settle(app, pilot)
        assert text(app, "#working-panel") != before
        await pilot.press("f4")
        await settle(app, pilot)
        height = present.length(float(editor.batch.height_mm[0]), app.units)
        assert f"◆ this post: {height}" in text(app, "#plot-panel")
        inp.focus()  # typing with the plot in front: it follows once typing pauses
        await pilot.pause()
        inp.value = ""
        await pilot.press(*"9ft")
        await settle(app, pilot, 0.3)
        height = present.length(float(editor.batch.height_mm[0]), app.units)
        assert f"◆ this post: {height}" in text(app, "#plot-panel")
