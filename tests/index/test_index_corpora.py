"""The index of the real treebanks: published counts, and every tree rebuilt as NLTK reads it."""
from __future__ import annotations

from bisect import bisect_left, bisect_right
from pathlib import Path

import conllu
import pytest
from nltk import Tree

from index.tree_encoding import encode_nltk, encode_parsed, split_top_level
from treequery.index.schema import connect
from treequery.index.stats import info
from treequery.index.trees import load_tree, to_brackets

NODE_COLUMNS = ("id, last, parent, depth, position, n_children, leaf_first, leaf_last, "
                "tok_first, tok_last")


@pytest.fixture(scope="module")
def wsj(wsj_db):
    conn = connect(str(wsj_db), readonly=True)
    yield conn
    conn.close()


@pytest.fixture(scope="module")
def gum(gum_db):
    conn = connect(str(gum_db), readonly=True)
    yield conn
    conn.close()


def test_wsj_counts(wsj):
    # Figures counted on the files: /work/shared/corpora/README.md, "wsj-sample".
    summary = info(wsj)
    assert summary["documents"] == 199
    assert summary["trees"] == 3914
    assert summary["tokens"] + summary["empty_elements"] == 100_676
    assert summary["empty_elements"] == 6592
    assert summary["nodes"] == 183_274
    assert summary["corpora"] == [{"name": "wsj", "documents": 199, "trees": 3914}]
    assert summary["skipped"] == 0


def test_gum_counts(gum):
    # Figures counted on the files: /work/shared/corpora/README.md, "gum".
    summary = info(gum)
    assert summary["documents"] == 263
    assert summary["trees"] == 14_597
    assert summary["tokens"] == 251_725
    assert summary["empty_elements"] == 0
    assert summary["nodes"] == 474_698


def test_label_statistics_match_the_nodes(wsj):
    # label.n_nodes / word.n_nodes feed the planner; they must equal a fresh count.
    stored = dict(wsj.execute("SELECT code, n_nodes FROM label WHERE n_nodes > 0"))
    counted = dict(wsj.execute("SELECT label, count(*) FROM node GROUP BY label"))
    assert stored == counted
    stored = dict(wsj.execute("SELECT code, n_nodes FROM word WHERE n_nodes > 0"))
    counted = dict(wsj.execute(
        "SELECT word, count(*) FROM node WHERE word IS NOT NULL GROUP BY word"))
    assert stored == counted


def test_empty_elements_are_words_under_none(wsj):
    # Bies et al. (1995): empty elements are the leaves tagged -NONE-.
    under_none = wsj.execute(
        "SELECT count(*) FROM node JOIN label ON label.code = node.label"
        " WHERE label.text = '-NONE-'").fetchone()[0]
    assert under_none == 6592
    kinds = {kind for (kind,) in wsj.execute(
        "SELECT DISTINCT word.empty_kind FROM node JOIN word ON word.code = node.word"
        " JOIN label ON label.code = node.label WHERE label.text = '-NONE-'")}
    assert None not in kinds


def _original_trees(path: Path) -> list[Tree]:
    """The trees of one file as NLTK reads them, split by an independent bracket counter."""
    return [Tree.fromstring(text) for text in split_top_level(path.read_text(encoding="utf-8"))]


def _documents(conn):
    return conn.execute("SELECT id, path FROM document ORDER BY path").fetchall()


def _trees_of(conn, document_id):
    return [tree_id for (tree_id,) in conn.execute(
        "SELECT id FROM tree WHERE document = ? ORDER BY ordinal", (document_id,))]


@pytest.mark.parametrize("corpus", ["wsj", "gum"])
def test_every_tree_round_trips_against_nltk(corpus, request):
    # Reference library: nltk.Tree.fromstring on the original text of each tree.
    conn = request.getfixturevalue(corpus)
    compared = 0
    for document_id, path in _documents(conn):
        originals = _original_trees(Path(path))
        tree_ids = _trees_of(conn, document_id)
        assert len(tree_ids) == len(originals), path
        for tree_id, original in zip(tree_ids, originals, strict=True):
            assert encode_parsed(load_tree(conn, tree_id)) == encode_nltk(original), (
                f"{path}: tree {tree_id}")
            compared += 1
    assert compared == {"wsj": 3914, "gum": 14_597}[corpus]


def _expected_columns(tree: Tree, first_id: int) -> list[tuple]:
    """Every node column computed from the nltk.Tree alone, by tree positions.

    nltk's treepositions() lists positions in pre-order, so node k has id first_id + k;
    the leaves under a position p are a contiguous run of the sorted leaf positions.
    """
    positions = [p for p in tree.treepositions() if isinstance(tree[p], Tree)]
    ids = {p: first_id + k for k, p in enumerate(positions)}
    leaves = tree.treepositions("leaves")
    overt_before = [0]
    for leaf in leaves:  # a leaf is an empty element iff its tag is -NONE- (Bies et al. 1995)
        overt_before.append(overt_before[-1] + (tree[leaf[:-1]].label() != "-NONE-"))
    rows = []
    for p in positions:
        last = _last_id(p, positions, ids, first_id)
        lo, hi = bisect_left(leaves, p), bisect_right(leaves, p + (1 << 30,))
        tok_first, tok_last = overt_before[lo] + 1, overt_before[hi]
        if tok_last < tok_first:
            tok_first = tok_last = None
        node = tree[p]
        n_children = sum(isinstance(child, Tree) for child in node)
        rows.append((ids[p], last, ids.get(p[:-1]) if p else None, len(p),
                     (p[-1] + 1) if p else 1, n_children, lo + 1, hi, tok_first, tok_last))
    return rows


def _last_id(p, positions, ids, first_id):
    """The largest id under p: the node before the next position that is not inside p."""
    start = ids[p] - first_id
    for k in range(start + 1, len(positions)):
        if positions[k][:len(p)] != p:
            return first_id + k - 1
    return first_id + len(positions) - 1


@pytest.mark.parametrize("corpus", ["wsj", "gum"])
def test_numbering_matches_nltk_tree_positions(corpus, request):
    conn = request.getfixturevalue(corpus)
    step = {"wsj": 1, "gum": 3}[corpus]  # every 3rd GUM file keeps this quick
    for document_id, path in _documents(conn)[::step]:
        for tree_id, original in zip(_trees_of(conn, document_id), _original_trees(Path(path)),
                                     strict=True):
            first, last = conn.execute(
                "SELECT first_node, last_node FROM tree WHERE id = ?", (tree_id,)).fetchone()
            stored = conn.execute(
                f"SELECT {NODE_COLUMNS} FROM node WHERE id BETWEEN ? AND ? ORDER BY id",
                (first, last)).fetchall()
            assert stored == _expected_columns(original, first), f"{path}: tree {tree_id}"


def test_nodes_form_one_id_range_per_tree(wsj):
    # Interval encoding: a tree's nodes are [first_node, last_node], ranges back to back.
    ranges = wsj.execute("SELECT first_node, last_node FROM tree ORDER BY first_node").fetchall()
    for (_, previous_last), (next_first, _) in zip(ranges, ranges[1:], strict=False):
        assert next_first == previous_last + 1
    assert wsj.execute("SELECT count(*) FROM node").fetchone()[0] == 183_274
    orphans = wsj.execute(
        "SELECT count(*) FROM node LEFT JOIN tree ON tree.id = node.tree"
        " WHERE tree.id IS NULL OR node.id NOT BETWEEN tree.first_node AND tree.last_node"
    ).fetchone()[0]
    assert orphans == 0


def test_gum_text_equals_conllu_forms(gum, gum_dir):
    # Independent check of un-escaping and of tree.text: after un-escaping, every GUM
    # word equals the FORM column of dep/NAME.conllu (/work/shared/corpora/README.md).
    for document_id, path in _documents(gum):
        dependency_file = gum_dir / "dep" / (Path(path).stem + ".conllu")
        sentences = conllu.parse(dependency_file.read_text(encoding="utf-8"))
        texts = [text for (text,) in gum.execute(
            "SELECT text FROM tree WHERE document = ? ORDER BY ordinal", (document_id,))]
        expected = [" ".join(token["form"] for token in sentence if isinstance(token["id"], int))
                    for sentence in sentences]
        assert texts == expected, path


def test_to_brackets_reads_back_identically_with_nltk(wsj):
    # Both layouts of our printer must give the same nltk.Tree as the stored tree.
    for (tree_id,) in wsj.execute("SELECT id FROM tree ORDER BY id LIMIT 300"):
        root = load_tree(wsj, tree_id)
        for indent in (True, False):
            assert encode_nltk(Tree.fromstring(to_brackets(root, indent))) == encode_parsed(root)


def test_indented_brackets_follow_the_penn_layout(wsj, wsj_dir):
    # The WSJ files themselves are in the indented layout we print: the same lines,
    # once trailing spaces (present in the files) are ignored.
    original = split_top_level((wsj_dir / "wsj_0001.mrg").read_text(encoding="utf-8"))
    document = wsj.execute("SELECT id FROM document WHERE name = 'wsj_0001.mrg'").fetchone()[0]
    printed = [to_brackets(load_tree(wsj, tree_id)) for tree_id in _trees_of(wsj, document)]
    squeeze = lambda text: [line.rstrip().replace(" )", ")") for line in text.splitlines()]  # noqa: E731
    assert [squeeze(text) for text in printed] == [squeeze(text) for text in original]


@pytest.fixture(scope="module")
def demo(demo_db):
    conn = connect(str(demo_db), readonly=True)
    yield conn
    conn.close()


def test_demo_round_trips_against_nltk_and_carries_its_metadata(demo, demo_dir):
    # The demo treebank is our own; NLTK is still the reference reader of its text.
    summary = info(demo, per_document=True)
    assert summary["skipped"] == 0
    assert summary["documents"] == len(summary["per_document"]) > 0
    for document_id, path in _documents(demo):
        originals = _original_trees(Path(path))
        tree_ids = _trees_of(demo, document_id)
        assert len(tree_ids) == len(originals), path
        for tree_id, original in zip(tree_ids, originals, strict=True):
            assert encode_parsed(load_tree(demo, tree_id)) == encode_nltk(original)
    sidecar = (demo_dir / "documents.tsv").read_text(encoding="utf-8").splitlines()
    listed = {line.split("\t")[0] for line in sidecar[1:] if line.strip()}
    with_genre = {entry["name"] for entry in summary["per_document"] if "genre" in entry["meta"]}
    assert with_genre == listed & {entry["name"] for entry in summary["per_document"]}


def test_label_counts_by_category(wsj, wsj_dir):
    # Treebank II (Bies et al. 1995): function tags and indices follow the category
    # after '-' or '=', so an NP node's label is NP, NP-..., or NP=...
    summary = info(wsj)
    counts = list(summary["labels"].values())
    assert counts == sorted(counts, reverse=True)
    assert sum(counts) == summary["nodes"]
    noun_phrases = sum(
        1 for path in sorted(wsj_dir.glob("*.mrg")) for tree in _original_trees(path)
        for subtree in tree.subtrees()
        if subtree.label() == "NP" or subtree.label().startswith(("NP-", "NP=")))
    assert summary["labels"]["NP"] == noun_phrases
    assert summary["labels"][""] == 3914  # one unlabelled outer bracket per WSJ tree
