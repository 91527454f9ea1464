"""Concordance lines: left context | matched words | right context, aligned on the match."""
from __future__ import annotations

from treequery.errors import TreequeryError
from treequery.index.trees import TreeNode
from treequery.results.display import Painter, location, shown_name
from treequery.results.model import Result

DEFAULT_WIDTH = 35
ELLIPSIS = "…"
SEPARATOR = " | "
LOCATION_MARK = "#"


def kwic_var(result_vars: tuple[str, ...] | list[str], chosen: str | None) -> str:
    """The variable whose words form the middle column: the chosen one, else the first."""
    if chosen is None:
        return result_vars[0]
    for var in result_vars:
        if chosen in (var, shown_name(var)):
            return var
    known = ", ".join(shown_name(v) for v in result_vars)
    raise TreequeryError(f"--kwic-var {chosen}: not a result variable (results: {known})")


def match_span(tree: TreeNode, node_id: int) -> tuple[int, int]:
    """The 0-based [start, end) slice of the tree's overt tokens that a node covers.

    A node with no overt word (an empty element) gets an empty slice at its place,
    so the concordance still shows where it stands in the sentence.
    """
    node = tree.find(node_id)
    if node is None:
        raise TreequeryError(f"node {node_id} is not in the tree")
    if node.tok_first is not None:
        return node.tok_first - 1, node.tok_last
    first_leaf = node.leaves()[0].id
    before = sum(1 for leaf in tree.leaves() if leaf.id < first_leaf and not leaf.empty)
    return before, before


def fit_left(text: str, width: int) -> str:
    """The end of `text`, at most `width` characters, right-aligned (0: all of it)."""
    if width == 0:
        return text
    if len(text) > width:
        text = ELLIPSIS + text[len(text) - width + 1:]
    return text.rjust(width)


def fit_right(text: str, width: int) -> str:
    """The start of `text`, at most `width` characters (0: all of it)."""
    if width and len(text) > width:
        text = text[:width - 1] + ELLIPSIS
    return text


def kwic_columns(result: Result, tree: TreeNode, var: str) -> tuple[str, str, str]:
    """Left context, matched words and right context, untrimmed."""
    tokens = tree.tokens()
    node = result.bindings[var]
    start, end = match_span(tree, node.id)
    middle = " ".join(tokens[start:end])
    if start == end:  # an empty element: show what stands there, as written
        found = tree.find(node.id)
        middle = "<" + " ".join(leaf.word for leaf in found.leaves()) + ">"
    return " ".join(tokens[:start]), middle, " ".join(tokens[end:])


def kwic_line(result: Result, tree: TreeNode, var: str, width: int, painter: Painter) -> str:
    """One concordance line; the location comes last so the match column stays aligned."""
    left, middle, right = kwic_columns(result, tree, var)
    middle = painter.words(middle, shown_name(var))
    where = painter.dim(f"  {LOCATION_MARK} {location(result)}")
    return SEPARATOR.join([fit_left(left, width), middle, fit_right(right, width)]) + where
