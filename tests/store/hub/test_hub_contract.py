"""One store contract, two backends: the survey log file and the hub (through its mirror) give
the same answers to the same calls, and what one office session records reaches the next."""

from __future__ import annotations

import pytest

from fieldcheck.store import Log
from fieldcheck.store.hub.mirror import HubLog, open_hub_log


def _write(log, shore):
    site = log.add_site("Contract site")
    visit = log.add_visit(site.id, "ann", name="contract visit")
    a = log.save_post(visit.id, dict(shore, tag="A"))
    b = log.save_post(visit.id, dict(shore, tag="B", load="9000lbf"))
    c = log.save_post(visit.id, dict(shore, tag="C"))
    log.save_post(visit.id, dict(shore, tag="A", height="9ft"), a.member_id)
    log.withdraw(c.member_id, visit.id, "removed by the contractor")
    log.review_post(a.member_id, "accept")
    log.review_post(b.member_id, "override", "replaced on site", "monitor")
    log.sign_off(visit.id, "reviewed")


def _read(log) -> dict:
    posts = log.posts()
    states = log.review_states()
    tags = {p.member_id: p.tag for p in posts}
    return {
        "sites": [s.name for s in log.sites()],
        "visits": [v.name for v in log.visits()],
        "posts": [(p.tag, p.record, p.action_label, round(p.ratio or 0, 9)) for p in posts],
        "history": {p.tag: len(log.history(p.member_id)) for p in posts},
        "withdrawn": sorted(
            p.tag for p in log.posts(include_withdrawn=True) if p.member_id not in tags
        ),
        "states": {tags[m]: (s.state, s.action_label, s.instruction) for m, s in states.items()},
        "sign_offs": [r.text for r in log.sign_offs()],
        "conflicts": log.conflicts(),
        "counts": log.counts_by_action(),
    }


@pytest.fixture(params=["sqlite", "hub"])
def backend(request, tmp_path):
    """(open for writing, open afresh for reading) for each backend."""
    if request.param == "sqlite":
        path = tmp_path / "log.db"
        return lambda: Log.open(path, author="ben"), lambda: Log.open(path, readonly=True)
    url = request.getfixturevalue("hub_url")
    return (
        lambda: open_hub_log(url, path=tmp_path / "office1.db"),
        lambda: open_hub_log(url, readonly=True, path=tmp_path / "office2.db"),
    )


@pytest.mark.slow
def test_same_answers_on_both_backends(backend, shore, tmp_path):
    write, read = backend
    with write() as log:
        _write(log, shore)
    with read() as log:
        got = _read(log)
    with Log.open(tmp_path / "reference.db", author="ben") as ref:
        _write(ref, shore)
        want = _read(ref)
    assert got == want
    assert got["states"]["A"][0] == "accepted" and got["states"]["B"][1] == "monitor"


def test_office_review_reaches_the_field(tmp_path, shore, hub_url):
    from fieldcheck.store.sync import sync

    with Log.open(tmp_path / "ann.db", author="ann", device="dev-ann") as ann:
        v = ann.add_visit(ann.add_site("Mill Lane").id, "ann")
        mid = ann.save_post(v.id, dict(shore, tag="P7")).member_id
        sync(ann, hub_url)
    office = open_hub_log(hub_url, path=tmp_path / "office.db")
    assert isinstance(office, HubLog) and [p.tag for p in office.posts()] == ["P7"]
    office.review_post(mid, "require-remedy", "add a second shore under the beam end")
    office.close()  # sends the review to the hub
    with Log.open(tmp_path / "ann.db") as ann:
        s = sync(ann, hub_url)
        assert s.received.get("reviews") == 1
        st = ann.review_states()[mid]
        assert st.state == "remedy required" and st.by == "fcadmin"
        assert "add a second shore" in st.line()


@pytest.mark.slow
def test_report_and_review_from_the_hub(tmp_path, shore, hub_url, monkeypatch, capsys):
    from fieldcheck.cli import main
    from fieldcheck.store.sync import sync

    monkeypatch.setenv("FIELDCHECK_HUB_MIRRORS", str(tmp_path / "mirrors"))
    with Log.open(tmp_path / "ann.db", author="ann", device="dev-ann") as ann:
        v = ann.add_visit(ann.add_site("Mill Lane").id, "ann", name="first visit")
        ann.save_post(v.id, dict(shore, tag="P1"))
        ann.save_post(v.id, dict(shore, tag="P2"))
        sync(ann, hub_url)
    assert main(["review", "--db", hub_url, "P1", "--accept"]) == 0
    assert main(["review", "--db", hub_url, "--sign-off", "first visit", "--reason", "ok"]) == 0
    assert main(["review", "--db", hub_url]) == 0
    out = capsys.readouterr().out
    assert "1 post awaits review" in out and "P2" in out
    html = tmp_path / "r.html"
    assert main(["report", "--db", hub_url, "--out", str(html)]) == 0
    text = html.read_text()
    assert "accepted, " in text and "awaiting office review" in text
    assert "ok" in text  # the sign-off's words
    err = capsys.readouterr().err
    assert "fcadmin:" not in err  # the password part of the URL never printed


def test_password_never_stored(tmp_path, shore, pg_cluster, hub_url):
    from fieldcheck.store.sync import sync

    field = tmp_path / "ann.db"
    with Log.open(field, author="ann", device="dev-ann") as ann:
        v = ann.add_visit(ann.add_site("Mill Lane").id, "ann")
        ann.save_post(v.id, shore)
        s = sync(ann, hub_url)
    assert pg_cluster.password not in s.sentence()
    mirror = tmp_path / "office.db"
    open_hub_log(hub_url, path=mirror).close()
    for f in (field, mirror):
        assert pg_cluster.password.encode() not in f.read_bytes()
