"""One RowError: raised by the records layer's builders, reported with its row by
parse_records, handed on unchanged by the log's import."""

import pickle

import pytest

from fieldcheck.records import parse_records
from fieldcheck.row_error import RowError, field_sentence
from fieldcheck.store import Log


def test_the_sentence_names_its_column_once():
    said = field_sentence("height", "give a length, e.g. 8ft.")
    assert said == "height: give a length, e.g. 8ft."
    assert field_sentence("height", "height: give a length.") == "height: give a length."
    e = RowError("height", "give a length, e.g. 8ft.", row=2)
    assert str(e) == "row 3: height: give a length, e.g. 8ft."
    assert e.sentence() == "height: give a length, e.g. 8ft."
    # raised while a row is built, before its row is known: the message alone
    assert str(RowError("top", "top: a free top needs a held bottom.")) == (
        "top: a free top needs a held bottom."
    )


def test_equal_by_value_placed_by_at_and_pickled_whole():
    e = RowError("load", "give a force.")
    placed = e.at(4)
    assert placed.row == 4 and e.row is None
    assert placed == RowError("load", "give a force.", row=4) and placed != e
    assert len({placed, RowError("load", "give a force.", row=4)}) == 1
    assert pickle.loads(pickle.dumps(placed)) == placed
    assert isinstance(e, ValueError)
    with pytest.raises(TypeError):
        RowError(4, "load", "give a force.")  # the row is named, never positional


def test_records_and_the_log_report_the_same_type(tmp_path, shore):
    bad = dict(shore, height="-8 ft")
    contradiction = dict(shore, tributary="40 ft2", dead="10 psf")  # and a load
    parsed = parse_records([shore, bad, contradiction])
    assert [type(e) for e in parsed.errors] == [RowError, RowError]
    assert [(e.row, e.column) for e in parsed.errors] == [(1, "height"), (2, "load")]
    with Log.open(tmp_path / "log.fieldcheck") as log:
        result = log.import_rows([shore, bad, contradiction], "Site", "Visit")
    assert result.imported == 1
    assert result.errors == parsed.errors  # the same objects' values, rows of the input
