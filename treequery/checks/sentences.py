"""Reading sentences for the consistency checks: overt tokens, tags and constituent spans."""
from __future__ import annotations

import fnmatch
import sqlite3
from collections.abc import Iterable
from dataclasses import dataclass, field

import regex

# A word made only of punctuation characters (Unicode category P*): such words take
# part in strings and contexts, but a string of nothing else is never a nucleus.
_PUNCTUATION = regex.compile(r"\p{P}+")

DOCUMENTS_SQL = """
SELECT document.id, document.name, document.path, corpus.name
FROM document JOIN corpus ON corpus.id = document.corpus
ORDER BY document.id
"""

TREES_SQL = """
SELECT id, line, ordinal, first_node, last_node FROM tree
WHERE document = ? ORDER BY ordinal
"""

# Only the node table is scanned; labels and words are decoded from small tables
# held in memory, which is much faster than joining them on every row.
NODES_SQL = """
SELECT tree, depth, label, word, tok_first, tok_last FROM node
WHERE id BETWEEN ? AND ? ORDER BY id
"""

LABELS_SQL = "SELECT code, text, category, functions FROM label"
WORDS_SQL = "SELECT code, text, form, empty_kind FROM word"


@dataclass(frozen=True, slots=True)
class Document:
    id: int
    name: str
    path: str
    corpus: str


@dataclass(slots=True)
class Sentence:
    """One tree as the checks see it.

    `tokens` are word codes of the overt words in order (empty elements left out);
    `tags` the part-of-speech labels of those words as written; `spans` maps an
    overt-token span (0-based, end exclusive) to the labels of the phrasal nodes that
    cover exactly that span, top-down. The root of the tree is never a constituent.
    """

    tree_id: int
    line: int
    ordinal: int
    document: Document
    tokens: list[int] = field(default_factory=list)
    tags: list[int] = field(default_factory=list)
    spans: dict[tuple[int, int], list[int]] = field(default_factory=dict)


@dataclass(frozen=True, slots=True)
class Lexicon:
    """Label and word tables of the index, decoded once."""

    label_text: dict[int, str]
    label_category: dict[int, str]
    label_functions: dict[int, str]
    word_form: dict[int, str]
    punctuation: frozenset[int]

    def label_name(self, code: int, with_functions: bool) -> str:
        """The label used for comparison: the category, or category and function tags."""
        category = self.label_category[code]
        functions = self.label_functions[code]
        return f"{category}-{functions}" if with_functions and functions else category


def read_lexicon(conn: sqlite3.Connection) -> Lexicon:
    label_text, label_category, label_functions = {}, {}, {}
    for code, text, category, functions in conn.execute(LABELS_SQL):
        label_text[code], label_category[code], label_functions[code] = text, category, functions
    word_form, punctuation = {}, set()
    for code, _text, form, empty_kind in conn.execute(WORDS_SQL):
        word_form[code] = form
        if empty_kind is None and _PUNCTUATION.fullmatch(form):
            punctuation.add(code)
    return Lexicon(label_text, label_category, label_functions, word_form,
                   frozenset(punctuation))


def select_documents(conn: sqlite3.Connection, corpora: Iterable[str] = (),
                     documents: Iterable[str] = ()) -> list[Document]:
    """The documents to check: in the named corpora, matching a name or path pattern."""
    corpora, patterns = set(corpora), list(documents)
    chosen = []
    for doc_id, name, path, corpus in conn.execute(DOCUMENTS_SQL):
        if corpora and corpus not in corpora:
            continue
        if patterns and not any(fnmatch.fnmatchcase(name, p) or fnmatch.fnmatchcase(path, p)
                                for p in patterns):
            continue
        chosen.append(Document(doc_id, name, path, corpus))
    return chosen


def read_sentences(conn: sqlite3.Connection, docs: Iterable[Document]) -> list[Sentence]:
    """Every tree of `docs` as a Sentence, in corpus order."""
    sentences: list[Sentence] = []
    for doc in docs:
        trees = conn.execute(TREES_SQL, (doc.id,)).fetchall()
        if not trees:
            continue
        by_id = {}
        for tree_id, line, ordinal, _first, _last in trees:
            by_id[tree_id] = Sentence(tree_id, line, ordinal, doc)
        first = min(row[3] for row in trees)
        last = max(row[4] for row in trees)
        _fill(conn.execute(NODES_SQL, (first, last)), by_id)
        sentences.extend(by_id[row[0]] for row in trees)
    return sentences


def _fill(rows, by_id: dict[int, Sentence]) -> None:
    for tree_id, depth, label, word, tok_first, tok_last in rows:
        sentence = by_id.get(tree_id)
        if sentence is None or tok_first is None:
            # Another document's tree, or a node with no overt word: empty elements
            # and constituents made only of them take no part in the checks.
            continue
        if word is not None:
            sentence.tokens.append(word)
            sentence.tags.append(label)
        elif depth > 0:
            # Pre-order: a node comes before the nodes below it, so chains are top-down.
            sentence.spans.setdefault((tok_first - 1, tok_last), []).append(label)
