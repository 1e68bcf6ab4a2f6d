"""Where the survey log lives when no ``--db`` is given."""

from __future__ import annotations

import os
from pathlib import Path


def default_log_path() -> Path:
    """The user's survey log: $FIELDCHECK_DB, else survey.db in the user data folder that
    platformdirs names for this platform ($XDG_DATA_HOME/fieldcheck or ~/.local/share/fieldcheck
    on Linux, ~/Library/Application Support/fieldcheck on macOS, %LOCALAPPDATA%\\fieldcheck on
    Windows). The folder is not created here (Log.open does that)."""
    env = os.environ.get("FIELDCHECK_DB")
    if env:
        return Path(env).expanduser()
    from platformdirs import user_data_dir

    return Path(user_data_dir("fieldcheck", appauthor=False)) / "survey.db"
