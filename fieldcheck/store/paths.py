"""Where the survey log lives when no ``--db`` is given."""

from __future__ import annotations

import os
from pathlib import Path


def default_log_path() -> Path:
    """The user's survey log: $FIELDCHECK_DB, else $XDG_DATA_HOME/fieldcheck/survey.db, else
    ~/.local/share/fieldcheck/survey.db. The folder is not created here (Log.open does that)."""
    env = os.environ.get("FIELDCHECK_DB")
    if env:
        return Path(env).expanduser()
    base = os.environ.get("XDG_DATA_HOME") or str(Path.home() / ".local" / "share")
    return Path(base).expanduser() / "fieldcheck" / "survey.db"
