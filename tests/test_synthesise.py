"""The corpus synthesiser (tests/bench/synthesise.py): NLTK and the index read its output,
coindexation stays consistent, the shape follows the source, a seed fixes the bytes."""
from __future__ import annotations

import gzip
import json
import math
import re
import statistics
from collections import Counter
from dataclasses import dataclass
from functools import lru_cache
from pathlib import Path

import pytest
from bench.synthesise import (
    MANIFEST,
    is_consistent,
    load_source,
    parse_trees,
    write_corpus,
)
from nltk import Tree
from reference.nodes import read_nltk_trees

from treequery.api import Treebank

TREES = 2000
PER_FILE = 300

# Treebank II indices (Bies, Ferguson, Katz & MacIntyre 1995, "Bracketing Guidelines
# for Treebank II Style"): a label NP-SBJ-1 carries coindex 1 (the antecedent), NP=2
# a gapping index that refers to the constituent labelled -2, and an empty element
# under -NONE- written *T*-1, *-1, *ICH*-1, ... refers to the constituent labelled -1.
# Written here without the synthesiser's or the reader's code.
EMPTY = "-NONE-"


def label_parts(label: str) -> tuple[str, list[int], list[int]]:
    """(label without indices, coindices, gapping indices); -NONE-, -LRB- and
    punctuation tags are whole labels."""
    if not label or label.startswith("-") or not re.search(r"[A-Za-z0-9]", label):
        return label, [], []
    head, *rest = re.split(r"(?=[-=])", label, maxsplit=0)
    kept, coindices, gaps = [head], [], []
    for piece in rest:
        if piece[1:].isdigit():
            (coindices if piece[0] == "-" else gaps).append(int(piece[1:]))
        else:
            kept.append(piece)
    return "".join(kept), coindices, gaps


def index_uses(tree: Tree) -> tuple[Counter, set[int]]:
    """Antecedent labels per index, and the indices referred to (gaps, empty elements)."""
    antecedents, references = Counter(), set()
    for node in tree.subtrees():
        _, coindices, gaps = label_parts(node.label())
        antecedents.update(coindices)
        references.update(gaps)
        if node.label() == EMPTY and isinstance(node[0], str):
            found = re.fullmatch(r".+?-(\d+)", node[0])
            if found:
                references.add(int(found.group(1)))
    return antecedents, references


def read_lines(path: Path) -> list[str]:
    opener = gzip.open if path.suffix == ".gz" else open
    with opener(path, "rt", encoding="utf-8") as handle:
        return [line for line in handle if line.strip()]


@lru_cache(maxsize=4)  # each test reads the same folders; parse them once
def synth_trees(folder: Path) -> list[Tree]:
    return [Tree.fromstring(line) for path in sorted(folder.glob("synth-*"))
            for line in read_lines(path)]


def shape(trees: list[Tree]) -> dict:
    leaves = [leaf_parent for tree in trees for leaf_parent in tree.subtrees()
              if isinstance(leaf_parent[0], str)]
    return {
        "nodes": statistics.mean(len(list(t.subtrees())) for t in trees),
        "height": statistics.mean(t.height() for t in trees),
        "max_height": max(t.height() for t in trees),
        "empty_share": sum(node.label() == EMPTY for node in leaves) / len(leaves),
        "indexed_share": sum(bool(index_uses(t)[1]) for t in trees) / len(trees),
    }


def local_configurations(trees: list[Tree]) -> set[tuple[str, str]]:
    """(parent label, child label) pairs, indices removed."""
    return {(label_parts(node.label())[0], label_parts(child.label())[0])
            for tree in trees for node in tree.subtrees() for child in node
            if isinstance(child, Tree)}


@dataclass(frozen=True)
class Source:
    """A source corpus read by NLTK, and the facts the tests compare with."""

    trees: list[Tree]
    shape: dict
    configurations: set[tuple[str, str]]
    texts: set[str]


def read_source(folder: Path) -> Source:
    files = sorted(p for p in folder.rglob("*") if p.suffix in (".mrg", ".ptb"))
    trees = [tree for path in files for tree in read_nltk_trees(path)]
    return Source(trees, shape(trees), local_configurations(trees),
                  {tree.pformat(margin=10**9) for tree in trees})


# ---------------------------------------------------------------- fixtures

@pytest.fixture(scope="module")
def wsj_synth(tmp_path_factory, wsj_dir) -> Path:
    out = tmp_path_factory.mktemp("synth-wsj")
    write_corpus(wsj_dir, out, TREES, seed=7, per_file=PER_FILE)
    return out


@pytest.fixture(scope="module")
def gum_synth(tmp_path_factory, gum_dir) -> Path:
    # The whole GUM folder: only const/*.ptb are treebank files (dep/*.conllu are not).
    out = tmp_path_factory.mktemp("synth-gum")
    write_corpus(gum_dir, out, TREES, seed=7, per_file=PER_FILE, compress=True)
    return out


@pytest.fixture(scope="module")
def wsj_source(wsj_dir) -> Source:
    return read_source(wsj_dir)


@pytest.fixture(scope="module")
def gum_source(gum_dir) -> Source:
    return read_source(gum_dir / "const")


@pytest.fixture(params=["wsj", "gum"])
def synth(request) -> tuple[Path, Source]:
    """(synthesised folder, its source corpus read by NLTK) for each source corpus."""
    return (request.getfixturevalue(f"{request.param}_synth"),
            request.getfixturevalue(f"{request.param}_source"))


# ---------------------------------------------------------------- reading the output

def test_files_and_manifest(synth):
    folder, source = synth
    files = sorted(folder.glob("synth-*"))
    assert len(files) == math.ceil(TREES / PER_FILE)
    assert [len(read_lines(p)) for p in files] == [PER_FILE] * 6 + [TREES - 6 * PER_FILE]
    manifest = json.loads((folder / MANIFEST).read_text())
    # Every source tree was read: kept ones plus those left out as inconsistent.
    assert manifest["source_trees"] + manifest["source_trees_dropped"] == len(source.trees)


def test_nltk_reads_every_tree(synth):
    folder, _ = synth
    trees = synth_trees(folder)  # Tree.fromstring raises on anything it cannot read
    assert len(trees) == TREES


def test_index_reads_every_tree(synth, tmp_path):
    folder, _ = synth
    trees = synth_trees(folder)
    with Treebank(tmp_path / "synth.db") as bank:
        report = bank.index([str(folder)])
        info = bank.info()
    assert report.trees == TREES and info["trees"] == TREES
    assert report.skipped == [] and report.failed_files == [] and info["skipped"] == 0
    # Counted by NLTK: every subtree is a node (outer bracket and preterminals included);
    # leaves under -NONE- are empty elements, the others tokens.
    leaf_parents = [n for t in trees for n in t.subtrees() if isinstance(n[0], str)]
    assert info["nodes"] == sum(len(list(t.subtrees())) for t in trees)
    assert info["empty_elements"] == sum(n.label() == EMPTY for n in leaf_parents)
    assert info["tokens"] == sum(n.label() != EMPTY for n in leaf_parents)


# ---------------------------------------------------------------- what the trees are like

def test_coindexation_consistent(wsj_synth, wsj_source):
    trees = synth_trees(wsj_synth)
    broken = []
    for number, tree in enumerate(trees):
        antecedents, references = index_uses(tree)
        # One antecedent per index; every reference has it (Bies et al. 1995).
        if any(count != 1 for count in antecedents.values()) or references - set(antecedents):
            broken.append(number)
    assert broken == []
    # Not vacuous: about as many trees use indices as in the source.
    assert shape(trees)["indexed_share"] == pytest.approx(
        wsj_source.shape["indexed_share"], rel=0.2)


def test_shape_follows_source(synth):
    folder, source = synth
    trees = synth_trees(folder)
    made, real = shape(trees), source.shape
    assert made["nodes"] == pytest.approx(real["nodes"], rel=0.15)
    assert made["height"] == pytest.approx(real["height"], rel=0.1)
    assert made["max_height"] <= real["max_height"]
    assert made["empty_share"] == pytest.approx(real["empty_share"], rel=0.2, abs=0.002)
    # Every parent -> child configuration is one the annotators wrote.
    assert local_configurations(trees) <= source.configurations


def test_recombines_rather_than_copies(synth):
    folder, source = synth
    trees = synth_trees(folder)
    copies = sum(tree.pformat(margin=10**9) in source.texts for tree in trees)
    assert copies < 0.2 * len(trees)
    assert len({t.pformat(margin=10**9) for t in trees}) > 0.8 * len(trees)


# ---------------------------------------------------------------- determinism

def _bytes(folder: Path) -> dict[str, bytes]:
    return {p.name: p.read_bytes() for p in sorted(folder.glob("synth-*"))}


@pytest.mark.parametrize("compress", [False, True])
def test_same_seed_same_bytes(wsj_dir, tmp_path, compress):
    for name, seed in (("a", 3), ("b", 3), ("c", 4)):
        write_corpus(wsj_dir, tmp_path / name, 500, seed=seed, per_file=200,
                     compress=compress)
    first, again, other = (_bytes(tmp_path / n) for n in "abc")
    assert len(first) == 3
    assert first == again
    assert all(first[name] != other[name] for name in first)


# ---------------------------------------------------------------- the closed-subtree rule

# An invented tree: the subject of "tried" controls the empty subject of "to go".
CONTROL = "( (S (NP-SBJ-1 (PRP we)) (VP (VBD tried) (S (NP-SBJ (-NONE- *-1)) " \
          "(VP (TO to) (VP (VB go)))))))"


def test_only_closed_subtrees_move(tmp_path):
    path = tmp_path / "control.mrg"
    path.write_text(CONTROL + "\n")
    bank = load_source(path)
    movable = {" ".join(Tree.fromstring(_text(node)).leaves())
               for donors in bank.donors.values() for node in donors}
    # NP-SBJ-1 and the *-1 below "tried" refer to each other: neither moves alone,
    # nor does any phrase holding one but not the other; the clause holding both does.
    assert movable == {"we tried *-1 to go", "to go", "go"}


def test_inconsistent_source_trees_are_left_out(tmp_path):
    dangling = "( (S (NP-SBJ (-NONE- *T*-2)) (VP (VBD left))))"
    twice = "( (S (NP-SBJ-1 (PRP we)) (NP-1 (PRP us)) (VP (VBD saw) (NP (-NONE- *-1)))))"
    assert is_consistent(next(parse_trees(CONTROL)))
    assert not is_consistent(next(parse_trees(dangling)))
    assert not is_consistent(next(parse_trees(twice)))
    path = tmp_path / "mixed.mrg"
    path.write_text("\n".join([CONTROL, dangling, twice]) + "\n")
    bank = load_source(path)
    assert (len(bank.trees), bank.dropped) == (1, 2)


def _text(node) -> str:
    if isinstance(node, str):
        return node
    return f"({node.label} {' '.join(_text(child) for child in node.children)})"
