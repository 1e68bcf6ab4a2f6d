"""The interface driven with Textual's Pilot: the first start on the invented demo, a post typed,
rated live, saved, reopened with its history; clear states; drafts; copy and withdraw; report and
sync from the user's own log."""

from __future__ import annotations

import json

import pytest
from textual.widgets import DataTable, Input, Static


async def test_first_start_opens_on_the_marked_demo_with_help_and_palette(db, ui) -> None:
    app = ui.app(db)
    async with app.run_test(size=(100, 30)) as pilot:
        await ui.settle(app, pilot)
        table = app.screen.query_one("#visits", DataTable)
        assert table.row_count == 2  # the demo survey has two visits  # store/demo.py
        total = sum(int(table.get_row_at(i)[-2]) for i in range(table.row_count))
        assert total == 9  # posts counted by action add up to the posts  # store/demo.py
        banner = app.screen.query_one("#demo-banner", Static)
        assert banner.display and "INVENTED DEMO" in str(banner.content)
        assert "ctrl+n" in str(banner.content)  # the one way to start a real survey
        # the palette lists each command once, none the user cannot use here
        titles = [c.title for c in app.get_system_commands(app.screen)]
        assert len(titles) == len(set(titles)), titles
        for needed in ("Open", "New visit", "Help", "Sync", "Report", "Conflicts", "Units"):
            assert needed in titles, needed
        # F1: about fieldcheck first, then the keys
        await pilot.press("f1")
        await ui.settle(app, pilot)
        helptext = "\n".join(str(w.content) for w in app.screen.query(Static))
        assert helptext.index("fieldcheck") < helptext.index("Keys on this screen")
        assert "screening aid" in helptext
        await pilot.press("escape")
        # F9: the invented demo is never synced
        await pilot.press("f9")
        await ui.settle(app, pilot)
        assert "never synced" in ui.text(app, "#summary")
        assert app.screen.query_one("#office", Input).disabled


@pytest.mark.slow  # a long walkthrough
async def test_add_a_post_typing_fast_rating_follows_height_save_reopen_history(db, ui) -> None:
    app = ui.app(db)
    async with app.run_test(size=(120, 40)) as pilot:
        await ui.open_visit(app, pilot)
        before = app.screen.query_one("#posts", DataTable).row_count
        await pilot.press("ctrl+n")
        await ui.settle(app, pilot)
        editor = app.screen
        assert type(editor).__name__ == "PostEditor"
        assert app.focused is editor.query_one("#f-tag", Input)
        editor.query_one("#f-tag", Input).value = ""
        keys = [*"T9", "enter", "enter", "enter", *"4x4", "enter", *"6ft", "pagedown", "pagedown"]
        keys += [*"doug", "enter", *"no2", "pagedown", "pagedown", *"3000 lbf"]
        ui.burst(app, keys)
        await ui.drain(app, pilot)
        assert editor.record["species"] == "douglas-fir-larch"  # first letters stand for it
        short = editor.summary["allowable_load_kN"]
        ratio_short = editor.summary["demand_capacity_ratio"]
        assert "Capacity" in ui.text(app, "#rating-head")
        await ui.type_into(app, pilot, "height", "12ft")
        tall = editor.summary["allowable_load_kN"]
        # a taller post buckles sooner: less capacity, higher ratio  # NDS 2018 §3.7.1
        assert tall < short and editor.summary["demand_capacity_ratio"] > ratio_short
        await pilot.press("ctrl+s")
        await ui.settle(app, pilot)
        member = editor.member_id
        assert member is not None and not editor.dirty
        await pilot.press("ctrl+s")  # nothing changed: no new revision
        await ui.settle(app, pilot)
        assert len(await app.store.call(lambda log: log.history(member))) == 1
        await pilot.press("escape")
        await ui.settle(app, pilot)
        table = app.screen.query_one("#posts", DataTable)
        assert table.row_count == before + 1
        # the filter's counts match the filtered list
        app.screen.query_one("#filter", Input).focus()
        await pilot.press(*"T9")
        await ui.settle(app, pilot)
        assert table.row_count == 1 and table.get_row_at(0)[0] == "T9"
        status = ui.text(app, "#visit-status")
        assert status.startswith("1 of ") and " 1" in status.split("sorted by")[1]
        app.screen.query_one("#posts").focus()
        await pilot.press("o")
        await ui.settle(app, pilot)
        editor = app.screen
        assert editor.member_id == member and editor.record["height"] == "12ft"
        await ui.type_into(app, pilot, "height", "10ft")
        await pilot.press("ctrl+s")
        await ui.settle(app, pilot)
        await pilot.press("f6")
        await ui.settle(app, pilot)
        history = ui.text(app, "#history-panel")
        assert "2 revisions" in history and "height = 10ft" in history  # nothing overwritten


async def test_clear_states_not_rated_hides_the_old_result_and_load_missing(db, ui) -> None:
    app = ui.app(db)
    async with app.run_test(size=(120, 40)) as pilot:
        await ui.edit_post(app, pilot, "B1")
        editor = app.screen
        before = dict(editor.record)
        assert "Capacity" in ui.text(app, "#rating-head")
        await ui.type_into(app, pilot, "height", "tall")
        msg = str(editor.query_one("#m-height", Static).content)
        assert "height" in msg.lower() and "--" not in msg  # the field's own words
        assert editor.query_one("#f-height", Input).has_class("-bad")
        for name, value in before.items():  # everything else kept as typed
            if name != "height":
                assert editor.query_one(f"#f-{name}", Input).value == value
        head = ui.text(app, "#rating-head")
        assert "NOT RATED" in head
        assert "lbf" not in head and "kN" not in head  # the old result is hidden
        assert "✓" not in ui.text(app, "#rating-checks")
        await pilot.press("ctrl+z")  # undo the last change
        await ui.settle(app, pilot)
        assert editor.query_one("#f-height", Input).value == before["height"]
        assert "height" not in editor.errors
        await ui.type_into(app, pilot, "load", "")  # no load: not rated, never "no action"
        await ui.settle(app, pilot, 0.2)
        head = ui.text(app, "#rating-head")
        assert "load missing" in head and "no action" not in head


@pytest.mark.slow  # waits for the drafts timer and restarts the app
async def test_a_draft_reaches_disk_while_typing_and_survives_leaving_and_a_restart(db, ui) -> None:
    drafts_file = db.with_suffix(".drafts.json")
    app = ui.app(db)
    async with app.run_test(size=(120, 40)) as pilot:
        await ui.open_post(app, pilot, "B1")
        member = app.screen.member_id
        await ui.type_into(app, pilot, "notes", "loose shim")
        await ui.settle(app, pilot, 1.2)  # one second after the last key, on disk
        on_disk = json.loads(drafts_file.read_text(encoding="utf-8"))
        assert on_disk[member]["notes"] == "loose shim"
        assert not list(db.parent.glob("*.tmp"))  # written through a renamed temporary file
        await pilot.press("escape")
        await ui.settle(app, pilot)
        assert type(app.screen).__name__ == "LeaveDialog"
        await pilot.press("k")  # keep as draft
        await ui.settle(app, pilot)
        assert type(app.screen).__name__ == "VisitScreen"
    app = ui.app(db)
    async with app.run_test(size=(120, 40)) as pilot:
        await ui.open_post(app, pilot, "B1")
        assert app.screen.query_one("#f-notes", Input).value == "loose shim"
        assert app.screen.dirty  # a draft, not saved: ctrl+s saves it


async def test_filter_counts_copy_withdraw_and_no_revision_when_nothing_changed(db, ui) -> None:
    app = ui.app(db)
    async with app.run_test(size=(100, 30)) as pilot:
        await ui.open_visit(app, pilot)
        table = app.screen.query_one("#posts", DataTable)
        n = table.row_count
        app.screen.query_one("#filter", Input).focus()
        await pilot.press(*"B3")
        await ui.settle(app, pilot)
        status = ui.text(app, "#visit-status")
        assert table.row_count == 1 and status.startswith(f"1 of {n} posts")
        counts = status.split("sorted by")[1]  # the action counts add up to the rows listed
        assert sum(int(w) for w in counts.replace(".", " ").split() if w.isdigit()) == 1
        await pilot.press("enter")  # the filter done: back to the list
        await pilot.press("o")
        await ui.settle(app, pilot)
        member = app.screen.member_id
        await pilot.press("ctrl+s")  # nothing changed: no new revision
        await ui.settle(app, pilot)
        assert len(await app.store.call(lambda log: log.history(member))) == 1
        await pilot.press("escape")
        await ui.settle(app, pilot)
        app.screen.query_one("#filter", Input).value = ""
        await ui.settle(app, pilot)
        table.focus()
        await pilot.press("c")
        await ui.settle(app, pilot)
        assert table.row_count == n + 1
        await pilot.press("w")
        await ui.settle(app, pilot)
        await pilot.press(*"removed", "enter")
        await ui.settle(app, pilot)
        assert table.row_count == n


@pytest.mark.slow  # writes a report and syncs
async def test_report_and_sync_from_the_users_own_log(own_log, tmp_path, ui) -> None:
    from fieldcheck.store import Log
    from fieldcheck.store.demo import demo_rows

    own_log.parent.mkdir(parents=True)
    with Log.open(own_log) as log:
        site = log.add_site("9 Birch Lane", "9 Birch Lane")
        visit = log.add_visit(site.id, "J. Ortiz", "standard")
        for row in demo_rows()[:3]:
            row.pop("visit")
            log.save_post(visit.id, row)
    app = ui.app(None)  # `fieldcheck` with no --db: the user's log holds a survey, so it opens
    app.store.demo = None
    async with app.run_test(size=(100, 30)) as pilot:
        await ui.open_visit(app, pilot)
        assert not app.store.is_demo and app.store.path == own_log
        await pilot.press("f10")
        await ui.settle(app, pilot)
        out = tmp_path / "visit.html"
        field = app.screen.query_one("#report-path", Input)
        field.value = str(out)
        field.focus()
        await pilot.press("enter")
        await ui.settle(app, pilot)
        assert out.exists() and out.stat().st_size > 0
        assert "Report written" in app.last_summary
        await pilot.press("escape")
        await ui.settle(app, pilot)
        await pilot.press("f9")
        await ui.settle(app, pilot)
        office = app.screen.query_one("#office", Input)
        office.value = str(tmp_path / "office.fieldcheck")
        office.focus()
        await pilot.press("enter")
        await ui.settle(app, pilot)
        summary = app.last_summary
        assert summary.startswith("Sent 1 site, 1 visit, 3 new posts, 3 post records"), summary
        assert "observations" not in summary and "members" not in summary


async def test_an_old_demo_in_the_users_log_is_left_out_and_said_once(own_log, ui) -> None:
    # an older version wrote the demo into the user's own log (unmarked), then the user's survey
    from fieldcheck.store import Log, seed_demo
    from fieldcheck.store.demo_rows import DEMO_KEPT_OUT

    own_log.parent.mkdir(parents=True)
    with Log.open(own_log) as log:
        seed_demo(log)
        with log._write():
            log.db.execute("DELETE FROM meta WHERE key = 'demo'")
        site = log.add_site("9 Birch Lane", "9 Birch Lane")
        log.add_visit(site.id, "J. Ortiz", "standard", name="cellar")
    app = ui.app(None)  # `fieldcheck` with no --db: the user's log holds a survey of theirs
    app.store.demo = None
    async with app.run_test(size=(80, 24)) as pilot:
        await ui.settle(app, pilot)
        assert not app.store.is_demo and app.store.path == own_log
        assert app.screen.query_one("#visits", DataTable).row_count == 1  # cellar only
        said = [n.message for n in app._notifications]
        assert said.count(DEMO_KEPT_OUT) == 1


async def test_untagged_posts_show_the_reference_the_report_names_them_by(own_log, ui) -> None:
    # posts imported without tags: the list shows each one's reference (the end of its id, which
    # the report and `fieldcheck review` use), never one shared placeholder (judgement)
    from textual.widgets import DataTable

    from fieldcheck.store import Log

    own_log.parent.mkdir(parents=True)
    post = {"size": "4x4", "height": "8ft", "species": "dfl", "grade": "no2", "load": "2000lbf"}
    with Log.open(own_log) as log:
        log.import_rows([dict(post) for _ in range(3)], site="9 Birch Lane", visit="cellar")
        refs = {p.ref for p in log.posts()}
    app = ui.app(None)
    app.store.demo = None
    async with app.run_test(size=(100, 30)) as pilot:
        await ui.open_visit(app, pilot)
        table = app.screen.query_one("#posts", DataTable)
        shown = {str(table.get_row_at(i)[0]) for i in range(table.row_count)}
        assert shown == {f"— {r}" for r in refs}
        one = sorted(refs)[1]  # the filter finds a post by its reference, as the report gives it
        await pilot.press("slash", *one)
        await ui.settle(app, pilot)
        assert table.row_count == 1 and str(table.get_row_at(0)[0]) == f"— {one}"


async def test_each_visit_gets_its_own_default_report_file(db, ui) -> None:
    # the demo's two visits were made in the same minute: their ids begin alike, and a default
    # file named by that head made the second visit's report write over the first's (judgement)
    from textual.widgets import Input

    app = ui.app(db)
    paths = []
    async with app.run_test(size=(100, 30)) as pilot:
        for row in (0, 1):
            await ui.open_visit(app, pilot, row)
            await pilot.press("f10")
            await ui.settle(app, pilot)
            paths.append(app.screen.query_one("#report-path", Input).value)
            await pilot.press("escape")
            await ui.settle(app, pilot)
            await pilot.press("escape")
            await ui.settle(app, pilot)
    assert paths[0] != paths[1], paths
