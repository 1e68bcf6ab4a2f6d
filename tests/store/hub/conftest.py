"""Fixtures for the hub tests: one throwaway PostgreSQL cluster per test session, a fresh
database per test. Without server binaries the hub tests skip with one reason, unless
FIELDCHECK_REQUIRE_PG=1 (CI), which makes that a failure."""

from __future__ import annotations

import itertools
import os
import sys
from pathlib import Path

import pytest

sys.path.insert(0, str(Path(__file__).parent))
from pgcluster import SKIP_REASON, Cluster, find_bindir

_names = itertools.count(1)


@pytest.fixture(scope="session")
def pg_cluster():
    bindir = find_bindir()
    if bindir is None:
        if os.environ.get("FIELDCHECK_REQUIRE_PG") == "1":
            pytest.fail(SKIP_REASON + "; FIELDCHECK_REQUIRE_PG=1 forbids skipping", pytrace=False)
        pytest.skip(SKIP_REASON)
    cluster = Cluster(bindir)
    yield cluster
    cluster.close()


@pytest.fixture
def hub_url(pg_cluster) -> str:
    """The URL of a fresh, empty database on the test cluster (the superuser connects)."""
    return pg_cluster.url(pg_cluster.new_database(f"hub{next(_names)}"))
