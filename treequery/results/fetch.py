"""Running a planned search: streaming results, counting them, and explaining the plan."""
from __future__ import annotations

import sqlite3
import time
from collections.abc import Callable, Iterator, Sequence
from contextlib import contextmanager
from itertools import islice
from typing import TypeVar

from treequery.errors import SearchTimeout, TreequeryError
from treequery.pattern.ast import ATTRIBUTES
from treequery.pattern.plan import Plan
from treequery.pattern.sql import (
    DOCUMENT_SIZES_SQL,
    LABEL_TEXT_SQL,
    META_KEYS_SQL,
    NODE_DETAILS_SQL,
    NODE_HEAD_SQL,
    NODE_WORDS_SQL,
    TREE_LOCATION_SQL,
    count_needs_chunks,
    count_sql,
    document_count_sql,
    explain_query_plan,
    new_search,
    page_sql,
    parse_by,
    register_functions,
    sql_aliases,
    to_sql,
    translate_error,
)
from treequery.results.partner import Partner
from treequery.results import split
from treequery.results.split import chunks, in_windows, windows
from treequery.results.model import (
    BoundNode,
    CountGroup,
    CountResult,
    DocumentCount,
    DocumentSize,
    Result,
)

T = TypeVar("T")
PROGRESS_EVERY = 1000  # SQLite virtual-machine steps between two clock checks
FETCH_BATCH = 256


class _SearchClock:
    """Enforces a time limit on the time spent inside SQLite for one search.

    Only time inside `run` counts, so a slow consumer of streamed results does not
    use up the search's budget. The progress handler is removed on close.
    """

    def __init__(self, conn: sqlite3.Connection, timeout: float | None,
                 spent: float = 0.0, limit: float | None = None):
        # `spent`: time already used by earlier parts of the same search; `limit`: the
        # limit to name in the message (the whole search's)
        self.conn, self.timeout = conn, timeout
        self.limit = timeout if limit is None else limit
        self.spent = spent
        self.since: float | None = None

    def _expired(self) -> int:
        if self.since is None:
            return 0
        return int(self.spent + time.monotonic() - self.since > self.timeout)

    def __enter__(self) -> _SearchClock:
        register_functions(self.conn)
        new_search()
        if self.timeout is not None:
            self.conn.set_progress_handler(self._expired, PROGRESS_EVERY)
        return self

    def __exit__(self, *exc) -> None:
        if self.timeout is not None:
            self.conn.set_progress_handler(None, 0)

    def run(self, call: Callable[..., T], *args) -> T:
        self.since = time.monotonic()
        try:
            return call(*args)
        except sqlite3.OperationalError as err:
            if self.timeout is not None and self._expired():
                raise SearchTimeout(
                    f"the search took longer than its time limit of {self.limit:g} s "
                    f"and was stopped (make the pattern more specific or raise the limit)"
                ) from None
            raise translate_error(err) from err
        finally:
            self.spent += time.monotonic() - self.since
            self.since = None


# ---------------------------------------------------------------- results

def fetch_results(conn: sqlite3.Connection, plan: Plan, limit: int | None = None,
                  offset: int = 0, timeout: float | None = None) -> Iterator[Result]:
    """Stream the distinct results of a plan in corpus order.

    On a large index the search runs in growing windows of whole trees (split.py), so
    the first results arrive without waiting for the whole search.
    """
    names = plan.pattern.result_vars
    with _SearchClock(conn, timeout) as clock:
        locations: dict[int, tuple] = {}
        for row in _result_rows(conn, plan, clock, limit, offset):
            yield _result(conn, names, row, locations)


def _result_rows(conn: sqlite3.Connection, plan: Plan, clock: _SearchClock,
                 limit: int | None, offset: int) -> Iterator[tuple]:
    ranges = windows(conn)
    if ranges is None:
        sql, params = page_sql(plan, limit, offset)
        yield from _cursor_rows(conn, clock, sql, params)
        return
    sql, params = to_sql(plan, window=True)
    rows = in_windows(ranges, lambda span: _cursor_rows(conn, clock, sql, [*span, *params[2:]]))
    yield from islice(rows, offset, None if limit is None else offset + limit)


def _cursor_rows(conn: sqlite3.Connection, clock: _SearchClock, sql: str, params: list
                 ) -> Iterator[tuple]:
    cursor = clock.run(conn.execute, sql, params)
    while rows := clock.run(cursor.fetchmany, FETCH_BATCH):
        yield from rows


def _result(conn: sqlite3.Connection, names: Sequence[str], row: tuple,
            locations: dict[int, tuple]) -> Result:
    tree_id = row[-1]
    if tree_id not in locations:
        locations.clear()  # results come in corpus order: one tree at a time
        locations[tree_id] = conn.execute(TREE_LOCATION_SQL, (tree_id,)).fetchone()
    _, name, path, line, ordinal = locations[tree_id]
    ids = zip(names, row[:-1], strict=True)
    bindings = {var: bound_node(conn, node_id) for var, node_id in ids}
    return Result(tree_id, name, path, line, ordinal, bindings)


def bound_node(conn: sqlite3.Connection, node_id: int) -> BoundNode:
    """The details of one node shown with a result."""
    node, last, _, label, category, functions, tok_first, tok_last = conn.execute(
        NODE_DETAILS_SQL, (node_id,)).fetchone()
    words = " ".join(form for (form,) in conn.execute(NODE_WORDS_SQL, (node, last)))
    head = conn.execute(NODE_HEAD_SQL, (node,)).fetchone() or (None, None)
    return BoundNode(node, label, category, functions, tok_first, tok_last, words, *head)


# ---------------------------------------------------------------- counting

def count_results(conn: sqlite3.Connection, plan: Plan, by=(),
                  timeout: float | None = None,
                  partner: Callable[[], Partner | None] | None = None) -> CountResult:
    """Count distinct results and trees; with `by`, group results by attribute values.

    `by` holds ("var", "attr") pairs or "var.attr" strings. Groups are sorted by
    number of results (most first), then by key. A large index is counted in chunks of
    whole trees (split.py), which bound the memory a grouped count needs; `partner`
    gives a process that counts every other chunk meanwhile (partner.py).
    """
    keys = parse_by(plan, by)
    ranges = chunks(conn) if count_needs_chunks(plan, keys) else None
    if ranges is None:
        sql, params = count_sql(plan, keys)
        rows = _count_rows(conn, sql, params, timeout)
    else:
        sql, params = count_sql(plan, keys, window=True)
        helper = partner() if partner is not None else None
        mine, theirs = (ranges, []) if helper is None else (ranges[0::2], ranges[1::2])
        if theirs:
            helper.submit(sql, params, theirs, timeout, 0.0)
        started = time.monotonic()  # the chunks share the search's time limit
        parts = [count_chunk(conn, sql, params, span, timeout, time.monotonic() - started)
                 for span in mine]
        if theirs:
            parts += helper.result()
        rows = _merge_count_rows(parts, len(keys))
    labels = tuple(f"{var}.{attr}" for var, attr in keys)
    if not keys:
        results, trees = rows[0]
        return CountResult(results, trees, labels, ())
    if not rows:
        return CountResult(0, 0, labels, ())
    bools = [ATTRIBUTES[attr] == "bool" for _, attr in keys]
    groups = [CountGroup(_key(row[:len(keys)], bools), row[len(keys)]) for row in rows]
    groups.sort(key=lambda g: (-g.results, _sortable(g.key)))
    results, trees = rows[0][len(keys) + 1], rows[0][len(keys) + 2]
    return CountResult(results, trees, labels, tuple(groups))


def count_chunk(conn: sqlite3.Connection, sql: str, params: list, span: tuple[int, int],
                timeout: float | None, spent: float) -> list[tuple]:
    """The rows of a windowed count_sql statement for one chunk of whole trees."""
    return _count_rows(conn, sql, [*span, *params[2:]], timeout, spent)


def _count_rows(conn: sqlite3.Connection, sql: str, params: list,
                timeout: float | None, spent: float = 0.0) -> list[tuple]:
    with _SearchClock(conn, timeout, spent) as clock:
        return clock.run(lambda: conn.execute(sql, params).fetchall())


def _merge_count_rows(parts: list[list[tuple]], n_keys: int) -> list[tuple]:
    """The rows of count_sql for the whole index from those of disjoint parts of it."""
    if not n_keys:
        return [tuple(map(sum, zip(*(rows[0] for rows in parts), strict=True)))]
    groups: dict[tuple, int] = {}
    for rows in parts:
        for row in rows:
            groups[row[:n_keys]] = groups.get(row[:n_keys], 0) + row[n_keys]
    results = sum(rows[0][n_keys + 1] for rows in parts if rows)
    trees = sum(rows[0][n_keys + 2] for rows in parts if rows)
    return [(*key, n, results, trees) for key, n in groups.items()]


def count_per_document(conn: sqlite3.Connection, plan: Plan, by=(),
                       timeout: float | None = None) -> list[DocumentCount]:
    """Results and distinct trees per document (and per `by` key), counted by one statement."""
    keys = parse_by(plan, by)
    sql, params = document_count_sql(plan, keys)
    with _SearchClock(conn, timeout) as clock:
        rows = clock.run(lambda: conn.execute(sql, params).fetchall())
    bools = [ATTRIBUTES[attr] == "bool" for _, attr in keys]
    return [DocumentCount(row[0], _key(row[1:-2], bools), row[-2], row[-1]) for row in rows]


def document_sizes(conn: sqlite3.Connection, meta_key: str | None = None) -> list[DocumentSize]:
    """Every document with its trees and tokens and the value of metadata `meta_key`."""
    path = None if meta_key is None else meta_path(meta_key)
    rows = conn.execute(DOCUMENT_SIZES_SQL, (path,)).fetchall()
    return [DocumentSize(doc, corpus, name, None if value is None else str(value), trees, tokens)
            for doc, corpus, name, value, trees, tokens in rows]


def meta_keys(conn: sqlite3.Connection) -> list[str]:
    """The metadata keys any document of the index has."""
    return [key for (key,) in conn.execute(META_KEYS_SQL)]


def meta_path(key: str) -> str:
    """The JSON path of a top-level metadata key (passed to SQLite as a parameter)."""
    if not key or '"' in key:
        raise TreequeryError(f"{key!r} cannot be a metadata key (empty, or contains a quote)")
    return f'$."{key}"'


@contextmanager
def read_transaction(conn: sqlite3.Connection) -> Iterator[None]:
    """Run several reads on one snapshot of the index (no writer can slip in between)."""
    if conn.in_transaction:
        yield
        return
    conn.execute("BEGIN")
    try:
        yield
    finally:
        conn.execute("COMMIT")


def _key(values: Sequence, bools: Sequence[bool]) -> tuple:
    pairs = zip(values, bools, strict=True)
    return tuple(bool(v) if is_bool and v is not None else v for v, is_bool in pairs)


def _sortable(key: tuple) -> tuple:
    """Missing values sort after present ones."""
    return tuple((v is None, v if v is not None else 0) for v in key)


# ---------------------------------------------------------------- explain

def explain_text(conn: sqlite3.Connection, plan: Plan) -> str:
    """The chosen join order with its estimates, the SQL and parameters, SQLite's plan."""
    register_functions(conn)
    sql, params = to_sql(plan)
    aliases = ", ".join(f"{alias} = {name}" for name, alias in sql_aliases(plan).items())
    lines = [plan.describe(), "", *_execution_lines(conn), "", "SQL:", f"  {sql}",
             f"aliases: {aliases}", "parameters:"]
    lines += [f"  ?{i} = {value!r}" for i, value in enumerate(params, 1)] or ["  (none)"]
    lines += _label_code_lines(conn, plan)
    lines += ["", "SQLite query plan:"]
    depth: dict[int, int] = {0: 0}
    for node_id, parent, detail in explain_query_plan(conn, sql, params):
        depth[node_id] = depth.get(parent, 0) + 1
        lines.append("  " * depth[node_id] + detail)
    return "\n".join(lines)


def _execution_lines(conn: sqlite3.Connection) -> list[str]:
    """How `find` and `count` run this plan on this index (split.py)."""
    found, counted = windows(conn), chunks(conn)
    find = ("one statement (a small index)" if found is None else
            f"{len(found)} windows of whole trees in corpus order, the first of "
            f"{split.WINDOW_FIRST_TREES} trees, each next {split.WINDOW_GROWTH} times larger: "
            f"the first results come without the whole search")
    count = ("one statement (a small index)" if counted is None else
             f"{len(counted)} chunks of whole trees, every other one counted by a second "
             f"process when there is a second core; a grouped count holds one chunk's rows "
             f"at a time")
    return ["execution:", f"  find: {find}", f"  count: {count}"]


CODES_SHOWN = 12  # label codes listed per variable in `explain`


def _label_code_lines(conn: sqlite3.Connection, plan: Plan) -> list[str]:
    """Which labels the label codes passed as parameters stand for."""
    lines = []
    for name, codes in plan.code_lists:
        if not codes:
            continue
        shown = [f"{code} = {conn.execute(LABEL_TEXT_SQL, (code,)).fetchone()[0]!r}"
                 for code in codes[:CODES_SHOWN]]
        more = f", ... ({len(codes)} codes)" if len(codes) > CODES_SHOWN else ""
        lines.append(f"  {name}: {', '.join(shown)}{more}")
    return ["label codes (the labels a node test names, from the label table):"] + lines \
        if lines else []
