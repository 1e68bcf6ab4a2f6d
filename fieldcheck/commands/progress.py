"""Progress bars for long commands (rich, which Textual brings), on standard error, and only
when it is a terminal: a pipe or a log file gets no bar and no escape codes.

    with progress_bar(quiet=args.quiet) as bar:    # bar: None, or bar(done, total, stage)
        do_work(progress=bar)
"""

from __future__ import annotations

import contextlib
import sys
import time
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


class ProgressBar:
    """A plain text bar on stderr, redrawn at most 10 times a second (no dependency)."""

    def __init__(self, stream=sys.stderr, width: int = 30):
        self.stream, self.width = stream, width
        self.last = 0.0
        self.stage = None
        self.shown = False

    def __call__(self, done: int, total: int, stage: str) -> None:
        now = time.monotonic()
        final = total == 0 or done >= total
        if stage == self.stage and not final and now - self.last < 0.1:
            return
        self.last, self.stage = now, stage
        frac = 1.0 if total <= 0 else min(1.0, done / total)
        fill = int(frac * self.width)
        bar = "#" * fill + "." * (self.width - fill)
        self.stream.write(f"\r[{bar}] {frac:4.0%} {stage:<18} {done:,}/{total:,} rows ")
        self.stream.flush()
        self.shown = True

    def close(self) -> None:
        if self.shown:
            self.stream.write("\n")
            self.stream.flush()


def counted(rows, bar: Progress | None, stage: str, total: int = 0, every: int = 500):
    """``rows`` passed through, ``bar(n, total, stage)`` every ``every`` rows (total 0:
    unknown, the bar shows the count)."""
    if bar is None:
        yield from rows
        return
    n = 0
    for row in rows:
        yield row
        n += 1
        if n % every == 0:
            bar(n, max(total, n), stage)
    bar(n, max(total, n), stage)


@contextlib.contextmanager
def working(what: str, quiet: bool = False, stream=None) -> Iterator[None]:
    """A spinner with ``what`` while a step with no count of its own runs (terminal only)."""
    if not wanted(quiet, stream):
        yield
        return
    from rich.console import Console

    with Console(file=stream or sys.stderr).status(what):
        yield
