"""Trees in bracket notation with the bound nodes marked: the match or the whole tree."""
from __future__ import annotations

from treequery.index.trees import TreeNode
from treequery.results.display import Painter, location, lowest_common_ancestor, marks_of
from treequery.results.model import Result

INDENT = "  "


def marked_brackets(node: TreeNode, marks: dict[int, str], painter: Painter,
                    indent: bool = True) -> str:
    """Bracket notation of `node`, each bound node's label written `name:LABEL`.

    Layout as in Penn files: a phrase starts a new line indented by its depth, a
    preterminal stays on the line of a preterminal sister before it. Iterative,
    because trees can be deeper than Python's recursion limit.
    """
    parts: list[str] = []
    stack: list[tuple[TreeNode | str, int]] = [(node, 0)]
    while stack:
        item, depth = stack.pop()
        if isinstance(item, str):
            parts.append(item)
            continue
        label = painter.label(item.label, marks.get(item.id))
        if item.word is not None:
            parts.append(f"({label} {item.word})")
            continue
        parts.append(f"({label}")
        stack.append((")", depth))
        previous_preterminal = True
        children = []
        for child in item.children:
            inline = not indent or (child.word is not None and previous_preterminal)
            if not children and item.label == "":
                inline = True  # `( (S` as in Penn files
            children.append((child, " " if inline else "\n" + INDENT * (depth + 1)))
            previous_preterminal = child.word is not None
        for child, separator in reversed(children):
            stack.append((child, depth + 1))
            stack.append((separator, depth))
    return "".join(parts)


def match_root(result: Result, tree: TreeNode) -> TreeNode:
    """The matched subtree: the smallest one holding every bound node."""
    return lowest_common_ancestor(tree, {node.id for node in result.bindings.values()})


def result_brackets(result: Result, tree: TreeNode, color: bool, whole: bool = False,
                    indent: bool = True) -> str:
    """A `# file:line  tree N` header line, then the match (or whole tree) in brackets."""
    painter = Painter.for_result(result, color)
    shown = tree if whole else match_root(result, tree)
    header = painter.dim(f"# {location(result)}")
    return header + "\n" + marked_brackets(shown, marks_of(result), painter, indent=indent)
