"""Building the index: bracketed files in, numbered node rows out, one transaction per file."""
from __future__ import annotations

import hashlib
import json
import os
import re
import sqlite3
import sys
import time
from collections import Counter
from collections.abc import Iterable
from dataclasses import dataclass, field
from datetime import datetime, timezone
from pathlib import Path

from ..errors import TreebankFormatError
from ..read.brackets import read_file
from ..read.model import ParsedTree, SkippedTree
from ..read.sources import document_metadata, expand_paths, file_sha256
from .rows import LABEL_OF, WORD_OF, CodeTables, node_rows
from .schema import NODE_INDEXES, create_schema

NODE_INDEX_NAMES = tuple(re.findall(r"CREATE INDEX IF NOT EXISTS (\w+)", NODE_INDEXES))
# Bracketed files hold roughly 15-35 bytes per node; a low guess errs towards
# dropping the node indexes, which is the cheap mistake for a big load.
BYTES_PER_NODE_GUESS = 12

ANALYSIS_ROWS = 20_000  # rows ANALYZE samples per index
INSERT_NODE = "INSERT INTO node VALUES (?,?,?,?,?,?,?,?,?,?,?,?,?)"
INSERT_TREE = "INSERT INTO tree VALUES (?,?,?,?,?,?,?,?,?)"


@dataclass(frozen=True)
class IndexReport:
    """What one indexing run did."""

    documents_added: int = 0
    documents_replaced: int = 0
    documents_unchanged: int = 0
    trees: int = 0
    nodes: int = 0
    skipped: list[SkippedTree] = field(default_factory=list)
    seconds: float = 0.0
    failed_files: list[tuple[str, str]] = field(default_factory=list)
    warnings: list[str] = field(default_factory=list)

    def summary(self) -> str:
        """One line for people: what was added, replaced, kept and skipped, and how fast."""
        rate = self.nodes / self.seconds if self.seconds else 0.0
        return (f"indexed {self.trees:,} trees ({self.nodes:,} nodes) in {self.seconds:.1f} s"
                f" ({rate:,.0f} nodes/s): {self.documents_added} documents added,"
                f" {self.documents_replaced} replaced, {self.documents_unchanged} unchanged,"
                f" {len(self.skipped)} trees skipped, {len(self.failed_files)} files failed")


@dataclass(frozen=True)
class _FileResult:
    """The outcome of loading one file, before it is folded into the report."""

    trees: int
    nodes: int
    skipped: list[SkippedTree]


class _Loader:
    """Loads trees into an open transaction and keeps the running ids and codes."""

    def __init__(self, conn: sqlite3.Connection):
        self.conn = conn
        self.codes = CodeTables(conn)
        self.next_node = (conn.execute("SELECT max(id) FROM node").fetchone()[0] or 0) + 1
        self.next_tree = (conn.execute("SELECT max(id) FROM tree").fetchone()[0] or 0) + 1

    def load(self, items: Iterable[ParsedTree | SkippedTree], document_id: int,
             on_tree=None) -> _FileResult:
        """Insert every tree of `items` under `document_id`; the caller owns the transaction."""
        node_batch: list = []
        tree_batch: list = []
        skipped: list[SkippedTree] = []
        first_node = self.next_node
        forms = self.codes.forms
        label_counts: Counter = Counter()
        word_counts: Counter = Counter()
        n_trees = 0
        for item in items:
            if isinstance(item, SkippedTree):
                skipped.append(item)
                continue
            rows, tokens = node_rows(item.root, self.next_tree, self.next_node, self.codes)
            n_leaves = rows[0][10]  # the root's leaf_last
            text = " ".join(map(forms.__getitem__, tokens))
            tree_batch.append((self.next_tree, document_id, item.ordinal, item.line,
                               self.next_node, self.next_node + len(rows) - 1, len(tokens),
                               n_leaves, text))
            node_batch.extend(rows)
            label_counts.update(map(LABEL_OF, rows))  # C loops: cheaper than SQL GROUP BY
            word_counts.update(map(WORD_OF, rows))
            self.next_node += len(rows)
            self.next_tree += 1
            n_trees += 1
            if len(node_batch) >= 50_000:
                self._write(node_batch, tree_batch)
            if on_tree is not None:
                on_tree(len(rows))
        self._write(node_batch, tree_batch)
        self.codes.flush(self.conn)
        word_counts.pop(None, None)
        self._add_counts("label", label_counts.items())
        self._add_counts("word", word_counts.items())
        return _FileResult(n_trees, self.next_node - first_node, skipped)

    def _write(self, node_batch: list, tree_batch: list) -> None:
        self.conn.executemany(INSERT_NODE, node_batch)
        self.conn.executemany(INSERT_TREE, tree_batch)
        node_batch.clear()
        tree_batch.clear()

    def _add_counts(self, table: str, counts: Iterable[tuple[int, int]]) -> None:
        """Keep label.n_nodes / word.n_nodes (planner statistics) in step with the nodes."""
        self.conn.executemany(f"UPDATE {table} SET n_nodes = n_nodes + ? WHERE code = ?",
                              [(n, code) for code, n in counts])

    def _subtract_counts(self, first: int, last: int) -> None:
        """Take the nodes first..last (about to be deleted) out of the statistics."""
        for table in ("label", "word"):
            counts = self.conn.execute(
                f"SELECT {table}, -count(*) FROM node WHERE id BETWEEN ? AND ?"
                f" AND {table} IS NOT NULL GROUP BY {table}", (first, last)
            ).fetchall()
            self._add_counts(table, counts)

    def delete_document_trees(self, document_id: int) -> None:
        """Remove a document's trees and nodes (a document's nodes are one id range)."""
        first, last = self.conn.execute(
            "SELECT min(first_node), max(last_node) FROM tree WHERE document = ?",
            (document_id,),
        ).fetchone()
        if first is not None:
            self._subtract_counts(first, last)
            self.conn.execute("DELETE FROM node WHERE id BETWEEN ? AND ?", (first, last))
        self.conn.execute("DELETE FROM tree WHERE document = ?", (document_id,))

    def rollback(self, next_node: int, next_tree: int) -> None:
        self.codes.rollback()
        self.next_node, self.next_tree = next_node, next_tree


def _now() -> str:
    return datetime.now(timezone.utc).isoformat(timespec="seconds")


def _corpus_id(conn: sqlite3.Connection, name: str) -> int:
    conn.execute("INSERT OR IGNORE INTO corpus(name) VALUES (?)", (name,))
    return conn.execute("SELECT id FROM corpus WHERE name = ?", (name,)).fetchone()[0]


def _node_index_count(conn: sqlite3.Connection) -> int:
    names = ",".join("?" * len(NODE_INDEX_NAMES))
    return conn.execute(
        f"SELECT count(*) FROM sqlite_master WHERE type='index' AND name IN ({names})",
        NODE_INDEX_NAMES,
    ).fetchone()[0]


def drop_node_indexes(conn: sqlite3.Connection) -> None:
    for name in NODE_INDEX_NAMES:
        conn.execute(f"DROP INDEX IF EXISTS {name}")


def create_node_indexes(conn: sqlite3.Connection) -> None:
    conn.executescript(NODE_INDEXES)


class _Run:
    """One call of index_paths: the files, the loader, the counters and the progress bar."""

    def __init__(self, conn, files, corpus_id, meta, strict, progress):
        self.conn = conn
        self.files = files
        self.corpus_id = corpus_id
        self.meta = dict(meta or {})
        self.strict = strict
        self.loader = _Loader(conn)
        self.counts = Counter()
        self.skipped: list[SkippedTree] = []
        self.failed: list[tuple[str, str]] = []
        self.warnings: list[str] = []
        self.indexes_dropped = False
        self.started = time.perf_counter()
        self.bar = _progress_bar(len(files), progress)

    def run(self) -> None:
        try:
            for number, path in enumerate(self.files):
                self._index_file(path, number)
                self.bar.update(1)
                self._show_speed()
        finally:
            self.bar.close()
            if self.indexes_dropped:
                create_node_indexes(self.conn)
            if self.counts["changed"]:
                # planner statistics; sampling bounds the cost on a big index
                self.conn.execute(f"PRAGMA analysis_limit={ANALYSIS_ROWS}")
                self.conn.execute("ANALYZE")
                # fold the write-ahead log into the file now rather than on a later commit
                self.conn.execute("PRAGMA wal_checkpoint(TRUNCATE)")

    def _index_file(self, path: Path, number: int) -> None:
        resolved = str(path.resolve())
        try:
            sha256 = file_sha256(path)
        except OSError as error:  # gone or unreadable since the paths were expanded
            self._fail(path, TreebankFormatError(f"cannot read file: {error}", str(path)))
            return
        existing = self.conn.execute(
            "SELECT id, sha256 FROM document WHERE corpus = ? AND path = ?",
            (self.corpus_id, resolved),
        ).fetchone()
        if existing is not None and existing[1] == sha256:
            self.counts["documents_unchanged"] += 1
            return
        self._maybe_drop_indexes(number)
        self.counts["changed"] += 1
        loader = self.loader
        saved = (loader.next_node, loader.next_tree)
        self.conn.execute("BEGIN")
        try:
            document_id = self._document_row(path, resolved, sha256, existing)
            result = loader.load(read_file(path, strict=self.strict), document_id, self._tick)
            self.conn.execute(
                "UPDATE document SET n_trees = ?, n_skipped = ? WHERE id = ?",
                (result.trees, len(result.skipped), document_id),
            )
            self.conn.execute("COMMIT")
        except BaseException as error:
            self.conn.execute("ROLLBACK")
            loader.rollback(*saved)
            if not isinstance(error, TreebankFormatError):
                raise
            self._fail(path, error)
            return
        self._account(path, existing is not None, result)

    def _fail(self, path: Path, error: TreebankFormatError) -> None:
        """A file that cannot be indexed: fatal with strict, else listed and skipped."""
        if self.strict:
            raise error
        self.failed.append((str(path), str(error)))

    def _document_row(self, path: Path, resolved: str, sha256: str, existing) -> int:
        meta = {**self.meta, **document_metadata(path)}  # the file's own sidecar row wins
        values = json.dumps(meta, sort_keys=True, ensure_ascii=False)
        size = path.stat().st_size
        if existing is not None:
            self.loader.delete_document_trees(existing[0])
            self.conn.execute(
                "UPDATE document SET name = ?, size = ?, sha256 = ?, meta = ?, n_trees = 0,"
                " n_skipped = 0, indexed_at = ? WHERE id = ?",
                (path.name, size, sha256, values, _now(), existing[0]),
            )
            return existing[0]
        cursor = self.conn.execute(
            "INSERT INTO document(corpus, path, name, size, sha256, meta, indexed_at)"
            " VALUES (?,?,?,?,?,?,?)",
            (self.corpus_id, resolved, path.name, size, sha256, values, _now()),
        )
        return cursor.lastrowid

    def _account(self, path: Path, replaced: bool, result: _FileResult) -> None:
        self.counts["documents_replaced" if replaced else "documents_added"] += 1
        self.counts["trees"] += result.trees
        self.counts["nodes"] += result.nodes
        self.skipped.extend(result.skipped)
        if result.trees == 0 and not result.skipped:
            self.warnings.append(f"{path}: no trees found (empty file?)")

    def _maybe_drop_indexes(self, number: int) -> None:
        """Drop the node indexes before a load big enough that rebuilding them is cheaper."""
        if self.indexes_dropped or _node_index_count(self.conn) == 0:
            return
        existing = self.loader.next_node - 1  # an upper bound that costs no table scan
        incoming = sum(p.stat().st_size for p in self.files[number:]) // BYTES_PER_NODE_GUESS
        if incoming * 2 >= existing:
            drop_node_indexes(self.conn)
            self.indexes_dropped = True

    def _tick(self, nodes: int) -> None:
        self.counts["progress_nodes"] += nodes
        self.counts["progress_trees"] += 1
        if self.counts["progress_trees"] % 500 == 0:
            self._show_speed()

    def _show_speed(self) -> None:
        if self.bar.disable:
            return
        elapsed = max(time.perf_counter() - self.started, 1e-9)
        speed = int(self.counts["progress_nodes"] / elapsed)
        self.bar.set_postfix(trees=self.counts["progress_trees"], nodes_per_s=speed,
                             refresh=False)  # tqdm redraws at its own pace

    def report(self) -> IndexReport:
        return IndexReport(
            documents_added=self.counts["documents_added"],
            documents_replaced=self.counts["documents_replaced"],
            documents_unchanged=self.counts["documents_unchanged"],
            trees=self.counts["trees"],
            nodes=self.counts["nodes"],
            skipped=self.skipped,
            seconds=time.perf_counter() - self.started,
            failed_files=self.failed,
            warnings=self.warnings,
        )


def _progress_bar(total: int, enabled: bool):
    from tqdm import tqdm  # imported here: only progress output needs it

    return tqdm(total=total, unit="file", file=sys.stderr, disable=not enabled,
                dynamic_ncols=True)


def _bulk_pragmas(conn: sqlite3.Connection) -> dict[str, object]:
    """Tune the connection for a bulk load; returns the old values to restore."""
    # a 256 MiB page cache and no checkpoints in the middle of a load; worker threads
    # sort for CREATE INDEX
    tuned = {"cache_size": -262144, "synchronous": 1, "wal_autocheckpoint": 100_000,
             "threads": min(4, os.cpu_count() or 1)}
    old = {name: conn.execute(f"PRAGMA {name}").fetchone()[0] for name in tuned}
    for name, value in tuned.items():
        conn.execute(f"PRAGMA {name}={value}")
    return old


def _restore_pragmas(conn: sqlite3.Connection, old: dict[str, object]) -> None:
    for name, value in old.items():
        conn.execute(f"PRAGMA {name}={value}")


def write_skip_report(report: IndexReport, report_file: str | Path) -> None:
    """One line per problem: file:line:column: message (whole-file failures as file:0:0)."""
    lines = [f"{s.source}:{s.line}:{s.column}: {s.message}" for s in report.skipped]
    lines += [message if message.startswith(path) else f"{path}:0:0: {message}"
              for path, message in report.failed_files]
    Path(report_file).write_text("".join(line + "\n" for line in lines), encoding="utf-8")


def index_paths(conn: sqlite3.Connection, paths: Iterable[str | Path] | str | Path,
                corpus: str = "default", meta: dict[str, str] | None = None,
                strict: bool = False, progress: bool = False,
                report_file: str | Path | None = None) -> IndexReport:
    """Index bracketed files (files, directories, globs) into the open index `conn`.

    Each file is one transaction: unchanged files are left alone, changed files are
    replaced, and a file that fails is rolled back whole. With strict=True the first
    problem raises TreebankFormatError (files committed before it stay indexed).
    """
    if isinstance(paths, (str, Path)):
        paths = [paths]
    files = expand_paths(str(p) for p in paths)
    conn.commit()  # the caller's open transaction, if any, is not ours to roll back
    create_schema(conn)
    isolation, conn.isolation_level = conn.isolation_level, None  # we BEGIN/COMMIT ourselves
    old_pragmas = _bulk_pragmas(conn)
    try:
        run = _Run(conn, files, _corpus_id(conn, corpus), meta, strict, progress)
        run.run()
    finally:
        _restore_pragmas(conn, old_pragmas)
        conn.isolation_level = isolation
    report = run.report()
    if report_file is not None:
        write_skip_report(report, report_file)
    return report


def index_trees(conn: sqlite3.Connection, items: Iterable[ParsedTree | SkippedTree],
                source: str = "<memory>", corpus: str = "default") -> IndexReport:
    """Index trees already in memory as one document named `source` (tests, the API)."""
    create_schema(conn)
    items = list(items)
    started = time.perf_counter()
    digest = hashlib.sha256(repr([(t.line, t.ordinal) for t in items]).encode()).hexdigest()
    isolation, conn.isolation_level = conn.isolation_level, None
    try:
        conn.execute("BEGIN")
        corpus_id = _corpus_id(conn, corpus)
        document_id = conn.execute(
            "INSERT INTO document(corpus, path, name, size, sha256, indexed_at)"
            " VALUES (?,?,?,0,?,?)", (corpus_id, source, Path(source).name, digest, _now()),
        ).lastrowid
        result = _Loader(conn).load(items, document_id)
        conn.execute("UPDATE document SET n_trees = ?, n_skipped = ? WHERE id = ?",
                     (result.trees, len(result.skipped), document_id))
        conn.execute("COMMIT")
    except BaseException:
        conn.execute("ROLLBACK")
        raise
    finally:
        conn.isolation_level = isolation
    return IndexReport(documents_added=1, trees=result.trees, nodes=result.nodes,
                       skipped=result.skipped, seconds=time.perf_counter() - started)
