"""The printed report: running header and page numbers in the page margins, tables that break
across pages with their header repeated, sections that flow on, a phone-width screen that scrolls
wide tables sideways (checked on the HTML and CSS; the page count is test_report_print_pdf.py)."""

from __future__ import annotations

import re

from fieldcheck.report.html import render_report
from fieldcheck.report.model import ReportInfo
from fieldcheck.report.style import css_string


def _css(out: str) -> str:
    return out[out.index("<style>") + 7 : out.index("</style>")]


def test_every_page_has_a_running_header_and_page_n_of_m(demo_log):
    info = ReportInfo(number="R-0042", revision=3, client="Alder Row owners", job="J-7")
    out = render_report(demo_log, info=info)
    page = _css(out)[_css(out).index("@page") :]
    # CSS Paged Media Level 3 §5 margin boxes; counter(pages) is the total page count
    assert '"page " counter(page) " of " counter(pages)' in page
    assert "@top-left" in page and "@top-right" in page and "@bottom-left" in page
    assert css_string("14 Alder Row \u2014 Alder Row owners") in page
    assert css_string("Report R-0042, revision 3 \u2014 job J-7") in page


def test_header_text_cannot_break_out_of_the_stylesheet(empty_log):
    empty_log.add_site('Site "x" </style><script>alert(1)</script> \\ ; }')
    out = render_report(empty_log)
    assert out.count("</style>") == 1 and "<script" not in out
    # the space after a CSS escape ends it (and is consumed by it: CSS Syntax 3 §4.3.7)
    assert css_string('x"}') == '"x\\000022 }"'
    assert css_string("a \u2014 b") == '"a \\002014  b"'


def test_long_tables_repeat_their_header_and_rows_do_not_split(demo_log):
    out = render_report(demo_log)
    css = _css(out)
    assert "thead { display: table-header-group; }" in css
    assert re.search(r"tr,[^{]*\{ break-inside: avoid; \}", css)
    # every table with a header row has it in a thead (the row Chromium repeats on each page)
    for m in re.finditer(r"<table[^>]*>(.{0,40})", out):
        assert m.group(1).startswith(("<thead>", "<tbody>")), m.group(0)
    # no table is kept whole (a long one would leave half-empty pages behind it)
    assert not re.search(r"table[^{}]*\{[^}]*break-inside: avoid", css)


def test_only_the_client_summary_starts_a_new_page(demo_log):
    css = _css(render_report(demo_log))
    assert [s.strip() for s in re.findall(r"([^{}]*)\{ break-before: page; \}", css)] == ["#client"]
    assert "page-break-before" not in css


def test_phone_width_wide_tables_scroll_sideways(demo_log):
    out = render_report(demo_log)
    assert '<meta name="viewport" content="width=device-width, initial-scale=1">' in out
    assert ".tw { overflow-x: auto;" in _css(out)
    # every table sits in a scrolling box
    assert out.count("<table") == out.count('<div class="tw"><table') + out.count(
        '<table class="titleblock">'
    )


def test_phone_width_rows_become_cards_labelled_by_their_header(demo_log):
    out = render_report(demo_log)
    css = _css(out)
    phone = css[css.index("@media screen and (max-width: 700px)") :]
    assert "table.cards thead { display: none; }" in phone
    assert "content: attr(data-label)" in phone
    # every cell of the summary table carries its column's name
    summary = out[out.index('id="summary"') : out.index('id="actions"')]
    row = re.search(r"<tbody><tr>(.*?)</tr>", summary).group(1)
    labels = re.findall(r'<td data-label="([^"]*)"', row)
    assert labels == [
        "Tag",
        "Location",
        "Visit",
        "Action",
        "Capacity",
        "Demand",
        "Ratio",
        "Governs",
        "Due",
    ]
