"""Files the commands write (results, exports): written beside the target, then renamed, so a
full disk or a kill never leaves half a file under the name the user gave. A target that is a
device or a pipe (``--out /dev/null``) is written as it is: never renamed over."""

from __future__ import annotations

import contextlib
import os
from collections.abc import Callable
from pathlib import Path

from fieldcheck.out_path import not_a_file


def write_atomically(path: str | Path, write: Callable, *, encoding: str = "utf-8") -> None:
    """``write(fh)`` into a temporary file beside ``path``, then rename it over ``path``. An
    OSError (full disk, read-only folder, no permission) is a UsageError naming what it is."""
    from fieldcheck.commands.usage import UsageError
    from fieldcheck.store.faults import os_sentence

    target = Path(path)
    if not_a_file(target):  # /dev/null, a pipe: written as it is, never renamed over
        try:
            with open(target, "w", newline="", encoding=encoding) as fh:
                write(fh)
        except OSError as exc:
            raise UsageError(os_sentence(exc, target)) from None
        return
    tmp = target.with_name(f".{target.name}.{os.getpid()}.part")
    try:
        try:
            with open(tmp, "w", newline="", encoding=encoding) as fh:
                write(fh)
                fh.flush()
                os.fsync(fh.fileno())
            os.replace(tmp, target)
        except BaseException:
            with contextlib.suppress(OSError):
                tmp.unlink()
            raise
    except OSError as exc:
        shown = target if exc.filename in (None, str(tmp)) else exc.filename
        raise UsageError(os_sentence(exc, shown)) from None
