"""The office view: `fieldcheck --db postgresql://...` opens the review queue of the hub (posts
awaiting review first, every site), a review made there reaches the field log, and the field's
post editor shows "reviewed by …, on …" with the engineer's instruction."""

from __future__ import annotations

from pathlib import Path

import psycopg
import pytest
from textual.widgets import DataTable, Input, Static

from fieldcheck.store import Log
from fieldcheck.store.sync import sync
from fieldcheck.tui.app import FieldcheckApp

pytestmark = pytest.mark.slow  # a real server and the interface


async def _settle(app, pilot) -> None:
    for _ in range(4):
        await pilot.pause()
        await app.workers.wait_for_complete()
    await pilot.pause()


async def test_office_view_reviews_reach_the_field(tmp_path, hub_url, shore, monkeypatch):
    monkeypatch.setenv("FIELDCHECK_HUB_MIRRORS", str(tmp_path / "mirrors"))
    field = tmp_path / "ann.db"
    with Log.open(field, author="ann", device="dev-ann") as log:
        v = log.add_visit(log.add_site("Mill Lane").id, "ann")
        weak = log.save_post(v.id, dict(shore, tag="WEAK", height="14ft", load="9000lbf"))
        log.save_post(v.id, dict(shore, tag="OK"))
        log.review_post(
            weak.member_id, "note", "photo of the cap attached"
        )  # a note: still waiting
        sync(log, hub_url)
    app = FieldcheckApp(db=hub_url)
    async with app.run_test(size=(120, 30)) as pilot:
        await _settle(app, pilot)
        table = app.screen.query_one("#review-queue", DataTable)
        assert table.row_count == 2
        first = table.coordinate_to_cell_key((0, 0)).row_key.value
        assert first == weak.member_id  # awaiting review and worst first
        await pilot.press("r")
        await _settle(app, pilot)
        await pilot.press(*"add a second shore")
        await pilot.press("enter")
        await _settle(app, pilot)
        # the reviewed post moves below those still waiting; the cursor stays on the next one
        assert table.get_cell(weak.member_id, "review") == "remedy required"
        assert table.coordinate_to_cell_key((0, 0)).row_key.value != weak.member_id
        # F9 syncs the office view with the hub it was opened on (the URL, never a folder)
        await pilot.press("f9")
        await _settle(app, pilot)
        app.screen.query_one("#office", Input).focus()
        await pilot.press("enter")
        await _settle(app, pilot)
        await pilot.pause(0.5)
        await _settle(app, pilot)
        with psycopg.connect(hub_url) as conn:
            kinds = [r[0] for r in conn.execute("SELECT kind FROM fieldcheck.reviews")]
        assert sorted(kinds) == ["note", "require-remedy"]
        assert not any(p.name.startswith("postgres") for p in Path.cwd().iterdir())
        await pilot.press("escape")
    # quitting sent the review to the hub; the inspector's next sync takes it back
    with Log.open(field) as log:
        assert sync(log, hub_url).received.get("reviews") == 1
        assert log.review_state(weak.member_id).instruction == "add a second shore"
    field_app = FieldcheckApp(db=field)
    async with field_app.run_test(size=(120, 30)) as pilot:
        await _settle(field_app, pilot)
        from fieldcheck.tui.editor import PostEditor

        with Log.open(field, readonly=True) as log:
            p = next(x for x in log.posts() if x.tag == "WEAK")
        field_app.push_screen(PostEditor(p.visit_id, p.member_id, dict(p.record), tag="WEAK"))
        await _settle(field_app, pilot)
        line = str(field_app.screen.query_one("#review-line", Static).content)
        assert "reviewed by fcadmin, on " in line and "add a second shore" in line
