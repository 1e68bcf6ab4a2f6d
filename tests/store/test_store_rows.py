"""store.rows.record_texts writes each record's JSON column-wise: the same text as ``dumps`` of
that record, whatever its keys, values and their order (property test)."""

from __future__ import annotations

import json

import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from fieldcheck.store.rows import dumps, record_texts

# texts a CSV cell may hold, the characters JSON escapes among them (judgement)
TEXT = st.one_of(
    st.sampled_from(["4x4", "8 ft", "pinned", "", "P1", "grid A/1", "50%", "%s", "%%"]),
    st.text(alphabet=st.sampled_from('ab "\\\n\t\x00\x1f\x7fé€/%'), max_size=6),
    st.text(max_size=8),
)
KEYS = st.sampled_from(["tag", "size", "height", "load", "notes", "%s", 'a"b', "é"])
RECORD = st.dictionaries(KEYS, TEXT, max_size=5)


@settings(max_examples=60, deadline=None)
@given(st.lists(RECORD, max_size=20))
def test_record_texts_are_dumps_of_each_record(records):
    assert record_texts(records) == [dumps(r) for r in records]


@pytest.mark.slow
@settings(max_examples=600, deadline=None)
@given(st.lists(RECORD, max_size=40))
def test_record_texts_are_dumps_of_each_record_many(records):
    assert record_texts(records) == [dumps(r) for r in records]


@settings(max_examples=50, deadline=None)
@given(st.lists(st.fixed_dictionaries({"tag": TEXT, "size": TEXT, "load": TEXT}), max_size=30))
def test_records_sharing_their_columns_share_one_template(records):
    texts = record_texts(records)
    assert texts == [dumps(r) for r in records]
    assert [json.loads(t) for t in texts] == records


def test_a_value_that_is_not_text_is_written_by_the_encoder():
    # judgement: callers hand text, but nothing else may change the stored record
    records = [{"tag": "P1", "plies": 2}, {"tag": "P2", "plies": 3}]
    assert record_texts(records) == ['{"tag":"P1","plies":2}', '{"tag":"P2","plies":3}']
