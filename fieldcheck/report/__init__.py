"""Reports for the office and the client.

    from fieldcheck.report.html import render_report, write_report
    render_report(log, site_id=None, visit_id=None, units="us") -> str     # one HTML document
    write_report(log, path, site_id=None, visit_id=None, units="us") -> Path  # atomic write

Modules: model.py (gathers the log in two passes, a chunk of posts at a time: the first rates
each chunk in one engine call and keeps what the summary parts show of each post on disk, the
second rates each chunk again, with its curves and remedies, for the per-post sections),
html.py (the document), svg.py (capacity against height), style.py (the stylesheet),
batch_csv.py (result columns of `rate --batch`).
"""
