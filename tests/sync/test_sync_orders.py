"""Three field logs with overlapping edits, synced in every order, give the same office log."""

from __future__ import annotations

import itertools
import shutil

import pytest

from fieldcheck.store import Log
from fieldcheck.store.sync import sync


@pytest.fixture
def three_fields(tmp_path, shore):
    """ann records two posts and syncs; bob and cy take them, then all three edit apart."""
    base = tmp_path / "base"
    base.mkdir()
    office = base / "office.db"
    logs = {
        n: Log.open(base / f"{n}.db", author=n, device=f"dev-{n}") for n in ("ann", "bob", "cy")
    }
    a = logs["ann"]
    site = a.add_site("Alder Row")
    visit = a.add_visit(site.id, "ann")
    p1 = a.save_post(visit.id, shore)
    p2 = a.save_post(visit.id, dict(shore, tag="S2"))
    for n in ("ann", "bob", "cy"):
        sync(logs[n], office)
    # overlapping edits made apart (same member revised by two or three people)
    a.save_post(visit.id, dict(shore, load="3500lbf"), member_id=p1.member_id)
    logs["bob"].save_post(visit.id, dict(shore, load="4000lbf"), member_id=p1.member_id)
    logs["cy"].save_post(visit.id, dict(shore, tag="S2", load="2000lbf"), member_id=p2.member_id)
    logs["cy"].withdraw(p1.member_id, visit.id, "removed by the contractor")
    logs["bob"].save_post(visit.id, dict(shore, tag="S3"))
    for lg in logs.values():
        lg.close()
    return base, p1.member_id


@pytest.mark.slow
def test_every_order_gives_the_same_office(three_fields, tmp_path, canon):
    base, conflicted_member = three_fields
    dumps = []
    for order in itertools.permutations(("ann", "bob", "cy")):
        run = tmp_path / "-".join(order)
        shutil.copytree(base, run)
        office = run / "office.db"
        for name in order:
            with Log.open(run / f"{name}.db") as lg:
                sync(lg, office)
        dumps.append(canon(office))
        with Log.open(office, readonly=True) as off:
            assert off.conflicts() == [conflicted_member]  # three heads: kept, flagged
            assert len(off.history(conflicted_member)) == 4
    assert all(d == dumps[0] for d in dumps[1:])  # common practice, no source
