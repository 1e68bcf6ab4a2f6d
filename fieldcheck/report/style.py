"""The report's one inline stylesheet: screen and paper (a page per post, black on white)."""

CSS = """
body { font: 10.5pt/1.4 Georgia, 'Times New Roman', serif; color: #111; margin: 0 auto;
       max-width: 60em; padding: 1em 1.5em; }
h1 { font-size: 20pt; margin: 0.2em 0; } h2 { font-size: 14pt; border-bottom: 1px solid #888;
       margin-top: 1.6em; } h3 { font-size: 12pt; margin: 1em 0 0.3em; }
table { border-collapse: collapse; width: 100%; margin: 0.4em 0 0.8em; }
th, td { border: 1px solid #999; padding: 2px 5px; text-align: left; vertical-align: top; }
th { background: #eee; } td.num, th.num { text-align: right; font-variant-numeric: tabular-nums; }
.kv th { width: 32%; font-weight: normal; background: #f6f6f6; }
.muted { color: #555; } .small { font-size: 9pt; }
.badge { display: inline-block; padding: 0 4px; border: 1px solid #333; border-radius: 3px;
         font-weight: bold; white-space: nowrap; }
.a0 { background: #d8f0d8; } .a1 { background: #fff3c4; } .a2 { background: #ffd8a8; }
.a3 { background: #f7b4b4; } .an { background: #e4e4e4; }
.cautions { border: 2px solid #333; padding: 0.4em 0.8em; margin: 0.8em 0; background: #fafafa; }
.cautions h3 { margin-top: 0.2em; } .cautions li { margin: 0.15em 0; }
.cautions.compact { border-width: 1px; font-size: 9pt; }
.alert { border: 2px solid #000; padding: 0.3em 0.8em; margin: 0.5em 0; }
.differs { border-left: 4px solid #000; padding-left: 0.6em; }
.post { margin-top: 2em; }
.post h2 .badge { font-size: 10pt; vertical-align: middle; }
.plot text { font: 10px sans-serif; fill: #111; }
.steps td:first-child { width: 2.2em; text-align: right; }
.hash { font-family: monospace; font-size: 8.5pt; word-break: break-all; }
nav ol { columns: 2; }
.client p, .client li { font-size: 11.5pt; }
@page { margin: 14mm 12mm; }
@media print {
  body { max-width: none; padding: 0; font-size: 10pt; }
  nav { display: none; }
  .page, .post { break-before: page; page-break-before: always; }
  table, .cautions, svg, .alert { break-inside: avoid; page-break-inside: avoid; }
  tr { break-inside: avoid; page-break-inside: avoid; }
  h2, h3 { break-after: avoid; page-break-after: avoid; }
  a { color: #000; text-decoration: none; }
  .badge { -webkit-print-color-adjust: exact; print-color-adjust: exact; }
}
"""
