"""The pipeline as declared: each stage's inputs, checks and flags are what it says."""

from __future__ import annotations

from fieldcheck.engine.batch import FIELD_NAMES
from fieldcheck.engine.rating import FLAGS, STAGES, rate
from fieldcheck.records import parse_records


def test_inputs_are_batch_fields():
    for stage in STAGES:
        unknown = set(stage.inputs) - set(FIELD_NAMES)
        assert not unknown, f"{stage.name} reads no such PostBatch field: {sorted(unknown)}"


def test_flag_bits_follow_the_stage_order():
    names = [f.name for s in STAGES for f in s.flags]
    assert [f.name for f in FLAGS.flags] == names
    assert [FLAGS.bit[n] for n in names] == [1 << k for k in range(len(names))]
    assert len(names) <= 63  # the flags fit an int64


def test_escalations_are_action_levels():
    for stage in STAGES:
        for f in stage.flags:
            assert f.escalates_to in (0, 1, 2, 3), f.name
            assert f.text.strip().endswith((".", ")")), f.name  # a sentence for a person


def test_the_checks_made_are_the_checks_declared(shore):
    rows = [
        shore,
        {**shore, "method": "ec5", "class": "C24", "duration": "", "construction": ""},
        {**shore, "pad": "2ft x 2ft", "soil": "sand", "bow_weak": "1 in"},
    ]
    r = rate(parse_records(rows).batch)
    declared = [c for s in STAGES for c in s.checks]
    assert set(r.checks) <= set(declared)
    # the order of the checks is the order of the stages that first declare them
    first = list(dict.fromkeys(declared))
    assert list(r.checks) == [c for c in first if c in r.checks]
