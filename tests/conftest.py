"""Fixtures shared by every test package."""

from __future__ import annotations

import os

import pytest
from hypothesis import settings

# No timing asserts in tests (DEVELOPERS.md): hypothesis's deadline per example is one, and a
# loaded machine or the other test worker can trip it. Each test sets its own example count.
settings.register_profile("fieldcheck", deadline=None)
settings.load_profile("fieldcheck")

try:
    import fcntl
except ImportError:  # no flock: the workers never wait for one another
    fcntl = None

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


@pytest.fixture(autouse=True)
def _alone_when_marked(request, tmp_path_factory):
    """Under pytest-xdist, a test marked ``alone`` runs while no other worker runs a test: the
    kill tests time their kills against the machine's speed, which another busy worker would
    halve. A reader-writer lock on two files every worker sees: a test holds ``run`` shared, an
    ``alone`` test holds it exclusive; ``gate`` keeps new tests from starting while an ``alone``
    test waits, so it is never starved."""
    if fcntl is None or not os.environ.get("PYTEST_XDIST_WORKER"):
        yield
        return
    shared = tmp_path_factory.getbasetemp().parent  # one folder for the whole run
    alone = request.node.get_closest_marker("alone") is not None
    with open(shared / "gate.lock", "a") as gate, open(shared / "run.lock", "a") as run:
        fcntl.flock(gate, fcntl.LOCK_EX)
        try:
            fcntl.flock(run, fcntl.LOCK_EX if alone else fcntl.LOCK_SH)
        finally:
            if not alone:
                fcntl.flock(gate, fcntl.LOCK_UN)
        yield  # both files close after the test: every lock is released


@pytest.fixture
def older_engine(monkeypatch):
    """A switch: ``older_engine(True)`` and the ratings stored from then on carry the stamp of
    engine 0.0.9 (as an older fieldcheck's, hash-consistent); ``older_engine(False)`` this
    engine's again."""
    import fieldcheck
    from fieldcheck.store import rated

    def switch(on: bool) -> None:
        monkeypatch.setattr(fieldcheck, "ENGINE_VERSION", "0.0.9" if on else fieldcheck.__version__)
        rated.engine_stamp.cache_clear()

    yield switch
    rated.engine_stamp.cache_clear()  # before monkeypatch puts the version back (its teardown)
