"""`fieldcheck` with no terminal (a pipe, CI) says how to run a command and exits 2, at once."""

from __future__ import annotations

import subprocess
import sys
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]


def test_no_terminal_prints_one_sentence_and_exits_2(tmp_path):
    out = subprocess.run(
        [sys.executable, "-m", "fieldcheck", "--db", str(tmp_path / "x.db")],
        cwd=ROOT,
        stdin=subprocess.PIPE,
        capture_output=True,
        text=True,
        timeout=60,
    )
    assert out.returncode == 2
    assert out.stdout == ""
    lines = out.stderr.strip().splitlines()
    assert len(lines) == 1 and "fieldcheck rate --help" in lines[0]
    assert not (tmp_path / "x.db").exists()  # nothing opened or written
