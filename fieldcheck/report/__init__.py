"""Reports for the office and the client.

    from fieldcheck.report.html import render_report, write_report
    render_report(log, site_id=None, visit_id=None, units="us") -> str     # one HTML document
    write_report(log, path, site_id=None, visit_id=None, units="us") -> Path  # atomic write

Modules: model.py (gathers the log and re-rates the report's posts in one engine call, curves in
one more), html.py (the document), svg.py (capacity against height), style.py (the stylesheet),
batch_csv.py (result columns of `rate --batch`).
"""
