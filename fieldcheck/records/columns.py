"""The column registry: every column of a record, in order, and the builders that turn a parsed
row into PostBatch fields, in the order they run.

A column belongs to one module (core_columns.py and the modules named below); to add one, add a
``Column`` to that module's ``COLUMNS`` and map it to PostBatch fields in that module's builder.
A new module of columns is listed here, once, with its builder.
"""

from __future__ import annotations

from fieldcheck.records import (
    condition_columns,
    contradictions,
    ec5_columns,
    load_columns,
    spring_columns,
)
from fieldcheck.records.builders import (
    bearing_fields,
    end_fields,
    height_fields,
    material_fields,
    section_fields,
    service_fields,
)
from fieldcheck.records.core_columns import CORE, GROUPS, Column

__all__ = ["BUILDERS", "COLUMNS", "GROUPS", "Column"]

COLUMNS: dict[str, Column] = {
    c.name: c
    for c in (
        *CORE,
        *load_columns.COLUMNS,
        *condition_columns.COLUMNS,
        *ec5_columns.COLUMNS,
        *spring_columns.COLUMNS,
    )
}

BUILDERS = (
    contradictions.contradiction_fields,  # first: inputs that contradict each other
    section_fields,
    height_fields,
    end_fields,
    material_fields,
    ec5_columns.ec5_fields,  # the EN 338 class in place of species and grade: right after them
    service_fields,
    bearing_fields,
    load_columns.load_fields,
    condition_columns.condition_fields,
    spring_columns.spring_fields,
)
