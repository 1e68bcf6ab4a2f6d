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


def test_load_combinations_are_a_stage_of_their_own(shore):
    # the load-combinations stage names the governing combination and a shared load; the
    # ground stage holds only the soil, the pad and the plates; the bracing demand its own
    names = [s.name for s in STAGES]
    assert names.index("loads") < names.index("ground") < names.index("bracing")
    by_name = {s.name: s for s in STAGES}
    # a shared load; a cap or sill nobody identified, against the largest load (bearing_screen)
    assert [f.name for f in by_name["loads"].flags] == ["shared", "cap_soft", "sill_soft"]
    assert "shared" not in [f.name for f in by_name["ground"].flags]
    assert {"nom_d_n", "combo", "shared_by"} <= set(by_name["loads"].inputs)
    from fieldcheck.engine import explain

    row = {k: v for k, v in shore.items() if k not in ("load", "duration")}
    row.update(tributary="40 sq ft", dead="20 psf", live="40 psf", shared_by="2")
    row.update(pad="2ft x 2ft", soil="sand", lateral_rule="fema-minimum")
    r = rate(parse_records([row]).batch)
    labels = [s.label for s in explain.working(r, 0)]

    def where(text: str) -> int:
        return next(k for k, lab in enumerate(labels) if lab.startswith(text))

    # the working keeps its order: combination, shared load, pad and soil, bracing
    order = ("Governing load combination", "Load per post", "Pad on the soil", "Bracing must")
    assert [where(t) for t in order] == sorted(where(t) for t in order)
    summary = explain.summary(r, 0, with_remedies=False)
    assert {"load_combination", "ground", "bracing"} <= set(summary)
