"""Shared set-up for the interface tests: the invented demo seeded once per session and copied per
test, the user's own log pointed into the test's folder, and helpers to settle, read and type."""

from __future__ import annotations

import shutil
from pathlib import Path

import pytest
from textual import events
from textual.widgets import DataTable, Input, Static

from fieldcheck.tui.app import FieldcheckApp


@pytest.fixture(scope="session")
def demo_template(tmp_path_factory) -> Path:
    from fieldcheck.store import Log, seed_demo

    path = tmp_path_factory.mktemp("demo") / "demo-invented.fieldcheck"
    with Log.open(path) as log:
        seed_demo(log)
    return path


@pytest.fixture
def own_log(tmp_path: Path, monkeypatch) -> Path:
    """The user's own survey log (FIELDCHECK_DB), in the test's folder; not made yet."""
    path = tmp_path / "own" / "survey.fieldcheck"
    monkeypatch.setenv("FIELDCHECK_DB", str(path))
    return path


@pytest.fixture
def db(demo_template: Path, tmp_path: Path, own_log: Path) -> Path:
    """A copy of the seeded demo (the file the app opens with demo=True)."""
    dst = tmp_path / "demo-invented.fieldcheck"
    shutil.copyfile(demo_template, dst)
    return dst


def demo_app(db: Path, **kw) -> FieldcheckApp:
    kw.setdefault("demo", True)
    return FieldcheckApp(db=db, **kw)


async def settle(app, pilot, delay: float = 0.0) -> None:
    if delay:
        await pilot.pause(delay)
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


def key_event(key: str) -> events.Key:
    names = {" ": "space", "-": "minus", ".": "full_stop", "/": "slash", "'": "apostrophe"}
    if len(key) == 1:
        return events.Key(names.get(key, key), key)
    return events.Key(key, None)


def burst(app, keys: list[str]) -> None:
    """Post keys to the app as a terminal would when typing fast: no pause between them."""
    for k in keys:
        app.post_message(key_event(k))


async def drain(app, pilot) -> None:
    for _ in range(6):
        await pilot.pause()
    await app.workers.wait_for_complete()
    await pilot.pause()


async def open_visit(app, pilot, row: int = 0) -> None:
    await settle(app, pilot)
    table = app.screen.query_one("#visits", DataTable)
    table.move_cursor(row=row)
    table.focus()
    await pilot.press("enter")
    await settle(app, pilot)


async def open_post(app, pilot, tag: str) -> None:
    """From the first screen: open the visit holding ``tag`` and the post itself."""
    await settle(app, pilot)
    table = app.screen.query_one("#visits", DataTable)
    for row in range(table.row_count):
        await open_visit(app, pilot, row)
        posts = app.screen.query_one("#posts", DataTable)
        tags = [str(posts.get_row_at(i)[0]).lstrip("✎ ") for i in range(posts.row_count)]
        if tag in tags:
            posts.move_cursor(row=tags.index(tag))
            posts.focus()
            await pilot.press("o")
            await settle(app, pilot, 0.2)  # the full summary (remedies) follows a pause
            assert type(app.screen).__name__ == "PostEditor"
            return
        await pilot.press("escape")
        await settle(app, pilot)
        table = app.screen.query_one("#visits", DataTable)
    raise AssertionError(f"no post {tag} in the demo")


@pytest.fixture
def ui():
    """The helpers above, for the test modules (they are not importable as a package)."""
    from types import SimpleNamespace

    return SimpleNamespace(
        settle=settle,
        text=text,
        type_into=type_into,
        burst=burst,
        drain=drain,
        open_visit=open_visit,
        open_post=open_post,
        edit_post=edit_post,
        app=demo_app,
    )


async def edit_post(app, pilot, tag: str) -> None:
    """Open the post editor on ``tag`` of the demo straight away (no list in between)."""
    from fieldcheck.tui.editor import PostEditor
    from fieldcheck.tui.visit import VisitScreen

    await settle(app, pilot)
    post = next(p for p in await app.store.call(lambda log: log.posts()) if p.tag == tag)
    app.push_screen(VisitScreen(post.visit_id))
    app.push_screen(PostEditor(post.visit_id, post.member_id, dict(post.record), tag=post.tag))
    await settle(app, pilot, 0.2)  # the full summary (remedies) follows a pause
    assert type(app.screen).__name__ == "PostEditor"
