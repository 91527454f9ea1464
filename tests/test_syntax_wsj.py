"""Coindexation, c-command, empty subjects and head words on the WSJ sample.

The expected results come from the brute-force reference (tests/reference: NLTK
trees, relations written from their published definitions), never from the SQL
engine. Skipped when the shared corpora are absent.
"""
from __future__ import annotations

import sqlite3
import tempfile
from collections import Counter
from pathlib import Path

import pytest
from reference.engine import engine_results, index_trees_info, tree_numbers
from reference.matcher import match_corpus
from reference.nodes import RefTree, load_corpus

from treequery.api import Treebank
from treequery.pattern.parse import parse_pattern

pytestmark = pytest.mark.corpora


class _Wsj:
    def __init__(self, folder: Path, db: Path):
        self.trees: list[RefTree] = load_corpus(sorted(folder.glob("*.mrg")))
        self.numbers = tree_numbers(self.trees)
        self.bank = Treebank(db, readonly=True)
        self.info = index_trees_info(self.bank)

    def both(self, text: str) -> tuple[set, set]:
        pattern = parse_pattern(text)
        return (match_corpus(pattern, self.trees),
                engine_results(self.bank, pattern, self.numbers, False, self.info))


@pytest.fixture(scope="module")
def wsj(wsj_dir, wsj_db) -> _Wsj:
    return _Wsj(wsj_dir, wsj_db)


# Relative clauses: (NP (NP ...) (SBAR (WHNP-n ...) (S ... *T*-n ...))), Bies et al.
# 1995 (wh-movement is marked by coindexing the WH phrase with a *T* trace).
RELATIVE_CLAUSE = """
np:NP parent-of (SBAR (w:WHNP) (S))
w antecedent-of t:-NONE-
t.kind = "movement-trace"
"""


def test_relative_clauses_linked_to_their_trace(wsj):
    expected, got = wsj.both(RELATIVE_CLAUSE)
    assert len(expected) > 100  # the WSJ sample has hundreds of relative clauses
    assert got == expected
    # every such trace's word really carries the WHNP's index (Bies et al. 1995)
    for number, (_np, w, t) in expected:
        nodes = wsj.trees[number].nodes
        assert nodes[t].word.startswith("*T*-") and nodes[t].ref_index == nodes[w].coindex


# Binding theory, Principle A: a reflexive must be c-commanded by its antecedent
# (Reinhart 1976; Chomsky 1981). The English reflexive pronouns: common practice
# (list written from memory).
REFLEXIVE = ('s:NP-SBJ c-commands r:PRP; '
             'r.word ~ "^(?i:(my|your|him|her|it|our|them)sel(f|ves)|oneself)$"')


def test_subjects_that_c_command_a_reflexive(wsj):
    expected, got = wsj.both(REFLEXIVE)
    assert expected  # the sample has reflexives c-commanded by a subject
    assert got == expected


def test_silent_np_subjects(wsj):
    """NP subjects with only empty elements: PRO, and traces of raising and passive."""
    expected, got = wsj.both("n:NP-SBJ; n.silent")
    assert got == expected
    # the reference's answer, checked against the definition on the NLTK trees
    for number, (node,) in expected:
        tree = wsj.trees[number]
        leaves = [tree.nodes[i] for i in range(node, len(tree.nodes))
                  if tree.nodes[i].leaf_first >= tree.nodes[node].leaf_first
                  and tree.nodes[i].leaf_last <= tree.nodes[node].leaf_last
                  and tree.nodes[i].preterminal]
        assert leaves and all(leaf.empty for leaf in leaves)
    assert len(expected) > 1000  # Bies et al. 1995: every clause has a subject, often empty


def test_prepositional_phrases_by_the_head_word_of_their_object(wsj):
    pattern = "p:PP parent-of o:NP"
    expected = Counter()
    for number, (_p, o) in match_corpus(parse_pattern(pattern), wsj.trees):
        expected[wsj.trees[number].nodes[o].headword] += 1
    counted = wsj.bank.count(pattern, by=["o.headword"])
    got = Counter({group.key[0]: group.results for group in counted.groups})
    assert got == expected
    # Collins's NP rule makes the unit sign the head of "$ 15 million" (NP -> $ CD CD)
    assert expected["$"] > 0 and expected.most_common(1)[0][1] > 50


def test_bytes_per_node_stay_within_budget(wsj_db):
    """The whole index, head columns and links included, stays within 100 bytes a node."""
    with tempfile.TemporaryDirectory() as folder:
        copy = Path(folder) / "copy.db"
        source = sqlite3.connect(wsj_db)
        try:
            source.execute("VACUUM INTO ?", (str(copy),))
            (nodes,) = source.execute("SELECT count(*) FROM node").fetchone()
        finally:
            source.close()
        assert copy.stat().st_size / nodes <= 100
