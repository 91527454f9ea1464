"""Building the index: row messages in, SQLite transactions out, each file atomic."""
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
from ..read.model import ParsedTree, SkippedTree
from ..read.sources import document_metadata, expand_paths
from .linguistics import Annotator, annotate_index, prepare_head_rules, write_links
from .pipeline import FileCounts, WorkerStream, file_messages
from .heads import HeadRules
from .rows import INSERT_FLAT_NODE, NO_VALUE, NODE_COLUMNS, CodeTables, node_rows
from .schema import NODE_INDEXES, create_schema

NODE_INDEX_NAMES = tuple(re.findall(r"CREATE INDEX IF NOT EXISTS (\w+)", NODE_INDEXES))
# Bracketed files hold roughly 15-35 bytes per node; a low guess errs towards
# dropping the node indexes, which is the cheap mistake for a big load.
BYTES_PER_NODE_GUESS = 12

# Inputs this big are read and turned into rows in a worker process while this process
# writes (a process start and moving the rows cost about 0.1 s; measured, see
# tests/bench_index.py).
WORKER_MIN_BYTES = 4 << 20
COMMIT_NODES = 1_000_000  # nodes per commit: files are savepoints inside it
ANALYSIS_ROWS = 20_000  # rows ANALYZE samples per index
# Tree rows of `file_rows` lack the document column; it is the same for the whole file.
INSERT_FILE_TREE = "INSERT INTO tree VALUES (?,{document},?,?,?,?,?,?,?)"


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


class _Loader:
    """Loads in-memory trees into an open transaction (index_trees: tests, the API)."""

    def __init__(self, conn: sqlite3.Connection, rules: HeadRules):
        self.conn = conn
        self.codes = CodeTables(conn)
        self.annotate = Annotator(self.codes, rules)
        self.next_node = (conn.execute("SELECT max(id) FROM node").fetchone()[0] or 0) + 1
        self.next_tree = (conn.execute("SELECT max(id) FROM tree").fetchone()[0] or 0) + 1

    def load(self, items: Iterable[ParsedTree | SkippedTree], document_id: int
             ) -> tuple[int, int, list[SkippedTree]]:
        """Insert every tree of `items` under `document_id`; returns trees, nodes, skipped."""
        flat: list[int] = []
        tree_batch: list = []
        skipped: list[SkippedTree] = []
        first_node = self.next_node
        forms = self.codes.forms
        for item in items:
            if isinstance(item, SkippedTree):
                skipped.append(item)
                continue
            rows, tokens = node_rows(item.root, self.next_tree, self.next_node, self.codes)
            flat.extend(NO_VALUE if value is None else value for row in rows for value in row)
            tree_batch.append((self.next_tree, item.ordinal, item.line, self.next_node,
                               self.next_node + len(rows) - 1, len(tokens), rows[0][10],
                               " ".join(map(forms.__getitem__, tokens))))
            self.next_node += len(rows)
            self.next_tree += 1
        links = self.annotate(flat, tree_batch)
        write_batch(self.conn, document_id, flat, tree_batch)
        write_links(self.conn, links)
        self.codes.flush(self.conn)
        counts = FileCounts()
        counts.add(flat, len(tree_batch))
        counts.words.pop(NO_VALUE, None)
        _add_counts(self.conn, "label", counts.labels.items())
        _add_counts(self.conn, "word", counts.words.items())
        return len(tree_batch), self.next_node - first_node, skipped


def write_batch(conn: sqlite3.Connection, document_id: int, flat, trees: list[tuple]) -> None:
    """Insert flat node rows (a list or array of ints) and tree rows of one document."""
    values = iter(flat)  # one iterator zipped with itself: C cuts it into row tuples
    conn.executemany(INSERT_FLAT_NODE, zip(*[values] * NODE_COLUMNS, strict=True))
    conn.executemany(INSERT_FILE_TREE.format(document=int(document_id)), trees)


def _add_counts(conn: sqlite3.Connection, table: str, counts: Iterable[tuple[int, int]]) -> None:
    """Keep label.n_nodes / word.n_nodes (planner statistics) in step with the nodes."""
    conn.executemany(f"UPDATE {table} SET n_nodes = n_nodes + ? WHERE code = ?",
                     [(n, code) for code, n in counts])


def _subtract_counts(conn: sqlite3.Connection, first: int, last: int) -> None:
    """Take the nodes first..last (about to be deleted) out of the statistics."""
    for table in ("label", "word"):
        counts = conn.execute(
            f"SELECT {table}, -count(*) FROM node WHERE id BETWEEN ? AND ?"
            f" AND {table} IS NOT NULL GROUP BY {table}", (first, last)
        ).fetchall()
        _add_counts(conn, table, counts)


def _delete_document_trees(conn: sqlite3.Connection, document_id: int) -> None:
    """Remove a document's trees and nodes (a document's nodes are one id range)."""
    first, last = conn.execute(
        "SELECT min(first_node), max(last_node) FROM tree WHERE document = ?", (document_id,),
    ).fetchone()
    if first is not None:
        _subtract_counts(conn, first, last)
        conn.execute("DELETE FROM node WHERE id BETWEEN ? AND ?", (first, last))
    conn.execute("DELETE FROM tree WHERE document = ?", (document_id,))


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


def _use_worker(files: list[Path], processes: int | None) -> bool:
    """Whether rows are built in a worker process: only where it pays for its start-up."""
    if processes is not None:
        return processes > 1
    if (os.cpu_count() or 1) < 2:
        return False
    return sum(path.stat().st_size for path in files) >= WORKER_MIN_BYTES


class _Run:
    """One call of index_paths: consumes the row messages (pipeline.py) as transactions.

    Each file runs in a savepoint, so a file that fails is rolled back whole; files are
    committed in groups of about COMMIT_NODES nodes (fewer commits rewrite the same
    pages less often), and whatever stops the run commits the files finished before it.
    """

    def __init__(self, conn, files, corpus_id, meta, strict, progress, rules):
        self.conn = conn
        self.rules = rules
        self.files = files
        self.corpus_id = corpus_id
        self.meta = dict(meta or {})
        self.strict = strict
        self.counts = Counter()
        self.skipped: list[SkippedTree] = []
        self.failed: list[tuple[str, str]] = []
        self.warnings: list[str] = []
        self.indexes_dropped = False
        self.in_transaction = False
        self.group_nodes = 0
        self.group_labels: Counter = Counter()
        self.group_words: Counter = Counter()
        self.file_open = False  # between a file's "begin" and its "done" / "failed"
        self.document_id = 0
        self.replacing = False
        self.started = time.perf_counter()
        self.bar = _progress_bar(len(files), progress)

    def messages(self, use_worker: bool):
        """The row messages of all files, from a worker process or built right here."""
        codes = CodeTables(self.conn)
        first_node = (self.conn.execute("SELECT max(id) FROM node").fetchone()[0] or 0) + 1
        first_tree = (self.conn.execute("SELECT max(id) FROM tree").fetchone()[0] or 0) + 1
        existing = dict(self.conn.execute(
            "SELECT path, sha256 FROM document WHERE corpus = ?", (self.corpus_id,)))
        if use_worker:
            return WorkerStream(self.files, existing, codes, first_node, first_tree, self.strict,
                                self.rules)
        return file_messages(self.files, existing, codes, first_node, first_tree, self.strict,
                             self.rules)

    def run(self, use_worker: bool) -> None:
        stream = self.messages(use_worker)
        try:
            for message in stream:
                getattr(self, "_on_" + message[0])(*message[1:])
        except BaseException:
            if self.file_open:  # the file being written goes, whole
                self._rollback_file()
            raise
        finally:
            if isinstance(stream, WorkerStream):
                stream.close()
            self.bar.close()
            self._commit()  # the files finished before whatever stopped the run
            self._finish()

    def _finish(self) -> None:
        if self.indexes_dropped:
            # sort runs of a big CREATE INDEX spill to temporary files on disk, not to
            # memory, so the peak memory of a build does not grow with the corpus
            temp_store = self.conn.execute("PRAGMA temp_store").fetchone()[0]
            self.conn.execute("PRAGMA temp_store=FILE")
            try:
                create_node_indexes(self.conn)
            finally:
                self.conn.execute(f"PRAGMA temp_store={int(temp_store)}")
        if self.counts["changed"]:
            # planner statistics; sampling bounds the cost on a big index
            self.conn.execute(f"PRAGMA analysis_limit={ANALYSIS_ROWS}")
            self.conn.execute("ANALYZE")
            # fold the write-ahead log into the file now rather than on a later commit
            self.conn.execute("PRAGMA wal_checkpoint(TRUNCATE)")

    # -- one handler per message (pipeline.py) ---------------------------------------

    def _on_unchanged(self, number: int) -> None:
        self.counts["documents_unchanged"] += 1
        self._file_done()

    def _on_begin(self, number: int, sha256: str) -> None:
        path = self.files[number]
        resolved = str(path.resolve())
        existing = self.conn.execute(
            "SELECT id FROM document WHERE corpus = ? AND path = ?", (self.corpus_id, resolved),
        ).fetchone()
        self._maybe_drop_indexes(number)
        self.counts["changed"] += 1
        if not self.in_transaction:
            self.conn.execute("BEGIN")
            self.in_transaction = True
        self.conn.execute("SAVEPOINT file")
        self.file_open = True  # from here on, whatever fails rolls the file back whole
        self.replacing = existing is not None
        self.document_id = self._document_row(path, resolved, sha256, existing)
        self.conn.execute("SAVEPOINT file_rows")

    def _on_rows(self, number: int, flat, trees: list[tuple], links: list[tuple]) -> None:
        write_batch(self.conn, self.document_id, flat, trees)
        write_links(self.conn, links)
        self._tick(len(flat) // NODE_COLUMNS, len(trees))

    def _on_restart(self, number: int) -> None:
        self.conn.execute("ROLLBACK TO file_rows")

    def _on_failed(self, number: int, fields: tuple) -> None:
        if self.file_open:
            self._rollback_file()
        self._fail(self.files[number], TreebankFormatError(*fields))
        self._file_done()

    def _on_done(self, number: int, counts: FileCounts, skipped: list[SkippedTree],
                 pending: tuple[list, list, list]) -> None:
        CodeTables.write_pending(self.conn, pending)
        self.conn.execute("UPDATE document SET n_trees = ?, n_skipped = ? WHERE id = ?",
                          (counts.trees, len(skipped), self.document_id))
        self.conn.execute("RELEASE file")
        self.file_open = False
        self.group_labels.update(counts.labels)
        self.group_words.update(counts.words)
        self.counts["documents_replaced" if self.replacing else "documents_added"] += 1
        self.counts["trees"] += counts.trees
        self.counts["nodes"] += counts.nodes
        self.skipped.extend(skipped)
        if counts.trees == 0 and not skipped:
            self.warnings.append(f"{self.files[number]}: no trees found (empty file?)")
        self.group_nodes += counts.nodes
        if self.group_nodes >= COMMIT_NODES:
            self._commit()
        self._file_done()

    def _on_end(self) -> None:
        pass

    # -- transactions ----------------------------------------------------------------

    def _rollback_file(self) -> None:
        self.file_open = False
        self.conn.execute("ROLLBACK TO file")
        self.conn.execute("RELEASE file")

    def _commit(self) -> None:
        """Commit the finished files of the group, with their planner statistics."""
        if not self.in_transaction:
            return
        try:
            self.group_words.pop(NO_VALUE, None)
            _add_counts(self.conn, "label", self.group_labels.items())
            _add_counts(self.conn, "word", self.group_words.items())
            self.conn.execute("COMMIT")
        except BaseException:
            self.conn.execute("ROLLBACK")
            raise
        finally:
            self.in_transaction = False
            self.group_nodes = 0
            self.group_labels.clear()
            self.group_words.clear()

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
            _delete_document_trees(self.conn, existing[0])
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

    def _maybe_drop_indexes(self, number: int) -> None:
        """Drop the node indexes before a load big enough that rebuilding them is cheaper."""
        if self.indexes_dropped or _node_index_count(self.conn) == 0:
            return
        # an upper bound that costs no table scan
        existing = self.conn.execute("SELECT max(id) FROM node").fetchone()[0] or 0
        incoming = sum(p.stat().st_size for p in self.files[number:]) // BYTES_PER_NODE_GUESS
        if incoming * 2 >= existing:
            drop_node_indexes(self.conn)
            self.indexes_dropped = True

    # -- progress --------------------------------------------------------------------

    def _file_done(self) -> None:
        self.bar.update(1)
        self._show_speed()

    def _tick(self, nodes: int, trees: int) -> None:
        self.counts["progress_nodes"] += nodes
        self.counts["progress_trees"] += trees
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
    # no checkpoints in the middle of a load; worker threads sort for CREATE INDEX. The
    # page cache stays at 64 MiB: a bigger one saved no time (appends, and sorts that
    # spill to disk) but raised the peak memory of a large build threefold (measured).
    tuned = {"cache_size": -65536, "synchronous": 1, "wal_autocheckpoint": 100_000,
             "threads": min(4, os.cpu_count() or 1)}
    old = {name: conn.execute(f"PRAGMA {name}").fetchone()[0] for name in tuned}
    for name, value in tuned.items():
        conn.execute(f"PRAGMA {name}={value}")
    return old


def _restore_pragmas(conn: sqlite3.Connection, old: dict[str, object]) -> None:
    for name, value in old.items():
        conn.execute(f"PRAGMA {name}={value}")


def _fresh_index_journal(conn: sqlite3.Connection) -> str | None:
    """For the first load into an empty index, a rollback journal instead of the
    write-ahead log; returns the mode to go back to (None: nothing changed).

    In a write-ahead log every page is written twice (log, then database); a rollback
    journal keeps only the old content of changed pages, and a load into an empty index
    only appends new ones. Per-file savepoints still roll back. (Nobody searches an index
    that is still empty, which is what the log is for.)
    """
    if conn.execute("SELECT EXISTS (SELECT 1 FROM node)").fetchone()[0]:
        return None
    old = conn.execute("PRAGMA journal_mode").fetchone()[0]
    if old != "wal" or conn.execute("PRAGMA journal_mode=TRUNCATE").fetchone()[0] == old:
        return None  # in memory, or another connection has the file open
    return old


def write_skip_report(report: IndexReport, report_file: str | Path) -> None:
    """One line per problem: file:line:column: message (whole-file failures as file:0:0)."""
    lines = [f"{s.source}:{s.line}:{s.column}: {s.message}" for s in report.skipped]
    lines += [message if message.startswith(path) else f"{path}:0:0: {message}"
              for path, message in report.failed_files]
    Path(report_file).write_text("".join(line + "\n" for line in lines), encoding="utf-8")


def index_paths(conn: sqlite3.Connection, paths: Iterable[str | Path] | str | Path,
                corpus: str = "default", meta: dict[str, str] | None = None,
                strict: bool = False, progress: bool = False,
                report_file: str | Path | None = None,
                processes: int | None = None,
                head_rules: str | Path | None = None) -> IndexReport:
    """Index bracketed files (files, directories, globs) into the open index `conn`.

    Each file is atomic: unchanged files are left alone, changed files are replaced,
    and a file that fails is rolled back whole. With strict=True the first problem
    raises TreebankFormatError (files finished before it stay indexed). `processes`:
    1 builds rows in this process, 2 in a worker process while this one writes; None
    chooses by input size (the index is the same either way).
    """
    if isinstance(paths, (str, Path)):
        paths = [paths]
    files = expand_paths(str(p) for p in paths)
    conn.commit()  # the caller's open transaction, if any, is not ours to roll back
    create_schema(conn)
    isolation, conn.isolation_level = conn.isolation_level, None  # we BEGIN/COMMIT ourselves
    old_journal = _fresh_index_journal(conn)
    old_pragmas = _bulk_pragmas(conn)
    try:
        rules = prepare_head_rules(conn, head_rules)
        run = _Run(conn, files, _corpus_id(conn, corpus), meta, strict, progress, rules)
        run.run(_use_worker(files, processes))
        annotate_index(conn)  # older trees, when the head rules changed
    finally:
        _restore_pragmas(conn, old_pragmas)
        if old_journal is not None:
            conn.execute(f"PRAGMA journal_mode={old_journal}")
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
        rules = prepare_head_rules(conn)
        conn.execute("BEGIN")
        corpus_id = _corpus_id(conn, corpus)
        document_id = conn.execute(
            "INSERT INTO document(corpus, path, name, size, sha256, indexed_at)"
            " VALUES (?,?,?,0,?,?)", (corpus_id, source, Path(source).name, digest, _now()),
        ).lastrowid
        trees, nodes, skipped = _Loader(conn, rules).load(items, document_id)
        conn.execute("UPDATE document SET n_trees = ?, n_skipped = ? WHERE id = ?",
                     (trees, len(skipped), document_id))
        conn.execute("COMMIT")
        annotate_index(conn)  # issue 4 hook: heads, c-command scopes, links
    except BaseException:
        if conn.in_transaction:
            conn.execute("ROLLBACK")
        raise
    finally:
        conn.isolation_level = isolation
    return IndexReport(documents_added=1, trees=trees, nodes=nodes, skipped=skipped,
                       seconds=time.perf_counter() - started)
