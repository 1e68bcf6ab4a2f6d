"""Reliability: kill the writing process at random moments; nothing acknowledged is lost and no
transaction is half-applied (judgement)."""

from __future__ import annotations

import json
import os
import subprocess
import sys
from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parents[2]


@pytest.mark.slow
@pytest.mark.alone  # kills timed against this machine's speed: no other test beside it
@pytest.mark.skipif(not hasattr(os, "fork"), reason="needs fork")
def test_kill_writer_at_random_moments_over_100_cycles(tmp_path):
    env = {
        **os.environ,
        "OPENBLAS_NUM_THREADS": "1",
        "OMP_NUM_THREADS": "1",
        "PYTHONPATH": str(ROOT) + os.pathsep + os.environ.get("PYTHONPATH", ""),
    }
    proc = subprocess.run(
        [
            sys.executable,
            str(Path(__file__).with_name("store_kill_harness.py")),
            str(tmp_path / "kill.db"),
            "100",
            "7",
        ],
        capture_output=True,
        text=True,
        env=env,
        timeout=240,
        cwd=ROOT,
    )
    assert proc.returncode == 0, proc.stderr[-3000:]
    result = json.loads(proc.stdout.strip().splitlines()[-1])
    assert result["failures"] == []
    assert result["cycles"] == 100
    assert result["acked"] > 100  # the kills landed mid-stream, not only before the first write
