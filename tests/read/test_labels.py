"""Treebank II label decomposition, empty elements and word escapes."""
from __future__ import annotations

import pytest
from hypothesis import given
from hypothesis import strategies as st

from treequery.read.labels import (
    EmptyElement,
    LabelParts,
    classify_empty,
    decompose_label,
    empty_element,
    escape_word,
    is_empty_label,
    unescape_word,
)

# Label notation: Bies, Ferguson, Katz & MacIntyre (1995), "Bracketing Guidelines for
# Treebank II Style" -- function tags after '-', coindex '-N', gapping index '=N',
# '|' between alternatives the annotators could not decide between.


@pytest.mark.parametrize("label, parts", [
    ("NP", LabelParts("NP")),
    ("NP-SBJ", LabelParts("NP", ("SBJ",))),
    ("NP-SBJ-TMP", LabelParts("NP", ("SBJ", "TMP"))),
    ("PP-LOC-CLR", LabelParts("PP", ("LOC", "CLR"))),   # written order kept
    ("PP-CLR-LOC", LabelParts("PP", ("CLR", "LOC"))),
    ("NP-SBJ-1", LabelParts("NP", ("SBJ",), coindex=1)),
    ("WHNP-260", LabelParts("WHNP", (), coindex=260)),
    ("NP=2", LabelParts("NP", (), gapindex=2)),
    ("NP-SBJ-1=2", LabelParts("NP", ("SBJ",), coindex=1, gapindex=2)),
    ("NP-SBJ=1-3", LabelParts("NP", ("SBJ",), coindex=3, gapindex=1)),
    ("ADVP-PRD-TPC-2", LabelParts("ADVP", ("PRD", "TPC"), coindex=2)),
    ("ADVP|PRT", LabelParts("ADVP|PRT")),
    ("ADVP|PRT-CLR", LabelParts("ADVP|PRT", ("CLR",))),
    ("-NONE-", LabelParts("-NONE-")),
    ("-LRB-", LabelParts("-LRB-")),
    ("-RRB-", LabelParts("-RRB-")),
    ("", LabelParts("")),
    ("ROOT", LabelParts("ROOT")),
    ("PRP$", LabelParts("PRP$")),
    ("WP$", LabelParts("WP$")),
])
def test_decompose_label(label, parts):
    assert decompose_label(label) == parts


# Punctuation tags of the Penn Treebank (Marcus et al. 1993, Table 2) are whole labels.
@pytest.mark.parametrize("tag", [",", ".", ":", "``", "''", "$", "#", "-", "--"])
def test_punctuation_tags_are_kept_whole(tag):
    assert decompose_label(tag) == LabelParts(tag)


def test_repeated_index_is_kept_as_a_function_tag():
    # Not in the guidelines; we keep every written piece rather than drop one.
    assert decompose_label("NP-1-2") == LabelParts("NP", ("2",), coindex=1)


@pytest.mark.parametrize("word, kind, index", [
    ("*T*-1", "movement-trace", 1),
    ("*T*", "movement-trace", None),
    ("*", "null-subject", None),
    ("*-2", "null-subject", 2),
    ("0", "null-complementizer", None),
    ("*U*", "unit", None),
    ("*ICH*-3", "interpret-here", 3),
    ("*RNR*-1", "right-node-raising", 1),
    ("*EXP*-1", "expletive", 1),
    ("*PPA*-1", "predictable-ambiguity", 1),
    ("*?*", "ellipsis", None),
    ("*NOT*", "anti-placeholder", None),
    ("*FOO*-4", "other", 4),
])
def test_classify_empty(word, kind, index):
    assert classify_empty(word) == EmptyElement(kind, index)


@pytest.mark.parametrize("word", ["dog", "42", "-LRB-", ""])
def test_overt_words_are_not_empty_elements(word):
    assert classify_empty(word) is None


def test_empty_element_needs_the_none_label():
    assert empty_element("CD", "0") is None  # the number zero
    assert empty_element("-NONE-", "0") == EmptyElement("null-complementizer", None)
    assert empty_element("-NONE-", "PRO-7") == EmptyElement("other", 7)
    assert empty_element("-NONE-", "e") == EmptyElement("other", None)


def test_is_empty_label():
    assert is_empty_label("-NONE-")
    assert not is_empty_label("NONE")
    assert not is_empty_label("-NONE-1")


# Escapes used in Penn Treebank words for characters that are brackets in the notation.
@pytest.mark.parametrize("written, form", [
    ("-LRB-", "("), ("-RRB-", ")"), ("-LCB-", "{"), ("-RCB-", "}"),
    ("-LSB-", "["), ("-RSB-", "]"),
    ("-LRB-a-RRB-", "(a)"),
    ("friend-LRB-s-RRB-", "friend(s)"),
    ("d-LRB-ə-RRB--VOR", "d(ə)-VOR"),
    ("well-known", "well-known"),
    ("-LRB", "-LRB"),
    ("--", "--"),
])
def test_unescape_word(written, form):
    assert unescape_word(written) == form


def test_escape_word():
    assert escape_word("(a)[b]{c}") == "-LRB-a-RRB--LSB-b-RSB--LCB-c-RCB-"
    assert escape_word("plain-word") == "plain-word"


@given(st.text())
def test_escape_then_unescape_is_identity(text):
    # Only fails for text that already holds an escape sequence, which st.text()
    # practically never draws; such text would un-escape to brackets by design.
    if any(escape in text for escape in ("-LRB-", "-RRB-", "-LCB-", "-RCB-", "-LSB-", "-RSB-")):
        return
    assert unescape_word(escape_word(text)) == text
    assert not set("()") & set(escape_word(text))
