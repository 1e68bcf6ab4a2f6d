"""The post form, built from the column registry (fieldcheck.records.COLUMNS), grouped by the
engine's groups. Columns added to the registry appear here without a change to this file: the
common ones at the top of their group, the rest under "more…" (opened when they hold a value).
"""

from __future__ import annotations

from typing import Any

from textual.app import ComposeResult
from textual.geometry import Size
from textual.widget import Widget
from textual.containers import Horizontal, Vertical
from textual.suggester import SuggestFromList
from textual.widgets import Collapsible, Input, Label, Static

GROUP_TITLES = {
    "post": "Post", "section": "Section", "height": "Height and bracing", "ends": "Ends",
    "material": "Material", "condition": "Condition", "bearing": "Bearing and ground",
    "load": "Load",
}
OPEN_GROUPS = ("post", "section", "height", "ends", "material", "load")
# shown at the top of their group; every other column goes under "more…" (judgement: the ones
# an inspector fills on most posts)
COMMON = {
    "tag", "location", "notes", "size", "section", "diameter", "height", "brace_weak",
    "brace_strong", "top", "bottom", "species", "grade", "method", "class", "moisture",
    "load", "duration", "construction", "tributary", "dead", "live", "cap_species",
    "sill_species", "end_contact", "soil", "pad",
}


class FieldInput(Input):
    """An Input whose keystrokes repaint without a layout pass over the whole form.

    Textual's Input stores its text width as ``virtual_size``, a reactive that asks the screen
    for a layout on every character; with a fixed height and width (see app.tcss) nothing
    outside the field can move, so the width is stored without that request.
    """

    def _watch_value(self, value: str) -> None:
        self.set_reactive(Widget.virtual_size, Size(self.content_width, 1))
        self.refresh()
        self._suggestion = ""
        if self.suggester and value:
            self.run_worker(self.suggester._get_suggestion(self, value))
        validation_result = self.validate(value) if "changed" in self.validate_on else None
        self.post_message(self.Changed(self, value, validation_result))
        if self._initial_value:
            self.cursor_position = len(self.value)
            self._initial_value = False
        else:
            self.selection = self.selection


def field_ids(name: str) -> tuple[str, str]:
    return f"f-{name}", f"m-{name}"


def _row(col: Any, value: str) -> ComposeResult:
    fid, mid = field_ids(col.name)
    hint = col.default or (f"e.g. {col.example}" if col.example else "")
    if col.choices:
        tip = f"{col.help}. One of: {', '.join(col.choices)}."
        suggester = SuggestFromList(col.choices, case_sensitive=False)
    elif col.flag:
        tip = f"{col.help}."
        suggester = SuggestFromList(("yes", "no"), case_sensitive=False)
    else:
        tip = f"{col.help}. Example: {col.example}"
        suggester = None
    with Horizontal(classes="field"):
        yield Label(col.name.replace("_", " "), classes="field-name")
        yield FieldInput(value=value, placeholder=hint, id=fid, compact=True, tooltip=tip,
                    suggester=suggester, select_on_focus=False)
    yield Static("", id=mid, classes="msg", markup=False)


def compose_form(columns: dict[str, Any], groups: tuple[str, ...], record: dict[str, str]) -> ComposeResult:
    by_group: dict[str, list[Any]] = {}
    for col in columns.values():
        by_group.setdefault(col.group, []).append(col)
    order = list(groups) + [g for g in by_group if g not in groups]
    for group in order:
        cols = by_group.get(group, [])
        if not cols:
            continue
        common = [c for c in cols if c.name in COMMON]
        more = [c for c in cols if c.name not in COMMON]
        if not common:
            common, more = more, []
        has_value = any(record.get(c.name) for c in cols)
        title = GROUP_TITLES.get(group, group.title())
        with Collapsible(title=title, collapsed=not (group in OPEN_GROUPS or has_value),
                         id=f"g-{group}", classes="group"):
            with Vertical(classes="group-body"):
                for col in common:
                    yield from _row(col, record.get(col.name, ""))
                if more:
                    with Collapsible(title=f"more {title.lower()} ({len(more)})",
                                     collapsed=not any(record.get(c.name) for c in more),
                                     id=f"more-{group}", classes="more"):
                        with Vertical(classes="group-body"):
                            for col in more:
                                yield from _row(col, record.get(col.name, ""))
