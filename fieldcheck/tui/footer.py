"""The footer: the screen's keys, each shown whole or not at all.

Textual's footer lays its keys out in one row and cuts the row at the screen's edge, mid-word at
80 columns ("Remedy d"). Here the keys that would not fit whole are left out, from the first
that would be cut: the keys come in the screen's order (the most used first), and every key is
still in F1 help and the command palette (ctrl+p), whose key stays at the right.
"""

from __future__ import annotations

from typing import Any

from textual.app import ComposeResult
from textual.widgets import Footer
from textual.widgets._footer import FooterKey


class FittedFooter(Footer):
    """A footer that never cuts a key's label: keys that do not fit whole are left out.

    Textual's footer builds its keys again each time the screen's bindings may have changed (a
    focus move, a field opened: a dozen times while a post opens, each key restyled as it is
    built); this one does so only when the keys it shows, or its width, have changed.
    """

    _shown: tuple[Any, ...] | None = None  # the keys and width last built

    def shown(self) -> tuple[Any, ...]:
        """What the keys show: each shown binding's key, words and state, and the width."""
        keys = tuple(
            (key, b.description, b.action, enabled, tooltip)
            for key, (_node, b, enabled, tooltip) in self.screen.active_bindings.items()
            if b.show or key == self.app.COMMAND_PALETTE_BINDING
        )
        return (self.size.width, *keys)

    _pending = False  # a rebuild is on its way (it reads the bindings as it runs)

    def bindings_changed(self, screen: Any) -> None:
        if self.is_attached and screen is self.screen and self._pending:
            return
        if self.is_attached and screen is self.screen and self._shown == self.shown():
            self._bindings_ready = True
            self.call_after_refresh(self.fit)  # e.g. its screen shown again, laid out anew
            return  # the keys on show are the keys to show
        super().bindings_changed(screen)
        self._pending = self.is_attached and screen is self.screen and screen.app.app_focus

    def compose(self) -> ComposeResult:
        for widget in super().compose():
            if isinstance(widget, FooterKey) and not widget.has_class("-command-palette"):
                # made in the footer's style (compact or not), so binding it to the footer
                # changes nothing: without this each key is restyled twice as it is mounted
                widget.set_reactive(FooterKey.compact, self.compact)
                widget.set_class(self.compact, "-compact", update=False)
            yield widget

    async def recompose(self) -> None:
        self._pending = False
        if self.is_attached:
            self._shown = self.shown()
        await super().recompose()
        self.call_after_refresh(self.fit)

    def on_resize(self, _event: Any) -> None:
        # a wider screen may hold keys left out before: lay them all out again, then fit
        if self._shown is not None and self._shown[0] != self.size.width:
            self._pending = True
            self.call_after_refresh(self.recompose)
        else:
            self.call_after_refresh(self.fit)

    def fit(self, tries: int = 3) -> None:
        """Leave out the keys from the first one the row cuts (laid out, before the palette's)."""
        if not self.is_attached:
            return
        if any(c.display and not c.region for c in self.children):  # not laid out yet
            if tries:
                self.call_after_refresh(self.fit, tries - 1)
            return
        palette = [c for c in self.children if c.has_class("-command-palette") and c.display]
        limit = min([c.region.x for c in palette] + [self.region.right])
        cut = False
        for child in self.children:
            if child in palette:
                continue
            cut = cut or child.region.right > limit
            if cut:
                child.display = False
