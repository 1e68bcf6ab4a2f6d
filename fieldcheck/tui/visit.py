"""A visit: the table of its posts, with sorting, a filter, worst first, open/add/copy/withdraw."""

from __future__ import annotations

import contextlib
import math
import re
from typing import Any

from textual import on, work
from textual.app import ComposeResult
from textual.binding import Binding
from textual.screen import Screen
from textual.widgets import DataTable, Footer, Header, Input, Static

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


def _load_visit(log: Any, visit_id: str) -> dict[str, Any]:
    v = log.visit(visit_id)
    return {
        "visit": v,
        "site": log.site(v.site_id),
        "posts": log.posts(visit_id),
        "states": log.remedy_states(visit_id),  # as found / proposed / as remedied
    }


def remedy_mark(state: Any) -> str:
    """A post's remedy state in a few words for the list ('' when as found)."""
    if state is None or state.state == "as found":
        return ""
    if state.state == "proposed":
        return "remedy proposed"
    return f"remedied {state.done_on}"


def action_cell(p: Any) -> str:
    """The action word; a post with no load is not rated (never 'no action')."""
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


def _ratio_key(p: Any) -> float:
    return -(p.ratio if p.ratio is not None and math.isfinite(p.ratio) else math.inf)


class VisitScreen(Screen[None]):
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
    ]

    def __init__(self, visit_id: str) -> None:
        super().__init__()
        self.visit_id = visit_id
        self.site_id: str | None = None
        self.posts: list[Any] = []
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
        yield Footer()

    def on_mount(self) -> None:
        table = self.query_one("#posts", DataTable)
        for key, title in COLUMNS:
            table.add_column(title, key=key)
        self.reload()

    def on_screen_resume(self) -> None:
        if self.visit is not None:
            self.reload()

    def units_changed(self) -> None:
        self._fill()

    @work(exclusive=True, group="visit", exit_on_error=False)
    async def reload(self, select: str | None = None) -> None:
        data = await self.app.store.call(_load_visit, self.visit_id)  # type: ignore[attr-defined]
        self.visit = data["visit"]
        self.site_id = self.visit.site_id
        self.posts = data["posts"]
        self.states = data.get("states") or {}
        self.query_one("#visit-title", Static).update(
            f"{escape(data['site'].name)} — {escape(self.visit.name)} "
            f"({self.visit.started_at[:10]})"
        )
        self._fill(select)

    # -- the table --------------------------------------------------------------------------
    def _visible(self) -> list[Any]:
        text = self.query_one("#filter", Input).value.strip().lower()
        rows = self.posts
        if text:
            words = text.split()

            def hay(p: Any) -> str:
                return " ".join(
                    [
                        p.tag,
                        p.location,
                        section_text(p.record),
                        material_text(p.record),
                        ends_text(p.record),
                        p.action_label,
                        action_cell(p),
                        remedy_mark(self.states.get(p.member_id)),
                        " ".join(p.record.values()),
                    ]
                ).lower()

            rows = [p for p in rows if all(w in hay(p) for w in words)]
        if self.sort_by == "worst":
            return sorted(rows, key=_ratio_key)
        if self.sort_by == "action":
            order = {a: i for i, a in enumerate(ACTION_ORDER)}
            return sorted(rows, key=lambda p: (order.get(p.action_label, 9), _ratio_key(p)))
        if self.sort_by == "height":
            return sorted(rows, key=lambda p: p.record.get("height", ""))
        return sorted(rows, key=lambda p: (getattr(p, self.sort_by) or "").lower())

    def _fill(self, select: str | None = None) -> None:
        table = self.query_one("#posts", DataTable)
        units = self.app.units  # type: ignore[attr-defined]
        drafts = self.app.drafts  # type: ignore[attr-defined]
        if select is None and table.row_count:
            select = str(table.coordinate_to_cell_key(table.cursor_coordinate).row_key.value)
        table.clear()
        shown = self._visible()
        for p in shown:
            tag = p.tag or "—"
            if p.member_id in drafts:
                tag = "✎ " + tag
            action = action_cell(p)
            if p.conflict:
                action = "⚡ " + action
            mark = remedy_mark(self.states.get(p.member_id))
            if mark:
                action += f" · {mark}"
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
                table.move_cursor(row=table.get_row_index(select))
        counts: dict[str, int] = {}  # of the posts listed, so they add up to what is shown
        remedy: dict[str, int] = {}
        for p in shown:
            counts[p.action_label] = counts.get(p.action_label, 0) + 1
            st = self.states.get(p.member_id)
            if st is not None and st.state != "as found":
                remedy[st.state] = remedy.get(st.state, 0) + 1
        summary = "  ".join(f"{action_word(a)} {counts[a]}" for a in ACTION_ORDER if counts.get(a))
        if remedy:
            summary += "  " + ", ".join(f"{n} {s}" for s, n in sorted(remedy.items()))
        new_draft = "  ✎ unsaved new post (ctrl+n)" if f"new:{self.visit_id}" in drafts else ""
        self.query_one("#visit-status", Static).update(
            f"{len(shown)} of {len(self.posts)} posts, sorted by {self.sort_by}.  "
            f"{summary}{new_draft}"
        )

    @on(Input.Changed, "#filter")
    def _filter(self) -> None:
        self._fill()

    @on(Input.Submitted, "#filter")
    def _filter_done(self) -> None:
        self.query_one("#posts").focus()

    @on(DataTable.HeaderSelected, "#posts")
    def _header(self, event: DataTable.HeaderSelected) -> None:
        key = str(event.column_key.value)
        self.sort_by = {"ratio": "worst"}.get(key, key if key in SORTS else "tag")
        self._fill()

    def _current(self) -> Any | None:
        table = self.query_one("#posts", DataTable)
        if not table.row_count:
            return None
        key = str(table.coordinate_to_cell_key(table.cursor_coordinate).row_key.value)
        return next((p for p in self.posts if p.member_id == key), None)

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
        self._fill()

    def action_worst(self) -> None:
        self.sort_by = "worst"
        self._fill()
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
        from fieldcheck.tui.editor import PostEditor

        self.app.push_screen(PostEditor(self.visit_id, p.member_id, dict(p.record), tag=p.tag))

    def action_add_post(self) -> None:
        from fieldcheck.tui.editor import PostEditor

        taken = {p.tag for p in self.posts}
        last = self.posts[-1].tag if self.posts else "P0"
        record = {"tag": next_tag(last, taken)}
        self.app.push_screen(PostEditor(self.visit_id, None, record, tag=record["tag"]))

    @work(group="write", exit_on_error=False)
    async def action_copy_post(self) -> None:
        p = self._current()
        if p is None:
            return
        record = dict(p.record)
        record["tag"] = next_tag(p.tag, {q.tag for q in self.posts})
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
