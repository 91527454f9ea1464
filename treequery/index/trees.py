"""Trees back out of the index: rebuilding ParsedNode trees, bracket notation, locations."""
from __future__ import annotations

import sqlite3

from ..errors import TreequeryError
from ..read.model import ParsedNode

LOAD_NODES = """
SELECT node.id, node.parent, label.text, word.text
FROM node
JOIN label ON label.code = node.label
LEFT JOIN word ON word.code = node.word
WHERE node.id BETWEEN ? AND ?
ORDER BY node.id
"""

INDENT = "  "


def _tree_range(conn: sqlite3.Connection, tree_id: int) -> tuple[int, int, int]:
    row = conn.execute(
        "SELECT first_node, last_node, line FROM tree WHERE id = ?", (tree_id,)
    ).fetchone()
    if row is None:
        raise TreequeryError(f"there is no tree {tree_id} in the index")
    return row


def load_tree(conn: sqlite3.Connection, tree_id: int) -> ParsedNode:
    """The tree `tree_id` rebuilt from its node rows, labels and words exactly as written.

    Rows come in pre-order, so appending each node to its parent keeps sister order.
    Node positions in the source are not stored; the root carries the tree's line.
    """
    first, last, line = _tree_range(conn, tree_id)
    nodes: dict[int, ParsedNode] = {}
    root = None
    for node_id, parent, label, word in conn.execute(LOAD_NODES, (first, last)):
        node = ParsedNode(label, word=word)
        nodes[node_id] = node
        if parent is None:
            root = node
        else:
            nodes[parent].children.append(node)
    if root is None:
        raise TreequeryError(f"tree {tree_id} has no nodes in the index")
    root.line = line
    return root


def tree_location(conn: sqlite3.Connection, tree_id: int) -> dict:
    """Where tree `tree_id` came from: path, name, line, ordinal and document id."""
    row = conn.execute(
        "SELECT document.path, document.name, tree.line, tree.ordinal, document.id"
        " FROM tree JOIN document ON document.id = tree.document WHERE tree.id = ?",
        (tree_id,),
    ).fetchone()
    if row is None:
        raise TreequeryError(f"there is no tree {tree_id} in the index")
    return dict(zip(("path", "name", "line", "ordinal", "document"), row, strict=True))


def to_brackets(node: ParsedNode, indent: bool = True) -> str:
    """Bracket notation of `node`: indented like Penn files, or on one line.

    Indented layout: a phrase starts a new line indented by its depth; a preterminal
    stays on the line of the sister before it when that sister is a preterminal too
    (or when it is the first child), so `(NP (DT the) (NN dog))` stays on one line.
    The child of an unlabelled outer bracket stays on its line: `( (S`.
    Iterative, like the builder: trees can be deeper than the recursion limit.
    """
    parts: list[str] = []
    stack: list[tuple[ParsedNode | str, int]] = [(node, 0)]
    while stack:
        item, depth = stack.pop()
        if isinstance(item, str):  # a separator or a closing bracket, written as is
            parts.append(item)
        elif item.word is not None:
            parts.append(f"({item.label} {item.word})")
        else:
            parts.append(f"({item.label}")
            stack.append((")", depth))
            for child, separator in reversed(_separated(item, depth, indent)):
                stack.append((child, depth + 1))
                stack.append((separator, depth))
    return "".join(parts)


def _separated(parent: ParsedNode, depth: int, indent: bool) -> list[tuple[ParsedNode, str]]:
    """Each child of `parent` with the text that goes before it."""
    result = []
    previous_preterminal = True
    newline = "\n" + INDENT * (depth + 1)
    for child in parent.children:
        inline = not indent or (child.word is not None and previous_preterminal)
        if not result and parent.label == "":
            inline = True
        result.append((child, " " if inline else newline))
        previous_preterminal = child.word is not None
    return result
