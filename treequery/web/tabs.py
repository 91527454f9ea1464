"""One search at a time per browser tab: a new search from a tab stops its old one."""
from __future__ import annotations

import sqlite3
import threading
from collections.abc import Iterator
from contextlib import contextmanager


class Cancelled(Exception):
    """A newer search from the same tab replaced this one."""


class RunningSearch:
    """A search in progress on its own connection, which another thread may stop."""

    def __init__(self, conn: sqlite3.Connection):
        self.conn = conn
        self.cancelled = False
        self.finished = False

    def check(self) -> None:
        """Raise Cancelled between two steps of Python work (an interrupt only stops SQL)."""
        if self.cancelled:
            raise Cancelled()


class TabSearches:
    """The running search of each tab, by the tab's id."""

    def __init__(self) -> None:
        self._lock = threading.Lock()
        self._running: dict[str, RunningSearch] = {}

    @contextmanager
    def start(self, tab: str, conn: sqlite3.Connection) -> Iterator[RunningSearch]:
        """Register a search for `tab` (no tab: nothing to replace), stopping the old one.

        `finished` is set under the lock, so no interrupt can reach the connection once
        the search is over (the connection is closed, or a later statement runs on it).
        An interrupted SQLite step raises OperationalError("interrupted"), which is
        turned into Cancelled here.
        """
        search = RunningSearch(conn)
        with self._lock:
            old = self._running.get(tab) if tab else None
            if old is not None:
                old.cancelled = True
                old.conn.interrupt()  # thread-safe in SQLite; old is not finished yet
            if tab:
                self._running[tab] = search
        try:
            yield search
        except sqlite3.OperationalError as error:
            if search.cancelled and "interrupt" in str(error):
                raise Cancelled() from None
            raise
        finally:
            with self._lock:
                search.finished = True
                if tab and self._running.get(tab) is search:
                    del self._running[tab]

    def running(self) -> int:
        with self._lock:
            return len(self._running)
