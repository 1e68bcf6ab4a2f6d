"""The post editor: the form beside a live rating that re-rates on every valid change.

Panes (F2-F6): Rating (capacity, demand, ratio bar, governing check, action, warnings, cautions),
Working (each step with its clause), Shape (end conditions drawn, capacity against height with
this post marked), Remedies (ctrl+r applies one as a new revision), History (every revision).
Saving (ctrl+s) appends a revision; leaving with changes asks, or keeps them as a draft; ctrl+z
undoes the last change.

Speed (bench/interface.py, keystroke to repainted rating): a field reports its new value inside
the key's handler (form.FieldInput), the rating head and checks are repainted without a layout
pass, in the same frame; Textual lays out the whole screen on any layout request, so nothing a
keystroke touches may change height. The wrapped text, the remedies, the working and the plot
follow with the full summary once typing pauses (FULL_SUMMARY_DELAY); only the pane in front is
drawn.
"""

from __future__ import annotations

import asyncio
import contextlib
import math
from typing import Any

import numpy as np
from textual import on, work
from textual.app import ComposeResult
from textual.binding import Binding
from textual.containers import Horizontal, VerticalScroll
from textual.css.query import NoMatches
from textual.screen import Screen
from textual.widgets import (
    Collapsible,
    Header,
    Input,
    OptionList,
    Static,
    TabbedContent,
    TabPane,
)
from textual.widgets.option_list import Option

from fieldcheck.engine import explain
from fieldcheck.engine.curves import capacity_vs_height
from fieldcheck.engine.rating import rate
from fieldcheck.records import COLUMNS, parse_records
from fieldcheck.report.notation import units_first
from fieldcheck.tui import present, remedy_words
from fieldcheck.tui.drawing import ends_drawing
from fieldcheck.tui.footer import FittedFooter
from fieldcheck.tui.form import (
    DefectGroup,
    DefectPicker,
    FieldGroup,
    FieldInput,
    compose_form,
    defect_columns,
    defect_kind,
    field_ids,
    place,
)
from fieldcheck.tui.keyhold import ReleasesKeys
from fieldcheck.tui.plot import braille_plot

TABS = ("rating", "working", "shape", "remedies", "history")
FULL_SUMMARY_DELAY = 0.15  # seconds of no typing before the full summary (with remedies)


def quick_summary(rating: Any) -> dict[str, Any]:
    """The summary of the one post rated, without the remedies (one more engine call each): the
    full summary with them replaces it moments later."""
    out = explain.summary(rating, 0, with_remedies=False)
    out["quick"] = True
    return out


def clean(record: dict[str, str]) -> dict[str, str]:
    return {k: v for k, v in record.items() if v is not None and str(v).strip()}


# a draft of a saved post keeps, beside its fields, the revision it was edited from (no column is
# named with a leading underscore): a draft restored after another program wrote the post is
# saved beside that revision as a conflict, never over it
DRAFT_BASE = "_edited_from"


def draft_fields(draft: dict[str, Any]) -> tuple[dict[str, str], str | None]:
    """A draft's fields and the revision it was edited from (None: a new post, or an older
    drafts file)."""
    fields = {k: v for k, v in draft.items() if k != DRAFT_BASE}
    base = draft.get(DRAFT_BASE)
    return fields, base if isinstance(base, str) and base else None


def capacity_curve(batch: Any, heights_mm: np.ndarray) -> np.ndarray:
    """Capacity (N) of this one post at each height, in one engine call."""
    return np.asarray(capacity_vs_height(batch, heights_mm), dtype=float).reshape(-1)


class PostEditor(ReleasesKeys, Screen[None]):
    AUTO_FOCUS = "#form Input"
    BINDINGS = [
        # save, back and help first: the footer shows the keys that fit whole, in this order
        # (F1 and ctrl+p list all)
        Binding("ctrl+s", "save", "Save", id="save"),
        Binding("escape", "leave", "Back", id="leave"),
        Binding("f1", "app.help", "Help", id="editor_help"),
        Binding("ctrl+z", "undo", "Undo", id="undo"),
        Binding("ctrl+r", "propose_remedy", "Propose remedy", id="propose_remedy"),
        Binding("ctrl+o", "remedy_done", "Remedy done", id="remedy_done"),
        Binding("ctrl+t", "attach_photo", "Attach photo", id="attach_photo"),
        Binding("f2", "tab('rating')", "Rating", id="tab_rating"),
        Binding("f3", "tab('working')", "Working", id="tab_working"),
        Binding("f4", "tab('shape')", "Shape", id="tab_shape"),
        Binding("f5", "tab('remedies')", "Remedies", id="tab_remedies"),
        Binding("f6", "tab('history')", "History", id="tab_history"),
        Binding("ctrl+down", "next_field", "Next field", show=False, id="next_field"),
    ]

    def __init__(
        self,
        visit_id: str,
        member_id: str | None,
        record: dict[str, str],
        tag: str = "",
        *,
        revision: str | None = None,
    ) -> None:
        super().__init__()
        self.visit_id = visit_id
        self.site_id: str | None = None
        self.member_id = member_id
        self.saved_record = clean(record)
        self.record = dict(self.saved_record)
        self.tag = tag
        self.undo_stack: list[dict[str, str]] = []
        self.last_field: str | None = None
        self.errors: dict[str, str] = {}  # column -> message (typing or combination)
        self.batch: Any = None
        self.rating: Any = None
        self.summary: dict[str, Any] | None = None
        self.material = ""  # the records' material text of the post rated (table, status)
        self.stale = False  # the rating shown is the last valid one
        self.remedies: list[dict[str, Any]] = []  # as listed: ranked, no margin last
        # the saved revision the form shows: the one ``record`` came from (``revision``), then
        # each one saved; a save supersedes it (Log.save_post base=), so a revision another
        # program wrote meanwhile is kept beside it as a conflict, not written over
        self.head_id: str | None = revision if member_id is not None else None
        self.open_proposals: list[Any] = []  # store.proposals.Proposal, newest first
        self.remedy_state: Any = None  # store.proposals.RemedyState of this post
        self.draft_restored = False
        self.generation = 0
        self._full_timer: Any = None
        self._writing = asyncio.Lock()  # one save at a time; leaving waits for it
        self._saves_pending = 0  # ctrl+s pressed, save not finished
        self._msg_boxes: dict[str, Static] = {}  # column -> its message line, once mounted
        self._detail_stale: bool | None = None  # stale state when the detail panel was drawn

    @property
    def draft_key(self) -> str:
        return self.member_id or f"new:{self.visit_id}"

    @property
    def dirty(self) -> bool:
        return clean(self.record) != self.saved_record

    def compose(self) -> ComposeResult:
        draft = self.app.drafts.get(self.draft_key)  # type: ignore[attr-defined]
        fields, base = draft_fields(draft) if draft is not None else ({}, None)
        if draft is not None and clean(fields) != self.saved_record:
            self.record = dict(fields)
            self.draft_restored = True
            if base is not None and self.member_id is not None:
                self.head_id = base  # the draft's edits were made to that revision
        yield Header()
        yield Static("", id="editor-title", classes="title")
        yield Static("", id="review-line", classes="review")  # the office review, if any
        with Horizontal(id="editor-body"):
            with VerticalScroll(id="form"):
                yield from compose_form(COLUMNS, self.record)
            with TabbedContent(initial="rating", id="side"):
                with TabPane("Rating F2", id="rating"), VerticalScroll(id="rating-panel-scroll"):
                    yield Static("", id="rating-head")
                    yield Static("", id="rating-checks")
                    yield Static("", id="rating-panel")
                    yield Static("", id="cautions", classes="cautions")
                with TabPane("Working F3", id="working"), VerticalScroll():
                    yield Static("", id="working-panel")
                with TabPane("Shape F4", id="shape"), VerticalScroll():
                    yield Static("", id="ends-panel", markup=False)
                    yield Static("", id="plot-panel", markup=False)
                with TabPane("Remedies F5", id="remedies"):
                    yield Static("", id="remedy-help")
                    yield OptionList(id="remedy-list")
                with TabPane("History F6", id="history"), VerticalScroll():
                    yield Static("", id="history-panel")
        yield FittedFooter()

    def on_mount(self) -> None:
        self.set_class(self.app.size.width < self.NARROW, "-narrow")
        for name, text in self.record.items():
            if text and name in COLUMNS:
                self._validate(name)
        self.query_one("#cautions", Static).update("\n".join(present.cautions_short()))
        self.rerate()
        self._title()
        if self.member_id:
            self.load_history()
            self.load_proposals()
        else:
            self.query_one("#history-panel", Static).update("A new post: no revisions yet.")
        if self.draft_restored:
            self.notify(
                "Your unsaved draft of this post was restored (ctrl+s saves it).", markup=False
            )

    NARROW = 80  # columns: below this the panes stack (rating on top)

    def on_resize(self, event: Any) -> None:
        self.set_class(event.size.width < self.NARROW, "-narrow")

    def units_changed(self) -> None:
        self.render_rating()

    # -- typing ------------------------------------------------------------------------------
    @on(Input.Changed)
    def _changed(self, event: Input.Changed) -> None:
        # normally already done by the field itself; the message arrives a frame late, so use
        # the field's value now, not the one it carries (which a later key may have replaced)
        self.field_edited(event.input, event.input.value)

    def field_edited(self, inp: Input, text: str) -> None:
        """A field's value changed: called by the field itself (form.FieldInput), so the
        rating is repainted in the same frame as the keystroke."""
        iid = inp.id or ""
        if not iid.startswith("f-"):
            return
        name = iid[2:]
        if self.record.get(name, "") == text:
            return
        if name != self.last_field:
            self.undo_stack.append(dict(self.record))
            self.last_field = name
        if text.strip():
            self.record[name] = text
        else:
            self.record.pop(name, None)
        self._validate(name)
        self._after_change()

    def form_key(self, key: str, focused: Any) -> Any:
        """Enter, Tab, shift+Tab, PageDown or PageUp in a field, once the keys typed before it
        are in (form.FieldInput; the app holds later keys until this returns). Leaving a
        fixed-choice field completes the value its first letters stand for. Enter moves to the
        next field (never onto a section title, so it never folds a section); in "add a defect"
        it adds that kind's fields; PageDown/PageUp go to the next/previous section."""
        if isinstance(focused, FieldInput) and not isinstance(focused, DefectPicker):
            focused.complete()
        if key == "tab":
            self.focus_next()
            return True
        if key == "shift+tab":
            self.focus_previous()
            return True
        if key in ("pagedown", "pageup"):
            self.next_section(focused, 1 if key == "pagedown" else -1)
            return True
        if not isinstance(focused, FieldInput):
            return False
        if isinstance(focused, DefectPicker) and focused.value.strip():
            kinds = list(defect_columns(COLUMNS))
            kind = defect_kind(focused.value, kinds)
            if kind is None:
                self.notify(
                    f"{focused.value.strip()!r} is not a defect kind here; use one of "
                    + ", ".join(kinds)
                    + ".",
                    severity="warning",
                    markup=False,
                )
                return True
            focused.value = ""
            return self.add_defect(kind)  # type: ignore[return-value]
        self.next_field(focused)
        return True

    def next_section(self, current: Any, step: int) -> None:
        """PageDown/PageUp: the first field of the next/previous section."""
        sections = list(self.query("#form .section"))
        here = next((s for s in sections if current in s.walk_children()), None)
        k = sections.index(here) if here is not None else -1
        for s in sections[k + step :: step] if step > 0 else sections[: max(k, 0)][::-1]:
            first = next((w for w in s.query(FieldInput) if w.focusable), None)
            if first is not None:
                self.set_focus(first)
                return

    def next_field(self, current: Any) -> None:
        fields = [w for w in self.query("#form FieldInput") if w.focusable]
        try:
            k = fields.index(current)
        except ValueError:
            k = -1
        if k + 1 < len(fields):
            self.set_focus(fields[k + 1])
        else:
            self.notify("That was the last field: ctrl+s saves the post.", markup=False)

    def action_next_field(self) -> None:
        self.next_field(self.focused)

    def _after_change(self) -> None:
        self._keep_draft()
        self.rerate()
        self._title()

    def _keep_draft(self) -> None:
        drafts = self.app.drafts  # type: ignore[attr-defined]
        if self.dirty:
            drafts[self.draft_key] = dict(self.record)
            if self.member_id is not None and self.head_id is not None:
                drafts[self.draft_key][DRAFT_BASE] = self.head_id
        elif drafts.pop(self.draft_key, None) is None:
            return
        self.app.drafts_changed()  # type: ignore[attr-defined]

    def _validate(self, name: str) -> bool:
        text = self.record.get(name, "")
        msg = ""
        if text.strip():
            try:
                COLUMNS[name].parse(text)
            except ValueError as exc:
                msg = str(exc)
        self._show_error(name, msg)
        return not msg

    def _show_error(self, name: str, msg: str) -> None:
        if name not in COLUMNS:
            return
        msg = present.plain(msg)
        if msg:
            self.errors[name] = msg
        else:
            self.errors.pop(name, None)
        self._paint_error(name)

    def _paint_error(self, name: str) -> None:
        """Show the column's message under its field (if the field is built yet); unchanged
        messages cost nothing, so a keystroke in a good field asks for no layout."""
        fid, mid = field_ids(name)
        msg = self.errors.get(name, "")
        shown = f"✖ {msg}" if msg else ""
        box = self._msg_boxes.get(name)
        if box is None:
            if not msg:
                return
            try:
                inp = self.query_one(f"#{fid}", Input)
            except NoMatches:
                return  # its section is not built yet: shown when it is opened
            row = inp.parent
            box = Static(shown, id=mid, classes="msg -shown", markup=False)
            box._fc_text = shown  # type: ignore[attr-defined]
            self._msg_boxes[name] = box
            inp.set_class(True, "-bad")
            row.parent.mount(box, after=row)  # type: ignore[union-attr]
            return
        if str(box.content) == shown:
            return
        with contextlib.suppress(NoMatches):
            self.query_one(f"#{fid}", Input).set_class(bool(msg), "-bad")
        if box.has_class("-shown") == bool(msg):
            self._update_static(box, shown)  # a message that keeps its height: no layout pass
            return
        box.set_class(bool(msg), "-shown")
        box.update(shown)
        box._fc_text = shown  # type: ignore[attr-defined]

    @on(Collapsible.Expanded)
    async def _opened(self, event: Collapsible.Expanded) -> None:
        group = event.collapsible
        if isinstance(group, FieldGroup) and await group.build(self.record):
            for name in group.names:
                if name in self.errors:
                    self._paint_error(name)

    def _reveal(self, name: str) -> None:
        """Show the field of ``name`` (open its "more…" or add its defect), built from
        self.record."""
        where, key = place(COLUMNS, name)
        if where == "defect" and key is not None:
            self.run_worker(self.add_defect(key, focus=False), group="defects")
        elif where == "more":
            try:
                self.query_one(f"#more-{key}", FieldGroup).collapsed = False
            except NoMatches:
                return

    async def add_defect(self, kind: str, focus: bool = True) -> bool:
        """Add a defect kind's fields above the "add a defect" field (once), and move to its
        first field (the app holds keys typed meanwhile: they land there)."""
        try:
            group = self.query_one(f"#d-{kind}", DefectGroup)
        except NoMatches:
            cols = defect_columns(COLUMNS)[kind]
            group = DefectGroup(kind, cols, self.record)
            picker = self.query_one("#add-defect", DefectPicker)
            await self.query_one("#g-seen").mount(group, before=picker.parent)
            for name in group.names:
                if name in self.errors:
                    self._paint_error(name)
        if focus:
            self.set_focus(group.query(FieldInput).first())
        return True

    # -- rating ------------------------------------------------------------------------------
    def rerate(self) -> None:
        """Parse the record and rate it (about a millisecond): every valid change re-rates."""
        bad = [n for n in self.errors if not self._parses(n)]  # typing errors stay shown
        for name in [n for n in self.errors if n not in bad]:
            self._show_error(name, "")  # a combination error is re-derived below
        self.combination: list[str] = []
        if bad:
            self.stale = True
            self.render_rating()
            return
        parsed = parse_records([self.record])
        if parsed.errors:
            self.stale = True
            for err in parsed.errors:
                if err.column in COLUMNS:
                    self._show_error(err.column, err.message)
            self.combination = [e.message for e in parsed.errors]
            self.render_rating()
            return
        self.batch = parsed.batch
        self.material = parsed.meta[0].get("_material", "")
        self.rating = rate(parsed.batch)
        self.summary = self._with_material(quick_summary(self.rating))
        self.stale = False
        self.render_rating(detail=False)
        # the full summary (load combination, remedies: ~20 ms) follows once typing pauses
        self.generation += 1
        if self._full_timer is not None:
            self._full_timer.stop()
        self._full_timer = self.set_timer(FULL_SUMMARY_DELAY, self._start_full_summary)

    def _start_full_summary(self) -> None:
        self._full_timer = None
        self.full_summary(self.rating, self.generation)

    # a description of our own: Textual would otherwise build one from repr(rating), which
    # prints every array of the rating (~15 ms on the UI thread)
    @work(
        thread=True,
        exclusive=True,
        group="summary",
        exit_on_error=False,
        description="full summary",
    )
    def full_summary(self, rating: Any, generation: int) -> None:
        summary = explain.summary(rating, 0)
        self.app.call_from_thread(self._full_done, summary, generation)

    def _with_material(self, summary: dict[str, Any]) -> dict[str, Any]:
        """The summary with the material as the records name it (the table and row the values
        came from) and each value's status in words, as the command line prints them."""
        summary["material"] = self.material
        summary["values_text"] = explain.status_line(summary)
        return summary

    def _full_done(self, summary: dict[str, Any], generation: int) -> None:
        if generation != self.generation or self.stale:
            return  # typed on since: a newer rating is on its way
        self.summary = self._with_material(summary)
        self.render_rating()

    def _parses(self, name: str) -> bool:
        text = self.record.get(name, "")
        if not text.strip() or name not in COLUMNS:
            return True
        try:
            COLUMNS[name].parse(text)
        except ValueError:
            return False
        return True

    def render_rating(self, detail: bool = True) -> None:
        """Repaint the rating. ``detail=False`` (a keystroke with a valid form) repaints the
        fixed-height head and the checks only; the wrapped text below and the remedies follow
        with the full summary once typing pauses, so a keystroke asks for no layout pass."""
        active = self.query_one("#side", TabbedContent).active
        if active == "rating":
            self._render_rating_pane(detail)
        elif not detail:
            return  # the working, the plot and the remedies follow once typing pauses (~20 ms)
        if active == "remedies":
            self._render_remedies()
        try:
            if active == "working":
                self._render_working()
            elif active == "shape":
                self._render_shape()
        except Exception as exc:
            self.notify(
                f"Could not draw the {active} pane: {exc}", severity="warning", markup=False
            )

    def _render_rating_pane(self, detail: bool) -> None:
        units = self.app.units  # type: ignore[attr-defined]
        width = self.query_one("#side").size.width - 4
        shown = None if self.stale else self.summary  # never an old result beside "not rated"
        if self.stale:
            bad = ", ".join(self.errors) or "the form"
            status = f"[b $warning]✖ NOT RATED: fix {present.escape(bad)}[/]"
        elif self.summary is None:
            status = "Type a size and a height to rate this post."
        elif present.load_missing(self.summary):
            status = "[b $warning]? NOT RATED: load missing[/] (give the load)"
        else:
            status = "[b]✓ rated[/b] live: every valid change re-rates"
        ec5 = (self.record.get("method") or "").strip().lower() == "ec5"
        head = self.query_one("#rating-head", Static)
        head.update(
            "\n".join(present.head_lines(shown, units, width, status, ec5=ec5)), layout=False
        )
        checks = self.query_one("#rating-checks", Static)
        lines = present.check_lines(shown)
        same = getattr(checks, "_fc_lines", None) == len(lines)
        checks._fc_lines = len(lines)  # type: ignore[attr-defined]
        checks.update("\n".join(lines), layout=not same)
        if detail or self._detail_stale is not self.stale:
            self._detail_stale = self.stale
            more = present.detail_lines(shown)
            if self.stale:
                more = [present.escape(present.plain(m)) for m in self.combination[:3]]
            self._update_static(self.query_one("#rating-panel", Static), "\n".join(more))

    def _update_static(self, widget: Static, text: str) -> None:
        """Update a Static, asking for a layout pass only if its wrapped height changes (a layout
        pass costs the whole screen; a keystroke must repaint within a frame)."""
        if getattr(widget, "_fc_text", None) == text:
            return
        widget._fc_text = text  # type: ignore[attr-defined]
        width = widget.size.width
        if width <= 0 or not widget.display:
            widget.update(text)
            return
        old = widget.size.height
        widget.update(text, layout=False)
        if widget.visual.get_height(widget.styles, width) != old:
            widget.refresh(layout=True)

    def _render_working(self) -> None:
        out = []
        if self.stale:
            out.append("Not rated: fix the field marked ✖ in the form; no working until then.")
        elif self.rating is not None:
            out.append("[b]Working[/b] (values to 4 significant figures)")
            # the user's units first, as the rating head and the report give them (an EC5 post
            # speaks kN and mm first whatever the units, as EN 1995-1-1 and the report do)
            ec5 = (self.record.get("method") or "").strip().lower() == "ec5"
            units = "metric" if ec5 else self.app.units  # type: ignore[attr-defined]
            for step in explain.working(self.rating, 0):
                note = present.memory_note(step.label, step.clause or "", self.record)
                clause = step.clause.replace("[M]", "").strip() if step.clause else ""
                clause = f"  [dim]{present.escape(clause)}{note}[/dim]" if clause or note else ""
                value = units_first(present.sig_text(step.value), units)
                out.append(f"{present.escape(step.label)}: [b]{present.escape(value)}[/b]{clause}")
        else:
            out.append("No rating yet.")
        self._update_static(self.query_one("#working-panel", Static), "\n".join(out))

    def _render_shape(self) -> None:
        rec = self.record
        s = self.summary or {}
        ke, symbol = s.get("effective_length_factor"), "Ke"
        if ke is None and s.get("buckling_length_factors"):  # EC5: beta, of the governing axis
            ke, symbol = s["buckling_length_factors"][int(s.get("governing_axis") or 1) - 1], "β"
        self._update_static(
            self.query_one("#ends-panel", Static),
            ends_drawing(rec.get("top") or "pinned", rec.get("bottom") or "pinned", ke, 7, symbol),
        )
        plot = self.query_one("#plot-panel", Static)
        if self.batch is None or self.rating is None or self.stale:
            self._update_static(plot, "No plot until the post is rated.")
            return
        units = self.app.units  # type: ignore[attr-defined]
        h = float(self.batch.height_mm[0])
        width = max(20, min(60, self.query_one("#side").size.width - 14))
        heights = np.linspace(max(300.0, 0.3 * h), 2.0 * h, 2 * width)
        caps = capacity_curve(self.batch, heights)
        cap = float(self.rating.capacity_n[0])
        dem = float(self.rating.demand_n[0])
        text = braille_plot(
            heights,
            caps,
            width=width,
            height=8,
            mark=(h, cap),
            hline=dem if math.isfinite(dem) and dem > 0 else None,
            xfmt=lambda v: present.length(v, units),
            yfmt=lambda v: present.force(v, units),
        )
        self._update_static(
            plot,
            "Capacity against height\n"
            + text
            + f"\n◆ this post: {present.length(h, units)}, {present.force(cap, units)}"
            + (
                "\n╌ D demand " + present.force(dem, units)
                if math.isfinite(dem) and dem > 0
                else ""
            ),
        )

    def _render_remedies(self) -> None:
        if self.query_one("#side", TabbedContent).active != "remedies":
            return  # drawn when its pane is shown: a hidden widget's update costs a full layout
        rems = [] if self.stale else remedy_words.ranked((self.summary or {}).get("remedies") or [])
        box = self.query_one("#remedy-list", OptionList)
        if rems != self.remedies or box.option_count != len(rems):
            self.remedies = rems
            box.clear_options()
            units = self.app.units  # type: ignore[attr-defined]
            width = self._width_mm()
            for i, rem in enumerate(rems):
                box.add_option(Option(remedy_words.line(rem, units, width), id=str(i)))
            if rems:
                box.highlighted = 0
        ratio = (self.summary or {}).get("demand_capacity_ratio")
        action = (self.summary or {}).get("action")
        lines = []
        if self.stale:
            lines.append("Not rated: fix the form first; remedies follow from a good rating.")
        elif present.load_missing(self.summary):
            lines.append("Not rated: load missing. Give the load to see what would make it pass.")
        elif rems:
            lines.append(
                f"As found: ratio {present.ratio_text(ratio)}. Enter or ctrl+r proposes the "
                "highlighted remedy; the post stays recorded and rated as found."
            )
            note = (self.summary or {}).get("remedies_note")
            if note:
                lines.append(note)
        elif ratio is not None and ratio > 1.0:
            lines.append(
                "No single change modelled makes this post pass: make it safe and ask the engineer."
            )
        elif ratio is not None and action in ("repair-or-brace", "make-safe-now"):
            # the ratio passes, the action comes from a warning (decay, a pad of unknown
            # thickness, ...): never "no remedy needed" beside a repair or make-safe action
            lines.append(
                f"The ratio passes ({present.ratio_text(ratio)}), but the action is "
                f"{present.action_word(action)}: it comes from the warnings on the Rating tab "
                "(F2); do what they say."
            )
        else:
            lines.append(
                "No remedy needed: the post passes." if ratio is not None else "Not rated yet."
            )
        lines += self._proposal_lines()
        msg = "\n".join(lines)
        help_ = self.query_one("#remedy-help", Static)
        if str(help_.content) != msg:
            help_.update(msg)

    @on(TabbedContent.TabActivated, "#side")
    def _tab(self) -> None:
        self.render_rating()

    def action_tab(self, name: str) -> None:
        self.query_one("#side", TabbedContent).active = name
        if name == "remedies":
            self.query_one("#remedy-list").focus()

    # -- title, history ----------------------------------------------------------------------
    def _title(self) -> None:
        tag = self.record.get("tag") or self.tag or "new post"
        state = (
            "new, not saved"
            if self.member_id is None
            else ("unsaved changes" if self.dirty else "saved")
        )
        mark = "✎ " if self.dirty or self.member_id is None else "✓ "
        st = self.remedy_state
        if st is not None and st.state == "as remedied":
            state += f", as remedied {st.done_on}"
        elif self.open_proposals:
            state += ", as found, remedy proposed"
        title = f"Post {present.escape(tag)} — {mark}{state}"
        widget = self.query_one("#editor-title", Static)
        if str(widget.content) != title:
            widget.update(title, layout=False)

    @work(group="history", exclusive=True, exit_on_error=False)
    async def load_history(self) -> None:
        member = self.member_id
        hist = await self.app.store.call(lambda log: log.history(member))  # type: ignore[attr-defined]
        state = await self.app.store.call(lambda log: log.review_state(member))  # type: ignore[attr-defined]
        if member == self.member_id:  # "reviewed by …, on …" and the engineer's instruction
            self.query_one("#review-line", Static).update(
                "Office review: " + present.escape(state.line()), layout=False
            )
        if hist and member == self.member_id and self.head_id is None:
            self.head_id = hist[-1].id  # opened without its revision: the latest
        lines = [f"[b]{len(hist)} revision{'s' if len(hist) != 1 else ''}[/b] (oldest first)"]
        prev: dict[str, str] = {}
        for k, obs in enumerate(hist, 1):
            what = "withdrawn: " + present.escape(obs.reason) if obs.withdrawn else ""
            changed = [
                c for c in sorted(set(prev) | set(obs.record)) if prev.get(c) != obs.record.get(c)
            ]
            detail = ", ".join(
                f"{c} = {present.escape(obs.record.get(c, '(cleared)'))}" for c in changed[:8]
            )
            if len(changed) > 8:
                detail += f", … {len(changed) - 8} more"
            lines.append(f"{k}. {obs.created_at[:16]} by {present.escape(obs.author)} {what}")
            lines.append(f"   {detail or 'no change'}")
            prev = obs.record
        self.query_one("#history-panel", Static).update("\n".join(lines))

    # -- save, undo, leave, remedies ---------------------------------------------------------
    async def save(self, quiet: bool = False) -> bool:
        """Save the post (a new revision); a second save waits for the first, so a quick
        ctrl+s ctrl+s makes one revision, and leaving waits for a save in flight."""
        async with self._writing:
            return await self._save(quiet)

    async def _save(self, quiet: bool) -> bool:
        focused = self.focused
        if isinstance(focused, FieldInput) and not isinstance(focused, DefectPicker):
            focused.complete()  # "s" for seven-days, as when leaving the field
        record = clean(self.record)
        member = self.member_id
        if member is not None and not self.dirty:
            if not quiet:
                self.notify("Nothing changed: no new revision.", markup=False)
            return True
        base = self.head_id if member is not None else None

        def write(log: Any) -> tuple[Any, bool]:
            """The revision saved, and whether this save made the post a conflict (a conflict
            from before, a sync's, is already marked ⚡ in the list)."""
            before = member is not None and log.in_conflict(member)
            obs = log.save_post(self.visit_id, record, member, allow_errors=True, base=base)
            return obs, not before and member is not None and log.in_conflict(member)

        try:
            obs, conflict = await self.app.store.call(write)  # type: ignore[attr-defined]
        except Exception as exc:
            self.notify(f"Not saved: {exc}", severity="error", markup=False)
            return False
        self.app.drafts.pop(self.draft_key, None)  # type: ignore[attr-defined]
        self.member_id = obs.member_id
        self.head_id = obs.id
        self.saved_record = record
        self.app.drafts.pop(self.draft_key, None)  # type: ignore[attr-defined]
        self.app.drafts_changed()  # type: ignore[attr-defined]
        self._title()
        self.load_history()
        tag = record.get("tag", "post")
        if conflict:
            self.notify(
                f"Saved {tag}, but the post was also changed elsewhere (another program or a "
                "sync) since you opened it: both revisions are kept, marked ⚡ as a conflict for "
                "the office to settle; see History (F6).",
                severity="warning",
                timeout=15,
                markup=False,
            )
        if self.stale:
            self.notify(
                f"Saved {tag} as a new revision, not rated: "
                + "; ".join(self.errors.values() or ["see the form"]),
                severity="warning",
                markup=False,
            )
        elif quiet:
            self.notify(f"Saved {tag} as found.", markup=False)
        else:
            self.notify(f"Saved {tag} as a new revision.", markup=False)
        return True

    def action_save(self) -> None:
        self._saves_pending += 1  # counted at once: a leave right after waits for it
        self._run_save()

    @work(group="write", exit_on_error=False)
    async def _run_save(self) -> None:
        try:
            await self.save()
        finally:
            self._saves_pending -= 1

    def action_undo(self) -> None:
        if not self.undo_stack:
            self.notify("Nothing to undo.", markup=False)
            return
        self.set_record(self.undo_stack.pop())
        self.last_field = None

    def set_record(self, record: dict[str, str]) -> None:
        self.record = dict(record)
        for name in COLUMNS:
            fid, _ = field_ids(name)
            try:
                inp = self.query_one(f"#{fid}", Input)
            except NoMatches:
                if self.record.get(name):
                    self._reveal(name)  # a value in a section not built yet: open it
            else:
                value = self.record.get(name, "")
                if inp.value != value:
                    with inp.prevent(Input.Changed):
                        inp.value = value
            self._validate(name)
        self._after_change()

    def _width_mm(self) -> float | None:
        try:
            return float(self.batch.d2_mm[0]) if self.batch is not None else None
        except (AttributeError, IndexError, TypeError, ValueError):
            return None

    def _proposal_lines(self) -> list[str]:
        st = self.remedy_state
        if st is not None and st.state == "as remedied":
            what = f": {present.escape(st.remedy)}" if st.remedy else ""
            return [f"[b]Recorded as remedied on {st.done_on}[/b]{what}."]
        out = []
        for p in self.open_proposals:
            out.append(
                f"[b]Proposed[/b] {p.created_at[:10]} by {present.escape(p.author)}: "
                f"{present.escape(p.description)}"
                + (f" → {p.ratio:.2f}" if p.ratio is not None else "")
            )
        if out:
            out.append(
                "When the work is done, ctrl+o records the post as remedied (with the date)."
            )
        return out

    @work(group="proposals", exclusive=True, exit_on_error=False)
    async def load_proposals(self) -> None:
        member = self.member_id
        if member is None:
            return

        def get(log: Any) -> tuple[Any, list[Any]]:
            state = log.remedy_states().get(member)
            return state, log.proposals(member, open_only=True)[::-1]

        self.remedy_state, self.open_proposals = await self.app.store.call(get)  # type: ignore[attr-defined]
        self._title()
        self._render_remedies()

    def _chosen_remedy(self) -> dict[str, Any] | None:
        if (
            self.summary is not None
            and self.summary.get("quick")
            and self.rating is not None
            and not self.stale
        ):
            # typed since the last full summary
            self.summary = self._with_material(explain.summary(self.rating, 0))
            self.render_rating()
        rems = [] if self.stale else remedy_words.ranked((self.summary or {}).get("remedies") or [])
        if not rems:
            self.notify(
                "Fix the form first: remedies follow from a good rating."
                if self.stale
                else "No remedy to propose for this post.",
                markup=False,
            )
            return None
        box = self.query_one("#remedy-list", OptionList)
        index = box.highlighted if rems == self.remedies and box.highlighted is not None else 0
        return rems[index]

    @work(group="write", exit_on_error=False)
    async def action_propose_remedy(self) -> None:
        """Store the highlighted (or best) remedy as a proposal beside the post as found: the
        post as found is saved first, and stays what the post is recorded and rated as."""
        rem = self._chosen_remedy()
        if rem is None:
            return
        if (self.dirty or self.member_id is None) and not await self.save(quiet=True):
            return
        if self.head_id is None:
            member = self.member_id
            head_obs = await self.app.store.call(lambda log: log.head(member))  # type: ignore[attr-defined]
            self.head_id = head_obs.id
        units = self.app.units  # type: ignore[attr-defined]
        text = remedy_words.words(rem, units, self._width_mm())
        head = self.head_id
        try:
            await self.app.store.call(  # type: ignore[attr-defined]
                lambda log: log.propose_remedy(
                    head,
                    kind=rem.get("kind", "remedy"),
                    description=text,
                    changes=rem.get("record_changes") or {},
                    ratio=rem.get("ratio"),
                    visit_id=self.visit_id,
                )
            )
        except Exception as exc:
            self.notify(f"Not proposed: {exc}", severity="error", markup=False)
            return
        tag = self.record.get("tag", "post")
        self.notify(
            f"Proposed for {tag}: {text}. {tag} stays recorded as found; ctrl+o records it as "
            "remedied when the work is done.",
            markup=False,
        )
        self.load_proposals()

    def action_remedy_done(self) -> None:
        if not self.open_proposals:
            self.notify(
                "No remedy proposed for this post: propose one first (ctrl+r on Remedies, F5).",
                markup=False,
            )
            return
        if self.dirty:
            self.notify("Save or undo your changes first (ctrl+s or ctrl+z).", markup=False)
            return
        from fieldcheck.tui.dialogs import RemedyDoneDialog

        prop = self.open_proposals[0]

        def chosen(day: str | None) -> None:
            if day:
                self._record_done(prop.id, day)

        self.app.push_screen(RemedyDoneDialog(prop.description), chosen)

    def action_attach_photo(self) -> None:
        if self.head_id is None or self.dirty:
            self.notify(
                "Save the post first (ctrl+s): a photo belongs to a saved revision.", markup=False
            )
            return
        from fieldcheck.tui.dialogs import PhotoDialog

        head = self.head_id

        def chosen(answer: tuple[str, str] | None) -> None:
            if answer:
                self._store_photo(head, *answer)

        self.app.push_screen(PhotoDialog(self.record.get("tag", "")), chosen)

    @work(group="write", exit_on_error=False)
    async def _store_photo(self, observation_id: str, path: str, caption: str) -> None:
        try:
            att = await self.app.store.call(  # type: ignore[attr-defined]
                lambda log: log.attach_photo(observation_id, path, caption)
            )
        except (OSError, ValueError) as exc:
            self.notify(f"Photo not attached: {exc}", severity="error", markup=False)
            return
        tag = self.record.get("tag", "the post")
        self.notify(f"Photo attached to {tag} (SHA-256 {att.sha256[:12]}…).", markup=False)

    @work(group="write", exit_on_error=False)
    async def _record_done(self, proposal_id: str, day: str) -> None:
        member, visit = self.member_id, self.visit_id
        try:
            obs = await self.app.store.call(  # type: ignore[attr-defined]
                lambda log: log.record_remedied(
                    member, visit, proposal_id=proposal_id, done_on=day, allow_errors=True
                )
            )
        except Exception as exc:
            self.notify(f"Not recorded: {exc}", severity="error", markup=False)
            return
        self.head_id = obs.id
        self.saved_record = clean(obs.record)
        self.set_record(obs.record)
        self.undo_stack.clear()
        self.notify(f"Recorded {obs.record.get('tag', 'the post')} as remedied on {day}.")
        self.load_history()
        self.load_proposals()

    @on(OptionList.OptionSelected, "#remedy-list")
    def _remedy_chosen(self) -> None:
        self.action_propose_remedy()

    async def action_leave(self) -> None:
        while self._saves_pending:  # a save asked for ends first: then "unsaved" is true
            await asyncio.sleep(0.02)
        async with self._writing:
            pass
        if not self.dirty:
            if self.app.drafts.pop(self.draft_key, None) is not None:  # type: ignore[attr-defined]
                self.app.save_drafts()  # type: ignore[attr-defined]
            self.app.pop_screen()
            return
        from fieldcheck.tui.dialogs import LeaveDialog

        def chosen(answer: str | None) -> None:
            if answer == "save":
                self._save_and_leave()
            elif answer == "draft":
                self._keep_draft()
                self.app.save_drafts()  # type: ignore[attr-defined]
                self.app.pop_screen()
            elif answer == "discard":
                self.app.drafts.pop(self.draft_key, None)  # type: ignore[attr-defined]
                self.app.save_drafts()  # type: ignore[attr-defined]
                self.app.pop_screen()

        self.app.push_screen(LeaveDialog(), chosen)

    @work(group="write", exit_on_error=False)
    async def _save_and_leave(self) -> None:
        if await self.save():
            self.app.pop_screen()
