"""Dialogs: help, leave with changes, withdraw, remedy done, photo, new visit, sync, report,
conflicts."""

from __future__ import annotations

import time
from pathlib import Path
from typing import Any

from textual import on, work
from textual.app import ComposeResult
from textual.binding import Binding
from textual.containers import Horizontal, Vertical, VerticalScroll
from textual.screen import ModalScreen, Screen
from textual.suggester import SuggestFromList
from textual.widgets import Button, Input, Label, ProgressBar, Static

from fieldcheck.tui.form import FieldInput
from fieldcheck.tui.keyhold import ReleasesKeys
from fieldcheck.tui.present import escape


class HelpScreen(ReleasesKeys, ModalScreen[None]):
    """Every key of the screen behind, and of the app, with what it does."""

    BINDINGS = [Binding("escape,f1,q", "close", "Close", id="help_close")]

    def __init__(self, behind: Screen) -> None:
        super().__init__()
        self.behind = behind

    def compose(self) -> ComposeResult:
        lines = [
            "[b]fieldcheck[/b] rates existing timber posts and temporary wood shores as found on "
            "site (NDS 2018 ASD/LRFD, EN 1995-1-1) and keeps each post in your survey log.",
            "It is a screening aid for a competent person: local codes, the authority having "
            "jurisdiction and a licensed engineer govern. Stop work and clear the area if a post "
            "crushes, splits open, moves or leans more than before, or a sill settles.",
            "",
            "[b]How it goes[/b]",
            "  1. First screen: sites and visits. ctrl+n starts a visit (from the invented demo: "
            "your own survey, in your own log).",
            "  2. A visit lists its posts, worst first. ctrl+n adds a post; o or Enter opens one.",
            "  3. The post form, in the order you look: where and what; section and height; the "
            "two ends; material; what is seen (add a defect by kind: decay, knot, split, bow, "
            "notch, crushing…); the load. Enter moves to the next field; PageDown to the next "
            "section. The rating beside it follows every valid change.",
            "  4. ctrl+s saves the post as found. A remedy (F5, then Enter or ctrl+r) is stored as "
            "a proposal beside it; the post stays rated as found until ctrl+o records it as "
            "remedied, with the date. ctrl+t attaches a photo to the saved post.",
            "",
            "[b]Keys on this screen[/b]",
        ]
        seen = set()
        for key, active in self.behind.active_bindings.items():
            b = active.binding
            if not b.description or (b.description in seen):
                continue
            if type(active.node).__module__.startswith("textual.") and active.node is not self.app:
                continue
            seen.add(b.description)
            lines.append(f"  {escape(b.key_display or key):<12} {escape(b.description)}")
        lines += [
            "",
            "[b]Everywhere[/b]",
            "  ctrl+p       command palette: every action, by name",
            "  tab/shift+tab  next / previous field or table",
            "  enter        open the highlighted row; in a field: next field",
            "  pagedown/up  in the post form: next / previous section",
            "  ctrl+q       quit (drafts are kept beside the log)",
            "",
            "[b]In the post editor[/b]",
            "  Values take units as you write them: 10ft, 8' 6\", 3.5inx5.5in, 4000lbf, 18 kN.",
            "  A bad value shows its message under the field; the rest of the form is kept.",
            "  The rating re-rates on every valid change. Saving adds a revision; nothing is",
            "  overwritten. Leaving with changes asks: save, keep as draft, or discard.",
            "  A field with a fixed set of values shows them while empty; their first letters",
            "  do (d for douglas-fir-larch) when only one value starts so.",
            "",
            "[b]Symbols[/b]  ✓ no action  ◔ monitor  ▲ repair/brace  ✖ make safe now  ? not rated",
            "  ✎ unsaved draft   ⚡ conflict (two revisions made apart: F7)",
            "  ⟳ rated by an older engine or older reference data: its stored action may have",
            "    changed (u on the first screen re-rates the log; the old ratings are kept)",
            "  (office; rated …): an office override in force raised the action; the rating as",
            "    found on site is shown beside it",
        ]
        with Vertical(id="help-box", classes="dialog"):
            yield Static("Help — Esc closes", classes="title")
            with VerticalScroll():
                yield Static("\n".join(lines))

    def action_close(self) -> None:
        self.dismiss(None)


class LeaveDialog(ReleasesKeys, ModalScreen[str | None]):
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


class WithdrawDialog(ReleasesKeys, ModalScreen[str | None]):
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


class RemedyDoneDialog(ReleasesKeys, ModalScreen[str | None]):
    """The date a proposed remedy was carried out: the post is then recorded as remedied."""

    BINDINGS = [Binding("escape", "cancel", "Cancel", id="done_cancel")]

    def __init__(self, description: str) -> None:
        super().__init__()
        self.description = description

    def compose(self) -> ComposeResult:
        import datetime as dt

        with Vertical(classes="dialog"):
            yield Static("Record the post as remedied", classes="title")
            yield Static(f"Done: {escape(self.description)}")
            yield Label("Date the work was done (Enter records it, Esc cancels):")
            yield Input(dt.date.today().isoformat(), id="done-on")

    @on(Input.Submitted, "#done-on")
    def _done(self, event: Input.Submitted) -> None:
        import datetime as dt

        text = event.value.strip()
        try:
            day = dt.date.fromisoformat(text)
        except ValueError:
            self.notify(
                f"{text!r} is not a date: give it as year-month-day, e.g. 2026-03-14.",
                severity="warning",
                markup=False,
            )
            return
        self.dismiss(day.isoformat())

    def action_cancel(self) -> None:
        self.dismiss(None)


class PhotoDialog(ReleasesKeys, ModalScreen[tuple[str, str] | None]):
    """A photo for the post as saved: the file and a caption (the log keeps a copy and its
    SHA-256; the report shows a reduced copy)."""

    BINDINGS = [Binding("escape", "cancel", "Cancel", id="photo_cancel")]

    def __init__(self, tag: str) -> None:
        super().__init__()
        self.tag = tag

    def compose(self) -> ComposeResult:
        with Vertical(classes="dialog"):
            yield Static(f"Attach a photo to post {escape(self.tag)}", classes="title")
            yield Label("Photo file (Enter moves on):")
            yield Input(placeholder="e.g. ~/DCIM/IMG_0412.jpg", id="photo-path")
            yield Label("Caption (Enter attaches, Esc cancels):")
            yield Input(placeholder="e.g. decay at the sill, east face", id="photo-caption")

    @on(Input.Submitted, "#photo-path")
    def _path_done(self, event: Input.Submitted) -> None:
        if self._photo() is not None:
            self.query_one("#photo-caption", Input).focus()

    @on(Input.Submitted, "#photo-caption")
    def _done(self, event: Input.Submitted) -> None:
        path = self._photo()
        if path is not None:
            self.dismiss((str(path), event.value.strip()))

    def _photo(self) -> Path | None:
        text = self.query_one("#photo-path", Input).value.strip()
        path = Path(text).expanduser() if text else None
        if path is None or not path.is_file():
            shown = escape(text[:60]) if text else "nothing"
            self.notify(
                f"photo: {shown} is not a file here; give the path of a JPEG or PNG.",
                severity="warning",
                markup=False,
            )
            self.query_one("#photo-path", Input).focus()
            return None
        return path

    def action_cancel(self) -> None:
        self.dismiss(None)


VISIT_LEVELS = ("minimum", "standard", "detailed")  # the log's data-collection levels


class NewVisitDialog(ReleasesKeys, ModalScreen[str | None]):
    """A new visit: the site address, the inspector (a person's name, not the login name), the
    date and the data-collection level. Enter moves on; Enter on the last field makes it."""

    BINDINGS = [Binding("escape", "cancel", "Cancel", id="visit_cancel")]
    FIELDS = ("address", "inspector", "date", "level", "purpose")

    def compose(self) -> ComposeResult:
        import datetime as dt

        with Vertical(classes="dialog", id="new-visit"):
            yield Static("New visit (Enter: next field, Esc cancels)", classes="title")
            yield Label("Site address (an existing site or a new one):")
            yield FieldInput(placeholder="e.g. 14 Alder Row, Millbrook", id="address")
            yield Label("Inspector (your name as it goes on the report):")
            yield FieldInput(placeholder="e.g. A. Inspector", id="inspector")
            yield Label("Date of the visit (year-month-day):")
            yield FieldInput(dt.date.today().isoformat(), id="date")
            yield Label("Data-collection level: minimum, standard or detailed")
            yield FieldInput(
                "minimum",
                id="level",
                suggester=SuggestFromList(VISIT_LEVELS, case_sensitive=False),
                choices=VISIT_LEVELS,
            )
            yield Label("What for (optional):")
            yield FieldInput(
                placeholder="e.g. basement posts before the wall comes out", id="purpose"
            )

    def on_mount(self) -> None:
        self.query_one("#address").focus()
        self.fill_inspector()

    @work(exit_on_error=False)
    async def fill_inspector(self) -> None:
        """The inspector of the log's last visit, if any (never the login name)."""

        def last(log: Any) -> str:
            visits = log.visits()
            mine = [v for v in visits if v.inspector and v.inspector != log.author]
            return mine[-1].inspector if mine else ""

        name = await self.app.store.call(last)  # type: ignore[attr-defined]
        box = self.query_one("#inspector", Input)
        if name and not box.value:
            box.value = name

    def form_key(self, key: str, focused: Any) -> bool:
        """Enter moves to the next field (the last one makes the visit), at once: called by the
        app before the next key is routed, so nothing typed fast lands in the wrong field."""
        if key in ("tab", "shift+tab"):
            (self.focus_next if key == "tab" else self.focus_previous)()
            return True
        if key != "enter":
            return False
        fid = getattr(focused, "id", None) or ""
        if fid not in self.FIELDS:
            return False
        focused.complete()
        if fid != self.FIELDS[-1]:
            self.set_focus(self.query_one(f"#{self.FIELDS[self.FIELDS.index(fid) + 1]}"))
        else:
            self._make()
        return True

    def values(self) -> dict[str, str]:
        return {f: self.query_one(f"#{f}", Input).value.strip() for f in self.FIELDS}

    def problem(self, v: dict[str, str]) -> tuple[str, str] | None:
        """(field, one sentence) for the first missing or bad value, or None."""
        import datetime as dt

        if not v["address"]:
            return "address", "Give the site address."
        if not v["inspector"]:
            return "inspector", "Give the inspector's name (it goes on the report)."
        try:
            dt.date.fromisoformat(v["date"])
        except ValueError:
            return "date", f"Date: {v['date']!r} is not a date; give it as e.g. 2026-03-14."
        if v["level"].lower() not in VISIT_LEVELS:
            return "level", "Data-collection level: one of minimum, standard or detailed."
        return None

    def _make(self) -> None:
        v = self.values()
        bad = self.problem(v)
        if bad:
            self.query_one(f"#{bad[0]}").focus()
            self.notify(bad[1], severity="warning", markup=False)
            return
        self._create(v)

    @work(group="write", exit_on_error=False)
    async def _create(self, v: dict[str, str]) -> None:
        import datetime as dt

        day = v["date"]
        started = None if day == dt.date.today().isoformat() else f"{day}T00:00:00"

        def make(log: Any) -> str:
            site = log.find_site(v["address"]) or log.add_site(v["address"], v["address"])
            name = v["purpose"] or f"{day} {v['inspector']}"
            return log.add_visit(
                site.id, v["inspector"], v["level"].lower(), name=name, started_at=started
            ).id

        visit_id = await self.app.store.call(make)  # type: ignore[attr-defined]
        self.dismiss(visit_id)

    def action_cancel(self) -> None:
        self.dismiss(None)


class ProgressDialog(ReleasesKeys, ModalScreen[None]):
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
        yield Label("Office log, folder or postgresql:// hub (Enter starts, Esc closes):")
        yield Input(self.office_path, placeholder="e.g. /mnt/office/survey.fieldcheck", id="office")

    def on_mount(self) -> None:
        if self.app.store.is_demo:  # type: ignore[attr-defined]
            self.query_one("#summary", Static).update(
                "This is the invented demo survey: it is never synced. Start your own survey "
                "(ctrl+n on the first screen) to sync."
            )
            self.query_one("#office", Input).disabled = True

    @on(Input.Submitted, "#office")
    def _start(self, event: Input.Submitted) -> None:
        path = event.value.strip()
        if not path or self.running or self.app.store.is_demo:  # type: ignore[attr-defined]
            return
        self.app.office_path = path  # type: ignore[attr-defined]
        self.run_sync(path)

    @work(group="sync", exit_on_error=False)
    async def run_sync(self, path: str) -> None:
        from fieldcheck.store.sync import sync

        self.running = True
        t0 = time.perf_counter()
        try:
            result = await self.app.store.call(  # type: ignore[attr-defined]
                # the text as typed: a postgresql:// URL must not become a Path ("postgresql:/")
                lambda log: sync(log, path, progress=self.progress)
            )
        except Exception as exc:
            self.finish(f"Sync failed: {exc}", ok=False)
            return
        from fieldcheck.tui.present import sync_sentence

        self.finish(f"{sync_sentence(result)} ({time.perf_counter() - t0:.1f} s)")


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
        from fieldcheck.store.rows import short_ref

        path = self.app.store.path  # type: ignore[attr-defined]
        # each visit its own file: the end of its id (the head is the time, shared by visits
        # made in the same minute, whose reports would write over each other)
        suffix = f"-{short_ref(self.visit_id)}" if self.visit_id else ""
        default = (
            (path.parent / f"{path.stem}-report{suffix}.html") if path else Path("report.html")
        )
        self.query_one("#report-path", Input).value = str(default)

    @on(Input.Submitted, "#report-path")
    def _start(self, event: Input.Submitted) -> None:
        if event.value.strip() and not self.running:
            self.run_report(event.value.strip())

    @work(group="report", exit_on_error=False)
    async def run_report(self, path: str) -> None:
        from fieldcheck.report.html import write_report

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
    """(member, what a person calls it, its revisions) of every post in conflict."""
    from fieldcheck.store.rows import post_label

    out = []
    for member in log.conflicts():
        hist = log.history(member)
        tag = next((o.record.get("tag", "") for o in reversed(hist) if o.record.get("tag")), "")
        out.append((member, post_label(tag, member), hist))
    return out


class ConflictsScreen(ReleasesKeys, ModalScreen[None]):
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
            for _, tag, hist in rows:
                lines.append(
                    f"  {escape(tag)}: {len(hist)} revisions, latest by "
                    f"{escape(hist[-1].author)} {hist[-1].created_at[:16]}"
                )
            text = "\n".join(lines)
        self.query_one("#conflicts-list", Static).update(text)

    def action_close(self) -> None:
        self.dismiss(None)
