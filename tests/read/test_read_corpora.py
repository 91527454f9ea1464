"""The reader on real treebanks: published counts, tagsets, CoNLL-U words and nltk.Tree.

Uses the shared corpora (see tests/conftest.py); skipped when they are absent.
"""
from __future__ import annotations

import conllu
import nltk
import pytest

from treequery.read.brackets import read_file
from treequery.read.labels import decompose_label, is_empty_label, unescape_word
from treequery.read.model import ParsedNode, ParsedTree

# Penn Treebank POS tagset: Marcus, Santorini & Marcinkiewicz (1993), "Building a large
# annotated corpus of English: the Penn Treebank", Table 2 -- 36 tags plus 12
# punctuation/symbol tags. Written from memory.
PTB_WORD_TAGS = frozenset("""
    CC CD DT EX FW IN JJ JJR JJS LS MD NN NNS NNP NNPS PDT POS PRP PRP$ RB RBR RBS RP
    SYM TO UH VB VBD VBG VBN VBP VBZ WDT WP WP$ WRB""".split())
PTB_PUNCTUATION_TAGS = frozenset(["#", "$", ".", ",", ":", "(", ")", '"', "`", "``", "'", "''"])
# In the bracketed files the bracket tags are written as escapes (common practice).
PTB_TAGS_AS_WRITTEN = PTB_WORD_TAGS | PTB_PUNCTUATION_TAGS | {"-LRB-", "-RRB-"}

# Treebank II phrase categories: Bies, Ferguson, Katz & MacIntyre (1995), "Bracketing
# Guidelines for Treebank II Style", clause and phrase levels. Written from memory;
# '' is the unlabelled outer bracket of each tree.
TREEBANK2_CATEGORIES = frozenset("""
    S SBAR SBARQ SINV SQ ADJP ADVP CONJP FRAG INTJ LST NAC NP NX PP PRN PRT QP RRC UCP VP
    WHADJP WHADVP WHNP WHPP X""".split()) | {""}


def preorder(node: ParsedNode):
    stack = [node]
    while stack:
        node = stack.pop()
        yield node
        stack.extend(reversed(node.children))


def read_corpus(paths) -> dict[str, list]:
    return {path.name: list(read_file(path)) for path in paths}


@pytest.fixture(scope="module")
def wsj(wsj_dir):
    return read_corpus(sorted(wsj_dir.glob("*.mrg")))


@pytest.fixture(scope="module")
def gum(gum_dir):
    return read_corpus(sorted((gum_dir / "const").glob("*.ptb")))


def all_trees(corpus) -> list[ParsedTree]:
    items = [item for file_items in corpus.values() for item in file_items]
    assert all(isinstance(item, ParsedTree) for item in items), [
        item for item in items if not isinstance(item, ParsedTree)][:5]
    return items


def nodes_of(corpus):
    for tree in all_trees(corpus):
        yield from preorder(tree.root)


# -- counts published in shared/corpora/README.md ------------------------------------------

def test_wsj_counts(wsj):
    trees = all_trees(wsj)
    nodes = list(nodes_of(wsj))
    leaves = [node for node in nodes if node.word is not None]
    assert len(wsj) == 199
    assert len(trees) == 3914
    assert len(leaves) == 100_676
    assert sum(is_empty_label(node.label) for node in leaves) == 6_592
    assert len(nodes) == 183_274
    assert all(tree.root.label == "" for tree in trees)  # `( (S ...) )` in every file


def test_gum_counts(gum):
    trees = all_trees(gum)
    nodes = list(nodes_of(gum))
    assert len(gum) == 263
    assert len(trees) == 14_597
    assert sum(node.word is not None for node in nodes) == 251_725
    assert len(nodes) == 474_698
    assert all(tree.root.label == "ROOT" for tree in trees)


# -- tagsets ----------------------------------------------------------------------------

def test_wsj_tags_are_penn_treebank_tags(wsj):
    offenders = {node.label for node in nodes_of(wsj) if node.word is not None} - (
        PTB_TAGS_AS_WRITTEN | {"-NONE-"})
    assert not offenders, f"preterminal tags outside the PTB tagset: {sorted(offenders)}"


def test_wsj_phrase_categories_are_treebank2_categories(wsj):
    categories = {decompose_label(node.label).category
                  for node in nodes_of(wsj) if node.word is None}
    # Bies et al. write annotator ambiguity as CAT1|CAT2: each part must be a category.
    offenders = {category for category in categories
                 if not set(category.split("|")) <= TREEBANK2_CATEGORIES}
    assert not offenders, f"phrase categories outside Treebank II: {sorted(offenders)}"
    assert "ADVP|PRT" in categories  # the ambiguity label is kept whole


# -- GUM words against the CoNLL-U layer (Zeldes 2017) ------------------------------------

def test_gum_words_equal_conllu_forms(gum, gum_dir):
    mismatches = []
    for name, items in gum.items():
        dependency_file = gum_dir / "dep" / name.replace(".ptb", ".conllu")
        with open(dependency_file, encoding="utf-8") as handle:
            sentences = list(conllu.parse_incr(handle))
        assert len(sentences) == len(items), name
        for number, (tree, sentence) in enumerate(zip(items, sentences, strict=True), 1):
            words = [unescape_word(node.word) for node in preorder(tree.root)
                     if node.word is not None]
            # integer ids only: multiword-token ranges and empty nodes are not words
            forms = [token["form"] for token in sentence if isinstance(token["id"], int)]
            if words != forms:
                mismatches.append((name, number, words, forms))
    assert not mismatches, mismatches[:3]


# -- every tree against nltk.Tree.fromstring ------------------------------------------------

def split_trees(path) -> list[tuple[int, str]]:
    """(start line, text) of each tree, by counting brackets line by line.

    Independent of our reader and valid for these corpora, whose words hold no raw
    brackets and whose trees each start on a new line.
    """
    found, depth, start, buffer = [], 0, 0, []
    with open(path, encoding="utf-8") as handle:
        for line_no, line in enumerate(handle, 1):
            if depth == 0 and not line.strip():
                continue
            if depth == 0:
                start, buffer = line_no, []
            buffer.append(line)
            depth += line.count("(") - line.count(")")
            if depth == 0:
                found.append((start, "".join(buffer)))
    assert depth == 0, path
    return found


def shape(node: ParsedNode):
    if node.word is not None:
        return (node.label, node.word)
    return (node.label, [shape(child) for child in node.children])


def nltk_shape(tree: nltk.Tree):
    if len(tree) == 1 and isinstance(tree[0], str):
        return (tree.label(), tree[0])
    return (tree.label(), [nltk_shape(child) for child in tree])


def check_against_nltk(corpus, paths):
    checked = 0
    for path in paths:
        ours = corpus[path.name]
        reference = split_trees(path)
        assert len(ours) == len(reference), path.name
        for ordinal, (tree, (line, text)) in enumerate(zip(ours, reference, strict=True), 1):
            assert (tree.line, tree.ordinal, tree.source) == (line, ordinal, str(path))
            assert shape(tree.root) == nltk_shape(nltk.Tree.fromstring(text)), (path.name, line)
            checked += 1
    return checked


def test_wsj_trees_equal_nltk(wsj, wsj_dir):
    assert check_against_nltk(wsj, sorted(wsj_dir.glob("*.mrg"))) == 3914


def test_gum_trees_equal_nltk(gum, gum_dir):
    assert check_against_nltk(gum, sorted((gum_dir / "const").glob("*.ptb"))) == 14_597
