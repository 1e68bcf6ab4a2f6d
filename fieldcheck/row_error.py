"""RowError: one field of one input row refused, in one sentence.

The records layer raises it while building a row (the row is not known there) and reports it
with the row once known; the store hands the same objects on from an import or a re-rate. It
imports nothing of ours, so the store can name it without loading the engine (opening a log
stays light).
"""

from __future__ import annotations

import re

__all__ = ["RowError", "field_sentence"]

_NAMED = re.compile(r"^[a-z][a-z0-9_ -]{0,30}: ")


def field_sentence(column: str, message: str) -> str:
    """``column: message``, unless the message already names the column (or a field) first."""
    return message if _NAMED.match(message) else f"{column}: {message}"


class RowError(ValueError):
    """A refused field: the column, one sentence, and the 0-based input row (None while the row
    is being built). Equal when row, column and message are equal."""

    def __init__(self, column: str, message: str, *, row: int | None = None):
        super().__init__(message)
        self.column = column
        self.message = message
        self.row = row

    def at(self, row: int) -> RowError:
        """The same refusal, placed at a row of the input."""
        return RowError(self.column, self.message, row=row)

    def sentence(self) -> str:
        """The message named for its column once (never "height: height: ...")."""
        return field_sentence(self.column, self.message)

    def __str__(self) -> str:
        if self.row is None:
            return self.message
        return f"row {self.row + 1}: {self.sentence()}"

    def __repr__(self) -> str:
        return f"RowError({self.column!r}, {self.message!r}, row={self.row!r})"

    def _key(self) -> tuple[int | None, str, str]:
        return (self.row, self.column, self.message)

    def __eq__(self, other: object) -> bool:
        if not isinstance(other, RowError):
            return NotImplemented
        return self._key() == other._key()

    def __hash__(self) -> int:
        return hash(self._key())

    def __reduce__(self):
        # pickled with its fields (ValueError's default would keep the message only)
        return (_rebuild, (self.column, self.message, self.row))


def _rebuild(column: str, message: str, row: int | None) -> RowError:
    return RowError(column, message, row=row)
