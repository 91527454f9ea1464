"""What every view of a result shares: shown names, locations, marked labels and colours."""
from __future__ import annotations

import os
import sys
from dataclasses import dataclass

import click

from treequery.index.trees import TreeNode
from treequery.results.model import Result, display_path

# One colour per result variable, in the order the pattern names them.
PALETTE = ("magenta", "cyan", "yellow", "green", "blue", "red")


def shown_name(var: str) -> str:
    """A variable as users see it: the unnamed result of a pattern is called `match`."""
    return "match" if var.startswith("_") else var


def shown_path(path: str) -> str:
    """A source path relative to the working folder when it lies inside it, else as stored.

    Relative paths keep lines short and still open in an editor started here.
    """
    return display_path(path)


def location(result: Result) -> str:
    """`file:line  tree N`: where an editor can jump, and the number `show` takes."""
    return f"{shown_path(result.path)}:{result.line}  tree {result.tree_id}"


def tree_location(where: dict, tree_id: int) -> str:
    return f"{shown_path(where['path'])}:{where['line']}  tree {tree_id}"


def use_color(choice: str, stream=None) -> bool:
    """--color auto|always|never; auto means a terminal and no NO_COLOR (no-color.org)."""
    if choice == "always":
        return True
    if choice == "never" or os.environ.get("NO_COLOR"):
        return False
    stream = stream if stream is not None else sys.stdout
    return bool(getattr(stream, "isatty", lambda: False)())


def marks_of(result: Result) -> dict[int, str]:
    """Node id -> the shown variable names bound to it ('o' or 'a=b' when two share it)."""
    marks: dict[int, list[str]] = {}
    for var, node in result.bindings.items():
        marks.setdefault(node.id, []).append(shown_name(var))
    return {node_id: "=".join(names) for node_id, names in marks.items()}


@dataclass(frozen=True, slots=True)
class Painter:
    """Marks bound nodes: coloured on a terminal, `name:LABEL` either way."""

    color: bool
    colors: dict[str, str]  # shown name -> colour

    @classmethod
    def for_result(cls, result: Result, color: bool) -> Painter:
        names = [shown_name(var) for var in result.bindings]
        colors = {name: PALETTE[i % len(PALETTE)] for i, name in enumerate(names)}
        return cls(color, colors)

    def label(self, text: str, mark: str | None) -> str:
        """A node label, with `name:` before it when the node is bound (the pattern's own
        notation for binding, so `(o:NP ...)` reads as "o is this NP")."""
        if mark is None:
            return text
        if not self.color:
            return f"{mark}:{text}"
        colour = self.colors.get(mark.split("=")[0], PALETTE[0])
        return (click.style(f"{mark}:", fg=colour) +
                click.style(text, fg=colour, bold=True))

    def words(self, text: str, mark: str | None = "match") -> str:
        if not self.color:
            return text
        colour = self.colors.get((mark or "").split("=")[0], PALETTE[0])
        return click.style(text, fg=colour, bold=True)

    def dim(self, text: str) -> str:
        return click.style(text, dim=True) if self.color else text


def lowest_common_ancestor(tree: TreeNode, node_ids: set[int]) -> TreeNode:
    """The smallest subtree of `tree` holding every node in `node_ids` (the root if none)."""
    parents: dict[int, TreeNode | None] = {tree.id: None}
    by_id: dict[int, TreeNode] = {}
    for node in tree.walk():
        by_id[node.id] = node
        for child in node.children:
            parents[child.id] = node
    present = [by_id[i] for i in node_ids if i in by_id]
    if not present:
        return tree
    ancestors = []
    node: TreeNode | None = present[0]
    while node is not None:
        ancestors.append(node)
        node = parents[node.id]
    best = 0
    for other in present[1:]:
        chain = set()
        walker: TreeNode | None = other
        while walker is not None:
            chain.add(walker.id)
            walker = parents[walker.id]
        best = max(best, next(i for i, a in enumerate(ancestors) if a.id in chain))
    return ancestors[best]
