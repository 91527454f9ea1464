"""Flat encodings of trees for comparing our trees with nltk.Tree without recursion."""
from __future__ import annotations

from nltk import Tree

from treequery.read.model import ParsedNode

CLOSE = (")",)


def encode_parsed(root: ParsedNode) -> tuple:
    """Pre-order tokens of a ParsedNode tree: ('(', label), ('w', word), (')',)."""
    out = []
    stack = [root]
    while stack:
        item = stack.pop()
        if isinstance(item, tuple):  # CLOSE or a ("w", word) token
            out.append(item)
            continue
        out.append(("(", item.label))
        stack.append(CLOSE)
        if item.word is not None:
            stack.append(("w", item.word))
        stack.extend(reversed(item.children))
    return tuple(out)


def encode_nltk(tree: Tree) -> tuple:
    """The same encoding for an nltk.Tree, whose leaves are plain strings."""
    out = []
    stack = [tree]
    while stack:
        item = stack.pop()
        if item is CLOSE:
            out.append(CLOSE)
        elif isinstance(item, str):
            out.append(("w", item))
        else:
            out.append(("(", item.label()))
            stack.append(CLOSE)
            stack.extend(reversed(list(item)))
    return tuple(out)


def split_top_level(text: str) -> list[str]:
    """Split a bracketed file into its top-level bracketed expressions by counting brackets.

    Independent of our reader on purpose; valid only for well-formed files in which
    brackets inside words are escaped (true of both corpora).
    """
    trees, depth, start = [], 0, 0
    for index, char in enumerate(text):
        if char == "(":
            if depth == 0:
                start = index
            depth += 1
        elif char == ")":
            depth -= 1
            if depth == 0:
                trees.append(text[start:index + 1])
    return trees
