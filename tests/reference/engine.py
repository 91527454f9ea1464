"""Runs treequery's SQL engine and states its results the way the reference matcher does.

A result becomes (tree number in corpus order, pre-order index of each result
variable's node within its tree). Node ids in the index are global pre-order
numbers, so the in-tree index is `node id - tree.first_node`; the tree number
comes from the (file, ordinal in file) -> number map of the reference corpus.
"""
from __future__ import annotations

from pathlib import Path

from treequery.api import Treebank
from treequery.pattern.ast import Pattern

from .matcher import RefResult
from .nodes import RefTree

TreeKey = tuple[str, int]  # (resolved file path, 1-based ordinal in the file)


def tree_numbers(trees: list[RefTree]) -> dict[TreeKey, int]:
    """Where each reference tree sits in corpus order."""
    return {(tree.source, tree.ordinal): number for number, tree in enumerate(trees)}


def index_trees_info(bank: Treebank) -> dict[int, tuple[TreeKey, int]]:
    """tree id -> ((file path, ordinal), first node id), straight from the index tables."""
    rows = bank.conn.execute(
        "SELECT tree.id, document.path, tree.ordinal, tree.first_node "
        "FROM tree JOIN document ON document.id = tree.document").fetchall()
    return {tree_id: ((str(Path(path).resolve()), ordinal), first)
            for tree_id, path, ordinal, first in rows}


def engine_results(bank: Treebank, pattern: Pattern, numbers: dict[TreeKey, int],
                   count_empty: bool = False, trees_info: dict | None = None
                   ) -> set[RefResult]:
    """The engine's results for a pattern, in the reference matcher's terms."""
    info = trees_info if trees_info is not None else index_trees_info(bank)
    found: set[RefResult] = set()
    for result in bank.find(pattern, count_empty=count_empty):
        key, first_node = info[result.tree_id]
        nodes = tuple(result.bindings[name].id - first_node for name in pattern.result_vars)
        found.add((numbers[key], nodes))
    return found


def engine_count(bank: Treebank, pattern: Pattern, count_empty: bool = False) -> int:
    """How many results the engine counts (used by the benchmark)."""
    return bank.count(pattern, count_empty=count_empty).results
