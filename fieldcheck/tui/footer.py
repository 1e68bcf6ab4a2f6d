"""The footer: the screen's keys, each shown whole or not at all.

Textual's footer lays its keys out in one row and cuts the row at the screen's edge, mid-word at
80 columns ("Remedy d"). Here the keys that would not fit whole are left out, from the first
that would be cut: the keys come in the screen's order (the most used first), and every key is
still in F1 help and the command palette (ctrl+p), whose key stays at the right.
"""

from __future__ import annotations

from typing import Any

from textual.widgets import Footer


class FittedFooter(Footer):
    """A footer that never cuts a key's label: keys that do not fit whole are left out."""

    async def recompose(self) -> None:
        await super().recompose()
        self.call_after_refresh(self.fit)

    def on_resize(self, _event: Any) -> None:
        # a wider screen may hold keys left out before: lay them all out again, then fit
        self.call_after_refresh(self.recompose)

    def fit(self) -> None:
        """Leave out the keys from the first one the row cuts (laid out, before the palette's)."""
        if not self.is_attached:
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
