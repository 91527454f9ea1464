"""Concordance lines checked against NLTK's reading of the source trees (file + line)."""
from __future__ import annotations

import os
from collections import Counter
from pathlib import Path

import pytest


from results.helpers import (
    REPO_ROOT,
    category,
    cli,
    kwic_expected,
    nltk_tree_at,
    overt_positions,
    split_kwic,
)

PATTERN = "vp:VP parent-of o:NP"


def nltk_rows(tree) -> Counter:
    """Every (VP, NP child) pair of one tree, as the concordance should show the NP."""
    rows = Counter()
    overt = overt_positions(tree)
    for pos in tree.treepositions():
        node = tree[pos]
        if not hasattr(node, "label") or category(node.label()) != "VP":
            continue
        for i, child in enumerate(node):
            if hasattr(child, "label") and category(child.label()) == "NP":
                rows[kwic_expected(tree, pos + (i,), overt)] += 1
    return rows


def kwic_rows(db: Path) -> dict[tuple[str, int], Counter]:
    """Concordance rows (untrimmed: --width 0) grouped by source file and line."""
    output = cli("find", "--db", str(db), PATTERN, "--format", "kwic", "--kwic-var", "o",
                 "--width", "0", "--color", "never")
    by_tree: dict[tuple[str, int], Counter] = {}
    for line in output.splitlines():
        left, middle, right, where = split_kwic(line)
        path, _, line_number = where.split("  tree ")[0].rpartition(":")
        by_tree.setdefault((path, int(line_number)), Counter())[(left, middle, right)] += 1
    return by_tree


def check_against_nltk(db: Path) -> int:
    by_tree = kwic_rows(db)
    assert by_tree, "the pattern should match somewhere"
    for (path, line), rows in by_tree.items():
        assert rows == nltk_rows(nltk_tree_at(path, line)), f"{path}:{line}"
    return sum(sum(rows.values()) for rows in by_tree.values())


def test_demo_concordance_matches_nltk_leaves(demo_db, monkeypatch):
    monkeypatch.chdir(REPO_ROOT)
    assert check_against_nltk(demo_db) > 100


def test_wsj_concordance_matches_nltk_leaves(wsj_db, monkeypatch):
    # WSJ: Penn Treebank sample, read in place; leaves() minus -NONE- is the sentence.
    monkeypatch.chdir(REPO_ROOT)
    assert check_against_nltk(wsj_db) > 1000


@pytest.mark.skipif(os.name == "nt", reason="paths in lines use '/'")
def test_kwic_is_aligned_on_the_match(demo_db, monkeypatch):
    monkeypatch.chdir(REPO_ROOT)
    output = cli("find", "--db", str(demo_db), PATTERN, "--format", "kwic", "--width", "30",
                 "--limit", "20")
    columns = {line.index(" | ") for line in output.splitlines()}
    assert columns == {30}  # every left context is cut or padded to exactly --width
