"""Property tests of the numbering: random trees in, the same trees and sound intervals out."""
from __future__ import annotations

import sqlite3

from hypothesis import given, settings
from hypothesis import strategies as st
from nltk import Tree

from index.tree_encoding import encode_nltk, encode_parsed
from treequery.index.builder import index_trees
from treequery.index.schema import create_schema
from treequery.index.trees import load_tree, to_brackets
from treequery.read.model import ParsedNode, ParsedTree

# A small alphabet in Treebank II style (Bies et al. 1995; written from memory):
# function tags, coindices, gapping indices, the ambiguity label, -NONE- leaves,
# and the bracket escapes of the Penn files (-LRB- also inside a word).
PHRASE_LABELS = ("S", "NP", "VP", "NP-SBJ-1", "PP-LOC=2", "ADVP|PRT", "WHNP-3", "SBAR")
TAGS = ("NN", "DT", "VBZ", ",", "-LRB-", "-NONE-", "NNP", "-NONE-")
WORDS = ("dog", "the", "-LRB-", "a-RRB-", "*T*-1", "0", "*", "runs", "é")

preterminals = st.builds(lambda tag, word: ParsedNode(tag, word=word),
                         st.sampled_from(TAGS), st.sampled_from(WORDS))
subtrees = st.recursive(
    preterminals,
    lambda children: st.builds(lambda label, kids: ParsedNode(label, children=kids),
                               st.sampled_from(PHRASE_LABELS),
                               st.lists(children, min_size=1, max_size=4)),
    max_leaves=25,
)


@st.composite
def roots(draw) -> ParsedNode:
    """A tree, sometimes under the unlabelled outer bracket of Penn files."""
    tree = draw(subtrees)
    if tree.word is None and draw(st.booleans()):
        return ParsedNode("", children=[tree])
    return tree


def _index(trees: list[ParsedNode]) -> sqlite3.Connection:
    conn = sqlite3.connect(":memory:")
    create_schema(conn)
    parsed = [ParsedTree(root, "<test>", line=k + 1, ordinal=k + 1)
              for k, root in enumerate(trees)]
    index_trees(conn, parsed)
    return conn


def _tree_ids(conn) -> list[int]:
    return [tree_id for (tree_id,) in conn.execute("SELECT id FROM tree ORDER BY ordinal")]


def _paths(root: ParsedNode) -> list[tuple[tuple[int, ...], ParsedNode]]:
    """(path, node) in pre-order, the path being the child indexes from the root."""
    out, stack = [], [((), root)]
    while stack:
        path, node = stack.pop()
        out.append((path, node))
        stack.extend((path + (k,), child) for k, child in reversed(list(enumerate(node.children))))
    return out


@settings(max_examples=150, deadline=None)
@given(st.lists(roots(), min_size=1, max_size=4))
def test_random_trees_are_rebuilt_identically(trees):
    conn = _index(trees)
    for tree_id, original in zip(_tree_ids(conn), trees, strict=True):
        assert encode_parsed(load_tree(conn, tree_id)) == encode_parsed(original)


@settings(max_examples=150, deadline=None)
@given(roots())
def test_interval_dominance_agrees_with_path_prefixes(root):
    conn = _index([root])
    (first,) = conn.execute("SELECT first_node FROM tree").fetchone()
    paths = _paths(root)
    rows = conn.execute(
        "SELECT id, last, parent, depth, position, n_children FROM node ORDER BY id").fetchall()
    assert len(rows) == len(paths)
    id_of = {path: first + k for k, (path, _) in enumerate(paths)}
    for (path, node), (node_id, _last, parent, depth, position, n_children) in zip(
            paths, rows, strict=True):
        assert node_id == id_of[path]
        assert parent == (id_of[path[:-1]] if path else None)
        assert depth == len(path)
        assert position == (path[-1] + 1 if path else 1)
        assert n_children == len(node.children)
    for a_path, _ in paths:
        a_id, a_last = rows[id_of[a_path] - first][:2]
        for b_path, _ in paths:
            b_id = id_of[b_path]
            dominates = a_id < b_id <= a_last
            assert dominates == (len(a_path) < len(b_path) and b_path[:len(a_path)] == a_path)


@settings(max_examples=150, deadline=None)
@given(roots())
def test_leaf_and_token_spans_agree_with_leaf_positions(root):
    conn = _index([root])
    paths = _paths(root)
    leaves = [(path, node) for path, node in paths if node.word is not None]
    # common practice (Penn Treebank): a leaf is an empty element iff its tag is -NONE-
    overt = [path for path, node in leaves if node.label != "-NONE-"]
    rows = conn.execute(
        "SELECT leaf_first, leaf_last, tok_first, tok_last FROM node ORDER BY id").fetchall()
    for (path, _), row in zip(paths, rows, strict=True):
        covered = [k + 1 for k, (leaf, _) in enumerate(leaves) if leaf[:len(path)] == path]
        tokens = [k + 1 for k, leaf in enumerate(overt) if leaf[:len(path)] == path]
        expected = (min(covered), max(covered),
                    min(tokens) if tokens else None, max(tokens) if tokens else None)
        assert row == expected
    n_tokens, n_leaves, text = conn.execute(
        "SELECT n_tokens, n_leaves, text FROM tree").fetchone()
    assert (n_tokens, n_leaves) == (len(overt), len(leaves))
    # un-escaping per the Penn bracket escapes: -LRB- is "(", -RRB- is ")"
    words = [node.word.replace("-LRB-", "(").replace("-RRB-", ")")
             for _, node in leaves if node.label != "-NONE-"]
    assert text == " ".join(words)


@settings(max_examples=100, deadline=None)
@given(roots(), st.booleans())
def test_printed_brackets_read_back_with_nltk(root, indent):
    # Reference library: nltk.Tree.fromstring must read our bracket notation back.
    assert encode_nltk(Tree.fromstring(to_brackets(root, indent))) == encode_parsed(root)


def test_a_very_deep_tree_is_indexed_and_rebuilt():
    # Deeper than Python's recursion limit: the builder and printer are iterative.
    root = node = ParsedNode("S")
    for _ in range(5000):
        child = ParsedNode("S")
        node.children = [child, ParsedNode("NN", word="x")]
        node = child
    node.children = [ParsedNode("NN", word="end")]
    conn = _index([root])
    rebuilt = load_tree(conn, _tree_ids(conn)[0])
    assert encode_parsed(rebuilt) == encode_parsed(root)
    assert to_brackets(rebuilt, indent=False) == to_brackets(root, indent=False)
    depth, leaf_first, leaf_last = conn.execute(
        "SELECT max(depth), min(leaf_first), max(leaf_last) FROM node").fetchone()
    assert (depth, leaf_first, leaf_last) == (5001, 1, 5001)


def test_label_and_word_tables_hold_the_decomposition():
    # Treebank II labels (Bies et al. 1995): NP-SBJ-1 is category NP, function SBJ,
    # coindex 1; PP-LOC=2 has gapping index 2; ADVP|PRT is one ambiguity label.
    root = ParsedNode("S", children=[
        ParsedNode("NP-SBJ-1", children=[ParsedNode("-NONE-", word="*T*-1")]),
        ParsedNode("PP-LOC=2", children=[ParsedNode("NN", word="-LRB-a-RRB-")]),
        ParsedNode("ADVP|PRT", children=[ParsedNode("RB", word="up")]),
    ])
    conn = _index([root])
    labels = {row[0]: row[1:] for row in conn.execute(
        "SELECT text, category, functions, coindex, gapindex, n_nodes FROM label")}
    assert labels["NP-SBJ-1"] == ("NP", "SBJ", 1, None, 1)
    assert labels["PP-LOC=2"] == ("PP", "LOC", None, 2, 1)
    assert labels["ADVP|PRT"] == ("ADVP|PRT", "", None, None, 1)
    words = {row[0]: row[1:] for row in conn.execute(
        "SELECT text, form, empty_kind, ref_index FROM word")}
    assert words["*T*-1"][1:] == ("movement-trace", 1)
    assert words["-LRB-a-RRB-"] == ("(a)", None, None)
