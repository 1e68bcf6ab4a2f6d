"""How the bytes a terminal sends become keys: Esc is always Esc.

A terminal sends Esc as the one byte ESC, and Alt+key as ESC followed by the key's byte, so ESC
with another byte straight after it is ambiguous. Textual reads it as Alt+key: Esc then ctrl+n
typed quickly (or read together under load) became ctrl+n alone, Esc then "P" became alt+shift+p,
Esc then Tab became shift+Tab, Esc then "1" became "¡". The Esc was lost and the keys after it
went into the field being left. fieldcheck binds no Alt key, and Esc means "back" on every
screen, so here ESC followed by anything that does not start a terminal sequence (ESC [ and ESC O
do) is Esc and then that key.
"""

from __future__ import annotations

import types
from collections.abc import Iterable
from typing import Any

from textual import events
from textual._xterm_parser import XTermParser

ESC = "\x1b"
SEQUENCE_STARTS = frozenset("[O")  # CSI and SS3: the keys and reports a terminal sends


class EscapeFirstParser(XTermParser):
    """Textual's parser, except that ESC and a byte that starts no sequence are two keys."""

    def _sequence_to_key_events(self, sequence: str, alt: bool = False) -> Iterable[events.Key]:
        if len(sequence) == 2 and sequence[0] == ESC and sequence[1] not in SEQUENCE_STARTS:
            yield events.Key("escape", ESC)
            yield from super()._sequence_to_key_events(sequence[1])
            return
        yield from super()._sequence_to_key_events(sequence, alt)


def escape_first(driver_class: type[Any]) -> type[Any]:
    """``driver_class`` reading its input with EscapeFirstParser. The driver's input loop names
    its parser class once, as it starts; this gives that loop our parser, and leaves the driver
    as it is if its loop is not the one expected."""
    run = getattr(driver_class, "run_input_thread", None)
    code = getattr(run, "__code__", None)
    if code is None or code.co_freevars or "XTermParser" not in code.co_names:
        return driver_class
    assert isinstance(run, types.FunctionType)
    names = dict(run.__globals__, XTermParser=EscapeFirstParser)
    loop = types.FunctionType(code, names, run.__name__, run.__defaults__)
    return type(
        driver_class.__name__, (driver_class,), {"run_input_thread": loop, "__module__": __name__}
    )
