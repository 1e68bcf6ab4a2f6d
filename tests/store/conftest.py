"""Fixtures for the survey-log tests: a fresh log with one site and visit, and sound records."""

from __future__ import annotations

import pytest

from fieldcheck.store import Log

# a sound temporary shore (values as typed on site; common practice, no source)
SHORE = {
    "tag": "S1", "location": "under the header", "size": "4x4", "height": "8ft",
    "species": "douglas-fir-larch", "grade": "no2", "load": "3000lbf", "duration": "seven-days",
    "construction": "yes",
}


@pytest.fixture
def shore() -> dict[str, str]:
    return dict(SHORE)


@pytest.fixture
def log(tmp_path):
    lg = Log.open(tmp_path / "survey.db", author="tester", device="device-A")
    yield lg
    lg.close()


@pytest.fixture
def visit(log):
    site = log.add_site("Test site")
    return log.add_visit(site.id, "tester")
