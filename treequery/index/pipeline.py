"""The row side of indexing: files in, a stream of messages for the one writer out.

Reading and row building produce messages; the writer (builder.py) turns them into
SQLite transactions. The same stream runs in the writer's own process for small inputs
and in one worker process for large ones, so both cores are busy (SQLite has a single
writer) and both paths give the same ids and codes by construction: one sequence of
files, numbered in order by one set of code tables.

Messages, in file order (`number` is the file's place in the list):
    ("unchanged", number)                        same content as the indexed document
    ("begin", number, sha256)                    the file's rows follow
    ("rows", number, flat_node_rows, tree_rows, link_rows)
                                                 one batch (see rows.fast_rows and
                                                 linguistics.annotate_rows)
    ("restart", number)                          forget this file's rows so far
    ("done", number, FileCounts, skipped, pending_codes)
    ("failed", number, error_fields)             the whole file failed (after "begin" or not)
    ("end",)
A worker adds ("crash", traceback_text) when something unexpected goes wrong.
"""
from __future__ import annotations

import multiprocessing
import queue
import sys
import traceback
from array import array
from collections import Counter
from collections.abc import Iterator
from pathlib import Path

from ..errors import TreebankFormatError
from ..read.sources import file_sha256
from .heads import HeadRules
from .linguistics import Annotator
from .rows import NODE_COLUMNS, RESTART, CodeTables, file_rows

QUEUE_MESSAGES = 6  # batches in flight between worker and writer: bounds the memory
STOP_WAIT_SECONDS = 5.0


class FileCounts:
    """Running totals of one file's rows: trees, nodes, and nodes per label and word code."""

    def __init__(self):
        self.trees = 0
        self.nodes = 0
        self.labels: Counter = Counter()
        self.words: Counter = Counter()

    def add(self, flat, trees: int) -> None:
        self.trees += trees
        self.nodes += len(flat) // NODE_COLUMNS
        self.labels.update(flat[7::NODE_COLUMNS])  # C loops: cheaper than SQL GROUP BY
        self.words.update(flat[8::NODE_COLUMNS])


def error_fields(error: TreebankFormatError) -> tuple:
    """A TreebankFormatError as plain values (its own pickling loses the fields)."""
    return (error.message, error.path, error.line, error.column, error.expected)


def file_messages(files: list[Path], existing: dict[str, str], codes: CodeTables,
                  first_node: int, first_tree: int, strict: bool,
                  rules: HeadRules) -> Iterator[tuple]:
    """The message stream of the module docstring for `files`.

    `existing` maps resolved paths to the content hash already indexed (it is updated
    as files are done, so a file named twice is read once). On a failure the codes of
    the file are taken back, so the next file gets the codes it would have had.
    Heads, c-command scopes and links are computed here, with `rules`, from the rows
    just built: the writer then only inserts them.
    """
    annotate = Annotator(codes, rules)
    node_id, tree_id = first_node, first_tree
    for number, path in enumerate(files):
        resolved = str(path.resolve())
        try:
            sha256 = file_sha256(path)
        except OSError as error:  # gone or unreadable since the paths were expanded
            failure = TreebankFormatError(f"cannot read file: {error}", str(path))
            yield ("failed", number, error_fields(failure))
            continue
        if existing.get(resolved) == sha256:
            yield ("unchanged", number)
            continue
        yield ("begin", number, sha256)
        counts = FileCounts()
        rows = file_rows(path, codes, node_id, tree_id, strict)
        try:
            while True:
                try:
                    batch = next(rows)
                except StopIteration as end:
                    skipped = end.value
                    break
                if batch == RESTART:
                    counts = FileCounts()
                    yield ("restart", number)
                    continue
                flat, trees = batch
                links = annotate(flat, trees)  # fills the syntax columns of `flat`
                counts.add(flat, len(trees))
                yield ("rows", number, flat, trees, links)
        except TreebankFormatError as error:
            codes.rollback()
            yield ("failed", number, error_fields(error))
            continue
        node_id += counts.nodes
        tree_id += counts.trees
        existing[resolved] = sha256
        yield ("done", number, counts, skipped, codes.take_pending())
    yield ("end",)


def _worker(files, existing, code_state, first_node, first_tree, strict, rules,
            messages) -> None:
    """The worker process: the message stream into `messages`, flat rows as int64 bytes."""
    try:
        codes = CodeTables.from_state(code_state)
        for message in file_messages(files, existing, codes, first_node, first_tree, strict,
                                     rules):
            if message[0] == "rows":
                _, number, flat, trees, links = message
                message = ("rows", number, array("q", flat).tobytes(), trees, links)
            messages.put(message)
    except BaseException:  # noqa: BLE001 - reported to the writer, which raises it
        messages.put(("crash", traceback.format_exc()))


class WorkerStream:
    """The message stream of a worker process, read in the writer's process."""

    def __init__(self, files: list[Path], existing: dict[str, str], codes: CodeTables,
                 first_node: int, first_tree: int, strict: bool, rules: HeadRules):
        # fork starts at once and needs no importable __main__; elsewhere spawn is the
        # safe default (macOS, Windows)
        method = "fork" if sys.platform.startswith("linux") else "spawn"
        context = multiprocessing.get_context(method)
        self.queue: multiprocessing.Queue = context.Queue(QUEUE_MESSAGES)
        self.process = context.Process(
            target=_worker, name="treequery-rows", daemon=True,
            args=(files, existing, codes.state(), first_node, first_tree, strict, rules,
                  self.queue))
        self.process.start()

    def __iter__(self) -> Iterator[tuple]:
        while True:
            message = self._next()
            kind = message[0]
            if kind == "rows":
                _, number, flat_bytes, trees, links = message
                flat = array("q")
                flat.frombytes(flat_bytes)
                message = ("rows", number, flat, trees, links)
            elif kind == "crash":
                raise RuntimeError(f"the row-building process failed:\n{message[1]}")
            yield message
            if kind == "end":
                return

    def _next(self) -> tuple:
        while True:
            try:
                return self.queue.get(timeout=1.0)
            except queue.Empty:
                if not self.process.is_alive():  # killed, e.g. out of memory
                    raise RuntimeError("the row-building process stopped unexpectedly "
                                       f"(exit code {self.process.exitcode})") from None

    def close(self) -> None:
        """Stop the worker (it may be blocked on a full queue if the writer gave up)."""
        if self.process.is_alive():
            self.process.terminate()
        self.process.join(STOP_WAIT_SECONDS)
        self.queue.close()
        self.queue.cancel_join_thread()
