"""Trees back out of the index: rebuilt trees (with or without node ids), brackets, locations."""
from __future__ import annotations

import gzip
import sqlite3
from collections.abc import Iterator
from dataclasses import dataclass
from pathlib import Path

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


# ---------------------------------------------------------------- trees with node ids

@dataclass(frozen=True, slots=True)
class TreeNode:
    """One node of a tree read back from the index, with its id so results can mark it.

    `word` is the word as written (escapes kept) on a preterminal, else None; `form`
    is the un-escaped word; `empty` is True for a preterminal that is not an overt token
    (an empty element), exactly the leaves that token spans skip.
    `tok_first`/`tok_last` are the 1-based overt-token span (None when no overt word).
    """

    id: int
    label: str
    word: str | None
    form: str | None
    empty: bool
    tok_first: int | None
    tok_last: int | None
    children: tuple[TreeNode, ...] = ()

    def walk(self) -> Iterator[TreeNode]:
        """Every node of the subtree in pre-order (iterative: trees may be deep)."""
        stack = [self]
        while stack:
            node = stack.pop()
            yield node
            stack.extend(reversed(node.children))

    def leaves(self) -> list[TreeNode]:
        """The preterminals in order, empty elements included."""
        return [node for node in self.walk() if node.word is not None]

    def tokens(self) -> list[str]:
        """The overt words in order, un-escaped: what token spans count."""
        return [node.form for node in self.leaves() if not node.empty and node.form is not None]

    def find(self, node_id: int) -> TreeNode | None:
        return next((node for node in self.walk() if node.id == node_id), None)


LOAD_TREE_NODES = """
SELECT node.id, node.parent, label.text, word.text, word.form,
       node.word IS NOT NULL AND node.tok_first IS NULL,
       node.tok_first, node.tok_last
FROM node
JOIN label ON label.code = node.label
LEFT JOIN word ON word.code = node.word
WHERE node.id BETWEEN ? AND ?
ORDER BY node.id
"""


def load_tree_nodes(conn: sqlite3.Connection, tree_id: int) -> TreeNode:
    """Tree `tree_id` as TreeNode objects carrying their node ids.

    Frozen nodes are built children first: in pre-order every child has a larger id
    than its parent, so walking the rows backwards finds each node's children built.
    """
    first, last, _ = _tree_range(conn, tree_id)
    rows = conn.execute(LOAD_TREE_NODES, (first, last)).fetchall()
    if not rows:
        raise TreequeryError(f"tree {tree_id} has no nodes in the index")
    children: dict[int, list[TreeNode]] = {}
    built: TreeNode | None = None
    for node_id, parent, label, word, form, empty, tok_first, tok_last in reversed(rows):
        kids = tuple(reversed(children.pop(node_id, [])))
        built = TreeNode(node_id, label, word, form, bool(empty), tok_first, tok_last, kids)
        if parent is not None:
            children.setdefault(parent, []).append(built)
    return built


# Attribute values of one node, defined as the pattern language defines them
# (grammar/README.md, "Attributes"), for sorting results by `var.attr`.
NODE_ATTRIBUTES = """
SELECT label.category, label.text, label.functions, word.form, label.coindex, label.gapindex,
       node.n_children, IFNULL(node.tok_last - node.tok_first + 1, 0),
       node.leaf_last - node.leaf_first + 1, node.depth, node.position,
       node.tok_first, node.tok_last, label.category = '-NONE-', node.word IS NOT NULL
FROM node
JOIN label ON label.code = node.label
LEFT JOIN word ON word.code = node.word
WHERE node.id = ?
"""
NODE_ATTRIBUTE_NAMES = ("category", "label", "functions", "word", "index", "gap", "children",
                        "tokens", "leaves", "depth", "position", "start", "end", "empty",
                        "preterminal")


def node_attributes(conn: sqlite3.Connection, node_id: int) -> dict[str, object]:
    """Every attribute of node `node_id` by its pattern-language name."""
    row = conn.execute(NODE_ATTRIBUTES, (node_id,)).fetchone()
    if row is None:
        raise TreequeryError(f"there is no node {node_id} in the index")
    values = dict(zip(NODE_ATTRIBUTE_NAMES, row, strict=True))
    for flag in ("empty", "preterminal"):
        values[flag] = bool(values[flag])
    return values


# ---------------------------------------------------------------- trees by file and line

def tree_at_line(conn: sqlite3.Connection, path: str, line: int) -> int:
    """The id of the tree whose brackets span `line` of the file `path`.

    `path` may be the stored (absolute) path, a path relative to the working folder,
    or any trailing part of the stored path (`wsj_0001.mrg`, `sample/wsj_0001.mrg`).
    The tree table keeps only each tree's first line, so the candidate is the last
    tree starting at or before `line`; its end is found by counting brackets in the
    source file, so a line between two trees is reported rather than misattributed.
    """
    document, stored = _document_for(conn, path)
    row = conn.execute(
        "SELECT id, line FROM tree WHERE document = ? AND line <= ? ORDER BY line DESC LIMIT 1",
        (document, line)).fetchone()
    if row is None:
        raise TreequeryError(f"{path}:{line}: no tree starts at or before this line")
    tree_id, start = row
    end = _tree_end_line(stored, start)
    if end is not None and line > end:
        raise TreequeryError(
            f"{path}:{line}: not inside a tree (tree {tree_id} spans lines {start}-{end})")
    return tree_id


def _document_for(conn: sqlite3.Connection, path: str) -> tuple[int, str]:
    documents = conn.execute("SELECT id, path FROM document").fetchall()
    wanted = Path(path)
    resolved = str(wanted.resolve()) if wanted.exists() else None
    exact = [(d, p) for d, p in documents if p == path or p == resolved]
    if exact:
        return exact[0]
    suffix = "/" + wanted.as_posix().lstrip("./")
    matches = [(d, p) for d, p in documents if Path(p).as_posix().endswith(suffix)]
    if not matches:
        raise TreequeryError(f"no indexed file matches {path!r}")
    if len(matches) > 1:
        shown = ", ".join(p for _, p in matches[:5])
        raise TreequeryError(f"{path!r} matches several indexed files: {shown}; give more of "
                             "the path")
    return matches[0]


def _tree_end_line(path: str, start: int) -> int | None:
    """The line on which the tree starting at `start` closes, or None if unreadable."""
    try:
        opener = gzip.open if path.endswith(".gz") else open
        with opener(path, "rt", encoding="utf-8", errors="replace") as handle:
            depth, number = 0, 0
            for number, text in enumerate(handle, 1):
                if number < start:
                    continue
                depth += text.count("(") - text.count(")")
                if depth <= 0 and number >= start:
                    return number
            return number
    except OSError:
        return None
