"""The post form, built from the column registry (fieldcheck.records.COLUMNS), grouped by the
engine's groups. Columns added to the registry appear here without a change to this file: the
common ones at the top of their group, the rest under "more…" (opened when they hold a value).

A section is built only when it is first opened (a closed group or "more…" holds no widgets):
Textual lays out the whole screen on every layout request, so every widget on the screen costs
time on every keystroke that changes a layout. A field is two widgets in a row (name, input);
its message line is mounted the first time it has something to say.
"""

from __future__ import annotations

from collections.abc import Iterable
from typing import Any

from textual.containers import Horizontal
from textual.geometry import Size
from textual.suggester import SuggestFromList
from textual.widget import Widget
from textual.widgets import Collapsible, Input, Label

GROUP_TITLES = {
    "post": "Post",
    "section": "Section",
    "height": "Height and bracing",
    "ends": "Ends",
    "material": "Material",
    "condition": "Condition",
    "bearing": "Bearing and ground",
    "load": "Load",
}
OPEN_GROUPS = ("post", "section", "height", "ends", "material", "load")
# shown at the top of their group; every other column goes under "more…" (judgement: the ones
# an inspector fills on most posts)
COMMON = {
    "tag",
    "location",
    "notes",
    "size",
    "section",
    "diameter",
    "height",
    "brace_weak",
    "brace_strong",
    "top",
    "bottom",
    "species",
    "grade",
    "method",
    "class",
    "moisture",
    "load",
    "duration",
    "construction",
    "tributary",
    "dead",
    "live",
    "cap_species",
    "sill_species",
    "end_contact",
    "soil",
    "pad",
}


class FieldInput(Input):
    """An Input whose keystrokes repaint without a layout pass over the whole form.

    Textual's Input stores its text width as ``virtual_size``, a reactive that asks the screen
    for a layout on every character; with a fixed height and width (see app.tcss) nothing
    outside the field can move, so the width is stored without that request.

    The screen hears of the new value at once (its ``field_edited(input, value)``, if it has
    one), inside the key's own handler: whatever it repaints joins the field's repaint in the
    same frame. ``Input.Changed`` is still posted; it bubbles up through every container and
    arrives after the next frame has been drawn, one frame (16-33 ms) too late for a live rating.
    """

    def _watch_value(self, value: str) -> None:
        self.set_reactive(Widget.virtual_size, Size(self.content_width, 1))
        self.refresh()
        edited = getattr(self.screen, "field_edited", None) if self.is_attached else None
        if edited is not None:
            edited(self, value)
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


def field_row(col: Any, value: str) -> Horizontal:
    """One field: its name and its input (the message line is added on demand)."""
    fid, _ = field_ids(col.name)
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
    return Horizontal(
        Label(col.name.replace("_", " "), classes="field-name"),
        FieldInput(
            value=value,
            placeholder=hint,
            id=fid,
            compact=True,
            tooltip=tip,
            suggester=suggester,
            select_on_focus=False,
        ),
        classes="field",
    )


class FieldGroup(Collapsible):
    """A group of fields (or its "more…" part) whose widgets are made when first opened."""

    def __init__(
        self,
        columns: list[Any],
        record: dict[str, str],
        *,
        title: str,
        collapsed: bool,
        id: str,
        classes: str,
        more: list[Any] | None = None,
        more_title: str = "",
    ) -> None:
        self.columns = columns
        self.more = more or []
        self.more_title = more_title
        self.group = id.split("-", 1)[1]
        self.built = not collapsed
        super().__init__(
            *(self.children_for(record) if self.built else ()),
            title=title,
            collapsed=collapsed,
            id=id,
            classes=classes,
        )

    @property
    def names(self) -> list[str]:
        """The columns this group makes widgets for itself (not those of its "more…" part)."""
        return [c.name for c in self.columns]

    def children_for(self, record: dict[str, str]) -> list[Widget]:
        out: list[Widget] = [field_row(c, record.get(c.name, "")) for c in self.columns]
        if self.more:
            out.append(
                FieldGroup(
                    self.more,
                    record,
                    title=self.more_title,
                    collapsed=not any(record.get(c.name) for c in self.more),
                    id=f"more-{self.group}",
                    classes="more",
                )
            )
        return out

    async def build(self, record: dict[str, str]) -> bool:
        """Mount the fields (with the values in ``record``) if not done yet; True if it did."""
        if self.built:
            return False
        self.built = True
        await self.query_one(Collapsible.Contents).mount_all(self.children_for(record))
        return True


def compose_form(
    columns: dict[str, Any], groups: tuple[str, ...], record: dict[str, str]
) -> Iterable[FieldGroup]:
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
        yield FieldGroup(
            common,
            record,
            title=title,
            collapsed=not (group in OPEN_GROUPS or has_value),
            id=f"g-{group}",
            classes="group",
            more=more,
            more_title=f"more {title.lower()} ({len(more)})",
        )


def group_path(columns: dict[str, Any], name: str) -> list[str]:
    """The ids of the sections to open, outermost first, to show the field of ``name``."""
    col = columns[name]
    cols = [c for c in columns.values() if c.group == col.group]
    common = [c.name for c in cols if c.name in COMMON] or [c.name for c in cols]
    path = [f"g-{col.group}"]
    if name not in common:
        path.append(f"more-{col.group}")
    return path
