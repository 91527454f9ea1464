"""On the WSJ sample and GUM: every reported occurrence is checked against NLTK's reading.

The trees are read again with `nltk.Tree` straight from the files, at the line each
occurrence reports; nothing of treequery's reader or index takes part in the check.
"""
from __future__ import annotations

import random
from collections import Counter
from functools import cache

import nltk
import pytest

from treequery.checks.model import NIL
from treequery.checks.tags import find_tag_variation
from treequery.checks.variation import find_variation_nuclei
from treequery.index.schema import connect

pytestmark = pytest.mark.corpora

# Penn Treebank word escapes for brackets (common practice in PTB-style files).
ESCAPES = {"-LRB-": "(", "-RRB-": ")", "-LCB-": "{", "-RCB-": "}", "-LSB-": "[", "-RSB-": "]"}


@cache
def file_lines(path: str) -> tuple[str, ...]:
    with open(path, encoding="utf-8") as handle:
        return tuple(handle.read().split("\n"))


def nltk_tree(path: str, line: int) -> nltk.Tree:
    """The tree whose opening bracket is on `line`: balanced brackets from there, via NLTK."""
    depth, chunk = 0, []
    for text in file_lines(path)[line - 1:]:
        chunk.append(text)
        depth += text.count("(") - text.count(")")
        if depth <= 0 and "(" in "".join(chunk):
            break
    return nltk.Tree.fromstring("\n".join(chunk))


def category(label: str) -> str:
    # Treebank II labels (Bies et al. 1995): CATEGORY(-FUNCTION)*(-INDEX)?(=GAP)?;
    # labels starting with '-' and punctuation tags are whole.
    if not label or label.startswith("-") or not any(c.isalnum() for c in label):
        return label
    cut = [i for i in (label.find("-"), label.find("=")) if i > 0]
    return label[:min(cut)] if cut else label


@cache
def reading(path: str, line: int):
    """Overt words (un-escaped), their tags, and span -> label chain, from NLTK alone."""
    tree = nltk_tree(path, line)
    words, tags, leaf_token = [], [], {}
    for index, (word, tag) in enumerate(tree.pos()):
        if tag != "-NONE-":
            leaf_token[index] = len(words)
            for escaped, plain in ESCAPES.items():
                word = word.replace(escaped, plain)
            words.append(word)
            tags.append(tag)
    chains: dict[tuple[int, int], list[str]] = {}
    leaf_positions = tree.treepositions("leaves")
    leaf_index = {pos: i for i, pos in enumerate(leaf_positions)}
    for pos in tree.treepositions():  # pre-order: a node before the nodes below it
        node = tree[pos]
        if pos == () or not isinstance(node, nltk.Tree) or node.height() <= 2:
            continue  # the root, words, part-of-speech nodes
        tokens = [leaf_token[leaf_index[pos + sub]] for sub in node.treepositions("leaves")
                  if leaf_index[pos + sub] in leaf_token]
        if tokens:
            chain = chains.setdefault((tokens[0], tokens[-1] + 1), [])
            if not chain or chain[-1] != category(node.label()):
                chain.append(category(node.label()))
    return words, tags, {span: "/".join(chain) for span, chain in chains.items()}


def nuclei_of(db) -> list:
    conn = connect(str(db), readonly=True)
    try:
        return find_variation_nuclei(conn, max_length=6)
    finally:
        conn.close()


@pytest.fixture(scope="module")
def wsj_nuclei(wsj_db):
    return nuclei_of(wsj_db)


@pytest.fixture(scope="module")
def gum_nuclei(gum_db):
    return nuclei_of(gum_db)


def check_nuclei(found) -> int:
    assert found, "no variation nucleus found at all"
    checked = 0
    for variation in found:
        labels = Counter(o.label for o in variation.occurrences)
        assert labels == Counter(dict(variation.labels))
        assert len(labels) >= 2 and any(label != NIL for label in labels)
        for occurrence in variation.occurrences:
            words, _tags, spans = reading(occurrence.path, occurrence.line)
            span = (occurrence.start - 1, occurrence.end)
            assert " ".join(words[span[0]:span[1]]) == variation.words == occurrence.words
            assert spans.get(span, NIL) == occurrence.label, occurrence
            checked += 1
    return checked


def check_tags(db) -> int:
    conn = connect(str(db), readonly=True)
    try:
        found = find_tag_variation(conn)
    finally:
        conn.close()
    assert found, "no tag variation found at all"
    checked = 0
    for variation in found:
        assert len(dict(variation.labels)) >= 2
        for occurrence in variation.occurrences:
            words, tags, _spans = reading(occurrence.path, occurrence.line)
            assert words[occurrence.start - 1] == variation.words
            assert tags[occurrence.start - 1] == occurrence.label, occurrence
            checked += 1
    return checked


def check_completeness(db, found, sample: int = 200) -> None:
    """For a sample of nuclei, the occurrences are every place the words occur (NLTK count)."""
    conn = connect(str(db), readonly=True)
    try:
        trees = conn.execute("SELECT document.path, tree.line FROM tree JOIN document"
                             " ON document.id = tree.document").fetchall()
    finally:
        conn.close()
    chosen = random.Random(6).sample(found, min(sample, len(found)))
    wanted = {tuple(v.words.split(" ")) for v in chosen}
    lengths = {len(words) for words in wanted}
    counts: Counter = Counter()
    for path, line in trees:
        words = reading(path, line)[0]
        for n in lengths:
            for i in range(len(words) - n + 1):
                gram = tuple(words[i:i + n])
                if gram in wanted:
                    counts[gram] += 1
    for variation in chosen:
        assert len(variation.occurrences) == counts[tuple(variation.words.split(" "))]


def test_wsj_nuclei_match_nltk(wsj_nuclei):
    assert check_nuclei(wsj_nuclei) > 1000


def test_wsj_tag_variation_matches_nltk(wsj_db):
    assert check_tags(wsj_db) > 1000


def test_wsj_nuclei_list_every_occurrence(wsj_db, wsj_nuclei):
    check_completeness(wsj_db, wsj_nuclei)


def test_gum_nuclei_match_nltk(gum_nuclei):
    assert check_nuclei(gum_nuclei) > 1000


def test_gum_tag_variation_matches_nltk(gum_db):
    assert check_tags(gum_db) > 1000


def test_gum_nuclei_list_every_occurrence(gum_db, gum_nuclei):
    check_completeness(gum_db, gum_nuclei)
