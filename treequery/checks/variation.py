"""Variation nuclei: word strings that are a constituent somewhere and recur differently.

Method of Dickinson & Meurers (2003, "Detecting inconsistencies in treebanks", TLT 2).
Decisions where the method leaves room (documented in RULES.md, section "Variation"):
- strings are of overt words; empty elements are left out, so a constituent that
  holds a trace covers the overt words around it;
- punctuation words belong to strings and contexts, but a string made only of
  punctuation is never a nucleus;
- a constituent is a phrasal node other than the root of its tree; when several
  nodes cover exactly the same words (a unary chain), the occurrence's label is
  their categories top-down joined by '/', a repeated category written once;
- an occurrence where the words form no constituent is labelled NIL.
"""
from __future__ import annotations

import sqlite3
from collections import Counter, defaultdict
from collections.abc import Iterable, Sequence

from .context import Site, widest_context
from .model import NIL, Occurrence, Variation
from .sentences import Lexicon, Sentence, read_lexicon, read_sentences, select_documents

CONCORDANCE_WORDS = 8  # overt words shown on each side of an occurrence


def find_variation_nuclei(conn: sqlite3.Connection, max_length: int = 6, min_length: int = 1,
                          min_context: int = 1, non_fringe: bool = False,
                          categories: Iterable[str] = (), corpora: Iterable[str] = (),
                          documents: Iterable[str] = (),
                          with_functions: bool = False) -> list[Variation]:
    """Every variation nucleus of the selected documents, most shared context first.

    `categories` keeps only strings that are a constituent of one of these categories
    somewhere; `with_functions` compares labels with their function tags (NP-TMP).
    """
    lexicon = read_lexicon(conn)
    sentences = read_sentences(conn, select_documents(conn, corpora, documents))
    labeller = _ChainLabeller(lexicon, with_functions)
    wanted = set(categories)
    strings = _constituent_strings(sentences, lexicon, labeller, min_length, max_length, wanted)
    found = []
    for key, places in _occurrences(sentences, strings).items():
        sites = [Site(sentences[s].tokens, a, a + len(key),
                      labeller.label(sentences[s].spans.get((a, a + len(key)))))
                 for s, a in places]
        variation = make_variation("nucleus", sites, [sentences[s] for s, _ in places],
                                   lexicon, min_context, non_fringe)
        if variation is not None:
            found.append(variation)
    return sorted(found, key=Variation.rank_key)


class _ChainLabeller:
    """Turns a chain of label codes into the label shown and compared; caches by chain."""

    def __init__(self, lexicon: Lexicon, with_functions: bool):
        self.lexicon, self.with_functions = lexicon, with_functions
        self.cache: dict[tuple[int, ...], str] = {}

    def label(self, chain: list[int] | None) -> str:
        if not chain:
            return NIL
        key = tuple(chain)
        if key not in self.cache:
            names: list[str] = []
            for code in chain:
                name = self.lexicon.label_name(code, self.with_functions)
                if not names or names[-1] != name:
                    names.append(name)
            self.cache[key] = "/".join(names)
        return self.cache[key]

    def categories(self, chain: list[int]) -> set[str]:
        return {self.lexicon.label_category[code] for code in chain}


def _constituent_strings(sentences: Sequence[Sentence], lexicon: Lexicon,
                         labeller: _ChainLabeller, min_length: int, max_length: int,
                         wanted: set[str]) -> set[tuple[int, ...]]:
    strings = set()
    for sentence in sentences:
        for (start, end), chain in sentence.spans.items():
            if not min_length <= end - start <= max_length:
                continue
            if wanted and not wanted & labeller.categories(chain):
                continue
            key = tuple(sentence.tokens[start:end])
            if not all(word in lexicon.punctuation for word in key):
                strings.add(key)
    return strings


def _occurrences(sentences: Sequence[Sentence], strings: set[tuple[int, ...]]
                 ) -> dict[tuple[int, ...], list[tuple[int, int]]]:
    """Every place (sentence number, start) where one of `strings` occurs."""
    lengths = sorted({len(key) for key in strings})
    firsts = {key[0] for key in strings}  # cheap filter before building an n-gram
    places: dict[tuple[int, ...], list[tuple[int, int]]] = defaultdict(list)
    for number, sentence in enumerate(sentences):
        tokens = sentence.tokens
        for start, word in enumerate(tokens):
            if word not in firsts:
                continue
            for length in lengths:
                if start + length > len(tokens):
                    break
                key = tuple(tokens[start:start + length])
                if key in strings:
                    places[key].append((number, start))
    return places


def make_variation(kind: str, sites: Sequence[Site], sentences: Sequence[Sentence],
                   lexicon: Lexicon, min_context: int, non_fringe: bool) -> Variation | None:
    """A Variation for `sites` (one per sentence in `sentences`), or None if it does not qualify."""
    labels = Counter(site.label for site in sites)
    if len(labels) < 2:
        return None
    shared = widest_context(sites, non_fringe)
    if shared is None or shared.size < min_context:
        return None
    members = set(shared.members)
    occurrences = tuple(_occurrence(site, sentence, lexicon, number in members)
                        for number, (site, sentence) in enumerate(zip(sites, sentences,
                                                                      strict=True)))
    example = sites[shared.members[0]]
    return Variation(
        kind=kind,
        words=_text(example.tokens[example.start:example.end], lexicon),
        length=example.end - example.start,
        labels=tuple(sorted(labels.items(), key=lambda item: (-item[1], item[0]))),
        context_left=shared.left,
        context_right=shared.right,
        context_text=_context_text(example, shared.left, shared.right, lexicon),
        occurrences=occurrences,
    )


def _occurrence(site: Site, sentence: Sentence, lexicon: Lexicon, shared: bool) -> Occurrence:
    tokens = site.tokens
    return Occurrence(
        tree_id=sentence.tree_id,
        document=sentence.document.name,
        path=sentence.document.path,
        line=sentence.line,
        ordinal=sentence.ordinal,
        start=site.start + 1,
        end=site.end,
        label=site.label,
        left=_text(tokens[max(0, site.start - CONCORDANCE_WORDS):site.start], lexicon),
        words=_text(tokens[site.start:site.end], lexicon),
        right=_text(tokens[site.end:site.end + CONCORDANCE_WORDS], lexicon),
        shared=shared,
    )


def _context_text(site: Site, left: int, right: int, lexicon: Lexicon) -> str:
    before = _text(site.tokens[site.start - left:site.start], lexicon)
    inside = _text(site.tokens[site.start:site.end], lexicon)
    after = _text(site.tokens[site.end:site.end + right], lexicon)
    return " ".join(part for part in (before, f"[{inside}]", after) if part)


def _text(codes: Sequence[int], lexicon: Lexicon) -> str:
    return " ".join(lexicon.word_form[code] for code in codes)
