"""The unit factor table kept in the user's cache folder: a later run parses without pint, and a
damaged, foreign or unwritable cache never changes a number or makes a command fail."""

from __future__ import annotations

import json
import os
import subprocess
import sys
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
PARSE = (
    "import json, sys\n"
    "from fieldcheck import units\n"
    "print(json.dumps([units.parse_length('8ft 4in'), units.parse_force('10 kN'),\n"
    "                  units.parse_force('3000lbf'), 'pint' in sys.modules]))\n"
)


def _run(cache: Path) -> list:
    env = {**os.environ, "PYTHONPATH": str(ROOT), "XDG_CACHE_HOME": str(cache)}
    out = subprocess.run(
        [sys.executable, "-c", PARSE], env=env, capture_output=True, text=True, check=True
    )
    return json.loads(out.stdout)


def _stored(cache: Path) -> list[Path]:
    return sorted(cache.glob("fieldcheck/pint/unit-factors-*.json"))


def test_a_later_run_parses_without_pint_and_gets_the_same_numbers(tmp_path):
    first = _run(tmp_path)
    assert first[3] is True and len(_stored(tmp_path)) == 1  # pint built the table, kept
    second = _run(tmp_path)
    assert second[:3] == first[:3]
    assert second[3] is False  # read from the cache: pint not imported
    # 8 ft 4 in = 100 in = 2540 mm; 10 kN = 10,000 N (exact definitions)
    assert abs(first[0] - 2540.0) < 1e-9 and abs(first[1] - 10_000.0) < 1e-9


def test_a_damaged_or_altered_cache_is_rebuilt_never_trusted(tmp_path):
    want = _run(tmp_path)[:3]
    (path,) = _stored(tmp_path)
    data = json.loads(path.read_text())
    data["factors"][0][2] *= 2.0  # a changed number without its checksum
    path.write_text(json.dumps(data))
    got = _run(tmp_path)
    assert got[:3] == want and got[3] is True  # pint again, the file rewritten
    path.write_text("{ not json")
    assert _run(tmp_path)[:3] == want


def test_an_unwritable_cache_folder_still_parses(tmp_path):
    ro = tmp_path / "ro"
    ro.mkdir()
    ro.chmod(0o500)
    try:
        got = _run(ro)
        assert abs(got[0] - 2540.0) < 1e-9
    finally:
        ro.chmod(0o700)


def test_damaged_pint_cache_files_never_make_a_command_fail(tmp_path):
    """pint keeps its parsed definitions as pickles beside our table; a pickle cut short (a full
    disk, a killed process) raised UnpicklingError out of every command that parsed a unit."""
    want = _run(tmp_path)[:3]
    folder = tmp_path / "fieldcheck" / "pint"
    for path in _stored(tmp_path):
        path.unlink()  # so pint is asked again
    damaged = [p for p in folder.iterdir() if p.is_file()]
    assert damaged  # pint wrote its cache there
    for p in damaged:
        p.write_bytes(b"\x80\x04garbage")
    got = _run(tmp_path)
    assert got[:3] == want and got[3] is True
    env = {**os.environ, "PYTHONPATH": str(ROOT), "XDG_CACHE_HOME": str(tmp_path)}
    for path in _stored(tmp_path):
        path.unlink()
    for p in folder.glob("*.pickle"):
        p.write_bytes(b"")
    rate = "rate --size 4x4 --height 8ft --species douglas-fir-larch --grade no1 --load 3000lbf"
    argv = [sys.executable, "-m", "fieldcheck", *rate.split()]
    out = subprocess.run(argv, env=env, capture_output=True, text=True)
    assert out.returncode in (0, 1), out.stderr
    assert "Traceback" not in out.stderr
