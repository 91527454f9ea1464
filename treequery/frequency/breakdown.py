"""Breakdowns: counts per corpus, document or metadata value, normalised, with dispersion.

The search counts results per document in SQL (`results.fetch.count_per_document`);
every breakdown cell is a set of documents, so a cell's counts are sums over its
documents, and the documents are also the parts over which dispersion is measured.
"""
from __future__ import annotations

import sqlite3
from collections import defaultdict
from collections.abc import Iterable, Sequence
from dataclasses import dataclass

from treequery.errors import TreequeryError
from treequery.frequency import measures
from treequery.pattern.plan import Plan
from treequery.results.fetch import count_per_document, document_sizes, meta_keys, read_transaction
from treequery.results.model import DocumentCount, DocumentSize

PER_CORPUS = "corpus"
PER_DOCUMENT = "document"
ALL = "all"  # the one cell when there is no breakdown

# Stable column names of a frequency table, after the pattern name and the --by keys.
COUNT_COLUMNS = (
    "results",             # distinct results in the cell (and group)
    "trees",               # distinct trees with at least one of them
    "cell_trees",          # trees in the cell (denominator)
    "cell_tokens",         # overt tokens in the cell (denominator)
    "per_1000_trees",
    "per_million_tokens",
    "range",               # documents of the cell with at least one result
    "cell_documents",      # documents in the cell
    "dp",                  # Gries (2008) deviation of proportions over those documents
    "dp_norm",             # DP / (1 - smallest document share), Lijffijt & Gries (2012)
)


class BreakdownError(TreequeryError):
    """A breakdown or comparison asked of the index that cannot be made (bad key or side)."""


@dataclass(frozen=True, slots=True)
class CountJob:
    """One pattern to count: its name in a pattern set ('' for a lone pattern), plan, keys."""

    name: str
    plan: Plan
    keys: tuple[tuple[str, str], ...] = ()


@dataclass(frozen=True, slots=True)
class FrequencyRow:
    pattern: str            # the pattern's name in a pattern set, '' for a lone pattern
    cell: str | None        # corpus, document or metadata value; None: documents without it
    key: tuple              # the --by values
    results: int
    trees: int
    cell_trees: int
    cell_tokens: int
    per_1000_trees: float | None
    per_million_tokens: float | None
    range: int
    cell_documents: int
    dp: float | None
    dp_norm: float | None

    def values(self) -> tuple:
        return (self.results, self.trees, self.cell_trees, self.cell_tokens,
                self.per_1000_trees, self.per_million_tokens, self.range,
                self.cell_documents, self.dp, self.dp_norm)


@dataclass(frozen=True)
class FrequencyTable:
    """Counts of one or several patterns, per cell of a breakdown and per --by group."""

    per: str | None                # "corpus", "document", a metadata key, or None (one cell)
    by: tuple[str, ...]            # the --by keys as written
    named: bool                    # rows carry pattern names (a pattern set)
    rows: tuple[FrequencyRow, ...]

    @property
    def columns(self) -> list[str]:
        names = ["pattern"] if self.named else []
        return names + ["cell", *self.by, *COUNT_COLUMNS]

    def records(self) -> list[list]:
        """One list of values per row, in the order of `columns`."""
        out = []
        for row in self.rows:
            head = [row.pattern] if self.named else []
            out.append(head + [row.cell, *row.key, *row.values()])
        return out

    def to_json(self) -> dict:
        return {"per": self.per, "by": list(self.by), "columns": self.columns,
                "rows": [dict(zip(self.columns, values, strict=True))
                         for values in self.records()]}


def count_table(conn: sqlite3.Connection, jobs: Sequence[CountJob], per: str | None,
                by: Sequence[str] = (), named: bool = False,
                timeout: float | None = None) -> FrequencyTable:
    """Count every job per document, all on one snapshot of the index, and break down."""
    rows: list[FrequencyRow] = []
    with read_transaction(conn):
        documents = breakdown_documents(conn, per)
        for job in jobs:
            counts = count_per_document(conn, job.plan, job.keys, timeout=timeout)
            rows += frequency_rows(job.name, documents, counts, per, bool(job.keys))
    return FrequencyTable(per, tuple(by), named, tuple(rows))


def breakdown_documents(conn: sqlite3.Connection, per: str | None) -> list[DocumentSize]:
    """The documents with their sizes; for a metadata breakdown, check that the key exists."""
    if per in (None, PER_CORPUS, PER_DOCUMENT):
        return document_sizes(conn)
    keys = meta_keys(conn)
    if per not in keys:
        known = ", ".join(keys) or "none"
        raise BreakdownError(f"--per {per}: no document has the metadata key {per!r} "
                             f"(use corpus, document or a metadata key; keys in this "
                             f"index: {known})")
    return document_sizes(conn, per)


def cell_labels(documents: Sequence[DocumentSize], per: str | None) -> dict[int, str | None]:
    """The cell of each document id. Documents of the same name in two corpora stay apart."""
    if per is None:
        return {doc.id: ALL for doc in documents}
    if per == PER_CORPUS:
        return {doc.id: doc.corpus for doc in documents}
    if per == PER_DOCUMENT:
        seen = defaultdict(int)
        for doc in documents:
            seen[doc.name] += 1
        return {doc.id: doc.name if seen[doc.name] == 1 else f"{doc.corpus}/{doc.name}"
                for doc in documents}
    return {doc.id: doc.meta_value for doc in documents}


def frequency_rows(name: str, documents: Sequence[DocumentSize], counts: Iterable[DocumentCount],
                   per: str | None, grouped: bool) -> list[FrequencyRow]:
    """One row per cell (and per --by group seen in it); without groups every cell has a row."""
    cell_of = cell_labels(documents, per)
    members: dict[str | None, list[DocumentSize]] = defaultdict(list)
    for doc in documents:
        members[cell_of[doc.id]].append(doc)
    found: dict[tuple, dict[int, DocumentCount]] = defaultdict(dict)
    for count in counts:
        found[(cell_of[count.document], count.key)][count.document] = count
    rows = []
    for cell in sorted(members, key=_cell_order):
        keys = [key for (c, key) in found if c == cell] if grouped else [()]
        cell_rows = [cell_row(name, cell, key, members[cell], found.get((cell, key), {}))
                     for key in keys]
        rows += sorted(cell_rows, key=lambda r: (-r.results, _sortable(r.key)))
    return rows


def cell_row(name: str, cell: str | None, key: tuple, docs: Sequence[DocumentSize],
             by_document: dict[int, DocumentCount]) -> FrequencyRow:
    """Sums over the cell's documents, rates against its sizes, dispersion over them."""
    freqs = [by_document[doc.id].results if doc.id in by_document else 0 for doc in docs]
    results = sum(freqs)
    trees = sum(count.trees for count in by_document.values())
    cell_trees = sum(doc.trees for doc in docs)
    cell_tokens = sum(doc.tokens for doc in docs)
    dp, dp_norm = dispersion(freqs, [doc.tokens for doc in docs])
    return FrequencyRow(
        name, cell, key, results, trees, cell_trees, cell_tokens,
        measures.per_thousand(results, cell_trees), measures.per_million(results, cell_tokens),
        sum(1 for freq in freqs if freq), len(docs), dp, dp_norm)


def dispersion(freqs: Sequence[int], sizes: Sequence[int]) -> tuple[float | None, float | None]:
    """DP and normalised DP over documents; None for one document or none with tokens."""
    if len(freqs) < 2 or sum(sizes) == 0:
        return None, None
    return measures.dispersion_dp(freqs, sizes), measures.dispersion_dp_norm(freqs, sizes)


def _cell_order(cell: str | None) -> tuple:
    """Cells in alphabetical order, documents without the metadata key last."""
    return (cell is None, cell or "")


def _sortable(key: tuple) -> tuple:
    """Missing values after present ones (one attribute's values share one type)."""
    return tuple((v is None, v if v is not None else 0) for v in key)
