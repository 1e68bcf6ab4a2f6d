"""The survey report as one self-contained HTML file: inline CSS and SVG, no scripts, no links out.

    from fieldcheck.report.html import render_report, write_report
    text = render_report(log, site_id=None, visit_id=None, units="us")   # -> str
    path = write_report(log, "report.html", site_id=None, visit_id=None, units="us")  # atomic

Two parts: a client summary in plain words (what is safe to use, what is restricted, what must
happen by when) and the technical record for the office (every input as typed, the assumptions,
every check, the working, remedies, notes, photos with their sha256, the stored rating compared
with the re-rating). All the numbers come from the report's posts re-rated a chunk at a time
(model.gather: two passes, memory flat in the number of posts); the parts over every post are
written as pieces; every piece of user text goes through html.escape.
"""

from __future__ import annotations

import datetime as _dt
import math
import os
import re
import tempfile
from dataclasses import replace
from functools import cache
from html import escape
from pathlib import Path

from fieldcheck.engine.batch import EC5, END_NAMES
from fieldcheck.engine.cautions import CAUTIONS
from fieldcheck.engine.ec5_rating import clause_for
from fieldcheck.engine.loads import combination_name
from fieldcheck.engine.rating import FLAGS, detail
from fieldcheck.engine.result import ACTION_TEXT, ACTIONS, DUE_DAYS
from fieldcheck.engine.spring_ends import SPRING_MODE
from fieldcheck.out_path import not_a_file
from fieldcheck.report.model import (
    PostEntry,
    ReportData,
    ReportInfo,
    check_label,
    gather,
    visit_date,
)
from fieldcheck.report.notation import notation, sig, symbols, units_first
from fieldcheck.report.photos import data_uri
from fieldcheck.report.style import stylesheet
from fieldcheck.report.svg import capacity_plot, end_sketch
from fieldcheck.units import format_force, format_length

# a word and a symbol beside every colour (never colour alone)
BADGES = {
    0: ("a0", "\u2713", "NO ACTION"),
    1: ("a1", "\u25cb", "MONITOR"),
    2: ("a2", "\u25b2", "REPAIR OR BRACE"),
    3: ("a3", "\u2716", "MAKE SAFE NOW"),
    None: ("an", "?", "NOT RATED"),
}
LEVEL_TEXT = {
    "minimum": "minimum (visual assessment, default material values)",
    "standard": "standard (measured, some testing)",
    "detailed": "detailed (comprehensive testing and condition assessment)",
}


_SPECIAL = re.compile(r"[&<>\"']")


def e(x: object) -> str:
    """html.escape (quotes too), with a fast path for the many strings that need nothing."""
    s = "" if x is None else str(x)
    return escape(s, quote=True) if _SPECIAL.search(s) else s


def badge(action: int | None) -> str:
    cls, sym, word = BADGES.get(action, BADGES[None])
    return f'<span class="badge {cls}">{sym} {word}</span>'


def ratio_text(r: float | None) -> str:
    return "no load given" if r is None or not math.isfinite(r) else f"{r:.3f}"


def date_text(d) -> str:
    return "" if d is None else d.isoformat()


def due_text(p) -> str:
    """When a post's action falls due (``p``: a PostEntry or a model.PostRow)."""
    a = p.action
    if not p.rated:
        return "assess first"
    if DUE_DAYS[a] is None:
        return "none"
    if DUE_DAYS[a] == 0:
        return f"now ({date_text(p.due)})" if p.due else "now"
    return date_text(p.due) or f"within {DUE_DAYS[a]} days"


_TD = re.compile(r"<td(?=[ >])")
_TAGS = re.compile(r"<[^>]+>")


def _labelled(body: str, labels: list[str]) -> str:
    """Each ``<td`` of each row given ``data-label`` = its column's header (phone-width cards)."""
    rows = body.split("<tr>")
    out = [rows[0]]
    for row in rows[1:]:
        names = iter(labels)
        out.append(_TD.sub(lambda _m, it=names: f'<td data-label="{next(it, "")}"', row))
    return "<tr>".join(out)


def table(head: list[str], body: str, cls: str = "") -> str:
    """A table whose header row repeats on every printed page; on a phone-width screen each row
    becomes a card of "header: value" lines (nothing runs off the screen), and anything wider
    still scrolls sideways in its box. ``head``: header cells as HTML ("num:" right-aligns)."""
    return "".join(table_parts(head, [body], cls))


def table_parts(head: list[str], bodies, cls: str = ""):
    """``table`` in pieces for a writer to stream: ``bodies`` is an iterable of row texts (each
    whole rows), labelled one by one."""
    cells = "".join(
        f'<th class="num">{h[4:]}</th>' if h.startswith("num:") else f"<th>{h}</th>" for h in head
    )
    labels = [e(_TAGS.sub("", h[4:] if h.startswith("num:") else h)) for h in head]
    c = f' class="cards {cls}"' if cls else ' class="cards"'
    yield f'<div class="tw"><table{c}><thead><tr>{cells}</tr></thead><tbody>'
    for body in bodies:
        yield _labelled(body, labels)
    yield "</tbody></table></div>"


# rows joined into one piece before a writer gets them (fewer, larger writes)
ROWS_PER_PIECE = 512


def pieces(texts, sep: str = ""):
    """``sep.join(texts)`` in pieces of ``ROWS_PER_PIECE`` texts (a stream of any length)."""
    batch: list[str] = []
    first = True
    for t in texts:
        batch.append(t)
        if len(batch) == ROWS_PER_PIECE:
            yield ("" if first else sep) + sep.join(batch)
            batch, first = [], False
    if batch:
        yield ("" if first else sep) + sep.join(batch)


def kv(rows: str) -> str:
    return f'<div class="tw"><table class="kv"><tbody>{rows}</tbody></table></div>'


def header_text(d: ReportData) -> tuple[str, str]:
    """Running header: (site, report number and revision) for every printed page."""
    site = "; ".join(s.name for s in d.sites) or "no site"
    i = d.info
    number = f"Report {i.number}" if i.number else "Report (not numbered)"
    left = site + (f" \u2014 {i.client}" if i.client else "")
    right = (
        f"{number}, revision {i.revision}"
        + (" DRAFT" if i.draft else "")
        + (f" \u2014 job {i.job}" if i.job else "")
    )
    return left, right


# ----------------------------------------------------------------------------- sections


@cache
def cautions_box() -> str:
    """The cautions in full: once, on the cover (each printed page carries one line of them)."""
    items = "".join(f"<li>{e(c)}</li>" for c in CAUTIONS)
    return f'<div class="cautions" id="cautions"><h3>Read this first</h3><ul>{items}</ul></div>'


def _cover(d: ReportData) -> str:
    i = d.info
    title_rows = [
        ("Prepared by", i.firm),
        ("Engineer", i.engineer),
        ("Client", i.client),
        ("Job number", i.job),
        ("Report number", i.number or "not numbered"),
        ("Revision", f"{i.revision}{' (DRAFT: not issued)' if i.draft else ''}"),
        ("Issued", d.created.strftime("%Y-%m-%d")),
    ]
    site_rows = (
        "".join(
            f"<tr><th>Site</th><td>{e(s.name)}<br><span class='muted'>{e(s.address)}</span>"
            f"{'<br>' + e(s.notes) if s.notes else ''}</td></tr>"
            for s in d.sites
        )
        or "<tr><th>Site</th><td>none in this log</td></tr>"
    )
    block = "".join(f"<tr><th>{e(k)}</th><td>{e(v)}</td></tr>" for k, v in title_rows if v)
    vrows = "".join(
        f"<tr><td>{e(v.name)}</td><td>{e(date_text(visit_date(v)))}</td><td>{e(v.inspector)}</td>"
        f"<td>{e(LEVEL_TEXT.get(v.level, v.level))}</td><td>{e(', '.join(v.instruments))}</td></tr>"
        for v in d.visits
    )
    # a post with field errors (no action) and one with no load are both not rated: one count
    # (model.gather counted them)
    count_txt = ", ".join(f"{badge(a)} {n}" for a, n in sorted(d.counts.items()))
    return (
        '<section id="cover"><h1>Survey report</h1>'
        f'<table class="titleblock"><tbody>{block}</tbody></table>'
        + kv(
            site_rows + f"<tr><th>Posts in this report</th><td>{d.n}"
            f"{': ' + count_txt if count_txt else ''}</td></tr>"
            f"<tr><th>Scope</th><td>{e(d.scope)}</td></tr>"
        )
        + "<h3>Visits</h3>"
        + table(
            ["Visit", "Date", "Inspector", "Data-collection level", "Instruments"],
            vrows or "<tr><td colspan=5>no visits</td></tr>",
        )
        + f"{_signoff(d)}{cautions_box()}"
        '<nav><h3>Contents</h3><ol><li><a href="#client">Client summary</a></li>'
        '<li><a href="#summary">Every post</a></li><li><a href="#actions">Open actions</a></li>'
        '<li><a href="#conflicts">Open sync conflicts</a></li>'
        '<li><a href="#record">Technical record</a></li>'
        '<li><a href="#engine">Engine and reference data</a></li></ol></nav></section>'
    )


def _signoff(d: ReportData) -> str:
    """Recorded sign-offs, and lines to sign on paper: the inspector signs the visit, a licensed
    engineer signs any capacity used for decisions (common practice, no source)."""
    done = "".join(f"<li>\u2713 {e(r.created_at[:10])}: {e(r.text)}</li>" for r in d.signoffs)
    return (
        "<h3>Sign-off</h3>"
        + (f"<ul>{done}</ul>" if done else "<p>Not signed off in the log yet.</p>")
        + kv(
            "<tr><th>Inspector (signature, date)</th><td>&nbsp;</td></tr>"
            "<tr><th>Reviewing engineer (signature, licence, date)</th><td>&nbsp;</td></tr>"
        )
    )


def _where(p) -> str:
    loc = p.location
    return f"{e(p.tag)}{' (' + e(loc) + ')' if loc else ''}"


NOT_ASSESSED = (
    "Complete the record (the load on it, or the measurement missing) and have it rated; keep "
    "load off it and treat it as unsafe until then."
)


def _client(d: ReportData):
    """Plain words for the client: safe, restricted, to do by when; no engineering terms. In
    pieces, most urgent first within each group (the rows come from model.PostRows)."""
    rows = d.rows
    yield '<section id="client" class="client"><h2>Client summary</h2>'
    if not d.n:
        yield (
            "<p>No posts were recorded in the scope of this report, so there is nothing "
            "to decide from it. Ask the inspector whether the survey is complete.</p>"
        )
    if rows.count(grp=3):
        yield (
            '<div class="alert"><h3>\u2716 Unsafe now: keep everyone out from under these '
            "and call the engineer</h3><ul>"
        )
        yield from pieces(
            f"<li>{_where(p)}: clear the area under the load now and put in emergency "
            "support before anyone works there again.</li>"
            for p in rows.by_urgency(grp=3)
        )
        yield "</ul></div>"
    if rows.count(grp=None):
        yield (
            "<h3>? Not assessed: treat as unsafe</h3><p>These posts could not be assessed from "
            "what was recorded (a measurement or the load on them is missing); keep load off them "
            "and treat them as unsafe until the inspector completes them: "
        )
        yield from pieces((_where(p) for p in rows.by_urgency(grp=None)), ", ")
        yield ".</p>"
    if rows.count(grp=2):
        yield "<h3>\u25b2 Restricted: do not add load; repair or brace by the date shown</h3><ul>"
        yield from pieces(
            f"<li>{_where(p)}: no storage or extra load near this post; it must be repaired, "
            f"braced or supported by <b>{e(due_text(p))}</b>.</li>"
            for p in rows.by_urgency(grp=2)
        )
        yield "</ul>"
    if rows.count(grp=1):
        yield "<h3>\u25cb Safe to use, to be checked again</h3><ul>"
        yield from pieces(
            f"<li>{_where(p)}: safe to use as it is now; to be looked at again by "
            f"{e(due_text(p))}, and at once after any change, impact or movement.</li>"
            for p in rows.by_urgency(grp=1)
        )
        yield "</ul>"
    if rows.count(grp=0):
        yield "<h3>\u2713 Safe to use as found</h3><p>"
        yield from pieces((_where(p) for p in rows.by_urgency(grp=0)), ", ")
        yield ".</p>"
    # a post not assessed is work to do before anything else: never left out of the dates
    if rows.count(dated=1):
        yield "<h3>What must happen by when</h3>"
        yield from table_parts(
            ["By", "Post", "What"],
            pieces(
                f"<tr><td>{e(due_text(p))}</td><td>{_where(p)}</td>"
                f"<td>{e(ACTION_TEXT[p.action] if p.grp else NOT_ASSESSED)}</td>"
                "</tr>"
                for p in rows.by_urgency(dated=1)
            ),
        )
    levels = sorted({v.level for v in d.visits})
    who = d.info.engineer or "the engineer responsible for the works"
    firm = f" ({d.info.firm})" if d.info.firm else ""
    yield (
        "<h3>Limits of this survey</h3><p>The posts were assessed from what could be seen and "
        f"measured on the day (data-collection level: {e(', '.join(levels) or 'not recorded')}). "
        "Hidden decay, hidden joints or loads nobody knew about can make a post weaker than shown. "
        "Where the wood species or grade was unknown, the lowest likely values were used.</p>"
        f"<h3>Who to call</h3><p>{e(who)}{e(firm)}. If you see or hear any of the warning signs "
        "listed under \u201cRead this first\u201d on the first page (crushing, a split opening, a "
        "post moving, a settling sill, new cracks, creaking), first get everyone out from under "
        "the load, then call.</p></section>"
    )


def _summary_row(d: ReportData, p) -> str:
    """One row of the every-post table (``p``: a model.PostRow)."""
    mid = e(p.member_id)
    if p.action is None:
        return (
            f"<tr><td><a href='#m-{mid}'>{e(p.tag)}</a></td><td>{e(p.location)}</td>"
            f"<td>{e(p.visit_name)}</td><td>{badge(None)}</td>"
            "<td colspan=4>not rated: the record has field errors</td>"
            "<td>assess first</td></tr>"
        )
    u, nan = d.units, math.nan
    cap = nan if p.capacity_n is None else p.capacity_n
    dem = nan if p.demand_n is None else p.demand_n
    return (
        f"<tr><td><a href='#m-{mid}'>{e(p.tag)}</a></td><td>{e(p.location)}</td>"
        f"<td>{e(p.visit_name)}</td><td>{badge(p.action)}</td>"
        f'<td class="num" data-k="capacity" data-post="{mid}">'
        f"{e(format_force(cap, u))}</td>"
        f'<td class="num">{e(format_force(dem, u))}</td>'
        f'<td class="num" data-k="ratio" data-post="{mid}">'
        f"{e(ratio_text(p.ratio))}</td>"
        f"<td>{e(p.governs)}</td><td>{e(due_text(p))}</td></tr>"
    )


SUMMARY_HEAD = [
    "Tag",
    "Location",
    "Visit",
    "Action",
    "num:Capacity",
    "num:Demand",
    "num:Ratio",
    "Governs",
    "Due",
]


def _summary_table(d: ReportData):
    yield (
        '<section id="summary"><h2>Every post</h2>'
        "<p class='small muted'>Re-rated for this report in one engine run; due date = visit date "
        "+ the action's interval (judgement defaults: monitor 90 days, repair or brace 14 days, "
        "make safe: now).</p>"
    )
    body = (
        pieces(_summary_row(d, p) for p in d.rows.in_order())
        if d.n
        else ["<tr><td colspan=9>No posts are recorded in this scope.</td></tr>"]
    )
    yield from table_parts(SUMMARY_HEAD, body)
    yield "</section>"


def _open_actions(d: ReportData):
    rows = d.rows
    yield '<section id="actions"><h2>Open actions</h2>'
    if rows.count(open=1, action=3):
        yield '<div class="alert"><h3>\u2716 Make safe first</h3><ol>'
        yield from pieces(
            f"<li>{_where(p)}: ratio {e(ratio_text(p.ratio))}; {e(ACTION_TEXT[3])}</li>"
            for p in rows.by_urgency(open=1, action=3)
        )
        yield "</ol></div>"
    if not rows.count():
        yield "<p>No posts in this report, so nothing here says any post is adequate.</p>"
    elif not rows.count(open=1):
        yield "<p>No open actions: every post in this report is adequate as found.</p>"
    else:
        yield from table_parts(
            ["Post", "Action", "num:Ratio", "Due", "What to do"],
            pieces(_open_row(p) for p in rows.by_urgency(open=1)),
        )
    yield "</section>"


def _open_row(p) -> str:
    """One row of the open actions (``p``: a model.PostRow)."""
    # a record with field errors was never rated: its load may well be given
    ratio = "field errors" if p.action is None else ratio_text(p.ratio)
    what = ACTION_TEXT[p.action] if p.action is not None else ("Complete the record: " + p.errors)
    # the warnings that set the action: why a post whose ratio passes needs work
    if p.why is not None:
        what += " Raised by: " + p.why
    return (
        f"<tr><td>{_where(p)}</td><td>{badge(p.action)}</td>"
        f"<td class='num'>{e(ratio)}</td><td>{e(due_text(p))}</td>"
        f"<td>{e(what)}</td></tr>"
    )


def _conflicts(d: ReportData) -> str:
    out = ['<section id="conflicts"><h2>Open sync conflicts</h2>']
    if not d.conflicts:
        out.append("<p>None: every post has one current revision.</p>")
    for tag, heads in d.conflicts:
        keys = sorted(
            {k for h in heads for k in h.record}
            - {
                k
                for k in heads[0].record
                if all(h.record.get(k) == heads[0].record[k] for h in heads)
            }
        )
        out.append(
            f"<h3>\u26a0 {e(tag)}: {len(heads)} revisions made without seeing each other</h3>"
            "<p>Both are kept; the office must choose one (nothing is resolved silently). "
            "Until then this report rates the more urgent of them, and a withdrawal never "
            "hides a revision still standing.</p>"
        )
        out.append(
            table(
                ["Revision", "When", "Where they differ"],
                "".join(
                    f"<tr><td>{k}</td><td>{e(h.created_at[:16].replace('T', ' '))}</td><td>"
                    + "; ".join(f"{e(c)} = {e(h.record.get(c, '(not given)'))}" for c in keys)
                    + "</td></tr>"
                    for k, h in enumerate(heads, 1)
                ),
            )
        )
    out.append("</section>")
    return "".join(out)


def _record_table(record: dict[str, str], columns: tuple[str, ...]) -> str:
    """The inputs as typed, two to a row, each named in words (``columns``: the rated ones, in
    the registry's order, from the log)."""
    order = [c for c in columns if c in record] + [c for c in record if c not in columns]
    order = [c for c in order if c not in ("tag", "location", "notes")]
    cells = [
        f"<th>{e(c.replace('_', ' '))}</th><td>{e(record[c])}"
        f"{'' if c in columns else ' <span class=muted>(not an engine input)</span>'}</td>"
        for c in order
    ]
    rows = "".join(
        "<tr>"
        + "".join(cells[k : k + 2])
        + ("<td></td><td></td>" if k + 1 == len(cells) else "")
        + "</tr>"
        for k in range(0, len(cells), 2)
    )
    return f'<div class="tw"><table class="kv inputs"><tbody>{rows}</tbody></table></div>'


def _duration_text(rec: dict, s: dict, factor: str, assumed: bool) -> str:
    """Where the duration factor came from: the governing combination's loads, the duration
    typed, the permanent default of a load given without one, or no load at all (the capacity
    shown at that factor); never 'default' for a factor a combination set."""
    lc = s.get("load_combination") or {}
    if isinstance(lc, dict) and lc.get("key"):  # every combination rated, each at its own
        return f"by load combination, each at its own; governing {lc.get('name', '')}: {factor}"
    if rec.get("duration"):
        return f"{rec['duration']}; {factor}"
    if s.get("state") != "rated":
        return f"not given, and no load: the capacity is shown at {factor}"
    if assumed:  # the rating's own flag: a load given with no duration is taken as permanent
        return f"not given: permanent assumed (the conservative choice); {factor}"
    return f"not given: default; {factor}"


def _assumptions(d: ReportData, p: PostEntry) -> str:
    r, j, b, u, s = p.rating, p.j, p.rating.batch, d.units, p.summary
    # a large batch keeps only the rating: the post's intermediates come from rating it alone
    src, jv = detail(r, j)
    v = src.values
    method = s.get("method", "")
    if method == "ec5":
        dur = f"k_mod = {float(b.kmod[j]):g} (EN 1995-1-1 Table 3.1)"
    elif method == "lrfd":
        dur = f"time effect factor \u03bb = {float(b.lam[j]):g} (NDS 2018 Appendix N)"
    else:
        dur = f"CD = {float(b.cd[j]):g} (NDS 2018 Table 2.3.2)"
    rec = p.view.record
    rows = [
        ("Method", method.upper()),
        ("Material", p.meta.get("_material", rec.get("species", ""))),
        (
            "Knowledge factor kappa",
            f"{float(b.knowledge[j]):g} (ASCE 41 data collection; visit level {p.visit.level})",
        ),
        (
            "Load duration",
            _duration_text(rec, s, dur, bool(int(r.flags[j]) & FLAGS.bit["duration_assumed"])),
        ),
        ("Moisture", _moisture(rec, p.meta, method)),
        ("Construction-stage member", "yes" if bool(b.construction[j]) else "no"),
    ]
    # the buckling lengths in the method's own terms: NDS Ke, lu, le/d; EN 1995-1-1 §6.3.2
    # beta, L, L_ef, lambda
    ec5 = method == "ec5"
    words = "β, L, L_ef = β L, λ" if ec5 else "Ke, lu, le = Ke lu, le/d"
    axes = []
    for ax in (1, 2):
        ke = v.get(f"ke{ax}")
        lu = v.get(f"lu{ax}")
        led = v.get(f"ec5_lam{ax}" if ec5 else f"le_d{ax}")
        if ke is None:
            continue
        kev = float(ke[jv])
        luv = float(lu[jv]) if lu is not None else float(b.height_mm[j])
        k, length, le, slender = ("β", "L", "L_ef", "λ") if ec5 else ("Ke", "lu", "le", "le/d")
        axes.append(
            f"{k} = {sig(kev, 3)}, {length} = {format_length(luv, u)}, "
            f"{le} = {format_length(kev * luv, u)}, {slender} = {sig(float(led[jv]), 4)}"
            if led is not None
            else ""
        )
    if len(axes) == 2 and axes[0] == axes[1]:
        rows.append((f"Axes 1 and 2: {words}", axes[0]))
    else:
        rows += [(f"Axis {k}: {words}", a) for k, a in enumerate(axes, 1)]
    lc = s.get("load_combination")
    if isinstance(lc, dict) and lc.get("name"):
        rows.append(("Load", f"{lc.get('name')}{'; ' + lc['clause'] if lc.get('clause') else ''}"))
    body = "".join(f"<tr><th>{symbols(k)}</th><td>{symbols(val)}</td></tr>" for k, val in rows)
    return kv(body)


def _moisture(rec: dict, meta: dict, method: str) -> str:
    """The moisture row: as measured, or what was assumed, in the method's own terms."""
    if method != "ec5":
        return rec.get("moisture") or "not measured: dry service assumed"
    # EN 1995-1-1 §2.3.1.3: the service class the rating used (a wetter reading takes its own)
    sc = meta.get("_service_class", 1)
    if rec.get("moisture"):
        return f"{rec['moisture']}: service class {sc} (EN 1995-1-1 §2.3.1.3)"
    return f"not measured: service class {sc} used (EN 1995-1-1 §2.3.1.3)"


def _warnings(p: PostEntry) -> str:
    warn = " ".join(f"\u26a0 {e(w)}" for w in p.summary.get("warnings", []))
    return f"<p class='small warnings'>{warn}</p>" if warn else ""


def _checks(d: ReportData, p: PostEntry) -> str:
    r, j, u = p.rating, p.j, d.units
    gov = r.governing_name(j)
    rows = []
    for name, c in r.checks.items():
        cap = float(c.capacity_n[j])
        if math.isnan(cap):
            continue
        ratio = float(c.ratio[j])
        mark = " \u25c0 governs" if name == gov else ""
        rows.append(
            f"<tr><td>{e(c.label)}{mark}</td>"
            f"<td class='num'>{e(format_force(cap, u))}</td>"
            f"<td class='num'>{e(format_force(float(c.demand_n[j]), u))}</td>"
            f"<td class='num'>{e(ratio_text(ratio))}</td><td>{e(_combination(r, name, j))}</td>"
            f"<td>{e(clause_for(c.clause, int(r.batch.method[j])))}</td></tr>"
        )
    return table(
        ["Check", "num:Capacity", "num:Demand", "num:Ratio", "Load combination", "Clause"],
        "".join(rows),
    )


def _combination(r, name: str, j: int) -> str:
    """The load combination that governs check ``name`` of post j, with its duration factor
    (Rating.check_combination; the batch's duration factors worked out once per rating)."""
    if not hasattr(r, "check_combination"):
        return ""
    c = r.checks[name]
    if c.factor is None:
        cache = r.__dict__.setdefault("_report_cache", {})
        if "dfac" not in cache:
            cache["dfac"] = r.duration_factor()
        combo = int((r.batch.combo if c.combo is None else c.combo)[j])
        combo_name, factor = combination_name(combo, r.batch, j), float(cache["dfac"][j])
    else:
        combo_name, factor = r.check_combination(name, j)
    return f"{combo_name} ({sig(factor, 3)})" if math.isfinite(factor) else combo_name


def _remedies(d: ReportData, p: PostEntry) -> str:
    rem = p.summary.get("remedies") if p.summary else None
    if not rem:
        return ""
    items = []
    for x in rem:
        if isinstance(x, dict):
            text = units_first(x.get("description") or "", d.units) or (
                x.get("text") or "; ".join(f"{k}: {v}" for k, v in x.items())
            )
            after = []
            if x.get("capacity_kN") is not None:
                after.append(f"capacity {format_force(1000.0 * float(x['capacity_kN']), d.units)}")
            if x.get("ratio") is not None:
                after.append(f"ratio {ratio_text(float(x['ratio']))}")
            if x.get("action"):
                after.append(f"action {x['action']}")
            if after:
                text = f"{text} Then: {', '.join(after)}."
        else:
            text = str(x)
        items.append(f"<li>{e(text)}</li>")
    note = p.summary.get("remedies_note")  # an unidentified cap or sill: why options stay at repair
    return (
        f"<h3>Remedies</h3><p class='small muted'>Each option re-rated by the same engine; "
        f"an engineer chooses and details the work.{' ' + e(note) if note else ''}</p>"
        f"<ol>{''.join(items)}</ol>"
    )


def _photo(p: PostEntry, a) -> str:
    """One attached photo: a reduced copy when its file is there and its sha256 is the recorded
    one, else a sentence saying why not; the caption and the sha256 either way."""
    f = p.photo_files.get(a.id)
    uri = data_uri(f) if f is not None else None
    if uri is not None:
        img = f'<img src="{uri}" alt="{e(a.caption or "photo")}">'
    elif f is None:
        img = (
            "<p class='small'>\u26a0 Not shown: the file is not with this log, or it changed "
            "since it was attached (its sha256 differs).</p>"
        )
    else:
        img = "<p class='small'>\u26a0 Not shown: not an image this report can read.</p>"
    return (
        f'<figure class="photo">{img}<figcaption>{e(a.caption) or "no caption"}'
        f'<br><span class="hash">sha256 {e(a.sha256)}</span></figcaption></figure>'
    )


def _notes_photos(d: ReportData, p: PostEntry) -> str:
    note = p.view.record.get("notes")
    out = [
        f"<p><b>Notes:</b> {e(note) if note else 'none recorded'}."
        + ("" if p.attachments else " <b>Photos:</b> none attached.")
        + "</p>"
    ]
    revs = "".join(
        f"<li>{e(rv.kind)}, {e(rv.created_at[:10])}"
        + (
            f", action set to {e(ACTIONS[rv.action])}"
            if getattr(rv, "action", None) is not None
            else ""
        )
        + f": {e(rv.text)}</li>"
        for rv in p.reviews
    )
    if revs:
        out.append(f"<h3>Office reviews</h3><ul>{revs}</ul>")
    if p.attachments:
        out.append("<h3>Photos</h3><div>" + "".join(_photo(p, a) for a in p.attachments) + "</div>")
    return "".join(out)


def _raised_from(r, j: int, p: PostEntry) -> str:
    """Where an office override raised the action: what the post was rated as found."""
    rated = int(r.action[j])
    if p.action == rated:
        return ""
    return f" (set by the office review; rated as found: {e(ACTIONS[rated])})"


def _stored(p: PostEntry, units: str) -> str:
    s = p.stored
    if s is None:
        head = "<p><b>Stored rating:</b> none for this revision."
    else:
        cap = s.capacity_n if s.capacity_n is not None else float("nan")
        head = (
            f"<p><b>Stored rating:</b> engine {e(s.engine_version)}, {e(s.created_at[:10])}; "
            f"{badge(s.action)} capacity {e(format_force(cap, units))}, "
            f"ratio {e(ratio_text(s.ratio))}."
        )
    if p.differs:
        items = "".join(f"<li>{e(x)}</li>" for x in p.differs)
        return (
            head + '</p><div class="differs"><b>\u26a0 The stored rating differs from this '
            f"re-rating:</b><ul>{items}</ul></div>"
        )
    return head + " \u2713 The stored rating equals this re-rating.</p>"


# working steps the post's result and checks tables already show (the report prints them once)
SHOWN_ABOVE = ("Governing check", "Demand / capacity", "Action")
# steps whose clause column is a legend: the report prints the legend once, in the section on the
# engine and reference data, and points to it from each post
LEGEND_ONCE = {"Status of the reference values": "key under Engine and reference data"}
STATUS_KEY = (
    "Status of each reference value: read, from the source; secondary, from a reproduction of "
    "it; from memory, recalled, not read (to be checked against the source before release)."
)


def working_rows(steps) -> list[tuple[str, str, str]]:
    """The working as the report prints it: (label, value, clause). Steps the result and checks
    tables above already show are left out; the two axes' steps are written once when they are
    equal (a square post); a step repeated with the same value is written once."""
    rows = [
        (st.label, st.value, LEGEND_ONCE.get(st.label, st.clause))
        for st in steps
        if not st.label.startswith("Check:") and st.label not in SHOWN_ABOVE
    ]
    by_label = {lb: (v, c) for lb, v, c in rows}
    out: list[tuple[str, str, str]] = []
    seen: set[tuple[str, str]] = set()
    for lb, v, c in rows:
        if lb.startswith("Axis 2: ") and by_label.get("Axis 1: " + lb[8:]) == (v, c):
            continue
        if lb.startswith("Axis 1: ") and by_label.get("Axis 2: " + lb[8:]) == (v, c):
            lb = "Axes 1 and 2: " + lb[8:]
        key = (lb.split(" (")[0], v)
        if key in seen:
            continue
        seen.add(key)
        out.append((lb, v, c))
    return out


def _states_rows(d: ReportData, p: PostEntry) -> str:
    """Office review and remedy state of a post (rows of its result table)."""
    out = ""
    rv = p.review_state
    if rv is not None:
        if rv.review is None:
            text = "awaiting office review"
        else:
            text = f"{rv.state}, {rv.on[:10]}"
            if rv.action is not None:
                text += f"; action set to {rv.action_label}"
            if rv.instruction:
                text += f"; {rv.instruction}"
        out += f"<tr><th>Office review</th><td>{e(text)}</td></tr>"
    rm = p.remedy_state
    if rm is not None:
        text = rm.state
        if rm.done_on:
            text += f" on {rm.done_on}"
        if rm.remedy:
            text += f": {rm.remedy}"
        elif rm.proposals:
            text += f": {rm.proposals[0].description}"
        out += f"<tr><th>Remedy</th><td>{e(text)}</td></tr>"
    return out


def _sketch(d: ReportData, p: PostEntry) -> str:
    src, jv = detail(p.rating, p.j)
    v = src.values
    ke = None
    if "ke1" in v and "axis" in v:
        ke = float(v["ke2"][jv] if int(v["axis"][jv]) == 2 else v["ke1"][jv])
    elif "ke1" in v:
        ke = float(v["ke1"][jv])
    rec = p.view.record
    b, j = p.rating.batch, p.j
    symbol = "β" if int(b.method[j]) == EC5 else "K<sub>e</sub>"
    if int(v["mode"][jv]) == SPRING_MODE:  # spring ends: the record's words, not drawn
        return end_sketch(rec.get("top"), rec.get("bottom"), ke, k_symbol=symbol)
    # the ends the post was rated with (pinned where none was typed), and whether they were typed
    return end_sketch(
        END_NAMES[int(b.top[j])],
        END_NAMES[int(b.bottom[j])],
        ke,
        given=(bool(rec.get("top")), bool(rec.get("bottom"))),
        k_symbol=symbol,
    )


def _post(d: ReportData, p: PostEntry) -> str:
    if p.j is not None and int(p.rating.batch.method[p.j]) == EC5 and d.units != "metric":
        # an EC5 post's section speaks EN 1995-1-1: kN and mm first, whatever the report's units
        # (the tables over every post keep one unit: the report's)
        d = replace(d, units="metric")
    mid = e(p.view.member_id)
    head = (
        f'<section class="post" id="m-{mid}" data-post="{mid}"><div class="keep">'
        f"<h2>Post {e(p.tag)} "
        f"{badge(p.action)}</h2><p class='muted'>{e(p.view.location)} &middot; visit "
        f"{e(p.visit.name)} ({e(date_text(visit_date(p.visit)))}) &middot; revised "
        f"{e(p.view.revised_at[:10])}</p>"
    )
    if p.j is None:
        errs = "".join(f"<li>{e(x)}</li>" for x in p.errors)
        return (
            head + "</div><div class='alert'><b>Not rated:</b> the record as typed has errors."
            f"<ul>{errs}</ul></div><h3>Inputs as measured</h3>"
            f"{_record_table(p.view.record, d.columns)}"
            f"{_notes_photos(d, p)}{_stored(p, d.units)}</section>"
        )
    r, j, u = p.rating, p.j, d.units
    dem = float(r.demand_n[j])
    # EN 1995-1-1 §6.3.2: the design resistance N_Rd against the design load N_Ed
    cap_w, dem_w, ratio_w = (
        ("N_Rd (governing)", "N_Ed", "N_Ed / N_Rd")
        if int(r.batch.method[j]) == EC5
        else ("Capacity (governing)", "Demand", "Demand / capacity")
    )
    result = kv(
        f'<tr><th>{cap_w}</th><td data-k="capacity" data-post="{mid}">'
        f"{e(format_force(r.capacity_n[j], u))}</td></tr>"
        f"<tr><th>{dem_w}</th><td>"
        f"{e(format_force(dem, u)) if math.isfinite(dem) else 'no load given'}</td></tr>"
        f'<tr><th>{ratio_w}</th><td data-k="ratio" data-post="{mid}">'
        f"{e(ratio_text(float(r.ratio[j])))}</td></tr>"
        f"<tr><th>Governing check</th><td>{e(check_label(r, r.governing_name(j)))}; "
        f"{e(_combination(r, r.governing_name(j), j))}</td></tr>"
        f"<tr><th>Action</th><td>{badge(p.action)} {e(ACTION_TEXT[p.action])}"
        f"{_raised_from(r, j, p)}</td></tr>"
        f"<tr><th>Due</th><td>{e(due_text(p))}</td></tr>" + _states_rows(d, p)
    )
    plot = ""
    if p.curve_h is not None:
        plot = capacity_plot(
            p.curve_h,
            p.curve_cap,
            float(r.batch.height_mm[j]),
            float(r.capacity_n[j]),
            dem,
            u,
            p.tag,
        )
        if (
            bool(r.batch.braced1[j] or r.batch.braced2[j])
            or math.isfinite(float(r.batch.lu1_mm[j]))
            or math.isfinite(float(r.batch.lu2_mm[j]))
        ):
            plot += "<p class='small muted'>Curve: the same post unbraced over its full height.</p>"
    steps = "".join(
        f"<tr><td>{k}</td><td>{symbols(lb)}</td><td>{notation(v, u)}</td><td>{e(c)}</td></tr>"
        for k, (lb, v, c) in enumerate(working_rows(p.working), 1)
    )
    return (
        head
        + f'<div class="trio"><div>{result}</div>{_sketch(d, p)}<figure>{plot}</figure></div></div>'
        + '<div class="duo even"><div><h3>Inputs as measured</h3>'
        + _record_table(p.view.record, d.columns)
        + f"</div><div><h3>Assumptions</h3>{_assumptions(d, p)}</div></div>"
        + _warnings(p)
        + f"<h3>Checks</h3>{_checks(d, p)}"
        + _remedies(d, p)
        + "<h3>Working</h3>"
        + table(["#", "Step", "Value", "Clause"], steps, "steps")
        + _notes_photos(d, p)
        + f"{_stored(p, d.units)}</section>"
    )


def _engine(d: ReportData) -> str:
    items = "".join(
        f"<li><b>{e(k.replace('_', ' '))}</b>: {e(v)}</li>" for k, v in sorted(d.editions.items())
    )
    return (
        '<section id="engine"><h2>Engine and reference data</h2>'
        f"<p>fieldcheck engine version {e(d.engine_version)}. Reference-data editions used for "
        f'every re-rating in this report:</p><ul class="editions small">{items}</ul>'
        f'<p class="small">{e(STATUS_KEY)}</p></section>'
    )


def render_parts(d: ReportData, *, summary_only: bool = False, progress=None):
    """The document in pieces, in order, for a writer to stream to a file: each post's section
    is made, yielded and its text dropped before the next (bounded memory for any survey).
    ``summary_only``: the cover, client summary and tables without the per-post record."""
    title = "Survey report" + (f": {d.sites[0].name}" if len(d.sites) == 1 else "")
    left, right = header_text(d)
    yield "<!DOCTYPE html>\n"
    yield (
        '<html lang="en"><head><meta charset="utf-8">'
        '<meta name="viewport" content="width=device-width, initial-scale=1">'
        f"<title>{e(title)}</title><style>{stylesheet(left, right)}</style></head><body>\n"
    )
    yield _cover(d) + "\n"
    for part in (_client, _summary_table, _open_actions):  # streamed: any number of posts
        yield from part(d)
        yield "\n"
    yield _conflicts(d) + "\n"
    if summary_only:
        yield (
            '<section id="record"><h2>Technical record</h2><p>Not in this report: it was written '
            "as a summary only. Write the report of a visit or site for each post's inputs, "
            "checks and working.</p></section>\n"
        )
    else:
        yield (
            '<section id="record"><h2>Technical record</h2>'
            "<p>One section per post: the inputs as typed, the assumptions, every check, the "
            "working, notes and photos, and the stored rating compared with this re-rating.</p>"
            + (
                ""
                if d.posts
                else "<p>No posts are recorded in this scope (an empty visit or site).</p>"
            )
            + "</section>\n"
        )
        n = len(d.posts)
        for k, p in enumerate(d.posts, 1):
            yield _post(d, p) + "\n"
            p.release()
            if progress is not None and (k % 200 == 0 or k == n):
                progress(k, n, "writing")
    yield _engine(d) + "\n</body></html>\n"


def render(d: ReportData, *, summary_only: bool = False) -> str:
    return "".join(render_parts(d, summary_only=summary_only))


def render_report(
    log,
    site_id: str | None = None,
    visit_id: str | None = None,
    units: str = "us",
    info: ReportInfo | None = None,
    *,
    summary_only: bool = False,
    now: _dt.datetime | None = None,
) -> str:
    """The whole report as one HTML string (see the module docstring); ``now``: its issue time
    (default: the clock now)."""
    _check_units(units)
    d = gather(log, site_id, visit_id, units, now=now)
    try:
        if info is not None:
            d.info = info
        return render(d, summary_only=summary_only)
    finally:
        d.close()


def _check_units(units: str) -> None:
    if units not in ("us", "metric"):
        raise ValueError(f"units: '{units}' is not known; write us or metric, e.g. --units metric")


def write_report(
    log,
    path,
    site_id: str | None = None,
    visit_id: str | None = None,
    units: str = "us",
    info: ReportInfo | None = None,
    *,
    summary_only: bool = False,
    progress=None,
) -> Path:
    """Write the report to ``path`` atomically (a temporary file beside it, then a rename), with
    the permissions the user's umask gives a new file, streamed post by post. Without ``info``,
    the title block comes from the config file and the revision is counted up in the log (a
    writable one). ``path`` "-": the standard output. ``progress(done, total, stage)``."""
    _check_units(units)
    d = gather(log, site_id, visit_id, units, progress=progress)
    try:
        if info is None:
            from fieldcheck.report.model import issue_info

            info = issue_info(log, site_id, visit_id)
        d.info = info
        return _write(render_parts(d, summary_only=summary_only, progress=progress), path)
    finally:
        d.close()


def _write(parts, path) -> Path:
    """The pieces to ``path`` ("-": the standard output), atomically for a file."""
    import sys

    if str(path) == "-":
        for part in parts:
            sys.stdout.write(part)
        sys.stdout.flush()
        return Path("-")
    path = Path(path).expanduser()
    if not_a_file(path):  # /dev/null, a pipe: written as it is, never renamed over
        with open(path, "w", encoding="utf-8", newline="\n") as fh:
            for part in parts:
                fh.write(part)
        return path
    fd, tmp = tempfile.mkstemp(prefix=f".{path.name}.", suffix=".part", dir=path.parent or ".")
    try:
        os.chmod(tmp, 0o666 & ~_umask())
        with os.fdopen(fd, "w", encoding="utf-8", newline="\n") as fh:
            for part in parts:
                fh.write(part)
            fh.flush()
            os.fsync(fh.fileno())
        os.replace(tmp, path)
    except BaseException:
        Path(tmp).unlink(missing_ok=True)
        raise
    return path


def _umask() -> int:
    mask = os.umask(0)
    os.umask(mask)
    return mask


__all__ = ["ACTIONS", "render_report", "write_report"]
