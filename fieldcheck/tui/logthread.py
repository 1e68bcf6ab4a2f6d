"""The survey log lives on one thread of its own.

sqlite3 connections are bound to the thread that made them, so the interface never touches the
``Log`` from the UI thread or Textual's pooled worker threads: every store call is a function
run on a single-thread executor that opened the log (and paid for importing sqlite-utils and
numpy) there. Calls are serialised, so writes never race.
"""

from __future__ import annotations

import asyncio
from collections.abc import Callable
from concurrent.futures import ThreadPoolExecutor
from pathlib import Path
from typing import Any, TypeVar

T = TypeVar("T")


def _holds_survey(path: Path) -> bool:
    """True when the user's own log exists and holds a site of the user's (then it opens, not
    the demo; an invented demo an older version wrote into it does not count)."""
    if not path.exists():
        return False
    from fieldcheck.store import Log

    try:
        with Log.open(path, readonly=True) as log:
            return bool(log.sites())
    except Exception:
        return True  # open it, so its own message shows


class LogThread:
    """Owns one ``fieldcheck.store.Log`` on one dedicated thread."""

    def __init__(self, db: str | Path | None, *, demo: bool | None = None) -> None:
        """``db`` None: the user's own survey log, or, while that holds no survey yet (the first
        start), the invented demo in its own file. ``demo`` True: ``db`` (or the demo's own file)
        is the demo, seeded if empty; False: never the demo."""
        self.db = db
        self.demo = demo
        self._pool = ThreadPoolExecutor(max_workers=1, thread_name_prefix="fieldcheck-log")
        self._log: Any = None
        self.path: Path | None = None
        self.seeded = False
        self.is_demo = False  # the log open is the invented demo (never synced)
        from fieldcheck.store.hub.url import is_hub_url

        self.office = is_hub_url(db)  # --db postgresql://...: the office view of the hub

    def _open(self) -> Any:
        if self._log is None and self.office:  # the office hub, through its mirror log
            from fieldcheck.store.hub.mirror import open_hub_log

            self._log = open_hub_log(str(self.db))
            self.path = Path(self._log.path)
        if self._log is None:
            from fieldcheck.store import Log, default_log_path, seed_demo
            from fieldcheck.store.demo import default_demo_path, is_demo

            demo = self.demo
            if self.db and demo is None:
                demo = False
            if demo is None:
                demo = not _holds_survey(default_log_path())
            path = (
                Path(self.db) if self.db else (default_demo_path() if demo else default_log_path())
            )
            path.parent.mkdir(parents=True, exist_ok=True)
            self._log = Log.open(path)
            self.path = Path(self._log.path)
            if demo and self._log.is_empty():
                seed_demo(self._log)
                self.seeded = True
            self.is_demo = is_demo(self._log)
        return self._log

    async def call(self, fn: Callable[..., T], *args: Any, **kwargs: Any) -> T:
        """Run ``fn(log, *args, **kwargs)`` on the log's thread and return its result."""
        loop = asyncio.get_running_loop()
        return await loop.run_in_executor(self._pool, lambda: fn(self._open(), *args, **kwargs))

    def call_sync(self, fn: Callable[..., T], *args: Any, **kwargs: Any) -> T:
        """The same, blocking (for scripts and shutdown)."""
        return self._pool.submit(lambda: fn(self._open(), *args, **kwargs)).result()

    def close(self) -> None:
        def _close() -> None:
            if self._log is not None:
                self._log.close()
                self._log = None

        try:
            # the hub's mirror sends the reviews made here as it closes: wait for that
            self._pool.submit(_close).result(timeout=None if self.office else 5)
        finally:
            self._pool.shutdown(wait=False)
