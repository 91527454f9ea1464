"""Comparing two sides (corpora, documents, metadata values, index files): G², p, log ratio."""
from __future__ import annotations

import sqlite3
from collections import defaultdict
from collections.abc import Sequence
from dataclasses import dataclass

from treequery.frequency import measures
from treequery.frequency.breakdown import BreakdownError, cell_labels
from treequery.results.fetch import document_sizes, meta_keys
from treequery.results.model import DocumentCount, DocumentSize

SIDE_KINDS = ("corpus", "document", "index")  # any other word before ':' is a metadata key
ACCEPTED_SIDES = ("corpus:NAME, document:NAME, index:PATH (another index file) or "
                  "KEY:VALUE (a metadata key and its value, e.g. genre:letter)")

# Stable column names of a comparison, after the --by keys; X is a_ or b_.
SIDE_COLUMNS = ("side", "cell_documents", "cell_trees", "cell_tokens", "results", "trees",
                "per_1000_trees", "per_million_tokens")
STAT_COLUMNS = ("g2", "p_value", "log_ratio")


@dataclass(frozen=True, slots=True)
class Side:
    """One side of a comparison as written: `kind:value`, or `key:value` for metadata."""

    text: str
    kind: str               # corpus, document, index or meta
    value: str
    key: str | None = None  # the metadata key (kind meta)


def parse_side(text: str) -> Side:
    """`corpus:NAME`, `document:NAME`, `index:PATH` or `KEY:VALUE`; anything else is an error."""
    word, colon, value = text.partition(":")
    if not colon or not word or not value:
        raise BreakdownError(f"{text!r} is not a comparison side; expected {ACCEPTED_SIDES}")
    if word in SIDE_KINDS:
        return Side(text, word, value)
    return Side(text, "meta", value, word)


@dataclass(frozen=True)
class SideTotals:
    """What one side holds: its sizes, and results and trees per --by key."""

    side: str
    documents: frozenset[int]   # document ids (in the side's own index)
    index: str                  # path of the index the side belongs to
    trees: int
    tokens: int
    results: dict[tuple, int]
    result_trees: dict[tuple, int]


def side_documents(conn: sqlite3.Connection, side: Side) -> list[DocumentSize]:
    """The documents a side names; an error lists what the index has when none match."""
    documents = document_sizes(conn, side.key)
    if side.kind == "index":
        chosen = documents
    elif side.kind == "corpus":
        chosen = [doc for doc in documents if doc.corpus == side.value]
    elif side.kind == "document":
        names = cell_labels(documents, "document")
        chosen = [doc for doc in documents if side.value in (doc.name, names[doc.id])]
    else:
        if side.key not in meta_keys(conn):
            raise BreakdownError(f"{side.text}: no document has the metadata key {side.key!r} "
                                 f"(keys: {', '.join(meta_keys(conn)) or 'none'}); a side is "
                                 f"{ACCEPTED_SIDES}")
        chosen = [doc for doc in documents if doc.meta_value == side.value]
    if not chosen:
        raise BreakdownError(f"{side.text}: no document matches; {side.key or side.kind} "
                             f"values in this "
                             f"index: {', '.join(_values(documents, side)) or 'none'}")
    return chosen


def _values(documents: Sequence[DocumentSize], side: Side) -> list[str]:
    if side.kind == "corpus":
        found = {doc.corpus for doc in documents}
    elif side.kind == "document":
        found = set(cell_labels(documents, "document").values())
    else:
        found = {doc.meta_value for doc in documents if doc.meta_value is not None}
    return sorted(found)


def side_totals(side: Side, index: str, documents: Sequence[DocumentSize],
                counts: Sequence[DocumentCount]) -> SideTotals:
    """Sum the per-document counts over the side's documents."""
    ids = frozenset(doc.id for doc in documents)
    results: dict[tuple, int] = defaultdict(int)
    trees: dict[tuple, int] = defaultdict(int)
    for count in counts:
        if count.document in ids:
            results[count.key] += count.results
            trees[count.key] += count.trees
    return SideTotals(side.text, ids, index, sum(doc.trees for doc in documents),
                      sum(doc.tokens for doc in documents), dict(results), dict(trees))


@dataclass(frozen=True, slots=True)
class ComparisonRow:
    key: tuple
    a_results: int
    a_trees: int
    b_results: int
    b_trees: int
    a_per_1000_trees: float | None
    a_per_million_tokens: float | None
    b_per_1000_trees: float | None
    b_per_million_tokens: float | None
    g2: float | None            # None when a side has no tokens
    p_value: float | None
    log_ratio: float | None


@dataclass(frozen=True)
class Comparison:
    a: SideTotals
    b: SideTotals
    by: tuple[str, ...]
    rows: tuple[ComparisonRow, ...]   # sorted by G², largest first

    @property
    def columns(self) -> list[str]:
        sides = [f"{x}_{name}" for x in "ab" for name in SIDE_COLUMNS]
        return [*self.by, *sides, *STAT_COLUMNS]

    def records(self) -> list[list]:
        out = []
        for row in self.rows:
            a = [self.a.side, len(self.a.documents), self.a.trees, self.a.tokens,
                 row.a_results, row.a_trees, row.a_per_1000_trees, row.a_per_million_tokens]
            b = [self.b.side, len(self.b.documents), self.b.trees, self.b.tokens,
                 row.b_results, row.b_trees, row.b_per_1000_trees, row.b_per_million_tokens]
            out.append([*row.key, *a, *b, row.g2, row.p_value, row.log_ratio])
        return out

    def to_json(self) -> dict:
        return {"a": self.a.side, "b": self.b.side, "by": list(self.by),
                "columns": self.columns,
                "rows": [dict(zip(self.columns, values, strict=True))
                         for values in self.records()]}


def compare_sides(a: SideTotals, b: SideTotals, by: Sequence[str] = ()) -> Comparison:
    """One row per --by group found on either side (one row without --by), by G² descending."""
    if a.index == b.index and a.documents & b.documents:
        shared = len(a.documents & b.documents)
        raise BreakdownError(f"{a.side} and {b.side} share {shared} document(s); the "
                             "comparison needs two separate sets of documents")
    keys = set(a.results) | set(b.results) if by else {()}
    rows = [comparison_row(key, a, b) for key in keys]
    rows.sort(key=lambda r: (r.g2 is None, -(r.g2 or 0.0), _sortable(r.key)))
    return Comparison(a, b, tuple(by), tuple(rows))


def comparison_row(key: tuple, a: SideTotals, b: SideTotals) -> ComparisonRow:
    freq_a, freq_b = a.results.get(key, 0), b.results.get(key, 0)
    g2 = p_value = ratio = None
    if a.tokens > 0 and b.tokens > 0:
        g2 = measures.log_likelihood(freq_a, freq_b, a.tokens, b.tokens)
        p_value = measures.g2_p_value(g2)
        ratio = measures.log_ratio(freq_a, freq_b, a.tokens, b.tokens)
    return ComparisonRow(
        key, freq_a, a.result_trees.get(key, 0), freq_b, b.result_trees.get(key, 0),
        measures.per_thousand(freq_a, a.trees), measures.per_million(freq_a, a.tokens),
        measures.per_thousand(freq_b, b.trees), measures.per_million(freq_b, b.tokens),
        g2, p_value, ratio)


def _sortable(key: tuple) -> tuple:
    return tuple((v is None, v if v is not None else 0) for v in key)
