"""Running one search in pieces of whole trees: windows and chunks.

Every node of a result lies in one tree, so a search whose first node is bounded by
tree boundaries finds exactly the results of those trees (pattern/sql.py, `window`).
That gives two ways to split one search:

- windows, in corpus order, for streaming: the first window is small and each next one
  is larger, so the first results come back after a few hundred trees whatever the size
  of the index (a single statement with ORDER BY has to finish its sort first);
- chunks of a fixed number of trees, for counting: this process and a partner
  process (partner.py) count every other chunk each, so both cores work, and no
  statement holds more than one chunk's results in memory (a grouped count keeps its
  rows until it has counted them).
"""
from __future__ import annotations

import sqlite3
from collections.abc import Callable, Iterator
from typing import TypeVar

from treequery.pattern.sql import TREE_SPAN_SQL, TREE_START_SQL

T = TypeVar("T")

WINDOW_MIN_TREES = 4096     # smaller indexes are searched by one statement
WINDOW_FIRST_TREES = 256    # trees in the first window; each next window is 4 times larger
WINDOW_GROWTH = 4
SPLIT_MIN_TREES = 10_000    # smaller indexes are counted by one statement
CHUNK_TREES = 32_768        # trees per counted chunk


def _span(conn: sqlite3.Connection) -> tuple[int, int, int] | None:
    low, high, last_node = conn.execute(TREE_SPAN_SQL).fetchone()
    return None if low is None else (low, high, last_node)


def _start_node(conn: sqlite3.Connection, tree_id: int) -> int | None:
    row = conn.execute(TREE_START_SQL, (tree_id,)).fetchone()
    return row[0] if row else None


def _ranges(conn: sqlite3.Connection, tree_starts: list[int], last_node: int
            ) -> list[tuple[int, int]]:
    """Node-id ranges of the runs of trees that begin at `tree_starts` (tree ids)."""
    starts = sorted({node for node in (_start_node(conn, t) for t in tree_starts)
                     if node is not None})
    ends = [start - 1 for start in starts[1:]] + [last_node]
    return list(zip(starts, ends, strict=True))


def windows(conn: sqlite3.Connection) -> list[tuple[int, int]] | None:
    """Growing node-id ranges of whole trees in corpus order; None for a small index."""
    span = _span(conn)
    if span is None or span[1] - span[0] + 1 < WINDOW_MIN_TREES:
        return None
    low, high, last_node = span
    starts, size = [], WINDOW_FIRST_TREES
    while low <= high:
        starts.append(low)
        low += size
        size *= WINDOW_GROWTH
    return _ranges(conn, starts, last_node)


def chunks(conn: sqlite3.Connection) -> list[tuple[int, int]] | None:
    """Node-id ranges of CHUNK_TREES whole trees each (at least two); None for a small index."""
    span = _span(conn)
    if span is None or span[1] - span[0] + 1 < SPLIT_MIN_TREES:
        return None
    low, high, last_node = span
    size = min(CHUNK_TREES, (high - low + 2) // 2)
    return _ranges(conn, list(range(low, high + 1, size)), last_node)


def in_windows(ranges: list[tuple[int, int]], run: Callable[[tuple[int, int]], Iterator[T]]
               ) -> Iterator[T]:
    """The rows of `run(range)` for each window in turn (corpus order is kept)."""
    for span in ranges:
        yield from run(span)
