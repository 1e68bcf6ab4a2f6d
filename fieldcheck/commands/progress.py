"""Progress bars for long commands (rich, which Textual brings), on standard error, and only
when it is a terminal: a pipe or a log file gets no bar and no escape codes.

    with progress_bar(quiet=args.quiet) as bar:    # bar: None, or bar(done, total, stage)
        do_work(progress=bar)
"""

from __future__ import annotations

import contextlib
import sys
from collections.abc import Callable, Iterator

Progress = Callable[[int, int, str], None]


def wanted(quiet: bool = False, stream=None) -> bool:
    stream = stream or sys.stderr
    return not quiet and bool(getattr(stream, "isatty", lambda: False)())


@contextlib.contextmanager
def progress_bar(quiet: bool = False, stream=None) -> Iterator[Progress | None]:
    """A callable ``bar(done, total, stage)`` drawing one bar per stage, or None (no terminal)."""
    if not wanted(quiet, stream):
        yield None
        return
    from rich.console import Console
    from rich.progress import (
        BarColumn,
        MofNCompleteColumn,
        TextColumn,
        TimeRemainingColumn,
    )
    from rich.progress import (
        Progress as RichProgress,
    )

    console = Console(file=stream or sys.stderr)
    rp = RichProgress(
        TextColumn("{task.description:<12}"),
        BarColumn(),
        MofNCompleteColumn(),
        TimeRemainingColumn(),
        console=console,
        transient=True,
    )
    tasks: dict[str, int] = {}

    def bar(done: int, total: int, stage: str) -> None:
        if stage not in tasks:
            tasks[stage] = rp.add_task(stage, total=max(total, 1))
        rp.update(tasks[stage], completed=done, total=max(total, 1))

    with rp:
        yield bar
