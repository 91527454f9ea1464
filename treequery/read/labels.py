"""Treebank II label decomposition, empty-element notation and word escapes."""
from __future__ import annotations

import re
from dataclasses import dataclass
from functools import lru_cache

# Source for everything in this module: Bies, Ferguson, Katz & MacIntyre (1995),
# "Bracketing Guidelines for Treebank II Style" (labels, function tags, indices,
# null elements) and the bracket escapes used by the Penn Treebank files
# (Marcus, Santorini & Marcinkiewicz 1993). The tables were written from memory.

EMPTY_LABEL = "-NONE-"

# Empty elements (leaves under -NONE-): notation -> kind. A trailing "-N" on any of
# them is the reference index of the constituent they stand for. Bies et al. use a
# bare "*" both for PRO and for the trace of NP movement, so both are "null-subject".
EMPTY_ELEMENT_KINDS: dict[str, str] = {
    "*T*": "movement-trace",
    "*": "null-subject",
    "0": "null-complementizer",
    "*U*": "unit",
    "*ICH*": "interpret-here",
    "*RNR*": "right-node-raising",
    "*EXP*": "expletive",
    "*PPA*": "predictable-ambiguity",
    "*?*": "ellipsis",
    "*NOT*": "anti-placeholder",
}
OTHER_EMPTY_KIND = "other"

# Brackets cannot appear in words of bracketed files, so the treebanks write them as
# these escapes (also inside words, e.g. -LRB-a-RRB-).
WORD_ESCAPES: dict[str, str] = {
    "-LRB-": "(",
    "-RRB-": ")",
    "-LCB-": "{",
    "-RCB-": "}",
    "-LSB-": "[",
    "-RSB-": "]",
}
_CHAR_ESCAPES = {char: escape for escape, char in WORD_ESCAPES.items()}
_UNESCAPE = re.compile("|".join(re.escape(escape) for escape in WORD_ESCAPES))
_ESCAPE = re.compile("[" + re.escape("".join(_CHAR_ESCAPES)) + "]")

# After the category, a label is a run of "-PIECE" and "=N" parts: NP-SBJ-1=2.
_LABEL_PART = re.compile(r"([-=])([^-=]*)")
_EMPTY_NOTATION = re.compile(r"(.+?)(?:-(\d+))?")


@dataclass(frozen=True, slots=True)
class LabelParts:
    """A label split into category, function tags (written order) and indices."""

    category: str
    functions: tuple[str, ...] = ()
    coindex: int | None = None
    gapindex: int | None = None


@dataclass(frozen=True, slots=True)
class EmptyElement:
    """What an empty element stands for, and the index of the constituent it refers to."""

    kind: str
    ref_index: int | None = None


@lru_cache(maxsize=65536)
def decompose_label(text: str) -> LabelParts:
    """Split a Treebank II label such as NP-SBJ-1=2 into its parts.

    Kept whole as the category: '' (the unlabelled outer bracket), labels that begin
    with '-' (-NONE-, -LRB-), labels with no letter or digit (punctuation tags such as
    , . : `` '' $ #) and the annotators' ambiguity labels (ADVP|PRT; a '|' never
    separates anything). A numeric "-N" is the coindex, "=N" the gapping index; the
    first of each counts and a repeated one is kept as a function tag so nothing of
    the written label is lost.
    """
    if not text or text[0] == "-" or not any(char.isalnum() for char in text):
        return LabelParts(text)
    split = min((i for i in (text.find("-"), text.find("=")) if i > 0), default=len(text))
    category, functions = text[:split], []
    coindex = gapindex = None
    for mark, piece in _LABEL_PART.findall(text, split):
        if mark == "=" and piece.isdigit() and gapindex is None:
            gapindex = int(piece)
        elif mark == "-" and piece.isdigit() and coindex is None:
            coindex = int(piece)
        elif piece:
            functions.append(piece)
    return LabelParts(category, tuple(functions), coindex, gapindex)


def is_empty_label(label: str) -> bool:
    """True for the label of empty elements (-NONE-)."""
    return label == EMPTY_LABEL


def classify_empty(word: str) -> EmptyElement | None:
    """The kind and reference index of an empty element written as `word`.

    Meant for leaves under -NONE- (see `empty_element`): "0" is a null complementizer
    there but the number zero elsewhere. Unknown notation that starts with '*' is
    kind "other"; any other word gives None.
    """
    match = _EMPTY_NOTATION.fullmatch(word)
    if match is None:
        return None
    base, index = match.group(1), match.group(2)
    ref_index = int(index) if index is not None else None
    if base in EMPTY_ELEMENT_KINDS:
        return EmptyElement(EMPTY_ELEMENT_KINDS[base], ref_index)
    if word.startswith("*"):
        return EmptyElement(OTHER_EMPTY_KIND, ref_index)
    return None


def empty_element(label: str, word: str) -> EmptyElement | None:
    """The empty element of a preterminal, or None when it is an overt word.

    Every leaf under -NONE- is an empty element; notation not in the table is "other".
    """
    if not is_empty_label(label):
        return None
    found = classify_empty(word)
    if found is not None:
        return found
    match = _EMPTY_NOTATION.fullmatch(word)
    index = match.group(2) if match else None
    return EmptyElement(OTHER_EMPTY_KIND, int(index) if index is not None else None)


def unescape_word(text: str) -> str:
    """A word as written (-LRB-a-RRB-) turned into its characters ((a))."""
    if "-" not in text:  # fast path: most words hold no escape
        return text
    return _UNESCAPE.sub(lambda match: WORD_ESCAPES[match.group()], text)


def escape_word(text: str) -> str:
    """The inverse of `unescape_word`: brackets and braces written as escapes."""
    return _ESCAPE.sub(lambda match: _CHAR_ESCAPES[match.group()], text)
