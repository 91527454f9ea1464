"""GUM broken down by genre, the genre read from each document's CoNLL-U file.

The genre of `const/NAME.ptb` is the `# meta::genre` comment of `dep/NAME.conllu`,
read with the `conllu` library; the token count per genre is the number of CoNLL-U
token lines with an integer ID (multi-word ranges `1-2` and empty nodes `1.1` are not
tokens; Universal Dependencies, CoNLL-U format). The GUM corpus README says the two
layers hold the same sentences in the same order.
"""
from __future__ import annotations

from collections import defaultdict
from pathlib import Path

import conllu
import pytest

from treequery.api import Treebank

PATTERNS = ["VP parent-of PP", "np:NP parent-of PRP$", "x:SBAR"]


def document_genre_tokens(path: Path) -> tuple[str, int]:
    with open(path, encoding="utf-8") as handle:
        sentences = conllu.parse(handle.read())
    genre = sentences[0].metadata["meta::genre"]
    tokens = sum(1 for sentence in sentences for token in sentence
                 if isinstance(token["id"], int))
    return genre, tokens


@pytest.fixture(scope="module")
def gum_by_genre(gum_dir, tmp_path_factory):
    """An index of GUM with `genre` given at indexing time, and the CoNLL-U token counts."""
    files: dict[str, list[str]] = defaultdict(list)
    tokens: dict[str, int] = defaultdict(int)
    for ptb in sorted((gum_dir / "const").glob("*.ptb")):
        genre, count = document_genre_tokens(gum_dir / "dep" / f"{ptb.stem}.conllu")
        files[genre].append(str(ptb))
        tokens[genre] += count
    bank = Treebank(tmp_path_factory.mktemp("gum-genre") / "gum.db")
    for genre, paths in sorted(files.items()):
        bank.index(paths, corpus="gum", meta={"genre": genre})
    yield bank, dict(tokens), {genre: len(paths) for genre, paths in files.items()}
    bank.close()


@pytest.mark.parametrize("pattern", PATTERNS)
def test_genre_counts_sum_to_the_corpus_total(gum_by_genre, pattern):
    bank, _, _ = gum_by_genre
    rows = bank.frequencies(pattern, per="genre").rows
    total = bank.count(pattern)
    assert sum(row.results for row in rows) == total.results
    assert sum(row.trees for row in rows) == total.trees
    assert total.results > 0


def test_genre_token_denominators_equal_conllu_tokens(gum_by_genre):
    bank, tokens, documents = gum_by_genre
    rows = bank.frequencies("VP parent-of PP", per="genre").rows
    assert {row.cell: row.cell_tokens for row in rows} == tokens
    assert {row.cell: row.cell_documents for row in rows} == documents
    assert len(tokens) > 1
