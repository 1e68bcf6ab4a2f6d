"""The report's one inline stylesheet: screen (any width down to a phone) and paper.

Paper: CSS paged media. Every page carries a running header (site, report number, revision) and
a footer (one line of caution, "page n of m") in the @page margin boxes, which Chromium prints.
Long tables break across pages with their header row repeated (``thead``); rows never split;
sections flow on from each other, and only the client summary and the technical record start a
new page.
"""

from __future__ import annotations

# the one line of caution on every printed page (the full cautions are on the cover)
FOOTER_CAUTION = (
    "Screening aid for a competent person, not a design; local codes, the authority having "
    "jurisdiction and a licensed engineer govern. Clear the area at any sign of distress."
)

BASE = """
html { -webkit-text-size-adjust: 100%; }
body { font: 10.5pt/1.4 Georgia, 'Times New Roman', serif; color: #111; margin: 0 auto;
       max-width: 62em; padding: 1em 1.5em; }
h1 { font-size: 20pt; margin: 0.2em 0; } h2 { font-size: 14pt; border-bottom: 1px solid #888;
       margin: 1.4em 0 0.4em; } h3 { font-size: 11.5pt; margin: 0.9em 0 0.3em; }
.tw { overflow-x: auto; max-width: 100%; margin: 0.3em 0 0.7em; }
table { border-collapse: collapse; width: 100%; }
th, td { border: 1px solid #999; padding: 2px 5px; text-align: left; vertical-align: top; }
th { background: #eee; } td.num, th.num { text-align: right; font-variant-numeric: tabular-nums;
       white-space: nowrap; }
.kv th { width: 34%; font-weight: normal; background: #f6f6f6; }
.kv.inputs th { width: auto; }
.steps td:nth-child(2) { width: 36%; } .steps td:nth-child(3) { width: 34%; }
.muted { color: #555; } .small { font-size: 9pt; }
.badge { display: inline-block; padding: 0 4px; border: 1px solid #333; border-radius: 3px;
         font-weight: bold; white-space: nowrap; }
.a0 { background: #d8f0d8; } .a1 { background: #fff3c4; } .a2 { background: #ffd8a8; }
.a3 { background: #f7b4b4; } .an { background: #e4e4e4; }
.cautions { border: 2px solid #333; padding: 0.4em 0.8em; margin: 0.8em 0; background: #fafafa; }
.cautions h3 { margin-top: 0.2em; } .cautions li { margin: 0.15em 0; }
.alert { border: 2px solid #000; padding: 0.3em 0.8em; margin: 0.5em 0; }
.differs { border-left: 4px solid #000; padding-left: 0.6em; }
.post { margin-top: 1.6em; border-top: 2px solid #333; }
.post h2 { border-bottom: none; margin-top: 0.5em; }
.post h2 .badge { font-size: 10pt; vertical-align: middle; }
.duo { display: grid; grid-template-columns: minmax(0, 1fr) minmax(0, 1.25fr); gap: 0 1.2em;
       align-items: start; }
.duo.even { grid-template-columns: minmax(0, 1fr) minmax(0, 1fr); }
.trio { display: grid; gap: 0 1em; align-items: start;
        grid-template-columns: minmax(0, 1fr) 7.5em minmax(0, 1.3fr); }
.sketchbox { margin: 0; } .sketchbox svg { width: 100%; height: auto; }
.sketchbox figcaption { font-size: 8pt; color: #333; }
.plot { width: 100%; height: auto; max-width: 34em; }
.plot text { font: 15px sans-serif; fill: #111; }
.sketch text { font: 15px sans-serif; fill: #111; }
.steps td:first-child { width: 2.2em; text-align: right; }
.steps { font-size: 9pt; }
.hash { font-family: monospace; font-size: 8.5pt; word-break: break-all; }
.titleblock td, .titleblock th { border: none; padding: 1px 8px 1px 0; }
.titleblock th { font-weight: normal; color: #444; width: 10em; background: none; }
nav ol { columns: 2; }
.editions { columns: 2; margin: 0.3em 0; } .editions li { break-inside: avoid; }
.client p, .client li { font-size: 11.5pt; }
.photo { display: inline-block; margin: 0 0.8em 0.6em 0; vertical-align: top; width: 22em;
         max-width: 100%; }
.photo img { width: 100%; height: auto; border: 1px solid #999; }
.photo figcaption { font-size: 9pt; }
@media screen and (max-width: 700px) {
  body { padding: 0.6em; font-size: 10pt; }
  .duo, .duo.even { display: block; }
  table.cards thead { display: none; }
  table.cards, table.cards tbody, table.cards tr, table.cards td { display: block; width: auto; }
  table.cards tr { border: 1px solid #999; margin: 0 0 0.5em; }
  table.cards td { border: none; border-bottom: 1px dotted #ccc; text-align: left;
                   white-space: normal; }
  table.cards td:last-child { border-bottom: none; }
  table.cards td::before { content: attr(data-label); display: inline-block; min-width: 6.5em;
                           font-weight: bold; color: #444; margin-right: 0.4em; }
  .steps td:first-child, .steps td:nth-child(2), .steps td:nth-child(3) { width: auto; }
  .trio { grid-template-columns: minmax(0, 1fr) 8em; }
  .trio figure:last-child { grid-column: 1 / span 2; }
  .kv th { width: 40%; }
}
@media print {
  body { max-width: none; padding: 0; font-size: 9pt; line-height: 1.2; }
  h1 { font-size: 17pt; } h2 { font-size: 12.5pt; margin-top: 1em; } h3 { font-size: 10pt; }
  th, td { padding: 1px 4px; }
  .post { font-size: 8.5pt; }
  .steps { font-size: 7.5pt; line-height: 1.15; }
  .client p, .client li { font-size: 10pt; }
  .tw { overflow: visible; }
  nav { display: none; }
  #client { break-before: page; }
  thead { display: table-header-group; }
  tr, .cautions, .alert, svg, .keep, figure { break-inside: avoid; }
  h2, h3 { break-after: avoid; }
  a { color: #000; text-decoration: none; }
  .badge, th, .a0, .a1, .a2, .a3, .an { -webkit-print-color-adjust: exact;
       print-color-adjust: exact; }
  .post { margin-top: 1.2em; }
  .plot { max-width: 30em; }
  figure { margin: 0; }
}
"""


def css_string(text: str) -> str:
    """``text`` as a CSS string literal: quotes, backslashes and anything outside printable ASCII
    escaped (so no user text can close the string, the rule or the style element)."""
    out = []
    for ch in text:
        if ch.isascii() and ch.isprintable() and ch not in '"\\<>&':
            out.append(ch)
        else:
            out.append(f"\\{ord(ch):06x} ")  # the space ends the escape (and is eaten by it)
    return '"' + "".join(out) + '"'


def page_css(header_left: str, header_right: str, footer: str = FOOTER_CAUTION) -> str:
    """The @page rule: running header and footer in the margin boxes, page n of m."""
    box = "font: 7.5pt sans-serif; color: #333;"
    return (
        "@page { margin: 13mm 11mm 12mm 11mm;"
        f" @top-left {{ content: {css_string(header_left)}; {box} }}"
        f" @top-right {{ content: {css_string(header_right)}; {box} }}"
        f" @bottom-left {{ content: {css_string(footer)}; {box} font-size: 6.5pt; width: 75%; }}"
        f' @bottom-right {{ content: "page " counter(page) " of " counter(pages); {box} }} }}'
    )


def stylesheet(header_left: str = "", header_right: str = "") -> str:
    return BASE + page_css(header_left, header_right)


# the plain stylesheet with no running header (kept for callers that only want the look)
CSS = stylesheet()
