"""The post form, in the order an inspector looks: where the post is and what it is; its section
and height; the two ends; the material; what is seen, defect by defect; the load; then bearing
and ground. Fields come from the column registry (fieldcheck.records.COLUMNS): a column this
layout does not name still appears, under "more…" of its registry group's section.

Common fields come first in each section; the rest sit under "more…" (built when first opened,
and opened at once when they hold a value). Defects are added by kind (decay, knot, split, bow,
notch, crushing, and the rarer ones): the "add a defect" field takes a kind, and only that kind's
few fields are added. Textual lays out the whole screen on every layout request, so a section is
built only when needed; a field is two widgets in a row (its label and its input), and its
message line is mounted the first time it has something to say.
"""

from __future__ import annotations

import inspect
from collections.abc import Iterable
from typing import Any

from textual.containers import Horizontal, Vertical
from textual.geometry import Size
from textual.suggester import SuggestFromList
from textual.widget import Widget
from textual.widgets import Collapsible, Input, Label, Static

LABEL_WIDTH = 15  # the longest label; app.tcss gives .field-name one column more (a gap)

# section id -> (title, registry groups it takes leftovers from, common fields, more fields)
SECTIONS: tuple[tuple[str, str, tuple[str, ...], tuple[str, ...], tuple[str, ...]], ...] = (
    ("where", "Where and what", ("post",), ("tag", "location", "notes"), ()),
    (
        "section",
        "Section and height",
        ("section", "height"),
        ("size", "height"),
        ("section", "diameter", "plies", "ply", "fastening"),
    ),
    (
        "ends",
        "The two ends",
        ("ends",),
        ("top", "bottom"),
        (
            "brace_weak",
            "brace_strong",
            "k_theoretical",
            "top_spring",
            "bottom_spring",
            "top_ratio",
            "bottom_ratio",
        ),
    ),
    (
        "material",
        "Material",
        ("material",),
        ("species", "grade", "moisture"),
        (
            "method",
            "class",
            "en338_edition",
            "service_class",
            "data_level",
            "incised",
            "temperature",
        ),
    ),
    ("seen", "What is seen", ("condition",), (), ()),
    ("load", "Load", ("load",), ("load", "duration"), ("construction",)),
    ("bearing", "Bearing and ground", ("bearing",), (), ()),
)
# the sections shown shut (every field under its "more…")
SHUT = ("bearing",)

# defect kind -> its fields, the first few asked at once (the engine's condition columns)
DEFECTS: dict[str, tuple[str, ...]] = {
    "decay": (
        "decay_wide",
        "decay_narrow",
        "decay_at",
        "decay_wide2",
        "decay_narrow2",
        "decay_margin",
    ),
    "knot": ("knot", "knot_face"),
    "split": ("split", "split_faces", "split_at"),
    "bow": ("bow_weak", "bow_strong"),
    "notch": ("notch", "notch_face", "notch_height"),
    "crushing": ("crushed_end", "crushing"),
    "hollow": ("hollow", "hollow_at"),
    "char": ("char_wide", "char_narrow", "char_at", "char_wide2", "char_narrow2"),
    "hole": ("hole", "hole_face", "hole_height"),
    "wane": ("wane", "wane_corners"),
    "slope": ("slope", "slope_table", "beyond_grade"),
    "lean": ("plumb_weak", "plumb_strong"),
    "off-centre": ("offset_weak", "offset_strong"),
    "movement": ("moving", "settling_sill"),
    "stress-wave": (
        "stress_wave",
        "stress_wave_sound",
        "stress_wave_path",
        "density",
        "stress_wave_suspect",
        "stress_wave_advanced",
    ),
}
COMMON_DEFECTS = ("decay", "knot", "split", "bow", "notch", "crushing")

# labels that would not fit LABEL_WIDTH as the column name
LABELS = {
    "brace_weak": "brace thin side",
    "brace_strong": "brace wide side",
    "k_theoretical": "theoretical K",
    "cap_end_distance": "cap end dist.",
    "sill_end_distance": "sill end dist.",
    "stress_wave": "transit time",
    "stress_wave_sound": "sound time",
    "stress_wave_path": "path length",
    "stress_wave_suspect": "suspect ratio",
    "stress_wave_advanced": "advanced ratio",
    "decay_wide": "on a wide face",
    "decay_wide2": "other wide face",
    "decay_narrow": "on narrow face",
    "decay_narrow2": "other narrow",
    "decay_at": "where on height",
    "decay_margin": "past boundary",
    "char_wide": "on a wide face",
    "char_wide2": "other wide face",
    "char_narrow": "on narrow face",
    "char_narrow2": "other narrow",
    "char_at": "where on height",
    "hollow_at": "where on height",
    "split_at": "where on height",
    "split_faces": "faces it shows",
    "split": "worst split",
    "knot": "largest knot",
    "knot_face": "on face",
    "notch": "notch depth",
    "notch_face": "on face",
    "notch_height": "height above",
    "hole": "hole diameter",
    "hole_face": "through face",
    "hole_height": "height above",
    "bow_weak": "bow thin side",
    "bow_strong": "bow wide side",
    "plumb_weak": "lean thin side",
    "plumb_strong": "lean wide side",
    "offset_weak": "off thin side",
    "offset_strong": "off wide side",
    "crushed_end": "crushed end",
    "crushing": "still crushing",
    "settling_sill": "sill settling",
    "moving": "moving",
    "wane_corners": "corners",
    "slope_table": "slope table",
    "beyond_grade": "beyond grade",
    "service_class": "service class",
    "en338_edition": "EN 338 edition",
    "data_level": "data level",
    "live_reduction": "live reduction",
    "rain_duration": "rain duration",
    "live_duration": "live duration",
    "lateral_rule": "lateral rule",
    "soil_default": "soil default",
    "pad_thickness": "pad thickness",
    "end_contact": "end contact",
    "end_plate": "end plates",
    "cap_species": "cap species",
    "cap_bearing": "cap bearing",
    "sill_species": "sill species",
    "sill_bearing": "sill bearing",
    "top_spring": "top spring",
    "bottom_spring": "bottom spring",
    "top_ratio": "top ratio",
    "bottom_ratio": "bottom ratio",
    "point_live": "point live",
    "roof_live": "roof live",
    "shared_by": "shared by",
    "brace_edge": "braced edge",
}


def label(name: str) -> str:
    return LABELS.get(name, name.replace("_", " "))


def plain(text: str) -> str:
    """Help text without command-line syntax: `--rain-duration` -> "rain duration"."""
    import re

    return re.sub(r"--([a-z][a-z0-9-]*)", lambda m: m.group(1).replace("-", " "), text)


class FieldInput(Input):
    """An Input whose keystrokes repaint without a layout pass over the whole form.

    Textual's Input stores its text width as ``virtual_size``, a reactive that asks the screen
    for a layout on every character; with a fixed height and width (see app.tcss) nothing
    outside the field can move, so the width is stored without that request.

    The screen hears of the new value at once (its ``field_edited(input, value)``, if it has
    one), inside the key's own handler: whatever it repaints joins the field's repaint in the
    same frame. ``Input.Changed`` is still posted; it bubbles up through every container and
    arrives after the next frame has been drawn, one frame (16-33 ms) too late for a live rating.

    Enter, Tab, shift+Tab, PageDown and PageUp go to the screen's ``form_key(key, field)`` once
    the keys typed before them are in the field; the app holds later keys until then (see
    FieldcheckApp.on_event), so a key typed straight after lands in the next field.
    """

    holds_keys = True
    FORM_KEYS = ("enter", "tab", "shift+tab", "pagedown", "pageup")

    def __init__(self, *args: Any, choices: Iterable[str] = (), **kwargs: Any) -> None:
        super().__init__(*args, **kwargs)
        self.choices = tuple(choices)

    def update_node_styles(self, animate: bool = True) -> None:
        # the stylesheet is applied as the field is mounted: the classes Input sets while it is
        # made (compact, valid) need no restyle of their own before (2 ms a field, judgement)
        if self.is_attached:
            super().update_node_styles(animate=animate)

    def complete(self) -> None:
        """A fixed-choice field: the first letters of exactly one choice stand for it."""
        v = self.value.strip().lower()
        if not v or not self.choices or v in (c.lower() for c in self.choices):
            return
        hits = [c for c in self.choices if c.lower().startswith(v)]
        if len(hits) == 1:
            self.value = hits[0]

    async def _on_key(self, event: Any) -> None:
        if event.key in self.FORM_KEYS:
            event.stop()
            event.prevent_default()
            try:
                handler = getattr(self.screen, "form_key", None)
                handled = handler is not None and handler(event.key, self)
                if inspect.isawaitable(handled):  # e.g. a defect's fields being added
                    handled = await handled
                if not handled and event.key == "enter":
                    await self.action_submit()
                elif not handled and event.key in ("tab", "shift+tab"):
                    (self.screen.focus_next if event.key == "tab" else self.screen.focus_previous)()
            finally:
                release = getattr(self.app, "release_keys", None)
                if release is not None:
                    release()
            return
        # other keys: Textual calls Input._on_key itself next (handlers run along the MRO)

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


class DefectPicker(FieldInput):
    """Where a defect is added by kind: type the kind (or its first letters) and press Enter."""


def field_ids(name: str) -> tuple[str, str]:
    return f"f-{name}", f"m-{name}"


def choices_text(col: Any) -> str:
    """The values a fixed-choice field takes, shown in the field while it is empty."""
    if col.choices:
        opts = list(col.choices)
        if col.default and col.default in opts:
            opts.remove(col.default)
            opts.insert(0, f"{col.default} (default)")
        return " · ".join(opts)
    if col.flag:
        return "yes · no"
    return ""


# columns naming a strength class (EN 338 or EN 14080): the classes held are suggested in place
STRENGTH_CLASS = ("class", "cap_class", "sill_class")


def class_ranges(names: Iterable[str]) -> str:
    """The classes held as ranges by family: "C14 to C50 · D18 to D80 · GL20h to GL32h"."""
    families: dict[str, list[str]] = {}
    for n in names:
        families.setdefault(n.rstrip("h").rstrip("0123456789"), []).append(n)
    return " · ".join(f"{v[0]} to {v[-1]}" if len(v) > 1 else v[0] for v in families.values())


def field_row(col: Any, value: str) -> Horizontal:
    """One field: its name and its input (the message line is added on demand)."""
    return Horizontal(
        Label(label(col.name), classes="field-name"), field_input(col, value), classes="field"
    )


def field_input(col: Any, value: str) -> FieldInput:
    """A field's input: its hint (choices, default or example), tooltip and suggestions."""
    fid, _ = field_ids(col.name)
    hint = choices_text(col) or (f"{col.default} (default)" if col.default else "")
    hint = hint or (f"e.g. {col.example}" if col.example else "")  # never read as typed
    tip = plain(col.help) + (f". Example: {col.example}" if col.example else "")
    if col.choices:
        suggester = SuggestFromList(col.choices, case_sensitive=False)
    elif col.flag:
        suggester = SuggestFromList(("yes", "no"), case_sensitive=False)
    elif col.name in STRENGTH_CLASS:
        from fieldcheck.engine.en338 import class_names

        held = class_names()
        hint = class_ranges(held)
        tip += ". Classes held: " + ", ".join(held)
        suggester = SuggestFromList(held, case_sensitive=False)
    else:
        suggester = None
    return FieldInput(
        value=value,
        placeholder=hint,
        id=fid,
        compact=True,
        tooltip=tip,
        suggester=suggester,
        select_on_focus=False,
        choices=col.choices or (("yes", "no") if col.flag else ()),
    )


class FieldGroup(Collapsible):
    """The "more…" part of a section (or a shut section), whose widgets are made when opened."""

    def __init__(
        self,
        columns: list[Any],
        record: dict[str, str],
        *,
        title: str,
        collapsed: bool,
        id: str,
        classes: str,
    ) -> None:
        self.columns = columns
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
        return [c.name for c in self.columns]

    def children_for(self, record: dict[str, str]) -> list[Widget]:
        return [field_row(c, record.get(c.name, "")) for c in self.columns]

    async def build(self, record: dict[str, str]) -> bool:
        """Mount the fields (with the values in ``record``) if not done yet; True if it did."""
        if self.built:
            return False
        self.built = True
        await self.query_one(Collapsible.Contents).mount_all(self.children_for(record))
        return True


class DefectGroup(Vertical):
    """One defect kind's fields."""

    def __init__(self, kind: str, columns: list[Any], record: dict[str, str]) -> None:
        self.kind = kind
        self.columns = columns
        super().__init__(
            Static(f"{kind}", classes="defect-title"),
            *[field_row(c, record.get(c.name, "")) for c in columns],
            id=f"d-{kind}",
            classes="defect",
        )

    @property
    def names(self) -> list[str]:
        return [c.name for c in self.columns]


def layout(columns: dict[str, Any]) -> dict[str, tuple[list[Any], list[Any]]]:
    """section id -> (common columns, more columns), every registry column placed once (the
    defect columns excepted: see defect_columns)."""
    placed = {n for kind in DEFECTS.values() for n in kind if n in columns}
    out: dict[str, tuple[list[Any], list[Any]]] = {}
    for sid, _title, _groups, common, more in SECTIONS:
        c = [columns[n] for n in common if n in columns]
        m = [columns[n] for n in more if n in columns]
        placed |= {x.name for x in c + m}
        out[sid] = (c, m)
    for sid, _title, groups, _c, _m in SECTIONS:  # leftovers: under "more…" of their section
        if sid == "seen":
            continue  # condition columns are defects (defect_columns)
        rest = [col for col in columns.values() if col.group in groups and col.name not in placed]
        placed |= {x.name for x in rest}
        out[sid][1].extend(rest)
    for col in columns.values():  # a group no section names: under "more…" of the load
        if col.name not in placed and col.group != "condition":
            out["load"][1].append(col)
    return out


def defect_columns(columns: dict[str, Any]) -> dict[str, list[Any]]:
    """kind -> its columns (a condition column no kind names joins "other")."""
    out = {k: [columns[n] for n in names if n in columns] for k, names in DEFECTS.items()}
    named = {n for names in DEFECTS.values() for n in names}
    other = [c for c in columns.values() if c.group == "condition" and c.name not in named]
    other = [c for c in other if not any(c.name in s[3] + s[4] for s in SECTIONS)]
    if other:
        out["other"] = other
    return {k: v for k, v in out.items() if v}


def defect_kind(text: str, kinds: Iterable[str]) -> str | None:
    """The kind meant by ``text``: exact, else the only kind it starts (common kinds first)."""
    t = text.strip().lower().replace(" ", "-")
    if not t:
        return None
    kinds = list(kinds)
    if t in kinds:
        return t
    for k in [*COMMON_DEFECTS, *kinds]:
        if k in kinds and k.startswith(t):
            return k
    return None


def picker_row(kinds: list[str]) -> Horizontal:
    common = [k for k in COMMON_DEFECTS if k in kinds]
    rare = [k for k in kinds if k not in common]
    hint = " · ".join(common) + (" · more: " + " ".join(rare) if rare else "")
    return Horizontal(
        Label("add a defect", classes="field-name"),
        DefectPicker(
            placeholder=hint,
            id="add-defect",
            compact=True,
            tooltip="Type a defect kind (its first letters do) and press Enter: its fields follow. "
            "Kinds: " + ", ".join(kinds),
            suggester=SuggestFromList(kinds, case_sensitive=False),
            select_on_focus=False,
        ),
        classes="field",
    )


def compose_form(columns: dict[str, Any], record: dict[str, str]) -> Iterable[Widget]:
    lay = layout(columns)
    kinds = defect_columns(columns)
    for sid, title, _groups, _c, _m in SECTIONS:
        common, more = lay[sid]
        children: list[Widget] = [Static(title, classes="section-title")]
        if sid in SHUT:
            common, more = [], common + more
        children += [field_row(c, record.get(c.name, "")) for c in common]
        if sid == "seen":
            for kind, cols in kinds.items():
                if any(record.get(c.name) for c in cols):
                    children.append(DefectGroup(kind, cols, record))
            children.append(picker_row(list(kinds)))
        if more:
            children.append(
                FieldGroup(
                    more,
                    record,
                    title=f"more: {title.lower()} ({len(more)})"
                    if sid not in SHUT
                    else f"{title} ({len(more)})",
                    collapsed=not any(record.get(c.name) for c in more),
                    id=f"more-{sid}",
                    classes="more",
                )
            )
        yield Vertical(*children, id=f"g-{sid}", classes="section")


def place(columns: dict[str, Any], name: str) -> tuple[str, str | None]:
    """Where the field of ``name`` lives: ("more", section id), ("defect", kind) or
    ("common", section id)."""
    for kind, cols in defect_columns(columns).items():
        if any(c.name == name for c in cols):
            return "defect", kind
    for sid, (common, more) in layout(columns).items():
        if sid in SHUT and any(c.name == name for c in common + more):
            return "more", sid
        if any(c.name == name for c in common):
            return "common", sid
        if any(c.name == name for c in more):
            return "more", sid
    return "common", None
