"""The fieldcheck interface: `fieldcheck` opens this.

Start-up stays light: this module imports Textual and our screens only. The survey log (sqlite-
utils, numpy) is opened on its own thread after the first frame (see logthread.py), and the engine
is imported when the first post editor opens.

Screens: SitesScreen (sites and visits with counts per action) -> VisitScreen (the posts of a
visit) -> PostEditor (the form, the live rating, working, shape and plot, remedies, history).
Global keys: F1 help, F7 conflicts, F8 units, F9 sync, F10 report, ctrl+p commands, ctrl+q quit.
"""

from __future__ import annotations

import contextlib
import json
import os
import threading
from collections.abc import Iterable
from functools import partial
from pathlib import Path
from typing import Any

from textual import events
from textual.app import App, SystemCommand
from textual.binding import Binding
from textual.message import Message
from textual.screen import Screen

from fieldcheck.tui.logthread import LogThread
from fieldcheck.tui.sites import SitesScreen

UNIT_SYSTEMS = ("us", "metric")
FORM_KEYS = frozenset({"enter", "tab", "shift+tab", "pagedown", "pageup"})


class ReleaseKeys(Message):
    """A field has dealt with Enter or Tab: the keys held meanwhile go on."""


DRAFTS_DELAY = 1.0  # seconds after the last change before the drafts file is written


def replace_file(path: Path, text: str | None) -> None:
    """Write ``text`` to ``path`` atomically (a temporary file beside it, flushed to disk, then
    renamed over it): a crash leaves the old file or the new one, never half of one. None
    removes the file."""
    if text is None:
        path.unlink(missing_ok=True)
        return
    tmp = path.with_name(f"{path.name}.{os.getpid()}.tmp")
    with open(tmp, "w", encoding="utf-8") as fh:
        fh.write(text)
        fh.flush()
        os.fsync(fh.fileno())
    os.replace(tmp, path)


class FieldcheckApp(App[None]):
    CSS_PATH = Path(__file__).parent / "app.tcss"
    TITLE = "fieldcheck"
    SUB_TITLE = "timber posts and shores: screening aid for a competent person"
    BINDINGS = [
        Binding("f1", "help", "Help", id="help"),
        Binding("f7", "conflicts", "Conflicts", id="conflicts"),
        Binding("f8", "units", "Units", id="units"),
        Binding("f9", "sync", "Sync", id="sync"),
        Binding("f10", "report", "Report", id="report"),
    ]

    def __init__(
        self, db: str | Path | None = None, units: str | None = None, *, demo: bool | None = None
    ) -> None:
        super().__init__()
        self.units = units if units in UNIT_SYSTEMS else "us"
        self.store = LogThread(db, demo=demo)
        self.drafts: dict[str, dict[str, Any]] = {}  # member id or "new:<visit id>" -> draft
        self._drafts_timer: Any = None
        self._drafts_lock = threading.Lock()
        self._drafts_seq = 0  # bumped on every change; a write never replaces a newer one
        self._drafts_written = 0
        self.office_path: str = ""
        self._held: list[events.Key] = []  # keys waiting (see on_event)
        self._holds = 0  # reasons to hold keys still open
        self._hold_timer: Any = None
        self.last_summary: str = ""  # the last sync or report summary (also notified)

    # -- life cycle --------------------------------------------------------------------------
    def get_driver_class(self) -> Any:
        """Textual's driver for this terminal, reading Esc as Esc (see keyparse.py)."""
        from fieldcheck.tui.keyparse import escape_first

        return escape_first(super().get_driver_class())

    def on_mount(self) -> None:
        self.push_screen(SitesScreen())
        if self.store.office:  # --db postgresql://...: the review queue first, Esc for the sites
            from fieldcheck.tui.office import OfficeScreen

            self.push_screen(OfficeScreen())

    def on_unmount(self) -> None:
        self.save_drafts()
        self.store.close()

    # -- drafts survive leaving a screen (memory) and quitting (a file beside the log) --------
    def drafts_file(self) -> Path | None:
        return None if self.store.path is None else self.store.path.with_suffix(".drafts.json")

    def load_drafts(self) -> None:
        f = self.drafts_file()
        if f is not None and f.exists():
            try:
                self.drafts.update(json.loads(f.read_text(encoding="utf-8")))
            except (OSError, ValueError):
                self.notify(f"Could not read drafts from {f}.", severity="warning", markup=False)

    def drafts_changed(self) -> None:
        """A draft changed: write the drafts file once typing has paused for DRAFTS_DELAY (so a
        crash loses at most that much typing), on a worker thread, atomically."""
        self._drafts_seq += 1
        if self._drafts_timer is not None:
            self._drafts_timer.stop()
        self._drafts_timer = self.set_timer(DRAFTS_DELAY, self._drafts_due)

    def _drafts_due(self) -> None:
        self._drafts_timer = None
        text = json.dumps(self.drafts, indent=1) if self.drafts else None
        self.run_worker(
            partial(self._write_drafts, text, self._drafts_seq),
            thread=True,
            group="drafts",
            exit_on_error=False,
            description="write drafts",
        )

    def _write_drafts(self, text: str | None, seq: int) -> None:
        f = self.drafts_file()
        if f is None:
            return
        with self._drafts_lock:
            if seq < self._drafts_written:
                return  # a newer state is already on disk
            self._drafts_written = seq
            try:
                replace_file(f, text)
            except OSError as exc:
                self.call_from_thread(
                    self.notify,
                    f"Could not keep drafts in {f}: {exc}",
                    severity="warning",
                    markup=False,
                )

    def save_drafts(self) -> None:
        """Write the drafts file now (leaving a post, quitting)."""
        if self._drafts_timer is not None:
            self._drafts_timer.stop()
            self._drafts_timer = None
        f = self.drafts_file()
        if f is None:
            return
        text = json.dumps(self.drafts, indent=1) if self.drafts else None
        with self._drafts_lock:
            self._drafts_written = self._drafts_seq
            with contextlib.suppress(OSError):
                replace_file(f, text)

    def start_own_survey(self) -> None:
        """Leave the invented demo for the user's own survey log (made if new), back on the
        first screen; the demo stays in its own file."""
        old = self.store
        self.save_drafts()
        self.store = LogThread(None, demo=False)
        self.drafts = {}
        old.close()
        while len(self.screen_stack) > 2:
            self.pop_screen()

    # -- keys: none lost or misplaced ---------------------------------------------------------
    # The app hands each key to the focused widget's own queue. A field handles Enter (or Tab)
    # only after the keys typed before it, and only then moves the focus; a key for a list goes
    # up to the screen's bindings later still; a new screen takes a moment to appear. Keys typed
    # meanwhile would go to the field or the list just left (where a letter may be a command).
    # So from such a key until it has been dealt with, and from a change of screen until the new
    # screen is up, later keys wait here, in order, and then go where the focus is by then.
    HOLD_LIMIT = 8.0  # seconds: never hold keys longer than this, whatever happened

    async def on_event(self, event: events.Event) -> None:
        if not isinstance(event, events.Key) or event.is_forwarded:  # (a key bubbling back up)
            await super().on_event(event)
            return
        if self._holds or self._held:  # waiting keys go first, in order
            self._held.append(event)
            return
        await self._route_key(event)

    async def _route_key(self, event: events.Key) -> None:
        from textual.widgets import Input

        focused = self.screen.focused
        bubbles = False
        if event.key in FORM_KEYS and getattr(focused, "holds_keys", False):
            self.hold_keys()  # released by the field once it has dealt with the key
        elif not (isinstance(focused, Input) and event.is_printable):
            # a key for a list, a table or the screen: the next key waits until this one has
            # bubbled up here and its binding has run (see _on_key)
            bubbles = True
            self.hold_keys()
            event._fc_hold = True  # type: ignore[attr-defined]
        await super().on_event(event)
        if bubbles and not event.is_forwarded:  # a priority binding took it here and now
            event._fc_hold = False  # type: ignore[attr-defined]
            self.release_keys()

    async def _on_key(self, event: events.Key) -> None:
        # Textual calls App._on_key (the bindings) after this one; the release is a message, so
        # the held keys go on only after that, and after any screen it opened is up
        if getattr(event, "_fc_hold", False):
            event._fc_hold = False  # type: ignore[attr-defined]
            self.release_keys()

    def hold_keys(self) -> None:
        self._holds += 1
        if self._hold_timer is not None:
            self._hold_timer.stop()
        self._hold_timer = self.set_timer(self.HOLD_LIMIT, self._hold_expired)

    def release_keys(self) -> None:
        """One reason to hold keys is over (a field dealt with its key, a screen is up)."""
        self._holds = max(0, self._holds - 1)
        if not self._holds:
            self.post_message(ReleaseKeys())

    def _hold_expired(self) -> None:
        self._hold_timer = None
        if self._holds:
            self._holds = 0
            self.post_message(ReleaseKeys())

    async def on_release_keys(self, _message: ReleaseKeys) -> None:
        while self._held and not self._holds:
            await self._route_key(self._held.pop(0))

    def screen_up(self, screen: Screen) -> None:
        """A screen of ours is shown (pushed or uncovered): focus its first field if nothing
        has focus yet (Textual waits for the terminal to report focus), then let keys go on."""
        if screen.focused is None and screen.AUTO_FOCUS:
            for widget in screen.query(screen.AUTO_FOCUS):
                if widget.focusable:
                    screen.set_focus(widget)
                    break
        screen.call_after_refresh(self.release_keys)

    def push_screen(self, screen: Any, *args: Any, **kwargs: Any) -> Any:  # type: ignore[override]
        if getattr(screen, "releases_keys", False):
            self.hold_keys()
        return super().push_screen(screen, *args, **kwargs)

    def pop_screen(self) -> Any:
        if len(self.screen_stack) > 1 and getattr(self.screen_stack[-2], "releases_keys", False):
            self.hold_keys()
        return super().pop_screen()

    # -- global actions ----------------------------------------------------------------------
    def action_help(self) -> None:
        from fieldcheck.tui.dialogs import HelpScreen

        self.push_screen(HelpScreen(self.screen))

    def action_units(self) -> None:
        self.units = "metric" if self.units == "us" else "us"
        self.notify(f"Units: {self.units}")
        refresh = getattr(self.screen, "units_changed", None)
        if refresh is not None:
            refresh()

    def _visit_context(self) -> tuple[str | None, str | None]:
        """(site id, visit id) of the screen in front, for sync and report scope."""
        for screen in reversed(self.screen_stack):
            visit_id = getattr(screen, "visit_id", None)
            if visit_id:
                return getattr(screen, "site_id", None), visit_id
        return None, None

    def action_sync(self) -> None:
        from fieldcheck.tui.dialogs import SyncDialog

        # the office view syncs its mirror with the hub it was opened on
        hub = str(self.store.db) if self.store.office else ""
        self.push_screen(SyncDialog(self.office_path or hub))

    def action_report(self) -> None:
        from fieldcheck.tui.dialogs import ReportDialog

        site_id, visit_id = self._visit_context()
        self.push_screen(ReportDialog(site_id, visit_id))

    def action_conflicts(self) -> None:
        from fieldcheck.tui.dialogs import ConflictsScreen

        self.push_screen(ConflictsScreen())

    # -- command palette: every action that has a key, on the screen in front ------------------
    def get_system_commands(self, screen: Screen) -> Iterable[SystemCommand]:
        """Each command once (by its name), only those usable on the screen in front."""
        seen: set[str] = set()
        ours = []
        for key, active in screen.active_bindings.items():
            b = active.binding
            if not b.description or b.system or b.description in seen or not active.enabled:
                continue
            if type(active.node).__module__.startswith("textual."):
                continue  # the widgets' own keys (cursor motion, editing)
            seen.add(b.description)
            ours.append((key, active, b))
        for cmd in super().get_system_commands(screen):
            if cmd.title not in seen:
                seen.add(cmd.title)
                yield cmd
        for key, active, b in ours:
            label = b.key_display or key
            yield SystemCommand(
                b.description,
                f"{b.tooltip or b.description} (key: {label})",
                partial(self.call_later, active.node.run_action, b.action),
            )


def run(db: str | Path | None = None, units: str | None = None) -> int:
    """Open the interface on the survey log at ``db`` (default: the user's data folder)."""
    app = FieldcheckApp(db=db, units=units)
    app.run()
    return int(app.return_code or 0)
