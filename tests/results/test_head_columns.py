"""Head words and tags in result exports equal the reference head finder's (Collins 1999 rules).

The reference (tests/reference/nodes.py + heads.py) finds heads on NLTK trees with its
own implementation of the head-rule algorithm; it shares only the rule table.
"""
from __future__ import annotations

from reference.engine import index_trees_info, tree_numbers
from reference.nodes import load_corpus

from treequery import Treebank


def test_exported_head_words_match_the_reference(demo_db, demo_dir):
    trees = load_corpus(sorted(demo_dir.glob("*.mrg")))
    numbers = tree_numbers(trees)
    bank = Treebank(demo_db, readonly=True)
    info = index_trees_info(bank)
    checked = 0
    for result in bank.find("p:PP parent-of o:NP"):
        key, first_node = info[result.tree_id]
        tree = trees[numbers[key]]
        for node in result.bindings.values():
            expected = tree.nodes[node.id - first_node]
            assert (node.head_word, node.head_tag) == (expected.headword, expected.headtag)
            checked += 1
    assert checked > 100
