"""A count and its noun for the commands' summary lines: "1 post", "2 posts", never "1 posts"."""

from __future__ import annotations


def count(n: int, noun: str, plural: str | None = None) -> str:
    """``n`` and ``noun`` in the number it needs (``plural``: when not noun + "s")."""
    return f"{n} {noun if n == 1 else plural or noun + 's'}"
