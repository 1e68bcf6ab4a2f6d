"""A visit larger than the table's window of rows (visit.WINDOW): the keys reach every post, a
sort keeps the cursor on its post, and a post changed by another program while the list is open
is edited as it now stands, or saved beside that change as a conflict, never over it."""

from __future__ import annotations

from textual.widgets import DataTable

from fieldcheck.store import Log
from fieldcheck.tui.visit import WINDOW

N = WINDOW * 2 + 50  # three windows' worth


def _post(i: int) -> dict[str, str]:
    return {
        "tag": f"P{i:03d}",
        "location": f"bay {i % 7}",
        "size": "4x4",
        "height": f"{7 + i % 4}ft",
        "species": "dfl",
        "grade": "no2",
        "load": f"{1000 + 37 * i}lbf",
    }


def _log(own_log) -> None:
    own_log.parent.mkdir(parents=True)
    with Log.open(own_log) as log:
        log.import_rows([_post(i) for i in range(1, N + 1)], site="9 Birch Lane", visit="cellar")


def _app(own_log, ui):
    """The app on a log of N posts in one visit (no demo)."""
    _log(own_log)
    app = ui.app(None)
    app.store.demo = None
    return app


def _at(screen, table) -> tuple[int, str]:
    """(position in the whole sorted visit, tag) of the cursor."""
    key = str(table.coordinate_to_cell_key(table.cursor_coordinate).row_key.value)
    tag = next(p.tag for p in screen.posts if p.member_id == key)
    return screen.window_start + table.cursor_row, tag


async def _open(app, pilot, ui):
    await ui.open_visit(app, pilot)
    screen = app.screen
    table = screen.query_one("#posts", DataTable)
    screen.sort_by = "tag"
    screen._fill(offset=0)
    await ui.settle(app, pilot)
    table.focus()
    return screen, table


async def test_the_keys_reach_every_post_past_the_first_window(own_log, ui) -> None:
    # common practice, no source: a list of any length is walked by the arrow and page keys
    app = _app(own_log, ui)
    async with app.run_test(size=(100, 30)) as pilot:
        screen, table = await _open(app, pilot, ui)
        table.move_cursor(row=WINDOW - 3)
        await ui.settle(app, pilot)
        for step in range(6):  # across the window's edge, one post at a time
            await pilot.press("down")
            await ui.settle(app, pilot)
            assert _at(screen, table) == (WINDOW - 2 + step, f"P{WINDOW - 1 + step:03d}")
        await pilot.press("ctrl+end")  # the last post of the visit, not of the window
        await ui.settle(app, pilot)
        assert _at(screen, table) == (N - 1, f"P{N:03d}")
        await pilot.press("ctrl+home")
        await ui.settle(app, pilot)
        assert _at(screen, table) == (0, "P001")
        seen = 0
        for _ in range(200):  # page down to the end: always forward
            await pilot.press("pagedown")
            await ui.settle(app, pilot)
            pos, tag = _at(screen, table)
            assert pos >= seen and tag == f"P{pos + 1:03d}"
            seen = pos
            if pos == N - 1:
                break
        assert seen == N - 1


async def test_a_sort_keeps_the_cursor_on_its_post_beyond_the_first_window(own_log, ui) -> None:
    app = _app(own_log, ui)
    async with app.run_test(size=(100, 30)) as pilot:
        screen, table = await _open(app, pilot, ui)
        screen._fill(offset=WINDOW)
        table.move_cursor(row=37)
        await ui.settle(app, pilot)
        _, tag = _at(screen, table)
        for _ in range(len(("worst", "tag", "location", "action", "height"))):
            await pilot.press("s")
            await ui.settle(app, pilot)
            assert _at(screen, table)[1] == tag, screen.sort_by


async def test_a_post_changed_elsewhere_is_opened_as_it_stands_and_never_saved_over(
    own_log, ui
) -> None:
    # judgement: a change made by another program (the office, a sync) while the list is open
    # is never written over in silence; two revisions made apart are both kept as a conflict
    app = _app(own_log, ui)
    with Log.open(own_log) as log:
        p5 = next(p for p in log.posts() if p.tag == "P005")
    async with app.run_test(size=(100, 30)) as pilot:
        _, table = await _open(app, pilot, ui)
        with Log.open(own_log, author="office-pc") as other:  # while the list is open
            other.save_post(p5.visit_id, {**p5.record, "load": "9000lbf"}, p5.member_id)
        table.move_cursor(row=4)
        await ui.settle(app, pilot)
        await pilot.press("o")
        await ui.settle(app, pilot, 0.2)
        editor = app.screen
        assert type(editor).__name__ == "PostEditor"
        assert editor.record["load"] == "9000lbf"  # the post as it now stands
        # another change while the form is open; then the inspector saves a new height
        with Log.open(own_log, author="office-pc") as other:
            other.save_post(p5.visit_id, {**editor.record, "notes": "wedge loose"}, p5.member_id)
        await ui.type_into(app, pilot, "height", "9ft")
        await pilot.press("ctrl+s")
        await ui.settle(app, pilot)
    with Log.open(own_log, readonly=True) as log:
        assert log.in_conflict(p5.member_id)  # both kept, flagged for the office
        records = [o.record for o in log.history(p5.member_id)]
        assert any(r.get("notes") == "wedge loose" for r in records)
        mine = [r for r in records if r.get("height") == "9ft"]
        assert mine and "notes" not in mine[0] and mine[0]["load"] == "9000lbf"
