"""Where an output goes: a plain file is written beside it and renamed over it (atomic), but a
device or a pipe (``/dev/null``, a FIFO) is written as it is. Imports nothing of ours, so the
report and the commands ask the same question."""

from __future__ import annotations

import os
import stat
from pathlib import Path


def not_a_file(path: str | Path) -> bool:
    """True where ``path`` exists and is a device or a pipe (``/dev/null``, a FIFO): a rename
    over it would replace the device itself (as root, /dev/null with a plain file)."""
    try:
        mode = os.stat(path).st_mode
    except OSError:
        return False
    return not (stat.S_ISREG(mode) or stat.S_ISDIR(mode))
