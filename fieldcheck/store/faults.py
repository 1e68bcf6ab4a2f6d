"""What went wrong with a file, named for what it is: full disk, read-only, no permission, held
lock, damaged. Only a file SQLite cannot read as a database is called damaged; the advice to
restore from a backup is given for that alone (following it for a full disk would overwrite good
data with old)."""

from __future__ import annotations

import errno
import os
import sqlite3
from pathlib import Path

LOCK_WAIT_S = 60.0  # how long a write waits for another program writing the same log


def _writable_dir(path: Path) -> bool:
    parent = path.parent if str(path.parent) else Path(".")
    return os.access(parent, os.W_OK)


def os_sentence(exc: OSError, path: Path | str, doing: str = "write") -> str:
    """One sentence for an OSError while reading or writing ``path``."""
    p = str(path)
    code = exc.errno
    if code in (errno.ENOSPC, errno.EDQUOT):
        return (
            f"cannot {doing} {p}: the disk is full (or your quota is used up); free some space "
            "and run the command again, nothing already saved was lost"
        )
    if code == errno.EROFS:
        return f"cannot {doing} {p}: it is on a read-only disk; give a file on a writable disk"
    if code in (errno.EACCES, errno.EPERM):
        return (
            f"cannot {doing} {p}: you do not have permission (the file or its folder is "
            "read-only for you); change its permissions or give another file"
        )
    if code == errno.ENOENT:
        return f"cannot {doing} {p}: the file or its folder does not exist"
    if code == errno.EISDIR:
        return f"cannot {doing} {p}: it is a folder; give a file name"
    return f"cannot {doing} {p} ({exc.strerror or exc})"


def holders(path: Path | str) -> list[str]:
    """Other processes that have the log (or its -wal file) open: 'pid 123 (fieldcheck import)'.
    Linux only (/proc); elsewhere an empty list."""
    target = {str(Path(path).resolve()), str(Path(path).resolve()) + "-wal"}
    me = os.getpid()
    out: list[str] = []
    proc = Path("/proc")
    if not proc.is_dir():
        return out
    for d in proc.iterdir():
        if not d.name.isdigit() or int(d.name) == me:
            continue
        try:
            fds = list((d / "fd").iterdir())
        except OSError:
            continue
        for fd in fds:
            try:
                if os.readlink(fd) in target:
                    break
            except OSError:
                continue
        else:
            continue
        try:
            cmd = (d / "cmdline").read_bytes().replace(b"\0", b" ").decode(errors="replace")
        except OSError:
            cmd = ""
        cmd = " ".join(cmd.split())  # no newlines or tabs from a program's arguments
        words = cmd.split()
        if "fieldcheck" in cmd:
            i = next((k for k, w in enumerate(words) if w.endswith("fieldcheck")), 0)
            cmd = "fieldcheck " + " ".join(words[i + 1 : i + 2])
        out.append(f"pid {d.name} ({cmd.strip()[:60] or 'unknown program'})")
    return out


def locked_sentence(path: Path | str, waited_s: float) -> str:
    who = holders(path)
    by = f" by {', '.join(who[:3])}" if who else " by another program"
    return (
        f"the survey log {path} is busy: it has been held for writing{by} for more than "
        f"{waited_s:.3g} s; wait for that to finish (or close it) and run the command again, "
        "nothing was changed"
    )


def sqlite_sentence(exc: sqlite3.Error, path: Path | str, *, waited_s: float = LOCK_WAIT_S) -> str:
    """One sentence for an SQLite error on the log at ``path``, named for what it is."""
    text = str(exc).lower()
    p = Path(path)
    if "locked" in text or "busy" in text:
        return locked_sentence(p, waited_s)
    if "disk is full" in text or "database or disk is full" in text:
        return (
            f"cannot write the survey log {p}: the disk is full; free some space and run the "
            "command again, nothing was changed and the log is sound"
        )
    if "readonly" in text or "read-only" in text:
        if p.exists() and not os.access(p, os.W_OK):
            why = "the file is read-only for you"
        elif not _writable_dir(p):
            why = "its folder is read-only for you (SQLite writes a -wal file beside it)"
        else:
            why = "it is on a read-only disk or was opened read-only"
        return (
            f"cannot write the survey log {p}: {why}; check, export and report still read it, "
            "or change the permissions, nothing was changed"
        )
    if "unable to open" in text:
        if p.exists() and not os.access(p, os.R_OK):
            return f"cannot open the survey log {p}: you do not have permission to read it"
        if not p.parent.exists():
            return f"cannot open the survey log {p}: its folder does not exist"
        return (
            f"cannot open the survey log {p}: its folder is read-only for you or the disk is "
            "unavailable; check the folder's permissions"
        )
    if "disk i/o error" in text:
        return (
            f"the disk failed while using the survey log {p} (I/O error); copy the file and any "
            "-wal file beside it somewhere safe before anything else"
        )
    return (
        f"the survey log {p} cannot be read ({exc}); it may be truncated or corrupted: keep the "
        "file and any -wal file beside it untouched, and restore from a backup or the office copy"
    )
