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


@pytest.fixture(autouse=True)
def _no_user_config(tmp_path_factory, monkeypatch):
    """Tests never read the developer's own config file or FIELDCHECK_UNITS."""
    monkeypatch.setenv("FIELDCHECK_CONFIG", str(tmp_path_factory.getbasetemp() / "no-config.toml"))
    monkeypatch.delenv("FIELDCHECK_UNITS", raising=False)


@pytest.fixture(autouse=True)
def office_key(tmp_path_factory, monkeypatch):
    """Every test signs and checks bundles with one office key of its own, and keeps this
    computer's record of devices in a folder of its own (never the user's)."""
    from fieldcheck.store import signing

    folder = tmp_path_factory.mktemp("office-key")
    path = signing.write_keys([signing.new_key_line()], folder / "office.key")
    monkeypatch.setenv("FIELDCHECK_OFFICE_KEY_FILE", str(path))
    monkeypatch.setenv("FIELDCHECK_STATE_DIR", str(folder / "state"))
    return path
