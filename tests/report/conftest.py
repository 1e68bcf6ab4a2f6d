"""Fixtures for the report tests: the demo survey in a fresh log, an empty one, and a
standard-library reader of the HTML (balanced tags, text, data-k cells by post)."""

from __future__ import annotations

from html.parser import HTMLParser

import pytest

from fieldcheck.store import Log, seed_demo


@pytest.fixture
def demo_log(tmp_path):
    lg = Log.open(tmp_path / "demo.db", author="tester", device="device-R")
    seed_demo(lg)
    yield lg
    lg.close()


@pytest.fixture
def survey_log(tmp_path):
    """The demo's records as an inspector's own survey (not the marked demo, so it may sync)."""
    from fieldcheck.store.demo import demo_rows

    lg = Log.open(tmp_path / "survey.db", author="tester", device="device-S")
    rows = [{k: v for k, v in r.items() if k != "visit"} for r in demo_rows()]
    lg.import_rows(rows, "9 Birch Lane", "survey")
    yield lg
    lg.close()


@pytest.fixture
def empty_log(tmp_path):
    lg = Log.open(tmp_path / "empty.db", author="tester", device="device-E")
    yield lg
    lg.close()


VOID = {
    "area",
    "base",
    "br",
    "col",
    "embed",
    "hr",
    "img",
    "input",
    "link",
    "meta",
    "source",
    "track",
    "wbr",
}
# optional end tags are never omitted by our renderer, so every other tag must close


class Balanced(HTMLParser):
    """Checks that tags nest and close; collects text and data-k cells by post."""

    def __init__(self) -> None:
        super().__init__(convert_charrefs=True)
        self.stack: list[str] = []
        self.problems: list[str] = []
        self.text: list[str] = []
        self.cells: dict[tuple[str, str], list[str]] = {}
        self._cell: tuple[str, str] | None = None
        self._buf: list[str] = []
        self.tags: list[tuple[str, dict]] = []

    def handle_starttag(self, tag, attrs):
        a = dict(attrs)
        self.tags.append((tag, a))
        if tag in VOID:
            return
        self.stack.append(tag)
        if "data-k" in a and "data-post" in a:
            self._cell = (a["data-post"], a["data-k"])
            self._buf = []
            self._depth = len(self.stack)

    def handle_startendtag(self, tag, attrs):
        self.tags.append((tag, dict(attrs)))

    def handle_endtag(self, tag):
        if tag in VOID:
            return
        if not self.stack or self.stack[-1] != tag:
            self.problems.append(f"</{tag}> closes {self.stack[-1] if self.stack else 'nothing'}")
            return
        if self._cell is not None and len(self.stack) == self._depth:
            self.cells.setdefault(self._cell, []).append("".join(self._buf).strip())
            self._cell = None
        self.stack.pop()

    def handle_data(self, data):
        self.text.append(data)
        if self._cell is not None:
            self._buf.append(data)


def parse(html_text: str) -> Balanced:
    p = Balanced()
    p.feed(html_text)
    p.close()
    return p


@pytest.fixture
def parse_html():
    return parse
