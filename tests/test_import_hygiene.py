"""engine, units, records and store never load Textual (ARCHITECTURE.md §2); units loads no pint at import."""

import subprocess
import sys

import pytest


@pytest.mark.parametrize(
    "module",
    [
        "fieldcheck.engine.rating",
        "fieldcheck.engine.batch",
        "fieldcheck.units",
        "fieldcheck.records",
        "fieldcheck.store",
        "fieldcheck.cli",
    ],
)
def test_no_textual(module):
    code = f"import sys, {module}; print('textual' in sys.modules)"
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=True)
    assert out.stdout.strip() == "False"


def test_engine_has_no_pint_or_sqlite():
    code = (
        "import sys, fieldcheck.engine.rating, fieldcheck.engine.nds, fieldcheck.engine.restraint;"
        "print(any(m in sys.modules for m in ('pint', 'sqlite3', 'sqlite_utils', 'textual')))"
    )
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=True)
    assert out.stdout.strip() == "False"
