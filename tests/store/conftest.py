"""Fixtures for the survey-log tests: a fresh log with one site and visit (the shore record is in
tests/conftest.py).
"""

from __future__ import annotations

import pytest

from fieldcheck.store import Log


@pytest.fixture
def log(tmp_path):
    lg = Log.open(tmp_path / "survey.db", author="tester", device="device-A")
    yield lg
    lg.close()


@pytest.fixture
def visit(log):
    site = log.add_site("Test site")
    return log.add_visit(site.id, "tester")
