"""Esc is always Esc: the bytes a terminal sends, read as keys without starting the app."""

from __future__ import annotations

import pytest

from fieldcheck.tui.app import FieldcheckApp
from fieldcheck.tui.keyparse import EscapeFirstParser


def keys(data: str) -> list[str]:
    parser = EscapeFirstParser()
    out = [e.key for e in parser.feed(data)]
    if parser._timeout_time is not None:  # waiting after an Esc: the terminal sent no more
        parser._timeout_time = 0.0
    return out + [e.key for e in parser.tick()]


@pytest.mark.parametrize(
    ("data", "expected"),
    [
        ("\x13\x1b\x0eP2\r", ["ctrl+s", "escape", "ctrl+n", "P", "2", "enter"]),  # save, back, new
        ("\x1bP", ["escape", "P"]),  # was alt+shift+p: the P typed into the field being left
        ("\x1b\t", ["escape", "tab"]),  # was shift+tab
        ("\x1b1", ["escape", "1"]),  # was "¡"
        ("\x1bb", ["escape", "b"]),  # was ctrl+left
        ("\x1b\x1b", ["escape", "escape"]),
        ("\x1b", ["escape"]),
    ],
)
def test_esc_followed_by_a_key_is_esc_then_that_key(data: str, expected: list[str]) -> None:
    assert keys(data) == expected


@pytest.mark.parametrize(
    ("data", "expected"),
    [("\x1b[A", ["up"]), ("\x1bOP", ["f1"]), ("\x1b[6~", ["pagedown"]), ("\x1b[Z", ["shift+tab"])],
)
def test_the_terminal_s_own_sequences_still_read_as_their_keys(data, expected) -> None:
    # xterm control sequences (CSI "ESC [" and SS3 "ESC O"), as Textual reads them
    assert keys(data) == expected


def test_the_app_reads_its_terminal_with_this_parser() -> None:
    driver = FieldcheckApp(db=None).driver_class
    assert driver.run_input_thread.__globals__["XTermParser"] is EscapeFirstParser
