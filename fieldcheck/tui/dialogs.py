"""Dialogs: help, leave with changes, withdraw, new visit, sync, report, conflicts."""

from __future__ import annotations

import time
from pathlib import Path
from typing import Any

from textual import on, work
from textual.app import ComposeResult
from textual.binding import Binding
from textual.containers import Horizontal, Vertical, VerticalScroll
from textual.screen import ModalScreen, Screen
from textual.widgets import Button, Input, Label, ProgressBar, Static

from fieldcheck.tui.present import escape


class HelpScreen(ModalScreen[None]):
    """Every key of the screen behind, and of the app, with what it does."""

    BINDINGS = [Binding("escape,f1,q", "close", "Close", id="help_close")]

    def __init__(self, behind: Screen) -> None:
        super().__init__()
        self.behind = behind

    def compose(self) -> ComposeResult:
        lines = ["[b]Keys on this screen[/b]"]
        seen = set()
        for key, active in self.behind.active_bindings.items():
            b = active.binding
            if not b.description or (b.action in seen):
                continue
            if type(active.node).__module__.startswith("textual.") and active.node is not self.app:
                continue
            seen.add(b.action)
            lines.append(f"  {escape(b.key_display or key):<12} {escape(b.description)}")
        lines += [
            "",
            "[b]Everywhere[/b]",
            "  ctrl+p       command palette: every action, by name",
            "  tab/shift+tab  next / previous field or table",
            "  enter        open the highlighted row; in a field: next field",
            "  ctrl+q       quit (drafts are kept beside the log)",
            "",
            "[b]In the post editor[/b]",
            "  Values take units as you write them: 10ft, 8' 6\", 3.5inx5.5in, 4000lbf, 18 kN.",
            "  A bad value shows its message under the field; the rest of the form is kept.",
            "  The rating re-rates on every valid change. Saving adds a revision; nothing is",
            "  overwritten. Leaving with changes asks: save, keep as draft, or discard.",
            "",
            "[b]Symbols[/b]  ✓ no action  ◔ monitor  ▲ repair/brace  ✖ make safe now  ? not rated",
            "  ✎ unsaved draft   ⚡ conflict (two revisions made apart: F7)",
        ]
        with Vertical(id="help-box", classes="dialog"):
            yield Static("Help — Esc closes", classes="title")
            with VerticalScroll():
                yield Static("\n".join(lines))

    def action_close(self) -> None:
        self.dismiss(None)


class LeaveDialog(ModalScreen[str | None]):
    BINDINGS = [
        Binding("escape", "answer('stay')", "Stay", id="leave_stay"),
        Binding("ctrl+s", "answer('save')", "Save", id="leave_save"),
    ]

    def compose(self) -> ComposeResult:
        with Vertical(classes="dialog"):
            yield Static("This post has unsaved changes.", classes="title")
            with Horizontal(classes="buttons"):
                yield Button("Save (s)", id="save", variant="primary")
                yield Button("Keep as draft (k)", id="draft")
                yield Button("Discard (d)", id="discard", variant="error")
                yield Button("Stay (Esc)", id="stay")

    def on_key(self, event: Any) -> None:
        answer = {"s": "save", "k": "draft", "d": "discard"}.get(event.key)
        if answer:
            event.stop()
            self.dismiss(answer)

    @on(Button.Pressed)
    def _pressed(self, event: Button.Pressed) -> None:
        self.dismiss(event.button.id)

    def action_answer(self, answer: str) -> None:
        self.dismiss(answer)


class WithdrawDialog(ModalScreen[str | None]):
    BINDINGS = [Binding("escape", "cancel", "Cancel", id="withdraw_cancel")]

    def __init__(self, tag: str) -> None:
        super().__init__()
        self.tag = tag

    def compose(self) -> ComposeResult:
        with Vertical(classes="dialog"):
            yield Static(
                f"Withdraw post {escape(self.tag)}? It stays in its history.", classes="title"
            )
            yield Label("Reason (Enter withdraws, Esc cancels):")
            yield Input(placeholder="e.g. removed: beam in", id="reason")

    @on(Input.Submitted, "#reason")
    def _done(self, event: Input.Submitted) -> None:
        reason = event.value.strip()
        if not reason:
            self.notify("Give a reason: it goes in the history.", severity="warning", markup=False)
            return
        self.dismiss(reason)

    def action_cancel(self) -> None:
        self.dismiss(None)


class NewVisitDialog(ModalScreen[str | None]):
    BINDINGS = [Binding("escape", "cancel", "Cancel", id="visit_cancel")]

    def compose(self) -> ComposeResult:
        with Vertical(classes="dialog"):
            yield Static(
                "New visit (Enter on the last field makes it, Esc cancels)", classes="title"
            )
            yield Label("Site (an existing name or a new one):")
            yield Input(placeholder="e.g. 14 Alder Row", id="site")
            yield Label("Visit:")
            yield Input(placeholder="e.g. shoring check, day 2", id="visit")

    @on(Input.Submitted, "#site")
    def _next(self) -> None:
        self.query_one("#visit").focus()

    @on(Input.Submitted, "#visit")
    def _make(self) -> None:
        site = self.query_one("#site", Input).value.strip()
        visit = self.query_one("#visit", Input).value.strip()
        if not site or not visit:
            self.notify("Give both a site and a visit name.", severity="warning", markup=False)
            return
        self._create(site, visit)

    @work(group="write", exit_on_error=False)
    async def _create(self, site_name: str, visit_name: str) -> None:
        def make(log: Any) -> str:
            site = log.find_site(site_name) or log.add_site(site_name)
            return log.add_visit(site.id, name=visit_name).id

        visit_id = await self.app.store.call(make)  # type: ignore[attr-defined]
        self.dismiss(visit_id)

    def action_cancel(self) -> None:
        self.dismiss(None)


class ProgressDialog(ModalScreen[None]):
    """Long work on the log's thread with a ProgressBar and a summary at the end."""

    BINDINGS = [Binding("escape", "close", "Close", id="progress_close")]
    TITLE_TEXT = ""

    def __init__(self) -> None:
        super().__init__()
        self.running = False
        self.summary = ""

    def compose(self) -> ComposeResult:
        with Vertical(classes="dialog"):
            yield Static(self.TITLE_TEXT, classes="title", id="progress-title")
            yield from self.compose_inputs()
            yield ProgressBar(total=None, id="bar", show_eta=False)
            yield Static("", id="stage", markup=False)
            yield Static("", id="summary", markup=False)

    def compose_inputs(self) -> ComposeResult:
        yield from ()

    def progress(self, done: int, total: int | None, stage: str) -> None:
        """Called on the log's thread: hop to the UI thread."""
        self.app.call_from_thread(self._progress, done, total, stage)

    def _progress(self, done: int, total: int | None, stage: str) -> None:
        bar = self.query_one("#bar", ProgressBar)
        bar.update(total=total if total else None, progress=done)
        self.query_one("#stage", Static).update(
            f"{stage}: {done}" + (f" of {total}" if total else "")
        )

    def finish(self, summary: str, ok: bool = True) -> None:
        self.running = False
        self.summary = summary
        bar = self.query_one("#bar", ProgressBar)
        if ok:
            bar.update(total=1, progress=1)
        self.query_one("#summary", Static).update(
            ("✓ " if ok else "✖ ") + summary + "\n(Esc closes)"
        )
        self.app.last_summary = summary  # type: ignore[attr-defined]
        self.notify(summary, severity="information" if ok else "error", markup=False)

    def action_close(self) -> None:
        if self.running:
            self.notify("Still working: wait for the summary.", markup=False)
            return
        self.dismiss(None)


class SyncDialog(ProgressDialog):
    TITLE_TEXT = "Sync with the office"

    def __init__(self, office_path: str = "") -> None:
        super().__init__()
        self.office_path = office_path

    def compose_inputs(self) -> ComposeResult:
        yield Label("Office log or folder (Enter starts, Esc closes):")
        yield Input(self.office_path, placeholder="e.g. /mnt/office/survey.fieldcheck", id="office")

    def on_mount(self) -> None:
        try:
            import fieldcheck.store.sync  # noqa: F401
        except ImportError:
            self.query_one("#summary", Static).update("Sync is not available yet in this version.")

    @on(Input.Submitted, "#office")
    def _start(self, event: Input.Submitted) -> None:
        path = event.value.strip()
        if not path or self.running:
            return
        self.app.office_path = path  # type: ignore[attr-defined]
        self.run_sync(path)

    @work(group="sync", exit_on_error=False)
    async def run_sync(self, path: str) -> None:
        try:
            from fieldcheck.store.sync import sync
        except ImportError:
            self.finish("Sync is not available yet in this version.", ok=False)
            return
        self.running = True
        t0 = time.perf_counter()
        try:
            result = await self.app.store.call(  # type: ignore[attr-defined]
                lambda log: sync(log, Path(path), progress=self.progress)
            )
        except Exception as exc:
            self.finish(f"Sync failed: {exc}", ok=False)
            return
        text = result.sentence() if hasattr(result, "sentence") else str(result)
        self.finish(f"{text} ({time.perf_counter() - t0:.1f} s)")


class ReportDialog(ProgressDialog):
    TITLE_TEXT = "Report (HTML)"

    def __init__(self, site_id: str | None, visit_id: str | None) -> None:
        super().__init__()
        self.site_id = site_id
        self.visit_id = visit_id

    def compose_inputs(self) -> ComposeResult:
        scope = "this visit" if self.visit_id else "the whole log"
        yield Label(f"Report on {scope} to (Enter writes it, Esc closes):")
        yield Input("", id="report-path")

    def on_mount(self) -> None:
        path = self.app.store.path  # type: ignore[attr-defined]
        suffix = f"-{self.visit_id[:8]}" if self.visit_id else ""
        default = (
            (path.parent / f"{path.stem}-report{suffix}.html") if path else Path("report.html")
        )
        self.query_one("#report-path", Input).value = str(default)
        try:
            import fieldcheck.report.html  # noqa: F401
        except ImportError:
            self.query_one("#summary", Static).update("The HTML report is not available yet.")

    @on(Input.Submitted, "#report-path")
    def _start(self, event: Input.Submitted) -> None:
        if event.value.strip() and not self.running:
            self.run_report(event.value.strip())

    @work(group="report", exit_on_error=False)
    async def run_report(self, path: str) -> None:
        try:
            from fieldcheck.report.html import write_report
        except ImportError:
            self.finish("The HTML report is not available yet in this version.", ok=False)
            return
        self.running = True
        self._progress(0, None, "writing")
        units = self.app.units  # type: ignore[attr-defined]
        t0 = time.perf_counter()
        try:
            out = await self.app.store.call(  # type: ignore[attr-defined]
                lambda log: write_report(
                    log, Path(path), site_id=self.site_id, visit_id=self.visit_id, units=units
                )
            )
        except Exception as exc:
            self.finish(f"Report failed: {exc}", ok=False)
            return
        self.finish(f"Report written to {out} ({time.perf_counter() - t0:.1f} s)")


def _load_conflicts(log: Any) -> list[tuple[str, str, list[Any]]]:
    out = []
    for member in log.conflicts():
        hist = log.history(member)
        tag = next((o.record.get("tag", "") for o in reversed(hist) if o.record.get("tag")), "")
        out.append((member, tag, hist))
    return out


class ConflictsScreen(ModalScreen[None]):
    BINDINGS = [Binding("escape", "close", "Close", id="conflicts_close")]

    def compose(self) -> ComposeResult:
        with Vertical(classes="dialog", id="conflicts-box"):
            yield Static("Open conflicts — Esc closes", classes="title")
            with VerticalScroll():
                yield Static("Looking…", id="conflicts-list")

    def on_mount(self) -> None:
        self.load()

    @work(exit_on_error=False)
    async def load(self) -> None:
        rows = await self.app.store.call(_load_conflicts)  # type: ignore[attr-defined]
        if not rows:
            text = "✓ No open conflicts."
        else:
            lines = [
                f"⚡ {len(rows)} post{'s' if len(rows) != 1 else ''} with two revisions made "
                "apart (open the post and save the right values to resolve):"
            ]
            for member, tag, hist in rows:
                lines.append(
                    f"  {escape(tag or member[:8])}: {len(hist)} revisions, latest by "
                    f"{escape(hist[-1].author)} {hist[-1].created_at[:16]}"
                )
            text = "\n".join(lines)
        self.query_one("#conflicts-list", Static).update(text)

    def action_close(self) -> None:
        self.dismiss(None)
