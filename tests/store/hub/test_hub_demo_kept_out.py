"""The invented demo an older version wrote into a log never travels through a hub: not up from
that log, and not down from a hub that took it before."""

from __future__ import annotations

from fieldcheck.store import Log, seed_demo
from fieldcheck.store.sync import sync


def _older_log(path, shore, who: str) -> Log:
    log = Log.open(path, author=who, device=f"dev-{who}")
    seed_demo(log)
    with log._write():
        log.db.execute("DELETE FROM meta WHERE key = 'demo'")  # older versions wrote no mark
    site = log.add_site("9 Birch Lane")
    visit = log.add_visit(site.id, "ann")
    log.save_post(visit.id, dict(shore, tag="B1"))
    return log


def test_the_demo_stays_off_the_hub_both_ways(tmp_path, shore, hub_url, monkeypatch):
    from fieldcheck.store.hub import sync as hub_sync

    log = _older_log(tmp_path / "ann.db", shore, "ann")
    s = sync(log, hub_url)
    assert s.sent["sites"] == 1 and s.sent["observations"] == 1
    assert sync(log, hub_url).moved == 0
    # a hub that took the demo from an older version: sent here without the rule
    older = _older_log(tmp_path / "old.db", shore, "cal")
    with monkeypatch.context() as m:
        m.setattr(hub_sync, "_not_demo", lambda *a, **k: "")
        assert sync(older, hub_url).sent["sites"] == 2
    ben = Log.open(tmp_path / "ben.db", author="ben", device="dev-ben")
    got = sync(ben, hub_url)
    assert got.received["sites"] == 2  # the two "9 Birch Lane" sites, not the demo
    assert {s.name for s in ben.sites()} == {"9 Birch Lane"}
    n = ben.db.conn.execute("SELECT count(*) FROM sites").fetchone()[0]
    assert n == 2 and not ben.demo_kept_out
    for lg in (log, older, ben):
        lg.close()
