"""Variation nuclei on a hand-built treebank whose nuclei are worked out by hand below."""
from __future__ import annotations

from pathlib import Path

import pytest

from treequery.checks.model import NIL
from treequery.checks.variation import find_variation_nuclei
from treequery.index.schema import connect

from .helpers import build_index

# Invented sentences, one tree per line (line number = tree number in the file).
A_TREES = [
    "( (S (NP-SBJ (DT the) (NN dog)) (VP (VBD barked)) (. .)) )",
    "( (S (NP-SBJ (PRP I)) (VP (VBD saw) (NP (DT the) (NN dog))"
    " (PP (IN in) (NP (DT the) (NN park)))) (. .)) )",
    # "the dog" is no constituent here: flat daughters of the VP.
    "( (S (NP-SBJ (PRP I)) (VP (VBD saw) (DT the) (NN dog) (ADVP (RB today))) (. .)) )",
]
B_TREES = [
    # "next week" is a unary chain ADVP over NP here ...
    "( (S (NP-SBJ (PRP I)) (VP (VBD left) (ADVP-TMP (NP (JJ next) (NN week)))) (. .)) )",
    # ... and a plain NP here; an empty element inside must not change the words.
    "( (S (NP-SBJ (PRP I)) (VP (VBD left) (NP-TMP (JJ next) (NN week))"
    " (SBAR (-NONE- 0) (S (-NONE- *T*-1)))) (. .)) )",
]


@pytest.fixture(scope="module")
def db(tmp_path_factory) -> Path:
    return build_index(tmp_path_factory.mktemp("variation"),
                       {"a.mrg": A_TREES, "b.mrg": B_TREES})


def nuclei(db: Path, **options):
    conn = connect(str(db), readonly=True)
    try:
        return find_variation_nuclei(conn, **options)
    finally:
        conn.close()


def test_the_nuclei_and_their_ranking(db):
    # By hand: "next week" is ADVP/NP vs NP and shares "I left" on the left and "."
    # on the right (2 + 1 words); "the dog" is NP, NP, NIL and the NP of a.mrg 2 and
    # the NIL of a.mrg 3 share "I saw" on the left only (2 words, fringe).
    # Every other constituent string occurs once or always with the same label.
    found = nuclei(db, min_context=0)
    assert [(v.words, v.labels, v.context_left, v.context_right) for v in found] == [
        ("next week", (("ADVP/NP", 1), ("NP", 1)), 2, 1),
        ("the dog", (("NP", 2), (NIL, 1)), 2, 0),
    ]
    assert [v.context_text for v in found] == ["I left [next week] .", "I saw [the dog]"]
    assert [v.fringe for v in found] == [False, True]
    assert [v.length for v in found] == [2, 2]


def test_every_occurrence_with_location_and_concordance(db, tmp_path_factory):
    the_dog = next(v for v in nuclei(db) if v.words == "the dog")
    folder = Path(the_dog.occurrences[0].path).parent
    a_path = str((folder / "a.mrg").resolve())
    rows = [(o.path, o.line, o.ordinal, o.start, o.end, o.label, o.left, o.words, o.right,
             o.shared) for o in the_dog.occurrences]
    assert rows == [
        (a_path, 1, 1, 1, 2, "NP", "", "the dog", "barked .", False),
        (a_path, 2, 2, 3, 4, "NP", "I saw", "the dog", "in the park .", True),
        (a_path, 3, 3, 3, 4, NIL, "I saw", "the dog", "today .", True),
    ]
    assert all(o.document == "a.mrg" for o in the_dog.occurrences)


def test_min_context_and_non_fringe(db):
    assert [v.words for v in nuclei(db, min_context=3)] == ["next week"]
    # "the dog" has shared words on the left only.
    assert [v.words for v in nuclei(db, non_fringe=True)] == ["next week"]
    assert nuclei(db, min_context=4) == []


def test_length_limits(db):
    assert nuclei(db, max_length=1, min_context=0) == []
    assert nuclei(db, min_length=3, min_context=0) == []


def test_restrict_to_categories_and_documents(db):
    assert [v.words for v in nuclei(db, categories=["ADVP"])] == ["next week"]
    assert nuclei(db, categories=["PP"]) == []
    assert [v.words for v in nuclei(db, documents=["a.mrg"])] == ["the dog"]
    assert [v.words for v in nuclei(db, documents=["*/b.mrg"])] == ["next week"]
    assert [v.words for v in nuclei(db, corpora=["test"])] == ["next week", "the dog"]
    assert nuclei(db, corpora=["elsewhere"]) == []


def test_function_tags_compared_on_request(db):
    found = nuclei(db, with_functions=True, categories=["ADVP"])
    assert [v.labels for v in found] == [(("ADVP-TMP/NP", 1), ("NP-TMP", 1))]


def test_punctuation_alone_is_never_a_nucleus(tmp_path):
    # "," is a constituent once (an invented odd bracketing) and NIL elsewhere.
    db = build_index(tmp_path, {"p.mrg": [
        "( (S (NP-SBJ (PRP We)) (PRN (, ,)) (VP (VBD won)) (. .)) )",
        "( (S (NP-SBJ (PRP We)) (, ,) (VP (VBD won)) (. .)) )",
    ]})
    assert nuclei(db, min_context=0) == []
