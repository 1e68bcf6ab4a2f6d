"""What a client receives: a title block from the config file or options, a revision that counts
up, no internal identifiers or login names, checks named in words, engineering notation with
four significant figures in the user's units first, end-condition sketches, a readable plot, and
a file written with the user's umask."""

from __future__ import annotations

import os
import re
from pathlib import Path

import pytest

from fieldcheck.cli import main
from fieldcheck.engine.rating import rate
from fieldcheck.records import parse_records
from fieldcheck.report import model, notation, svg
from fieldcheck.report.html import render_report, write_report
from fieldcheck.report.model import ReportInfo

UUID = re.compile(r"[0-9a-f]{8}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{12}")


def _visible(parse_html, out: str) -> str:
    p = parse_html(out)
    text = "".join(p.text)
    return text[text.index("Survey report", 200) :]  # after the title and the stylesheet


def test_title_block_from_the_config_file_and_options(demo_log, tmp_path, monkeypatch):
    cfg = tmp_path / "config.toml"
    cfg.write_text(
        'firm = "Example Structural"\nengineer = "A. Engineer, PE"\n'
        '[report]\nclient = "Alder Row owners"\njob = "J-2041"\nnumber = "R-0007"\n',
        encoding="utf-8",
    )
    monkeypatch.setenv("FIELDCHECK_CONFIG", str(cfg))
    out = tmp_path / "r.html"
    db = str(demo_log.path)
    assert main(["report", "--db", db, "--out", str(out), "--client", "Alder Row trust"]) == 0
    text = out.read_text(encoding="utf-8")
    for want in ("Example Structural", "A. Engineer, PE", "Alder Row trust", "J-2041", "R-0007"):
        assert want in text
    assert "Alder Row owners" not in text  # the option wins over the file


def test_revision_counts_up_each_time_a_visits_report_is_reissued(demo_log, tmp_path, capsys):
    db = str(demo_log.path)
    out = str(tmp_path / "r.html")
    args = ["report", "--db", db, "--visit", "Basement survey", "--out", out]
    revs = []
    for extra in ([], [], ["--draft"], []):
        assert main(args + extra) == 0
        text = Path(out).read_text(encoding="utf-8")
        revs.append(re.search(r"Report [^,]*, revision (\d+( DRAFT)?)", text).group(1))
    assert revs == ["0", "1", "1 DRAFT", "2"]  # a draft is not an issue
    # another scope counts on its own
    assert main(["report", "--db", db, "--out", out]) == 0
    assert "revision 0" in Path(out).read_text(encoding="utf-8")
    assert "(revision 0)" in capsys.readouterr().err


def test_no_internal_identifiers_or_login_names_in_what_a_reader_sees(demo_log, parse_html):
    v = demo_log.visits()[0]
    demo_log.add_review("sign-off", "Basement posts reviewed", visit_id=v.id)
    text = _visible(parse_html, render_report(demo_log))
    assert not UUID.search(text), UUID.search(text).group(0)
    assert demo_log.author == "tester" and "tester" not in text
    assert demo_log.device_id not in text


def test_checks_are_named_in_words(demo_log, parse_html):
    posts = demo_log.posts()
    r = rate(parse_records([p.record for p in posts]).batch)
    text = _visible(parse_html, render_report(demo_log))
    for name, c in r.checks.items():
        if "_" in name:
            assert name not in text, name
        assert c.label  # every check has its words
    assert "eccentric" not in re.findall(r"\b\w+\b", text)  # the key; the label is longer


def test_four_significant_figures_at_most(demo_log, parse_html):
    out = render_report(demo_log)
    steps = re.findall(r"<table class=\"cards steps\">(.*?)</table>", out)
    assert steps
    for body in steps:
        for cell in re.findall(r"<td[^>]*>([^<]*)</td>", body):
            for num in re.findall(r"\d[\d,]*\.\d+", cell):
                digits = num.replace(",", "").replace(".", "").lstrip("0")
                assert len(digits) <= 4, (num, cell)


@pytest.mark.parametrize(
    "text, units, want",
    [
        ("2757.903 MPa (400,000.0 psi)", "us", "400,000 psi (2758 MPa)"),
        ("2757.903 MPa (400,000.0 psi)", "metric", "2758 MPa (400,000 psi)"),
        ("Ke = 1, lu = 2133.6 mm (84.000 in)", "us", "Ke = 1, lu = 84 in (2134 mm)"),
        ("0.938361", "us", "0.9384"),
        ("NDS 2018 §3.7.1.3", "us", "NDS 2018 §3.7.1.3"),  # clause numbers stand
        ("9999.7", "metric", "10,000"),
    ],
)
def test_notation_rounds_and_puts_the_users_units_first(text, units, want):
    assert notation.value_text(text, units) == want


def test_symbols_are_set_as_an_engineer_writes_them():
    assert (
        notation.symbols("Fc' = Fc* x Cp") == "F\u2032<sub>c</sub> = F<sub>c</sub>* x C<sub>P</sub>"
    )
    assert notation.symbols("Emin'") == "E\u2032<sub>min</sub>"
    assert notation.symbols("le/d") == "\u2113<sub>e</sub>/d"
    assert notation.symbols("lambda_rel <b>") == "\u03bb<sub>rel</sub> &lt;b&gt;"


def test_an_end_condition_sketch_per_rated_post_from_the_shared_model(demo_log):
    from fieldcheck.report import endshape
    from fieldcheck.tui import drawing

    assert drawing.buckled_shape is endshape.buckled_shape  # one model, two drawings
    out = render_report(demo_log)
    assert out.count('<svg class="sketch"') == 9
    assert "bows in one half-wave" in out  # pinned-pinned demo posts
    s = svg.end_sketch("fixed", "free")
    assert "flagpole" in s and "<polyline" in s
    s = svg.end_sketch("spring 2 kN/mm", "pinned")
    assert "not drawn" in s and "<polyline" not in s and "spring 2 kN/mm" in s


def test_plot_legend_lies_outside_the_frame():
    import numpy as np

    h = 2438.4 * np.linspace(0.25, 2.0, 20)
    cap = np.minimum(60e3, 60e3 * (2438.4 / h) ** 2)
    out = svg.capacity_plot(h, cap, 2438.4, 40e3, 30e3, "us", "S4")
    frame = (svg.LEFT, svg.TOP, svg.W - svg.RIGHT, svg.H - svg.BOTTOM)
    for x, y in re.findall(r'<text x="([\d.]+)" y="([\d.]+)"', out):
        x, y = float(x), float(y)
        inside = frame[0] < x < frame[2] and frame[1] < y < frame[3]
        assert not inside, (x, y)  # no label on the curve or the demand line
    assert 'viewBox="0 0 520' in out and "this post (S4)" in out


@pytest.mark.parametrize("mask, mode", [(0o022, 0o644), (0o077, 0o600), (0o002, 0o664)])
def test_the_file_gets_the_users_umask(demo_log, tmp_path, mask, mode):
    old = os.umask(mask)
    try:
        path = write_report(demo_log, tmp_path / "r.html", info=ReportInfo())
    finally:
        os.umask(old)
    assert path.stat().st_mode & 0o777 == mode


def test_scope_keys_are_distinct():
    assert (
        len({model.scope_key(None, None), model.scope_key("s", None), model.scope_key("s", "v")})
        == 3
    )


def test_a_post_without_its_load_is_never_called_safe(empty_log, parse_html):
    site = empty_log.add_site("Site")
    v = empty_log.add_visit(site.id, "R. Okafor")
    base = {"size": "6x6", "height": "8ft", "species": "douglas-fir-larch", "grade": "no1"}
    base |= {"top": "pinned", "bottom": "pinned"}
    empty_log.save_post(v.id, {"tag": "N1", **base})  # no load: not rated, load missing
    empty_log.save_post(v.id, {"tag": "L1", **base, "load": "2000lbf"})
    out = render_report(empty_log)
    client = out[out.index('id="client"') : out.index('id="summary"')]
    safe = client[client.index("Safe to use as found") :]
    safe = safe[: safe.index("<h3>")]  # the group alone (the dates follow it)
    assert "L1" in safe and "N1" not in safe
    assert "Not assessed: treat as unsafe" in client and "N1" in client
    actions = out[out.index('id="actions"') : out.index('id="conflicts"')]
    assert "N1" in actions and "assess first" in actions


def test_review_and_remedy_states_are_shown(demo_log):
    posts = {p.tag: p for p in demo_log.posts()}
    demo_log.review_post(posts["B1"].member_id, "accept", "checked against the drawings")
    demo_log.propose_remedy(
        posts["S4"].observation_id,
        kind="add-post",
        description="add a second shore beside it",
        changes={"load": "5500lbf"},
    )
    out = render_report(demo_log)
    b1 = out[out.index(f'id="m-{posts["B1"].member_id}"') :]
    assert "Office review" in b1[: b1.index("</table>")]
    assert "checked against the drawings" in b1[: b1.index("</section>")]
    s4 = out[out.index(f'id="m-{posts["S4"].member_id}"') :]
    assert "proposed: add a second shore beside it" in s4[: s4.index("</table>")]
    assert "tester" not in out[out.index("</style>") :]  # the reviewer's login is not shown


def test_each_check_shows_its_governing_load_combination(demo_log):
    posts = demo_log.posts()
    r = rate(parse_records([p.record for p in posts]).batch)
    out = render_report(demo_log)
    j = [p.tag for p in posts].index("S4")
    sec = out[out.index(f'id="m-{posts[j].member_id}"') :]
    checks = sec[sec.index("<h3>Checks</h3>") : sec.index("</table>", sec.index("<h3>Checks</h3>"))]
    assert "Load combination" in checks
    for name, c in r.checks.items():
        if c.capacity_n[j] == c.capacity_n[j]:  # made for this post
            combo, _ = r.check_combination(name, j)
            assert combo in checks, name


def test_the_reports_combination_is_the_engines(demo_log):
    from fieldcheck.report.html import _combination
    from fieldcheck.report.notation import sig

    posts = demo_log.posts()
    r = rate(parse_records([p.record for p in posts]).batch)
    for j in range(r.n):
        for name in r.checks:
            combo, factor = r.check_combination(name, j)
            assert _combination(r, name, j) == f"{combo} ({sig(factor, 3)})"


def test_an_office_override_that_raises_the_action_reaches_the_client(empty_log, parse_html):
    # judgement: the engineer's make-safe instruction is what the client and the open actions
    # must act on; an override never lowers the post as rated (store/reviews.py), so the action
    # in force is the more severe of the two, and the rating as found is still shown beside it
    site = empty_log.add_site("Site")
    v = empty_log.add_visit(site.id, "R. Okafor")
    base = {"size": "6x6", "height": "8ft", "species": "douglas-fir-larch", "grade": "no1"}
    base |= {"top": "pinned", "bottom": "pinned", "load": "2000lbf", "duration": "ten-years"}
    base |= {"cap_species": "none", "sill_species": "none"}
    up = empty_log.save_post(v.id, {"tag": "U1", **base})
    down = empty_log.save_post(v.id, {"tag": "D1", **base, "load": "40000lbf"})
    empty_log.review_post(up.member_id, "override", "sill crushed on site", "make-safe-now")
    empty_log.review_post(down.member_id, "override", "looked fine", "no-action")
    out = render_report(empty_log)
    client = "".join(parse_html(out[out.index('id="client"') : out.index('id="summary"')]).text)
    now = client[client.index("Unsafe now") : client.index("What must happen")]
    assert "U1" in now and "D1" in now and "Safe to use" not in client, client
    # the lowering override lowered nothing (store/reviews.py); the dates say now for both
    dates = client[client.index("What must happen") :]
    assert dates.count("now (") == 2 or dates.count("now") >= 2, dates
    table = out[out.index('id="summary"') :]
    row = table[table.index(">U1<") : table.index("</tr>", table.index(">U1<"))]
    assert "MAKE SAFE" in row, row
    post = out[out.index("Post U1") :]
    post = post[: post.index("Stored rating")]
    assert "overridden" in post and "sill crushed" in post
    assert "rated as found: no-action" in post  # the rating as found, beside the raised action
