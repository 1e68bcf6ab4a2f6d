"""Start-up: ``fieldcheck rate`` for one post against ``python -c "import numpy"``, measured in
the same run.

Each command runs in a fresh subprocess started from a scratch folder (the tree under test comes
from PYTHONPATH), ours and the floor alternating, ``--runs`` times each (default 11). A figure is
the process's CPU time (user + system, from ``wait4``); ``startup_ratio`` is the median of the
ratios of the pairs (target <= 2), with the medians of each side and of the wall times beside it.

The package's bytecode is compiled first, as ``pip install`` does: a source tree run with
PYTHONDONTWRITEBYTECODE and no ``__pycache__`` compiles every module on every start, which is
not what an installed fieldcheck pays (``--no-compile`` leaves the bytecode as it is: in a
fresh checkout run that way, that is the compile-every-time case). One unmeasured run
comes first: the first rating ever builds the unit factor table with pint and keeps it in the
user's cache folder, as it does once on any machine.

Prints one JSON object on its last line.
"""

from __future__ import annotations

import argparse
import json
import os
import statistics
import subprocess
import sys
import tempfile
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parent.parent
PY = sys.executable
RATE = [
    PY,
    "-m",
    "fieldcheck",
    "rate",
    "--size",
    "4x4",
    "--height",
    "8ft 2in",
    "--species",
    "spruce-pine-fir",
    "--grade",
    "no2",
    "--load",
    "2 kip",
]
NUMPY = [PY, "-c", "import numpy"]


def run(argv: list[str], cwd: str) -> tuple[float, float]:
    """(CPU seconds of the child, user + system; wall seconds)."""
    env = {**os.environ, "PYTHONPATH": str(ROOT)}
    t = time.perf_counter()
    p = subprocess.Popen(
        argv, cwd=cwd, env=env, stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL
    )
    _, status, ru = os.wait4(p.pid, 0)
    wall = time.perf_counter() - t
    if os.waitstatus_to_exitcode(status) != 0:
        raise RuntimeError(f"{' '.join(argv[1:4])} failed")
    return ru.ru_utime + ru.ru_stime, wall


def main() -> None:
    ap = argparse.ArgumentParser()
    ap.add_argument("--runs", type=int, default=11, help="runs of each, alternating")
    ap.add_argument("--no-compile", action="store_true", help="do not compile the bytecode first")
    a = ap.parse_args()
    if not a.no_compile:
        subprocess.run(
            [PY, "-m", "compileall", "-q", str(ROOT / "fieldcheck")],
            env={k: v for k, v in os.environ.items() if k != "PYTHONDONTWRITEBYTECODE"},
            check=True,
            stdout=subprocess.DEVNULL,
        )
    with tempfile.TemporaryDirectory() as cwd:
        run(RATE, cwd)  # the first run ever keeps the unit factor table (not measured)
        ours, floor = [], []
        for _ in range(a.runs):
            ours.append(run(RATE, cwd))
            floor.append(run(NUMPY, cwd))
    ratios = [o[0] / f[0] for o, f in zip(ours, floor, strict=True)]
    print(
        json.dumps(
            {
                "runs": a.runs,
                "bytecode": not a.no_compile,
                "startup_ratio": round(statistics.median(ratios), 2),
                "startup_rate_cpu_s": round(statistics.median(o[0] for o in ours), 3),
                "startup_numpy_cpu_s": round(statistics.median(f[0] for f in floor), 3),
                "startup_rate_wall_s": round(statistics.median(o[1] for o in ours), 3),
                "startup_numpy_wall_s": round(statistics.median(f[1] for f in floor), 3),
                "load_average": round(os.getloadavg()[0], 1),
            }
        )
    )


if __name__ == "__main__":
    main()
