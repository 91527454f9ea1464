"""Property test for coindexation, c-command, heads, spans and edges on random trees.

Random patterns (test_hypothesis_differential.py) rarely meet two coindexed nodes;
here every new relation is compared over ALL node pairs of random trees, and every
new attribute over all nodes, between the SQL engine and the brute-force reference
(tests/reference: NLTK trees, each relation written from its published definition).
"""
from __future__ import annotations

import itertools
import tempfile
from collections import Counter
from pathlib import Path

from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st
from nltk import Tree
from reference.engine import engine_results, index_trees_info, tree_numbers
from reference.matcher import match_corpus
from reference.nodes import build_ref_tree, split_tree_texts
from reference.strategies import tree_batches

from treequery.api import Treebank
from treequery.pattern.ast import (
    And,
    AnyLabel,
    NodeTest,
    NodeVar,
    Pattern,
    Relation,
    Span,
)

NOWHERE = Span(0, 0)
KINDS = ("coindexed-with", "antecedent-of", "correspondent-of", "c-commands", "head-of",
         "lexical-head-of", "same-span-as", "starts-with", "ends-with")
VALUE_ATTRIBUTES = ("kind", "refindex", "headword", "headtag", "silent")
_WORKDIR = Path(tempfile.mkdtemp(prefix="treequery-hypothesis-syntax-"))
_COUNTER = itertools.count()


def _all_pairs(kind: str) -> Pattern:
    """`a:* KIND b:*` with both nodes reported: every pair in the relation."""
    variables = tuple(NodeVar(name, NodeTest(AnyLabel()), True, NOWHERE) for name in "ab")
    return Pattern("<generated>", variables, And((Relation(kind, "a", "b", NOWHERE),)),
                   ("a", "b"))


def _index(texts: list[str]) -> tuple[Treebank, Path]:
    number = next(_COUNTER)
    tree_file = _WORKDIR / f"batch{number}.mrg"
    tree_file.write_text("\n".join(texts) + "\n", encoding="utf-8")
    bank = Treebank(_WORKDIR / f"batch{number}.db")
    bank.index([str(tree_file)])
    return bank, tree_file


@settings(max_examples=150, deadline=None,
          suppress_health_check=[HealthCheck.too_slow, HealthCheck.data_too_large])
@given(texts=tree_batches(), count_empty=st.booleans())
def test_new_relations_and_attributes_over_all_nodes(texts, count_empty):
    bank, tree_file = _index(texts)
    try:
        source = str(tree_file.resolve())
        trees = [build_ref_tree(Tree.fromstring(chunk), source, ordinal) for ordinal, chunk
                 in enumerate(split_tree_texts(tree_file.read_text(encoding="utf-8")), 1)]
        numbers, info = tree_numbers(trees), index_trees_info(bank)
        for kind in KINDS:
            pattern = _all_pairs(kind)
            expected = match_corpus(pattern, trees, count_empty)
            got = engine_results(bank, pattern, numbers, count_empty, info)
            assert got == expected, (kind, texts)
        for attribute in VALUE_ATTRIBUTES:
            expected_counts = Counter(node.attribute(attribute) for tree in trees
                                      for node in tree.nodes)
            counted = bank.count("x:*", by=[f"x.{attribute}"])
            got_counts = Counter({group.key[0]: group.results for group in counted.groups})
            if attribute == "silent":  # yes/no keys may come back as 0/1
                got_counts = Counter({bool(k): n for k, n in got_counts.items()})
            assert got_counts == expected_counts, (attribute, texts)
    finally:
        bank.close()
        for suffix in ("", "-wal", "-shm"):
            Path(f"{tree_file.with_suffix('.db')}{suffix}").unlink(missing_ok=True)
        tree_file.unlink(missing_ok=True)
