"""The office view (``fieldcheck --db postgresql://...``): every current post of every site on
the hub, those awaiting review first (worst first among them), with the review keys.

a accept the rating; v override the action (the action, then the reason); r require a remedy;
n a note; Enter opens the post. Each review is recorded at once (append-only, with the
reviewer's name and the time) and goes to the hub when the interface closes or syncs (F9), so
the inspector sees it beside the post at the next sync.
"""

from __future__ import annotations

import math
from typing import Any

from textual import on, work
from textual.app import ComposeResult
from textual.binding import Binding
from textual.containers import Vertical
from textual.screen import ModalScreen, Screen
from textual.widgets import DataTable, Header, Input, Label, Static

from fieldcheck.tui.footer import FittedFooter
from fieldcheck.tui.present import action_word, escape, ratio_text

KINDS = {
    "override": ("Override the action", "action and reason, e.g. monitor: shore replaced"),
    "require-remedy": ("Require a remedy", "the remedy, e.g. add a 4x4 shore beside it"),
    "note": ("Note", "a note for the inspector"),
}


def _load(log: Any) -> list[tuple[Any, Any, str, str]]:
    """(post, review state, site name, visit name), awaiting review first, worst first."""
    states = log.review_states()
    sites = {s.id: s.name for s in log.sites()}
    visits = {v.id: v.name for v in log.visits()}
    rows = [
        (p, states[p.member_id], sites.get(p.site_id, ""), visits.get(p.visit_id, ""))
        for p in log.posts()
    ]

    def key(r):
        p, st = r[0], r[1]
        ratio = p.ratio if p.ratio is not None and math.isfinite(p.ratio) else math.inf
        return (not st.awaiting, not p.conflict, -ratio)

    return sorted(rows, key=key)


class ReviewDialog(ModalScreen[str | None]):
    BINDINGS = [Binding("escape", "cancel", "Cancel", id="review_cancel")]

    def __init__(self, kind: str, tag: str) -> None:
        super().__init__()
        self.kind, self.tag = kind, tag

    def compose(self) -> ComposeResult:
        title, hint = KINDS[self.kind]
        with Vertical(classes="dialog"):
            yield Static(f"{title}: post {escape(self.tag)}", classes="title")
            yield Label("Enter records it, Esc cancels:")
            yield Input(placeholder=hint, id="review-text")

    @on(Input.Submitted, "#review-text")
    def _done(self, event: Input.Submitted) -> None:
        text = event.value.strip()
        if not text:
            self.notify("Write it out: it goes to the inspector.", severity="warning", markup=False)
            return
        self.dismiss(text)

    def action_cancel(self) -> None:
        self.dismiss(None)


class OfficeScreen(Screen[None]):
    AUTO_FOCUS = "#review-queue"
    BINDINGS = [
        Binding("a", "review('accept')", "Accept", id="office_accept"),
        # "v" (o is Open on every other screen: a key means one thing everywhere)
        Binding("v", "review('override')", "Override", id="office_override"),
        Binding("r", "review('require-remedy')", "Remedy", id="office_remedy"),
        Binding("n", "review('note')", "Note", id="office_note"),
        Binding("escape", "app.pop_screen", "Back", id="office_back"),
        Binding("f1", "app.help", "Help", id="office_help"),
    ]

    def __init__(self) -> None:
        super().__init__()
        self.rows: list[tuple[Any, Any, str, str]] = []

    def compose(self) -> ComposeResult:
        yield Header()
        yield Static("Office review: loading the hub…", id="office-title", classes="title")
        yield DataTable(id="review-queue", cursor_type="row", zebra_stripes=True)
        yield Static("", id="office-status", classes="status")
        yield FittedFooter()

    def on_mount(self) -> None:
        table = self.query_one("#review-queue", DataTable)
        for key, title in (
            ("review", "Review"),
            ("tag", "Post"),
            ("ratio", "Ratio"),
            ("action", "Action"),
            ("site", "Site"),
            ("visit", "Visit"),
        ):
            table.add_column(title, key=key)
        self.reload()

    def on_screen_resume(self) -> None:
        self.reload()

    @work(exclusive=True, group="office", exit_on_error=False)
    async def reload(self) -> None:
        self.rows = await self.app.store.call(_load)  # type: ignore[attr-defined]
        table = self.query_one("#review-queue", DataTable)
        keep = table.cursor_row
        table.clear()
        for p, st, site, visit in self.rows:
            review = ("⚡ conflict" if p.conflict else st.state) if st.awaiting else st.state
            table.add_row(
                escape(review),
                escape(p.tag or "—"),
                ratio_text(p.ratio),
                ("⟳ " if p.older else "") + action_word(p.action_label),
                escape(site),
                escape(visit),
                key=p.member_id,
            )
        if self.rows:
            table.move_cursor(row=min(keep, len(self.rows) - 1))
        waiting = sum(1 for _, st, _, _ in self.rows if st.awaiting)
        older = sum(1 for p, _, _, _ in self.rows if p.older)
        title = f"Office review: {waiting} of {len(self.rows)} posts await review (all sites)"
        if older:  # the action shown is what an older engine stored: open the post to re-rate
            title += f"; ⟳ {older} rated by an older engine (open one to see this engine's rating)"
        self.query_one("#office-title", Static).update(title)
        self._status()

    def _current(self) -> tuple[Any, Any, str, str] | None:
        table = self.query_one("#review-queue", DataTable)
        if not self.rows or table.cursor_row is None or table.cursor_row >= len(self.rows):
            return None
        return self.rows[table.cursor_row]

    @on(DataTable.RowHighlighted, "#review-queue")
    def _status(self, event: Any = None) -> None:
        row = self._current()
        text = "" if row is None else f"{escape(row[0].tag or '—')}: {escape(row[1].line())}"
        self.query_one("#office-status", Static).update(text)

    @on(DataTable.RowSelected, "#review-queue")
    def _open(self, event: DataTable.RowSelected) -> None:
        row = self._current()
        if row is None:
            return
        from fieldcheck.tui.editor import PostEditor

        p = row[0]
        self.app.push_screen(
            PostEditor(
                p.visit_id, p.member_id, dict(p.record), tag=p.tag, revision=p.observation_id
            )
        )

    def action_review(self, kind: str) -> None:
        row = self._current()
        if row is None:
            return
        post = row[0]
        if kind == "accept":
            self._record(post.member_id, "accept", "", None)
            return

        def done(text: str | None) -> None:
            if not text:
                return
            action = None
            if kind == "override":
                action, _, text = text.partition(":")
                action, text = action.strip(), text.strip()
            self._record(post.member_id, kind, text, action)

        self.app.push_screen(ReviewDialog(kind, post.label), done)

    @work(group="office-write", exit_on_error=False)
    async def _record(self, member_id: str, kind: str, text: str, action: str | None) -> None:
        try:
            await self.app.store.call(  # type: ignore[attr-defined]
                lambda log: log.review_post(member_id, kind, text, action)
            )
        except ValueError as exc:
            self.notify(str(exc), severity="error", markup=False)
            return
        self.notify("Review recorded; it goes to the hub when you sync or quit.", markup=False)
        self.reload()
