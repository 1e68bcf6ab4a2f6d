"""The sync's one sentence: never 'already in step' beside a bundle refused, never '1 bundles'."""

from __future__ import annotations

from fieldcheck.store.sync_summary import SyncSummary


def test_a_refused_bundle_is_never_called_in_step():
    s = SyncSummary("the office folder", "folder", refused=["b1.fcbundle"])
    text = s.sentence()
    assert "in step" not in text and "Nothing moved" in text
    assert "1 bundle refused" in text


def test_counts_take_their_number():
    s = SyncSummary("hub", "hub", sent={"observations": 2}, conflicts=["m1"], new_conflicts=["m1"])
    assert "1 post revised in two places" in s.sentence()
    s = SyncSummary("hub", "hub", conflicts=["m1", "m2"], skipped=["a", "b"])
    text = s.sentence()
    assert "Already in step" in text and "2 posts revised" in text and "2 files" in text
