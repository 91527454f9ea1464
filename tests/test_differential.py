"""Differential tests: the SQL engine and the NLTK-based brute-force matcher agree.

For every pattern of the suite (tests/reference/suite.py) both must return the same
set of results on the demo treebank, the WSJ sample and GUM. The reference reads
the files with NLTK (nltk.Tree, the independent reference library) and matches by
backtracking; the engine reads them with our reader and answers with one SQL
statement. Results are compared as (tree number in corpus order, pre-order index of
each result variable's node in its tree).
"""
from __future__ import annotations

from pathlib import Path

import pytest
from conftest import demo_tree_files
from reference.engine import engine_results, index_trees_info, tree_numbers
from reference.matcher import match_corpus
from reference.nodes import RefTree, load_corpus
from reference.suite import SUITE, SuitePattern

from treequery.api import Treebank
from treequery.pattern.ast import (
    ATTRIBUTES,
    COMPARE_OPS,
    RELATION_KINDS,
    And,
    AnyLabel,
    Attr,
    CategoryIs,
    CategoryRegex,
    Compare,
    Exists,
    Flag,
    LabelNot,
    LabelOneOf,
    Not,
    Or,
    Pattern,
    Relation,
)
from treequery.pattern.check import compile_pattern

CORPORA = ("demo", "wsj", "gum")

# The brute force over all of GUM (14,597 trees) takes several seconds for these
# patterns (a `*` node, or many candidates per tree); to keep the CI budget they
# are compared on a deterministic subset of GUM: every GUM_STRIDE-th document in
# sorted order. All other patterns are compared on the whole of GUM.
SLOW_ON_GUM = {
    "any-node", "same-node", "fragment", "label-not", "fragment-vars", "one-of",
    "label-not-simple", "block-overview", "attr-children", "attr-label-regex",
    "attr-functions", "attr-gap-pair",
}
GUM_STRIDE = 5


def corpus_files(corpus: str, folder: Path) -> list[Path]:
    """The files the *_db fixtures of conftest.py index, chosen here by the same rule."""
    if corpus == "demo":
        return demo_tree_files(folder)
    if corpus == "wsj":
        return sorted(folder.glob("*.mrg"))
    return sorted((folder / "const").glob("*.ptb"))


class Corpus:
    """A corpus loaded both ways: NLTK reference trees and the SQL index."""

    def __init__(self, name: str, folder: Path, db: Path):
        self.name = name
        self.files = corpus_files(name, folder)
        self.trees: list[RefTree] = load_corpus(self.files)
        self.numbers = tree_numbers(self.trees)
        self.bank = Treebank(db, readonly=True)
        self.info = index_trees_info(self.bank)
        self._reference: dict[str, set] = {}

    def parsed(self, entry: SuitePattern) -> Pattern:
        return compile_pattern(entry.text)

    def subset(self, entry: SuitePattern) -> tuple[list[RefTree], set[int] | None]:
        """The trees to compare on: all, or every GUM_STRIDE-th GUM document for slow ones."""
        if self.name != "gum" or entry.name not in SLOW_ON_GUM:
            return self.trees, None
        kept_files = {str(p.resolve()) for p in self.files[::GUM_STRIDE]}
        numbers = {n for n, tree in enumerate(self.trees) if tree.source in kept_files}
        return self.trees, numbers

    def reference(self, entry: SuitePattern) -> set:
        """The reference results (cached: the vacuity check reuses them)."""
        if entry.name not in self._reference:
            trees, keep = self.subset(entry)
            if keep is not None:
                # Match only the kept trees but keep their corpus-order numbers.
                chosen = [tree for n, tree in enumerate(trees) if n in keep]
                renumber = [n for n in range(len(trees)) if n in keep]
                found = match_corpus(self.parsed(entry), chosen, entry.count_empty)
                self._reference[entry.name] = {(renumber[i], nodes) for i, nodes in found}
            else:
                self._reference[entry.name] = match_corpus(
                    self.parsed(entry), trees, entry.count_empty)
        return self._reference[entry.name]

    def engine(self, entry: SuitePattern) -> set:
        found = engine_results(self.bank, self.parsed(entry), self.numbers,
                               entry.count_empty, self.info)
        _, keep = self.subset(entry)
        if keep is not None:
            found = {result for result in found if result[0] in keep}
        return found


_LOADED: dict[str, Corpus] = {}


@pytest.fixture(params=CORPORA)
def corpus(request) -> Corpus:
    name = request.param
    if name not in _LOADED:
        folder = request.getfixturevalue(f"{name}_dir")
        db = request.getfixturevalue(f"{name}_db")
        _LOADED[name] = Corpus(name, folder, db)
    return _LOADED[name]


def describe(results: set, trees: list[RefTree], limit: int = 5) -> str:
    lines = []
    for number, nodes in sorted(results)[:limit]:
        tree = trees[number]
        labels = [tree.nodes[i].label for i in nodes]
        lines.append(f"  {tree.source}#{tree.ordinal} nodes {nodes} {labels}")
    return "\n".join(lines)


# ---------------------------------------------------------------- the trees themselves

def test_index_holds_the_trees_nltk_reads(corpus: Corpus):
    """Same trees per file and same node count: the numbering both sides use agrees."""
    per_file: dict[str, int] = {}
    for (path, _ordinal), _ in corpus.info.values():
        per_file[path] = per_file.get(path, 0) + 1
    expected: dict[str, int] = {}
    for tree in corpus.trees:
        expected[tree.source] = expected.get(tree.source, 0) + 1
    assert per_file == expected
    (nodes,) = corpus.bank.conn.execute("SELECT count(*) FROM node").fetchone()
    assert nodes == sum(len(tree.nodes) for tree in corpus.trees)


# ---------------------------------------------------------------- every suite pattern

@pytest.mark.parametrize("entry", SUITE, ids=[p.name for p in SUITE])
def test_engine_matches_reference(corpus: Corpus, entry: SuitePattern):
    expected = corpus.reference(entry)
    got = corpus.engine(entry)
    if got != expected:
        pytest.fail(
            f"{entry.name} on {corpus.name}: engine {len(got)} results, reference "
            f"{len(expected)}\nonly in the engine:\n{describe(got - expected, corpus.trees)}"
            f"\nonly in the reference:\n{describe(expected - got, corpus.trees)}\n"
            f"pattern:\n{entry.text}")


@pytest.mark.parametrize("entry", SUITE, ids=[p.name for p in SUITE])
def test_suite_pattern_is_not_vacuous(request, entry: SuitePattern):
    """A pattern that matches nothing anywhere compares nothing; say so unless intended.

    Intended-empty patterns are those the language definition rules out (grammar
    README: a missing value makes a comparison false; nodes without overt words
    neither precede nor follow), so the reference must find nothing for them.
    """
    counts = {}
    for name in ("wsj", "gum"):
        try:
            request.getfixturevalue(f"{name}_dir")
        except pytest.skip.Exception:
            continue
        if name not in _LOADED:
            _LOADED[name] = Corpus(name, request.getfixturevalue(f"{name}_dir"),
                                   request.getfixturevalue(f"{name}_db"))
        counts[name] = len(_LOADED[name].reference(entry))
    if not counts:
        pytest.skip("needs the WSJ sample or GUM")
    if entry.expect_empty:
        assert set(counts.values()) == {0}, counts
    else:
        assert any(counts.values()), f"{entry.name} matches nothing: {counts}"


# ---------------------------------------------------------------- suite coverage

def _walk(node, found: set[str]) -> None:
    """Collect the construct names a parsed pattern uses."""
    if isinstance(node, Relation):
        found.add(f"rel:{node.kind}")
        if node.kind == "dominates" and node.max_depth is not None:
            exact = node.min_depth == node.max_depth
            found.add("rel:at-depth" if exact else "rel:within")
    elif isinstance(node, Compare):
        found.add(f"op:{node.op}")
        found.add(f"attr:{node.left.name}")
        if isinstance(node.right, Attr):
            found.add("attr-vs-attr")
            found.add(f"attr:{node.right.name}")
    elif isinstance(node, Flag):
        found.add(f"attr:{node.attr.name}")
    elif isinstance(node, (And, Or)):
        found.add(type(node).__name__)
        for item in node.items:
            _walk(item, found)
    elif isinstance(node, Not):
        found.add("Not")
        if isinstance(node.item, Relation) and node.item.kind == "same-node":
            found.add("not-same-node")
        _walk(node.item, found)
    elif isinstance(node, Exists):
        found.add("Exists")
        for var in node.vars:
            _walk_test(var.test.label, found)
        _walk(node.condition, found)


def _walk_test(test, found: set[str]) -> None:
    found.add(type(test).__name__)
    if isinstance(test, CategoryIs) and test.functions:
        found.add("functions-in-test")
    if isinstance(test, (LabelOneOf,)):
        for option in test.options:
            _walk_test(option, found)
    if isinstance(test, LabelNot):
        _walk_test(test.inner, found)


# Relation words as listed in the relations table of grammar/README.md.
RELATION_WORDS = (
    "dominates", "dominated-by", "parent-of", "child-of", "precedes", "follows",
    "just-before", "just-after", "sister-of", "left-sister-of", "right-sister-of",
    "immediate-left-sister-of", "immediate-right-sister-of", "first-child-of",
    "has-first-child", "last-child-of", "has-last-child", "only-child-of", "has-only-child",
    "coindexed-with", "antecedent-of", "trace-of", "correspondent-of", "remnant-of",
    "c-commands", "c-commanded-by", "head-of", "has-head", "lexical-head-of",
    "has-lexical-head", "same-span-as", "starts-with", "at-start-of", "ends-with", "at-end-of",
)


def test_suite_covers_every_construct():
    found: set[str] = set()
    for entry in SUITE:
        pattern = compile_pattern(entry.text)
        for var in pattern.vars:
            _walk_test(var.test.label, found)
            if var.test.word is not None:
                found.add("word-test")
            if var.name.startswith("_") and not var.name[1:2].isdigit():
                found.add("underscore-name")
        _walk(pattern.condition, found)
        if not pattern.reported:
            found.add("unnamed-only")
        if len(pattern.result_vars) > 1:
            found.add("multi-var")
        if entry.count_empty:
            found.add("count-empty")
    needed = {f"rel:{kind}" for kind in RELATION_KINDS} | {"rel:within", "rel:at-depth"}
    needed |= {f"op:{op}" for op in COMPARE_OPS} | {f"attr:{name}" for name in ATTRIBUTES}
    needed |= {cls.__name__ for cls in (AnyLabel, CategoryIs, CategoryRegex, LabelOneOf,
                                        LabelNot, Not, Or, Exists)}
    needed |= {"functions-in-test", "word-test", "underscore-name", "unnamed-only",
               "multi-var", "count-empty", "attr-vs-attr", "not-same-node"}
    assert needed - found == set()
    texts = "\n".join(entry.text for entry in SUITE)
    missing_words = [word for word in RELATION_WORDS if f" {word} " not in texts.replace(
        "\n", " ").replace("{", " ").replace(";", " ") + " "]
    assert missing_words == []
    assert all(mark in texts for mark in ("#", "{", "(", "'", "within", "at depth"))
    assert len(SUITE) >= 45
    assert len({entry.name for entry in SUITE}) == len(SUITE)
