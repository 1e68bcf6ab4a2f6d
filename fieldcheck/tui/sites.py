"""The first screen: every site and visit in the log with its posts counted by action."""

from __future__ import annotations

from typing import Any

from textual import on, work
from textual.app import ComposeResult
from textual.binding import Binding
from textual.screen import Screen
from textual.widgets import DataTable, Header, Static

from fieldcheck.tui.footer import FittedFooter
from fieldcheck.tui.keyhold import ReleasesKeys
from fieldcheck.tui.present import ACTION_ORDER, escape

# short headers so the counts fit at 80 columns; the help screen spells out each symbol
SHORT = {
    "make-safe-now": "✖ now",
    "repair-or-brace": "▲ fix",
    "monitor": "◔ mon",
    "no-action": "✓ ok",
    "not rated": "? n/r",
}


def _cut(text: str, n: int) -> str:
    return escape(text if len(text) <= n else text[: n - 1] + "…")


def _load_overview(log: Any) -> dict[str, Any]:
    sites = {s.id: s for s in log.sites()}
    rows = []
    for v in log.visits():
        counts = log.counts_by_action(v.id)
        rows.append((v, sites.get(v.site_id), counts))
    notices, log.notices = list(log.notices), []  # said once (e.g. the old demo kept out)
    return {
        "rows": rows,
        "conflicts": len(log.conflicts()),
        "older": log.older_rated(),  # stored by another engine or reference data
        "path": str(log.path),
        "notices": notices,
    }


class SitesScreen(ReleasesKeys, Screen[None]):
    """Sites and visits. Enter opens a visit."""

    AUTO_FOCUS = "#visits"
    BINDINGS = [
        Binding("o", "open_visit", "Open", key_display="o/⏎", id="open_visit"),
        Binding("ctrl+n", "new_visit", "New visit", id="new_visit"),
        Binding("ctrl+l", "reload", "Reload", id="reload"),
        Binding("u", "rerate", "Re-rate", id="rerate_log"),
        Binding("question_mark", "app.help", "Help", show=False, id="help_q"),
    ]

    def compose(self) -> ComposeResult:
        yield Header()
        yield Static(
            "Sites and visits — opening the survey log…", id="sites-title", classes="title"
        )
        yield Static("", id="demo-banner", classes="banner")
        table: DataTable[Any] = DataTable(id="visits", cursor_type="row", zebra_stripes=True)
        yield table
        yield Static("", id="sites-status", classes="status")
        yield FittedFooter()

    def on_mount(self) -> None:
        table = self.query_one("#visits", DataTable)
        table.add_column("Site", key="site")
        table.add_column("Visit", key="visit")
        for label in ACTION_ORDER:
            table.add_column(SHORT[label], key=label)
        table.add_column("Posts", key="total")
        table.add_column("Date", key="date")
        # the log (sqlite-utils, numpy) opens on its own thread after the first frame is drawn:
        # importing them meanwhile would hold the GIL against the first paint
        self.call_after_refresh(self.reload)

    @work(exclusive=True, group="sites", exit_on_error=False)
    async def reload(self) -> None:
        app: Any = self.app
        first = app.store.path is None
        data = await app.store.call(_load_overview)
        if first:
            app.load_drafts()
        self._fill(data)
        for notice in data["notices"]:
            self.notify(notice, title="Your survey log", timeout=20, markup=False)
        if first and app.store.is_demo:
            self.notify(
                "This is the invented demo survey, in a file of its own. ctrl+n starts your own.",
                title="Demo survey",
                markup=False,
            )

    def _fill(self, data: dict[str, Any]) -> None:
        table = self.query_one("#visits", DataTable)
        keep = table.cursor_row
        table.clear()
        for v, site, counts in data["rows"]:
            cells = [_cut(site.name if site else "?", 16), _cut(v.name, 26)]
            cells += [str(counts.get(label, 0)) for label in ACTION_ORDER]
            cells += [str(sum(counts.values())), v.started_at[:10]]
            table.add_row(*cells, key=v.id)
        if table.row_count:
            table.move_cursor(row=min(keep, table.row_count - 1))
        n = table.row_count
        demo = self.app.store.is_demo  # type: ignore[attr-defined]
        if n:
            title = f"Sites and visits: {n} visit{'s' if n != 1 else ''} — Enter opens one"
        else:
            title = "No visits yet — ctrl+n starts one"
        self.query_one("#sites-title", Static).update(title)
        banner = self.query_one("#demo-banner", Static)
        banner.display = demo
        banner.update(
            "[b]INVENTED DEMO SURVEY[/b]: no real building, kept in its own file, never synced. "
            "[b]ctrl+n[/b] starts your own survey."
            if demo
            else ""
        )
        conflicts = data["conflicts"]
        status = f"Log: {escape(data['path'])}"
        if conflicts:
            status += f"  ⚡ {conflicts} conflict{'s' if conflicts != 1 else ''} (F7)"
        older = data.get("older", 0)
        if older:
            status += (
                f"  ⟳ {older} post{'s' if older != 1 else ''} rated by an older engine or older "
                "reference data: the actions shown may have changed; u re-rates them"
            )
        self.query_one("#sites-status", Static).update(status)

    def action_rerate(self) -> None:
        self.rerate()

    @work(exclusive=True, group="sites-rerate", exit_on_error=False)
    async def rerate(self) -> None:
        """Re-rate every current post with this engine and its reference data, in one
        transaction (store Log.rerate_all): new ratings are added, the old ones and every record
        as found on site are kept."""
        app: Any = self.app
        if app.store.office:  # the hub holds what each device stored: each field log re-rates
            self.notify(
                "The office view does not re-rate: each post keeps the rating its device stored. "
                "Re-rate in each field log, or re-rate a log file in the office.",
                title="Re-rate",
                markup=False,
            )
            return
        self.notify("Re-rating every post of the log…", title="Re-rate", markup=False)
        try:
            done = await app.store.call(lambda log: log.rerate_all())
        except Exception as exc:  # a busy or read-only log: said, nothing changed
            self.notify(
                f"Nothing was re-rated: {exc}", title="Re-rate", severity="error", markup=False
            )
            return
        words = f"{done.rated} post{'s' if done.rated != 1 else ''} re-rated with engine "
        words += f"{done.engine_version}."
        if done.unrated:
            words += (
                f" {done.unrated} no longer rate{'s' if done.unrated == 1 else ''} with this "
                "engine: kept with their old ratings; open each to see why."
            )
        self.notify(words, title="Re-rate", markup=False, timeout=15)
        self.reload()

    def on_screen_resume(self) -> None:
        if self.app.store.path is not None:  # type: ignore[attr-defined]
            self.reload()

    def units_changed(self) -> None:
        pass

    def action_reload(self) -> None:
        self.reload()

    @on(DataTable.RowSelected, "#visits")
    def _selected(self, event: DataTable.RowSelected) -> None:
        self._open(str(event.row_key.value))

    def action_open_visit(self) -> None:
        table = self.query_one("#visits", DataTable)
        if table.row_count:
            key = table.coordinate_to_cell_key(table.cursor_coordinate).row_key
            self._open(str(key.value))

    def _open(self, visit_id: str) -> None:
        from fieldcheck.tui.visit import VisitScreen

        self.app.push_screen(VisitScreen(visit_id))

    def action_new_visit(self) -> None:
        """A new visit; from the invented demo, the first visit of the user's own survey log."""
        from fieldcheck.tui.dialogs import NewVisitDialog

        app: Any = self.app
        if app.store.is_demo:
            app.start_own_survey()
            self.query_one("#visits", DataTable).clear()
            self.reload()

        def made(visit_id: str | None) -> None:
            if visit_id:
                self._open(visit_id)

        self.app.push_screen(NewVisitDialog(), made)
