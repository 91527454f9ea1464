"""Tag variation: the same word in the same context with different part-of-speech tags.

Method of Dickinson & Meurers (2003, "Detecting errors in part-of-speech annotation",
EACL): a word tagged in more than one way is a variation; occurrences that share more
identical neighbouring words are more likely to be errors. Tags are compared as
written; empty elements are not words and are skipped, punctuation words count.
"""
from __future__ import annotations

import sqlite3
from collections import defaultdict
from collections.abc import Iterable

from .context import Site
from .model import Variation
from .sentences import read_lexicon, read_sentences, select_documents
from .variation import make_variation


def find_tag_variation(conn: sqlite3.Connection, min_context: int = 1, non_fringe: bool = False,
                       tags: Iterable[str] = (), corpora: Iterable[str] = (),
                       documents: Iterable[str] = ()) -> list[Variation]:
    """Every word with more than one tag in a shared context, most shared context first.

    `tags` keeps only words that carry one of these tags somewhere.
    """
    lexicon = read_lexicon(conn)
    sentences = read_sentences(conn, select_documents(conn, corpora, documents))
    places: dict[int, list[tuple[int, int]]] = defaultdict(list)
    tag_sets: dict[int, set[int]] = defaultdict(set)
    for number, sentence in enumerate(sentences):
        for position, (word, tag) in enumerate(zip(sentence.tokens, sentence.tags, strict=True)):
            places[word].append((number, position))
            tag_sets[word].add(tag)
    wanted = set(tags)
    found = []
    for word, tag_codes in tag_sets.items():
        names = {lexicon.label_text[code] for code in tag_codes}
        if len(names) < 2 or (wanted and not wanted & names):
            continue
        sites = [Site(sentences[s].tokens, p, p + 1,
                      lexicon.label_text[sentences[s].tags[p]]) for s, p in places[word]]
        variation = make_variation("tag", sites, [sentences[s] for s, _ in places[word]],
                                   lexicon, min_context, non_fringe)
        if variation is not None:
            found.append(variation)
    return sorted(found, key=Variation.rank_key)
