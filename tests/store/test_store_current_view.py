"""Property: whatever sequence of saves, corrections and withdrawals, the current view equals a
plain model (latest revision per member, withdrawn ones hidden) and history is never lost."""

from __future__ import annotations

import tempfile
from pathlib import Path

from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from fieldcheck.store import Log

HEIGHTS = ("7ft", "8ft", "9ft", "2.4 m")
ops = st.lists(
    st.tuples(
        st.sampled_from(("new", "fix", "withdraw")), st.integers(0, 5), st.sampled_from(HEIGHTS)
    ),
    min_size=1,
    max_size=12,
)


@settings(max_examples=20, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(ops)
def test_current_view_matches_a_model(seq):  # common practice, no source
    with tempfile.TemporaryDirectory() as tmp, Log.open(Path(tmp) / "p.db", device="d") as log:
        v = log.add_visit(log.add_site("s").id, "x")
        model: dict[str, tuple[str, bool]] = {}  # member -> (height, withdrawn)
        order: list[str] = []
        revisions = 0
        for op, k, h in seq:
            rec = {"tag": "T", "size": "4x4", "height": h, "load": "1000lbf"}
            if op == "new" or not order:
                m = log.save_post(v.id, rec).member_id
                order.append(m)
            else:
                m = order[k % len(order)]
                if op == "withdraw":
                    if model[m][1]:
                        continue
                    log.withdraw(m, v.id, "gone")
                    model[m] = (model[m][0], True)
                    revisions += 1
                    continue
                log.save_post(v.id, rec, member_id=m)
            model[m] = (h, False)
            revisions += 1
        got = [(p.member_id, p.record["height"]) for p in log.posts(v.id)]
        want = [(m, model[m][0]) for m in order if not model[m][1]]
        assert got == want
        assert sum(len(log.history(m)) for m in order) == revisions
        assert log.conflicts() == []
