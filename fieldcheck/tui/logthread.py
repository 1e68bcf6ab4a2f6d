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


class LogThread:
    """Owns one ``fieldcheck.store.Log`` on one dedicated thread."""

    def __init__(self, db: str | Path | None, *, seed_if_empty: bool = True) -> None:
        self.db = db
        self.seed_if_empty = seed_if_empty
        self._pool = ThreadPoolExecutor(max_workers=1, thread_name_prefix="fieldcheck-log")
        self._log: Any = None
        self.path: Path | None = None
        self.seeded = False

    def _open(self) -> Any:
        if self._log is None:
            from fieldcheck.store import Log, default_log_path, seed_demo

            path = Path(self.db) if self.db else default_log_path()
            path.parent.mkdir(parents=True, exist_ok=True)
            self._log = Log.open(path)
            self.path = Path(self._log.path)
            if self.seed_if_empty and self._log.is_empty():
                seed_demo(self._log)
                self.seeded = True
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
            self._pool.submit(_close).result(timeout=5)
        finally:
            self._pool.shutdown(wait=False)
