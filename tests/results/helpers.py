"""Independent readings for the result-view tests: NLTK trees read from the source files."""
from __future__ import annotations

import functools
import re
from pathlib import Path

import nltk
from click.testing import CliRunner

from treequery.cli import main

# Penn Treebank bracket escapes (Marcus, Santorini & Marcinkiewicz 1993; the -LCB-/-LSB-
# forms as used in the WSJ files). Written from memory.
ESCAPES = {"-LRB-": "(", "-RRB-": ")", "-LCB-": "{", "-RCB-": "}", "-LSB-": "[", "-RSB-": "]"}
EMPTY_TAG = "-NONE-"  # empty elements (Bies et al. 1995, section 4)
REPO_ROOT = Path(__file__).resolve().parent.parent.parent


def cli(*args: str, env: dict | None = None) -> str:
    """Run `treequery ARGS` and return its output; fail the test on a non-zero exit."""
    result = CliRunner().invoke(main, list(args), env=env)
    assert result.exit_code == 0, (result.output, result.exception)
    return result.output


@functools.lru_cache(maxsize=8)
def file_lines(path: str) -> list[str]:
    return Path(path).read_text(encoding="utf-8").split("\n")


def tree_text_at(path: str | Path, line: int) -> str:
    """The bracketed text of the tree whose opening bracket is on `line` of `path`."""
    lines = file_lines(str(path))
    depth, taken = 0, []
    for text in lines[line - 1:]:
        taken.append(text)
        depth += text.count("(") - text.count(")")
        if depth <= 0:
            break
    return "\n".join(taken)


def nltk_tree_at(path: str | Path, line: int) -> nltk.Tree:
    return nltk.Tree.fromstring(tree_text_at(path, line))


def category(label: str) -> str:
    """Treebank II label -> category: NP-SBJ-1 -> NP, NP=2 -> NP (Bies et al. 1995)."""
    if label.startswith("-") and label.endswith("-"):
        return label
    return re.split(r"[-=]", label, maxsplit=1)[0] if label else label


def unescape(word: str) -> str:
    for written, char in ESCAPES.items():
        word = word.replace(written, char)
    return word


def overt_positions(tree: nltk.Tree) -> list[tuple]:
    """Tree positions of the overt leaves, in order (empty elements left out)."""
    return [pos for pos in tree.treepositions("leaves")
            if tree[pos[:-1]].label() != EMPTY_TAG]


def kwic_expected(tree: nltk.Tree, node_pos: tuple,
                  overt: list[tuple] | None = None) -> tuple[str, str, str]:
    """Left context, match and right context of the subtree at `node_pos`, from NLTK.

    A subtree with no overt word is shown by the concordance as its empty elements
    in angle brackets, at its place in the sentence. `overt` may be passed in when
    one tree is asked about many times.
    """
    overt = overt_positions(tree) if overt is None else overt
    words = [unescape(tree[pos]) for pos in overt]
    inside = [i for i, pos in enumerate(overt) if pos[:len(node_pos)] == node_pos]
    if inside:
        start, end = inside[0], inside[-1] + 1
        middle = " ".join(words[start:end])
    else:
        first_leaf = node_pos + tree[node_pos].leaf_treeposition(0)
        start = end = sum(1 for pos in overt if pos < first_leaf)
        middle = "<" + " ".join(tree[node_pos].leaves()) + ">"
    return " ".join(words[:start]), middle, " ".join(words[end:])


def split_kwic(line: str) -> tuple[str, str, str, str]:
    """A plain concordance line -> (left, middle, right, location)."""
    left, middle, rest = line.split(" | ", 2)
    right, _, where = rest.rpartition("  # ")
    return left.strip(), middle, right, where
