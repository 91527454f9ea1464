"""Every number of `Treebank.frequencies` against the brute-force matcher over NLTK trees.

The expected rows come from tests/frequency/oracle.py: results of the reference
matcher (tests/reference/) counted per file, denominators from the trees NLTK reads,
normalised rates, range and DP (Gries 2008) by plain arithmetic.
"""
from __future__ import annotations

from pathlib import Path

import pytest
from conftest import demo_tree_files
from frequency.oracle import (
    RefCorpus,
    expected_rows,
    per_file,
    reference,
    same_values,
    sidecar_values,
)

from treequery.api import Treebank
from treequery.frequency.breakdown import BreakdownError

@pytest.fixture(scope="module")
def demo(demo_dir, demo_db):
    return reference("demo", demo_tree_files(demo_dir)), Treebank(demo_db, readonly=True)


@pytest.fixture(scope="module")
def wsj(wsj_dir, wsj_db):
    return reference("wsj", sorted(wsj_dir.glob("*.mrg"))), Treebank(wsj_db, readonly=True)


def cells(ref: RefCorpus, per: str | None, corpus: str, folder: Path | None = None) -> dict:
    """Resolved file path -> its cell, decided from the files themselves."""
    paths = list(ref.file_trees)
    if per is None:
        return dict.fromkeys(paths, "all")
    if per == "corpus":
        return dict.fromkeys(paths, corpus)
    if per == "document":
        return {path: Path(path).name for path in paths}
    values = sidecar_values(folder, per)
    return {path: values.get(path) for path in paths}


def engine_rows(table) -> dict[tuple, tuple]:
    return {(row.cell, row.key): row.values() for row in table.rows}


def assert_same(got: dict, expected: dict) -> None:
    assert set(got) == set(expected), (sorted(set(got) ^ set(expected), key=str)[:10])
    for place, values in expected.items():
        assert same_values(got[place], values, rel=1e-12), (place, got[place], values)


DEMO_CASES = [
    ("VP parent-of PP", (), None),
    ("VP parent-of PP", (), "corpus"),
    ("VP parent-of PP", (), "genre"),
    ("VP parent-of PP", (), "document"),
    ("v:VP parent-of PP", ("v.headtag",), "genre"),
    ("x:NP", ("x.functions",), "corpus"),
    ("np:NP parent-of PRP$", (), "genre"),   # absent from some genres: zero rows
    ("s:S { parent-of NP-SBJ; parent-of v:VP }", ("v.headword",), None),
]


@pytest.mark.parametrize("pattern, by, per", DEMO_CASES)
def test_demo_frequencies_match_the_reference(demo, demo_dir, pattern, by, per):
    ref, bank = demo
    table = bank.frequencies(pattern, by=by, per=per)
    counted = per_file(ref, pattern, by)
    expected = expected_rows(ref, counted, cells(ref, per, "demo", demo_dir), bool(by))
    assert_same(engine_rows(table), expected)
    assert table.columns[:1 + len(by)] == ["cell", *by]


def test_every_cell_has_a_row_without_by(demo, demo_dir):
    """A genre where the pattern never occurs still gets its row (0 results)."""
    ref, bank = demo
    genres = set(sidecar_values(demo_dir, "genre").values())
    rows = bank.frequencies("np:NP parent-of PRP$", per="genre").rows
    assert {row.cell for row in rows} == genres
    counted = per_file(ref, "np:NP parent-of PRP$")
    assert len({path for path, _ in counted}) < len(genres)  # the case is really tested
    assert any(row.results == 0 and row.per_million_tokens == 0 for row in rows)


WSJ_CASES = [
    ("VP parent-of PP", (), "corpus"),
    ("np:NP-SBJ", (), "document"),
    ("v:VP parent-of PP", ("v.headtag",), None),
    ("w:/^WH/", ("w.category",), "corpus"),
]


@pytest.mark.parametrize("pattern, by, per", WSJ_CASES)
def test_wsj_frequencies_match_the_reference(wsj, pattern, by, per):
    ref, bank = wsj
    table = bank.frequencies(pattern, by=by, per=per)
    counted = per_file(ref, pattern, by)
    assert_same(engine_rows(table), expected_rows(ref, counted, cells(ref, per, "wsj"), bool(by)))


def test_pattern_set_counts_each_pattern_like_alone(demo):
    _, bank = demo
    patterns = {"pp": "VP parent-of PP", "subject": "NP-SBJ"}
    table = bank.pattern_frequencies(patterns, per="genre")
    assert table.columns[:2] == ["pattern", "cell"]
    for name, text in patterns.items():
        alone = bank.frequencies(text, per="genre").rows
        assert [row for row in table.rows if row.pattern == name] == \
            [type(row)(name, *[getattr(row, f) for f in row.__slots__[1:]]) for row in alone]


def test_unknown_metadata_key_names_the_known_ones(demo):
    _, bank = demo
    with pytest.raises(BreakdownError, match="genre, source, title"):
        bank.frequencies("NP", per="genr")


def test_same_file_in_two_corpora_and_a_document_without_the_key(demo_dir, tmp_path):
    """Copies of one demo file: documents of one name stay apart, a missing key is a cell."""
    for name in ("one", "two"):
        (tmp_path / name).mkdir()
        text = (demo_dir / "letters.mrg").read_text(encoding="utf-8")
        (tmp_path / name / "letters.mrg").write_text(text, encoding="utf-8")
    with Treebank(tmp_path / "copies.db") as bank:
        bank.index([str(tmp_path / "one")], corpus="one", meta={"genre": "x"})
        bank.index([str(tmp_path / "two")], corpus="two")
        by_document = bank.frequencies("VP parent-of PP", per="document").rows
        assert [row.cell for row in by_document] == ["one/letters.mrg", "two/letters.mrg"]
        by_genre = bank.frequencies("VP parent-of PP", per="genre")
        assert [row.cell for row in by_genre.rows] == ["x", None]
        assert by_genre.rows[0].values() == by_genre.rows[1].values()
        assert by_genre.to_json()["rows"][1]["cell"] is None
        same = bank.compare("VP parent-of PP", "corpus:one", "corpus:two")
        # equal relative frequencies: G² and the log ratio are 0 by definition, p is 1
        assert (same.rows[0].g2, same.rows[0].log_ratio) == (0.0, 0.0)
        assert same.rows[0].p_value == 1.0
