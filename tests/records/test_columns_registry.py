"""The column registry (records/columns.py): every column, its help and example, and its order."""

from __future__ import annotations

import pytest

from fieldcheck.records import condition_columns, ec5_columns, load_columns, spring_columns
from fieldcheck.records.columns import BUILDERS, COLUMNS, GROUPS
from fieldcheck.records.core_columns import CORE


@pytest.mark.parametrize("name", list(COLUMNS))
def test_every_column_says_what_it_is_and_its_example_parses(name):
    col = COLUMNS[name]
    assert col.name == name and col.group in GROUPS
    assert col.help.strip() and col.example.strip()
    assert col.option == "--" + name.replace("_", "-")
    col.parse(col.example)  # the example shown in --help is accepted as typed


def test_the_registry_lists_each_module_once_in_order():
    # core columns first (the CLI's --help order), then loads, condition, EC5, spring ends
    parts = (CORE, load_columns.COLUMNS, condition_columns.COLUMNS, ec5_columns.COLUMNS)
    expected = [c.name for part in (*parts, spring_columns.COLUMNS) for c in part]
    assert list(COLUMNS) == expected
    assert len(set(expected)) == len(expected)  # no column declared twice


def test_the_builders_run_in_a_stated_order():
    names = [b.__name__ for b in BUILDERS]
    # the EN 338 class replaces species and grade, so it runs right after the material builder
    assert names.index("ec5_fields") == names.index("material_fields") + 1
    # contradictions first (nothing is built from inputs that contradict each other)
    assert names[:2] == ["contradiction_fields", "section_fields"]
    assert len(set(names)) == len(names)


def test_a_yes_no_column_is_a_flag_option():
    assert COLUMNS["construction"].flag and COLUMNS["construction"].parse("yes") is True
    assert COLUMNS["construction"].parse("no") is False


def test_a_choice_column_names_what_it_accepts():
    with pytest.raises(ValueError, match=r"method: 'zzz' is not accepted; use one of asd, lrfd"):
        COLUMNS["method"].parse("zzz")
