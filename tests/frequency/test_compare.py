"""`Treebank.compare` against the brute-force matcher, SciPy's G² and plain arithmetic.

Each side's counts come from the reference matcher's results (tests/reference/) over
the files the side names; G² is scipy.stats.power_divergence(lambda_="log-likelihood")
on the two observed frequencies and their expected values (Rayson & Garside 2000),
the p-value scipy.stats.chi2.sf with one degree of freedom, the log ratio
(Hardie 2014) plain arithmetic (see tests/frequency/oracle.py).
"""
from __future__ import annotations

from pathlib import Path

import pytest
from conftest import demo_tree_files
from frequency.oracle import (
    RefCorpus,
    g2_p_ratio,
    per_file,
    reference,
    same_values,
    sidecar_values,
)

from treequery.api import Treebank
from treequery.frequency.breakdown import BreakdownError
from treequery.frequency.compare import parse_side

@pytest.fixture(scope="module")
def demo(demo_dir, demo_db):
    return reference("demo", demo_tree_files(demo_dir)), Treebank(demo_db, readonly=True)


def side_expected(ref: RefCorpus, files: list[str], counted: dict) -> dict:
    """Sizes of the side, and per key (results, distinct trees), from the reference."""
    per_key: dict[tuple, list[int]] = {}
    for (path, key), (results, trees) in counted.items():
        if path in files:
            slot = per_key.setdefault(key, [0, 0])
            slot[0] += results
            slot[1] += trees
    return {"trees": sum(ref.file_trees[p] for p in files),
            "tokens": sum(ref.file_tokens[p] for p in files), "keys": per_key}


def expected_comparison(a: dict, b: dict, grouped: bool) -> dict[tuple, tuple]:
    keys = set(a["keys"]) | set(b["keys"]) if grouped else {()}
    rows = {}
    for key in keys:
        fa, ta = a["keys"].get(key, [0, 0])
        fb, tb = b["keys"].get(key, [0, 0])
        g2, p, ratio = g2_p_ratio(fa, fb, a["tokens"], b["tokens"])
        rows[key] = (fa, ta, fb, tb, fa * 1000 / a["trees"], fa * 1e6 / a["tokens"],
                     fb * 1000 / b["trees"], fb * 1e6 / b["tokens"], g2, p, ratio)
    return rows


def engine_comparison(comparison) -> dict[tuple, tuple]:
    return {row.key: (row.a_results, row.a_trees, row.b_results, row.b_trees,
                      row.a_per_1000_trees, row.a_per_million_tokens, row.b_per_1000_trees,
                      row.b_per_million_tokens, row.g2, row.p_value, row.log_ratio)
            for row in comparison.rows}


def check(comparison, expected: dict, a: dict, b: dict) -> None:
    got = engine_comparison(comparison)
    assert set(got) == set(expected)
    for key, values in expected.items():
        assert same_values(got[key], values, rel=1e-9, abs_tol=1e-12), (key, got[key], values)
    assert (comparison.a.trees, comparison.a.tokens) == (a["trees"], a["tokens"])
    assert (comparison.b.trees, comparison.b.tokens) == (b["trees"], b["tokens"])
    g2s = [row.g2 for row in comparison.rows]
    assert g2s == sorted(g2s, reverse=True)


CASES = [
    ("VP parent-of PP", (), "genre:letter", "genre:story"),
    ("x:NP", ("x.functions",), "genre:notice", "genre:logbook"),
    ("v:VP parent-of PP", ("v.headtag",), "document:letters.mrg", "document:help_desk.mrg"),
    ("s:S parent-of NP-SBJ", (), "corpus:demo", "document:letters.mrg"),
]


@pytest.mark.parametrize("pattern, by, side_a, side_b", CASES[:3])
def test_demo_comparison_matches_the_reference(demo, demo_dir, pattern, by, side_a, side_b):
    ref, bank = demo
    counted = per_file(ref, pattern, by)
    genre = sidecar_values(demo_dir, "genre")
    sides = []
    for text in (side_a, side_b):
        kind, _, value = text.partition(":")
        files = [p for p in ref.file_trees
                 if (genre.get(p) if kind == "genre" else Path(p).name) == value]
        sides.append(side_expected(ref, files, counted))
    comparison = bank.compare(pattern, side_a, side_b, by=by)
    check(comparison, expected_comparison(*sides, bool(by)), *sides)


def test_index_side_against_a_corpus(demo, demo_db, wsj_dir, wsj_db):
    """index:PATH opens another index read-only; its whole content is the side."""
    ref, bank = demo
    wsj = reference("wsj", sorted(wsj_dir.glob("*.mrg")))
    pattern, by = "v:VP parent-of PP", ("v.headtag",)
    a = side_expected(ref, list(ref.file_trees), per_file(ref, pattern, by))
    b = side_expected(wsj, list(wsj.file_trees), per_file(wsj, pattern, by))
    comparison = bank.compare(pattern, "corpus:demo", f"index:{wsj_db}", by=by)
    check(comparison, expected_comparison(a, b, True), a, b)


@pytest.mark.parametrize("text, kind, value, key", [
    ("corpus:demo", "corpus", "demo", None),
    ("document:letters.mrg", "document", "letters.mrg", None),
    ("index:/data/other.db", "index", "/data/other.db", None),
    ("genre:letter", "meta", "letter", "genre"),
    ("index:C:/x.db", "index", "C:/x.db", None),   # only the first colon separates
])
def test_side_kinds(text, kind, value, key):
    side = parse_side(text)
    assert (side.kind, side.value, side.key) == (kind, value, key)


@pytest.mark.parametrize("text", ["genre", "genre:", ":letter", ""])
def test_bad_side_names_what_is_accepted(text):
    with pytest.raises(BreakdownError, match="corpus:NAME, document:NAME, index:PATH"):
        parse_side(text)


def test_side_without_documents_lists_the_values(demo):
    _, bank = demo
    with pytest.raises(BreakdownError, match="letter, logbook, minutes"):
        bank.compare("NP", "genre:leter", "genre:story")
    with pytest.raises(BreakdownError, match="keys: genre, source, title"):
        bank.compare("NP", "genr:letter", "genre:story")


def test_overlapping_sides_are_refused(demo):
    _, bank = demo
    with pytest.raises(BreakdownError, match="share 1 document"):
        bank.compare(*CASES[3][:1], CASES[3][2], CASES[3][3])
