"""A second process that counts chunks of a search on the other core.

Two connections in one process do not run at once here: SQLite serialises them on its
global allocator mutex (threads counting two halves took as long as one thread counting
both, while two processes took half the time: measured on the WSJ-derived benchmark
index, tests/bench/bench_scale.py). So the second counter is a process with its own
read-only connection, started once per Treebank and kept until it is closed.
"""
from __future__ import annotations

import multiprocessing
import signal
import sys
from collections.abc import Callable
from pathlib import Path

from treequery.errors import SearchTimeout, TreequeryError

# count(conn, sql, params, span, timeout, spent) -> rows: the counting step it runs
ChunkCounter = Callable[..., list[tuple]]


def _serve(path: str, pipe, count: ChunkCounter) -> None:
    """The partner's loop: count the chunks it is sent until told to stop."""
    signal.signal(signal.SIGINT, signal.SIG_IGN)  # Ctrl-C is the parent's to handle
    from treequery.index.schema import connect
    from treequery.pattern.sql import register_functions

    conn = connect(path, readonly=True)
    register_functions(conn)
    while True:
        message = pipe.recv()
        if message is None:
            return
        sql, params, spans, timeout, spent = message
        try:
            pipe.send(("ok", [count(conn, sql, params, span, timeout, spent) for span in spans]))
        except SearchTimeout as error:
            pipe.send(("timeout", str(error)))
        except Exception as error:  # noqa: BLE001 - sent back and raised in the parent
            pipe.send(("error", f"{type(error).__name__}: {error}"))


class Partner:
    """The counting process of one index file."""

    def __init__(self, path: str | Path, count: ChunkCounter):
        method = "fork" if sys.platform.startswith("linux") else "spawn"
        context = multiprocessing.get_context(method)
        self.pipe, child = context.Pipe()
        self.process = context.Process(target=_serve, args=(str(path), child, count),
                                       name="treequery-count", daemon=True)
        self.process.start()
        child.close()
        self.busy = False

    def submit(self, sql: str, params: list, spans: list[tuple[int, int]],
               timeout: float | None, spent: float) -> None:
        self.pipe.send((sql, params, spans, timeout, spent))
        self.busy = True

    def result(self) -> list[list[tuple]]:
        try:
            kind, value = self.pipe.recv()
        except EOFError:
            raise TreequeryError("the second counting process stopped unexpectedly") from None
        finally:
            self.busy = False
        if kind == "timeout":
            raise SearchTimeout(value)
        if kind == "error":
            raise TreequeryError(f"counting failed in the second process: {value}")
        return value

    def ready(self) -> bool:
        """Running and not still counting for an earlier search."""
        return self.process.is_alive() and not self.busy

    def close(self) -> None:
        if self.process.is_alive():
            if self.busy:  # still counting for a search that failed: stop it
                self.process.terminate()
            else:
                try:
                    self.pipe.send(None)
                except OSError:
                    self.process.terminate()
        self.process.join(5)
        self.pipe.close()
