"""This computer's record of the devices its survey logs write as, so a log that went back in time
or was copied is noticed before it writes a row that would clash.

Every row a log writes carries (device id, per-device sequence). A log restored from a backup
would number its next rows again from where the backup stood, clashing with rows the office
already took; a copy on a second laptop would number the same sequence twice. So the computer
remembers, per device id, which file writes it and how far its sequence has gone
(``devices.json`` in the user's state folder, or ``$FIELDCHECK_STATE_DIR``). When a log is opened
for writing and

- its sequence is behind what this computer saw it write (restored from a backup), or
- another existing log file here writes the same device id (copied), or
- this computer has never seen its device though it has written rows (copied from another
  computer, or this computer's record was lost),

the log takes a new device id (one sentence says so). Its own earlier rows keep their old id and
come back from the office like any other device's, so the log catches up. Taking a new id is
always safe; the record is best effort (a folder that cannot be written only loses the check).
"""

from __future__ import annotations

import contextlib
import json
import os
import sqlite3
from pathlib import Path


def _file() -> Path | None:
    env = os.environ.get("FIELDCHECK_STATE_DIR")
    try:
        if env:
            base = Path(env).expanduser()
        else:
            import platformdirs

            base = Path(platformdirs.user_state_dir("fieldcheck", appauthor=False))
    except Exception:
        return None
    return base / "devices.json"


def _load() -> dict[str, dict]:
    f = _file()
    if f is None:
        return {}
    try:
        data = json.loads(f.read_text(encoding="utf-8"))
        return data if isinstance(data, dict) else {}
    except (OSError, ValueError):
        return {}


def remember(device_id: str, path: Path, seq: int) -> None:
    f = _file()
    if f is None:
        return
    with contextlib.suppress(OSError):
        data = _load()
        rec = {"path": str(Path(path).resolve()), "seq": int(seq)}
        if data.get(device_id) == rec:
            return
        data[device_id] = rec
        f.parent.mkdir(parents=True, exist_ok=True)
        tmp = f.with_name(f"{f.name}.{os.getpid()}.part")
        tmp.write_text(json.dumps(data, indent=0, sort_keys=True), encoding="utf-8")
        os.replace(tmp, f)


def _device_of(path: Path) -> str | None:
    try:
        conn = sqlite3.connect(f"file:{path}?mode=ro", uri=True, timeout=1.0)
        try:
            row = conn.execute("SELECT value FROM meta WHERE key = 'device_id'").fetchone()
        finally:
            conn.close()
        return row[0] if row else None
    except sqlite3.Error:
        return None


def why_new_device(device_id: str, path: Path, seq: int) -> str | None:
    """Why a log at ``path`` writing as ``device_id`` (sequence at ``seq``) must take a new
    device id, or None when it may go on as it is."""
    rec = _load().get(device_id)
    here = str(Path(path).resolve())
    if rec is None:
        if seq > 0 and _file() is not None:
            return "it was written on another computer, or copied here"
        return None
    if rec.get("path") == here:
        if int(rec.get("seq", 0)) > seq:
            return (
                f"it has gone back in time (restored from a backup: this computer saw it write "
                f"{rec.get('seq')} rows, it now holds {seq})"
            )
        return None
    other = Path(str(rec.get("path")))
    if other.is_file() and _device_of(other) == device_id:
        return f"it is a copy of {other}"
    return None  # the log was moved or renamed: same device
