"""Fixtures shared by every test package."""

from __future__ import annotations

import pytest

# a sound temporary shore (values as typed on site; common practice, no source)
SHORE = {
    "tag": "S1",
    "location": "under the header",
    "size": "4x4",
    "height": "8ft",
    "species": "douglas-fir-larch",
    "grade": "no2",
    "load": "3000lbf",
    "duration": "seven-days",
    "construction": "yes",
}


@pytest.fixture
def shore() -> dict[str, str]:
    return dict(SHORE)
