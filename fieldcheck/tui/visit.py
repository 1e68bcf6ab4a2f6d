"""A visit: the table of its posts, with sorting, a filter, worst first, open/add/copy/withdraw.

The posts table pages from SQLite (``fieldcheck.store.visit_table``): the visit's posts are
copied once into a table SQLite sorts and filters, and the DataTable holds one window of
WINDOW rows around the cursor, moved as the cursor reaches its edge. A visit of any size opens
and filters at the cost of a page; returning from a post reads only what was written since."""

from __future__ import annotations

import contextlib
import re
from typing import Any

from textual import on, work
from textual.app import ComposeResult
from textual.binding import Binding
from textual.screen import Screen
from textual.widgets import DataTable, Header, Input, Static

from fieldcheck.tui.footer import FittedFooter
from fieldcheck.tui.keyhold import ReleasesKeys
from fieldcheck.tui.present import (
    ACTION_ORDER,
    action_word,
    ends_text,
    escape,
    force,
    material_text,
    ratio_text,
    section_text,
)

COLUMNS = (  # key, title
    ("tag", "Tag"),
    ("ratio", "Ratio"),
    ("action", "Action"),
    ("location", "Location"),
    ("section", "Section"),
    ("height", "Height"),
    ("material", "Material"),
    ("ends", "Ends"),
    ("load", "Load"),
)
SORTS = ("worst", "tag", "location", "action", "height")
WINDOW = 200  # rows the DataTable holds at a time


def _load_visit(log: Any, visit_id: str) -> dict[str, Any]:
    from fieldcheck.store.rated import ACTION_LABELS, action_label
    from fieldcheck.store.visit_table import LOAD_MISSING, VisitTable

    v = log.visit(visit_id)
    words = {a: action_word(a) for a in (*ACTION_LABELS, action_label(None), LOAD_MISSING)}
    return {
        "visit": v,
        "site": log.site(v.site_id),
        "table": VisitTable(log.path, v.id, words),
        "states": _states(log, visit_id),  # proposed / as remedied (the rest as found)
    }


def _states(log: Any, visit_id: str) -> dict[str, Any]:
    """Remedy states of the visit's posts with a proposal or a remedy (read those only)."""
    from fieldcheck.store import proposals

    return proposals.states(log, visit_id, marked_only=True)


def remedy_mark(state: Any) -> str:
    """A post's remedy state in a few words for the list ('' when as found)."""
    if state is None or state.state == "as found":
        return ""
    if state.state == "proposed":
        return "remedy proposed"
    return f"remedied {state.done_on}"


def action_cell(p: Any) -> str:
    """The action word; a post with no load is not rated (never 'no action'). Where an office
    override in force raises the rating's action, the override's action, marked as the office's,
    with the rating's beside it (what was found on site stays in view)."""
    office = getattr(p, "office_action", None)
    if office is not None:
        from fieldcheck.store.rated import action_label

        return f"{action_word(action_label(office))} (office; rated {action_word(p.action_label)})"
    if (
        p.action_label in ("not rated", "not-rated")
        and p.capacity_n is not None
        and (p.demand_n is None)
    ):
        return action_word("not rated: load missing")
    return action_word(p.action_label)


def next_tag(tag: str, taken: set[str]) -> str:
    """P3 -> P4 (the next free number); a tag without a number gets -2, -3…"""
    m = re.match(r"^(.*?)(\d+)(\D*)$", tag or "")
    k = 0
    while True:
        k += 1
        if m:
            head, num, tail = m.groups()
            cand = f"{head}{int(num) + k:0{len(num)}d}{tail}"
        else:
            cand = f"{tag or 'P'}-{k + 1}"
        if cand not in taken:
            return cand


class VisitScreen(ReleasesKeys, Screen[None]):
    AUTO_FOCUS = "#posts"
    BINDINGS = [
        # open, add, back and help first: the footer is cut at 80 columns (F1 and ctrl+p list all)
        Binding("o", "open_post", "Open", key_display="o/⏎", id="open_post"),
        Binding("ctrl+n", "add_post", "New post", id="add_post"),
        Binding("escape", "back", "Back", id="back_visit"),
        Binding("f1", "app.help", "Help", id="visit_help"),
        Binding("c", "copy_post", "Copy", id="copy_post"),
        Binding("w", "withdraw_post", "Withdraw", id="withdraw_post"),
        Binding("s", "cycle_sort", "Sort", id="cycle_sort"),
        Binding("x", "worst", "Worst", id="worst"),
        Binding("slash", "focus_filter", "Filter", key_display="/", id="focus_filter"),
        Binding("question_mark", "app.help", "Help", show=False, id="help_q2"),
        # the first and the last post of the whole visit, not of the window of rows the table
        # holds (priority: before the table's own ctrl+home and ctrl+end)
        Binding("ctrl+home", "to_end(False)", "First post", show=False, priority=True),
        Binding("ctrl+end", "to_end(True)", "Last post", show=False, priority=True),
    ]

    def __init__(self, visit_id: str) -> None:
        super().__init__()
        self.visit_id = visit_id
        self.site_id: str | None = None
        self.posts: list[Any] = []  # the window of posts the table shows
        self.source: Any = None  # store.visit_table.VisitTable (the whole visit, in SQLite)
        self.window_start = 0  # position of the window's first row in the sorted, filtered visit
        self.shown = 0  # posts passing the filter
        self.states: dict[str, Any] = {}  # member id -> store.proposals.RemedyState
        self.sort_by = "worst"
        self.visit: Any = None

    def compose(self) -> ComposeResult:
        yield Header()
        yield Static("Loading the visit…", id="visit-title", classes="title")
        yield Input(
            placeholder="Filter (/): tag, location, material, action…", id="filter", compact=True
        )
        yield DataTable(id="posts", cursor_type="row", zebra_stripes=True)
        yield Static("", id="visit-status", classes="status")
        yield FittedFooter()

    def on_mount(self) -> None:
        table = self.query_one("#posts", DataTable)
        for key, title in COLUMNS:
            table.add_column(title, key=key)
        self.reload()

    def on_screen_resume(self) -> None:
        if self.source is not None:
            self.source.refresh()  # only the members written since: never the whole visit
            self._fill()
            self._reload_states()

    @work(exclusive=True, group="visit-states", exit_on_error=False)
    async def _reload_states(self) -> None:
        """Remedy states (a proposal is not a revision of the post: read them again)."""
        states = await self.app.store.call(  # type: ignore[attr-defined]
            lambda log: _states(log, self.visit_id)
        )
        if states != self.states:
            self.states = states or {}
            self._fill()

    def on_unmount(self) -> None:
        if self.source is not None:
            self.source.close()

    def units_changed(self) -> None:
        self._fill()

    @work(exclusive=True, group="visit", exit_on_error=False)
    async def reload(self, select: str | None = None) -> None:
        if self.source is not None:
            self.source.refresh()
            self._fill(select, locate=select is not None)
            return
        data = await self.app.store.call(_load_visit, self.visit_id)  # type: ignore[attr-defined]
        self.visit = data["visit"]
        self.site_id = self.visit.site_id
        self.source = data["table"]
        self.states = data.get("states") or {}
        self.query_one("#visit-title", Static).update(
            f"{escape(data['site'].name)} — {escape(self.visit.name)} "
            f"({self.visit.started_at[:10]})"
        )
        self._fill(select)

    # -- the table --------------------------------------------------------------------------
    def _filter_text(self) -> str:
        return self.query_one("#filter", Input).value.strip()

    def _fill(
        self, select: str | None = None, *, offset: int | None = None, locate: bool = False
    ) -> None:
        """Show the window starting at ``offset`` (default: where it is) of the sorted,
        filtered visit, the cursor on ``select`` (a member id; the current row when None) if
        it is there; ``locate``: the window around ``select`` wherever it now stands."""
        if self.source is None:
            return
        table = self.query_one("#posts", DataTable)
        text = self._filter_text()
        if select is None and table.row_count:
            select = str(table.coordinate_to_cell_key(table.cursor_coordinate).row_key.value)
        self.shown = self.source.count(text)
        if offset is None:
            pos = self.source.position(self.sort_by, text, select) if locate and select else None
            offset = self.window_start if pos is None else pos - WINDOW // 2
        self.window_start = max(0, min(offset, self.shown - WINDOW))
        self.posts = self.source.page(self.sort_by, text, self.window_start, WINDOW)
        units = self.app.units  # type: ignore[attr-defined]
        drafts = self.app.drafts  # type: ignore[attr-defined]
        # the table's own cursor messages while it is emptied and filled (row 0, then the row
        # selected) are not the user's moves: taken for them, a row-0 message moved the window
        # back a half window at a time, so the keys never got past the first window and a sort
        # left the cursor on another post
        with self.app.batch_update(), self.prevent(DataTable.RowHighlighted):
            table.clear()
            for p in self.posts:
                tag = p.tag or f"— {p.ref}"  # untagged: the reference the report names it by
                if p.member_id in drafts:
                    tag = "✎ " + tag
                action = action_cell(p)
                if p.conflict:
                    action = "⚡ " + action
                mark = remedy_mark(self.states.get(p.member_id))
                if mark:
                    action += f" · {mark}"
                if getattr(p, "older", False):
                    action = "⟳ " + action  # stored by an older engine or older data
                loc = p.location or ""
                if len(loc) > 24:
                    loc = loc[:23] + "…"
                table.add_row(
                    escape(tag),
                    ratio_text(p.ratio),
                    action,
                    escape(loc),
                    escape(section_text(p.record)),
                    escape(p.record.get("height", "—")),
                    escape(material_text(p.record)),
                    escape(ends_text(p.record)),
                    force(p.demand_n, units),
                    key=p.member_id,
                )
            if select is not None:
                with contextlib.suppress(Exception):
                    table.move_cursor(row=table.get_row_index(select), animate=False)
        # of the posts listed (the filter applied), so they add up to what is shown
        counts = self.source.counts_by_action(text)
        summary = "  ".join(f"{action_word(a)} {counts[a]}" for a in ACTION_ORDER if counts.get(a))
        remedy: dict[str, int] = {}
        for st in self.states.values():
            if st is not None and st.state != "as found":
                remedy[st.state] = remedy.get(st.state, 0) + 1
        if remedy:
            summary += "  " + ", ".join(f"{n} {s}" for s, n in sorted(remedy.items()))
        older = self.source.older(text) if hasattr(self.source, "older") else 0
        if older:  # their stored action may not be this engine's: the first screen's u re-rates
            summary += f"  ⟳ {older} rated by an older engine (u on the first screen re-rates)"
        new_draft = "  ✎ unsaved new post (ctrl+n)" if f"new:{self.visit_id}" in drafts else ""
        first = self.window_start + 1 if self.posts else 0
        last = self.window_start + len(self.posts)
        window = f" (rows {first} to {last})" if self.shown > WINDOW else ""
        self.query_one("#visit-status", Static).update(
            f"{self.shown} of {self.source.total()} posts{window}, sorted by {self.sort_by}.  "
            f"{summary}{new_draft}"
        )

    @on(DataTable.RowHighlighted, "#posts")
    def _edge(self, event: DataTable.RowHighlighted) -> None:
        """The cursor at the window's edge: move the window, the cursor stays on its post."""
        table = event.data_table
        row = event.cursor_row
        key = str(event.row_key.value) if event.row_key is not None else None
        if key is None or row != table.cursor_row or not table.is_valid_row_index(row):
            return  # a message from before the table was last filled
        if str(table.coordinate_to_cell_key(table.cursor_coordinate).row_key.value) != key:
            return
        if row >= table.row_count - 1 and self.window_start + table.row_count < self.shown:
            self._fill(key, offset=self.window_start + WINDOW // 2)
        elif row <= 0 and self.window_start > 0:
            self._fill(key, offset=self.window_start - WINDOW // 2)

    @on(Input.Changed, "#filter")
    def _filter(self) -> None:
        self._fill(offset=0)

    @on(Input.Submitted, "#filter")
    def _filter_done(self) -> None:
        self.query_one("#posts").focus()

    @on(DataTable.HeaderSelected, "#posts")
    def _header(self, event: DataTable.HeaderSelected) -> None:
        key = str(event.column_key.value)
        self.sort_by = {"ratio": "worst"}.get(key, key if key in SORTS else "tag")
        self._fill(locate=True)

    def _current(self) -> Any | None:
        table = self.query_one("#posts", DataTable)
        if not table.row_count:
            return None
        key = str(table.coordinate_to_cell_key(table.cursor_coordinate).row_key.value)
        return next((p for p in self.posts if p.member_id == key), None)

    def _taken(self) -> set[str]:
        return self.source.tags() if self.source is not None else {p.tag for p in self.posts}

    # -- actions ----------------------------------------------------------------------------
    def action_back(self) -> None:
        if self.focused is self.query_one("#filter"):
            self.query_one("#posts").focus()
            return
        self.app.pop_screen()

    def action_focus_filter(self) -> None:
        self.query_one("#filter").focus()

    def action_cycle_sort(self) -> None:
        self.sort_by = SORTS[(SORTS.index(self.sort_by) + 1) % len(SORTS)]
        self._fill(locate=True)

    def action_to_end(self, last: bool) -> None:
        """The cursor on the first or the last post of the whole visit (as sorted, filtered)."""
        self._fill(offset=self.shown if last else 0)
        table = self.query_one("#posts", DataTable)
        if table.row_count:
            table.move_cursor(row=table.row_count - 1 if last else 0, animate=False)

    def action_worst(self) -> None:
        self.sort_by = "worst"
        self._fill(offset=0)
        table = self.query_one("#posts", DataTable)
        if table.row_count:
            table.move_cursor(row=0)
        table.focus()

    @on(DataTable.RowSelected, "#posts")
    def _selected(self, event: DataTable.RowSelected) -> None:
        self.action_open_post()

    def action_open_post(self) -> None:
        p = self._current()
        if p is None:
            return
        if self.source is not None and self.source.refresh():
            # written since the table was read (another program, a sync): the form starts from
            # the post as it now stands, never from the copy on screen
            self._fill(p.member_id, locate=True)
            p = next((q for q in self.posts if q.member_id == p.member_id), None)
            if p is None:
                self.notify("That post was withdrawn meanwhile: the list is up to date now.")
                return
        from fieldcheck.tui.editor import PostEditor

        self.app.push_screen(
            PostEditor(
                self.visit_id, p.member_id, dict(p.record), tag=p.tag, revision=p.observation_id
            )
        )

    def action_add_post(self) -> None:
        from fieldcheck.tui.editor import PostEditor

        taken = self._taken()
        newest = self.source.last_added() if self.source is not None else None
        last = newest.tag if newest is not None else "P0"
        record = {"tag": next_tag(last, taken)}
        self.app.push_screen(PostEditor(self.visit_id, None, record, tag=record["tag"]))

    @work(group="write", exit_on_error=False)
    async def action_copy_post(self) -> None:
        p = self._current()
        if p is None:
            return
        record = dict(p.record)
        record["tag"] = next_tag(p.tag, self._taken())
        obs = await self.app.store.call(  # type: ignore[attr-defined]
            lambda log: log.save_post(self.visit_id, record, allow_errors=True)
        )
        self.notify(
            f"Copied {p.tag} as {record['tag']} (a new post with the same record).", markup=False
        )
        self.reload(select=obs.member_id)

    def action_withdraw_post(self) -> None:
        p = self._current()
        if p is None:
            return
        from fieldcheck.tui.dialogs import WithdrawDialog

        def done(reason: str | None) -> None:
            if reason:
                self._withdraw(p.member_id, p.tag, reason)

        self.app.push_screen(WithdrawDialog(p.tag), done)

    @work(group="write", exit_on_error=False)
    async def _withdraw(self, member_id: str, tag: str, reason: str) -> None:
        await self.app.store.call(  # type: ignore[attr-defined]
            lambda log: log.withdraw(member_id, self.visit_id, reason)
        )
        self.notify(f"Withdrew {tag}: kept in its history.", markup=False)
        self.reload()
