"""Property test: on random trees and random pattern ASTs, the SQL engine and the
NLTK-based brute-force matcher return the same results.

Each example draws a small batch of trees (tests/reference/strategies.py), writes
them to one bracketed file, indexes it into a fresh SQLite file, and runs a few
random patterns through both sides, in both token modes.
"""
from __future__ import annotations

import itertools
import tempfile
from pathlib import Path

from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st
from nltk import Tree
from reference.engine import engine_results, index_trees_info, tree_numbers
from reference.matcher import match_corpus
from reference.nodes import build_ref_tree, split_tree_texts
from reference.strategies import any_patterns, tree_batches

from treequery.api import Treebank

_WORKDIR = Path(tempfile.mkdtemp(prefix="treequery-hypothesis-"))
_COUNTER = itertools.count()


def _index_batch(texts: list[str]) -> tuple[Treebank, Path]:
    """A fresh index holding one file with the given trees, one tree per line."""
    number = next(_COUNTER)
    tree_file = _WORKDIR / f"batch{number}.mrg"
    tree_file.write_text("\n".join(texts) + "\n", encoding="utf-8")
    bank = Treebank(_WORKDIR / f"batch{number}.db")
    report = bank.index([str(tree_file)])
    assert not report.skipped and not report.failed_files, report
    return bank, tree_file


def _reference_trees(tree_file: Path):
    """The same file read by NLTK, independently of treequery's reader."""
    text = tree_file.read_text(encoding="utf-8")
    source = str(tree_file.resolve())
    return [build_ref_tree(Tree.fromstring(chunk), source, ordinal)
            for ordinal, chunk in enumerate(split_tree_texts(text), start=1)]


@settings(max_examples=300, deadline=None,
          suppress_health_check=[HealthCheck.too_slow, HealthCheck.data_too_large])
@given(texts=tree_batches(), drawn=st.lists(any_patterns(), min_size=4, max_size=8),
       count_empty=st.booleans())
def test_random_patterns_on_random_trees(texts, drawn, count_empty):
    bank, tree_file = _index_batch(texts)
    try:
        trees = _reference_trees(tree_file)
        numbers = tree_numbers(trees)
        info = index_trees_info(bank)
        assert len(info) == len(trees) == len(texts)
        for pattern in drawn:
            expected = match_corpus(pattern, trees, count_empty)
            got = engine_results(bank, pattern, numbers, count_empty, info)
            assert got == expected, (pattern, texts)
    finally:
        bank.close()
        for suffix in ("", "-wal", "-shm"):
            Path(f"{tree_file.with_suffix('.db')}{suffix}").unlink(missing_ok=True)
        tree_file.unlink(missing_ok=True)
