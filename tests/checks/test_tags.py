"""Tag variation on a hand-built treebank whose variations are worked out by hand below."""
from __future__ import annotations

from pathlib import Path

import pytest

from treequery.checks.tags import find_tag_variation
from treequery.index.schema import connect

from .helpers import build_index

# Invented sentences, one tree per line.
TREES = [
    "( (S (NP-SBJ (PRP They)) (VP (VBP run) (NP (DT the) (NN shop))) (. .)) )",
    "( (S (NP-SBJ (PRP They)) (VP (VB run) (NP (DT the) (NN store))) (. .)) )",
    "( (S (NP-SBJ (DT The) (NN run)) (VP (VBD ended)) (. .)) )",
    "( (S (NP-SBJ (PRP We)) (VP (VBD saw) (NP (PRP her) (NNS ducks))) (. .)) )",
    "( (S (NP-SBJ (PRP We)) (VP (VBD saw) (NP (PRP$ her) (NNS geese))) (. .)) )",
    # An empty element between "saw" and "her" is not a word: the context still matches.
    "( (S (NP-SBJ (PRP We)) (VP (VBD saw) (NP (-NONE- *U*)) (NP (PRP her) (NNS geese)))"
    " (. .)) )",
]


@pytest.fixture(scope="module")
def db(tmp_path_factory) -> Path:
    return build_index(tmp_path_factory.mktemp("tags"), {"t.mrg": TREES})


def variations(db: Path, **options):
    conn = connect(str(db), readonly=True)
    try:
        return find_tag_variation(conn, **options)
    finally:
        conn.close()


def test_the_tag_variations_and_their_ranking(db):
    # By hand: "her" is PRP, PRP$, PRP; PRP$ (tree 5) and PRP (tree 6) share "We saw"
    # on the left and "geese ." on the right: 4 words. "run" is VBP, VB, NN; VBP and VB
    # share "They" and "the" (trees 1, 2): 2 words. Every other word has one tag.
    found = variations(db)
    assert [(v.words, v.labels, v.context_left, v.context_right) for v in found] == [
        ("her", (("PRP", 2), ("PRP$", 1)), 2, 2),
        ("run", (("NN", 1), ("VB", 1), ("VBP", 1)), 1, 1),
    ]
    assert [v.context_text for v in found] == ["We saw [her] geese .", "They [run] the"]
    assert all(v.kind == "tag" and v.length == 1 for v in found)


def test_occurrences_of_a_tag_variation(db):
    run = next(v for v in variations(db) if v.words == "run")
    rows = [(o.line, o.ordinal, o.start, o.end, o.label, o.left, o.right, o.shared)
            for o in run.occurrences]
    assert rows == [
        (1, 1, 2, 2, "VBP", "They", "the shop .", True),
        (2, 2, 2, 2, "VB", "They", "the store .", True),
        (3, 3, 2, 2, "NN", "The", "ended .", False),
    ]


def test_options(db):
    assert [v.words for v in variations(db, min_context=3)] == ["her"]
    assert variations(db, min_context=5) == []
    assert [v.words for v in variations(db, tags=["VB"])] == ["run"]
    assert [v.words for v in variations(db, non_fringe=True)] == ["her", "run"]
    assert [v.words for v in variations(db, documents=["nothing*"])] == []


def test_fringe_only_context_is_dropped_by_non_fringe(tmp_path):
    db = build_index(tmp_path, {"f.mrg": [
        "( (S (NP-SBJ (PRP We)) (VP (VBD saw) (NP (PRP her) (NNS ducks))) (. .)) )",
        "( (S (NP-SBJ (PRP We)) (VP (VBD saw) (NP (PRP$ her) (NNS geese))) (. .)) )",
    ]})
    found = variations(db)
    assert [(v.words, v.context_left, v.context_right, v.fringe) for v in found] == [
        ("her", 2, 0, True)]
    assert variations(db, non_fringe=True) == []
