"""Start-up: rating one post from the command line loads only what that rating needs, so it
stays near the cost of importing numpy (the figure itself is in bench/startup.py)."""

from __future__ import annotations

import json
import os
import subprocess
import sys
from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parents[1]
# what a rating of one post never needs: the log and its layers, the interface, the report
# renderer, pint once the factor table is kept, the user-folder and metadata machinery
NOT_NEEDED = (
    "pint",
    "sqlite3",
    "sqlite_utils",
    "textual",
    "rich",
    "importlib.metadata",
    "tomllib",
    "fieldcheck.store",
    "fieldcheck.tui",
    "fieldcheck.report",
)
RATE = (
    "import io, json, sys\n"
    "from fieldcheck.cli import main\n"
    "out, sys.stdout = sys.stdout, io.StringIO()\n"
    "code = main(['rate', '--size', '4x4', '--height', '8ft 2in', '--species', 'spf',\n"
    "             '--grade', 'no2', '--load', '2 kip'])\n"
    "text, sys.stdout = sys.stdout.getvalue(), out\n"
    "print(json.dumps([code, 'Capacity' in text, sorted(sys.modules)]))\n"
)


def _rate(cache: Path, **env_vars: str) -> tuple[int, bool, list[str]]:
    env = {**os.environ, "PYTHONPATH": str(ROOT), "XDG_CACHE_HOME": str(cache), **env_vars}
    out = subprocess.run(
        [sys.executable, "-c", RATE], env=env, capture_output=True, text=True, check=True
    )
    return tuple(json.loads(out.stdout))


@pytest.fixture(scope="module")
def cache(tmp_path_factory) -> Path:
    """A cache folder where the first run ever has kept the unit factor table (built with
    pint, once for this module's tests)."""
    folder = tmp_path_factory.mktemp("cache")
    _rate(folder, FIELDCHECK_CONFIG=str(folder / "no-config.toml"))  # never the user's own
    return folder


def test_rating_one_post_loads_only_what_it_needs(cache):
    # the autouse fixture points FIELDCHECK_CONFIG at a file that does not exist
    code, rated, modules = _rate(cache)
    assert code == 0 and rated
    loaded = [m for m in modules if m.startswith(NOT_NEEDED)]
    assert loaded == []


def test_a_config_file_is_still_read(cache, tmp_path, monkeypatch):
    # tomllib is left out only when there is no file to read
    cfg = tmp_path / "config.toml"
    cfg.write_text('units = "metric"\n', encoding="utf-8")
    monkeypatch.setenv("FIELDCHECK_CONFIG", str(cfg))
    code, rated, modules = _rate(cache)
    assert code == 0 and rated and "tomllib" in modules
