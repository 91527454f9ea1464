"""A tree drawn as text art for the terminal: branches down the page, words in one column."""
from __future__ import annotations

from treequery.index.trees import TreeNode
from treequery.results.brackets import match_root
from treequery.results.display import Painter, location, marks_of
from treequery.results.model import Result

BRANCH, LAST_BRANCH = "├─ ", "└─ "
CONTINUE, BLANK = "│  ", "   "
LEADER = "·"


def draw_tree(node: TreeNode, marks: dict[int, str], painter: Painter) -> str:
    """The tree sideways: one node per line, every word in one column to the right.

    Reading the word column from top to bottom gives the sentence, so the drawing
    stays legible for long sentences, which a drawing across the page would not.
    """
    rows: list[tuple[str, str, str | None]] = []  # (plain text, painted text, word)
    stack: list[tuple[TreeNode, str, str]] = [(node, "", "")]
    while stack:
        item, connector, prefix = stack.pop()
        mark = marks.get(item.id)
        plain = connector + Painter(False, {}).label(_shown_label(item), mark)
        painted = painter.dim(connector) + painter.label(_shown_label(item), mark)
        rows.append((plain, painted, item.word))
        last = len(item.children) - 1
        for i, child in reversed(list(enumerate(item.children))):
            branch = LAST_BRANCH if i == last else BRANCH
            below = BLANK if i == last else CONTINUE
            stack.append((child, prefix + branch, prefix + below))
    column = max((len(plain) for plain, _, word in rows if word is not None), default=0)
    lines = []
    for plain, painted, word in rows:
        if word is None:
            lines.append(painted)
        else:
            leader = painter.dim(" " + LEADER * (column - len(plain) + 1) + " ")
            lines.append(painted + leader + word)
    return "\n".join(lines)


def _shown_label(node: TreeNode) -> str:
    return node.label or "( )"  # the unlabelled outer bracket of Penn files


def result_drawing(result: Result, tree: TreeNode, color: bool, whole: bool = False) -> str:
    """A `# file:line  tree N` header, then the match (or whole tree) drawn."""
    painter = Painter.for_result(result, color)
    shown = tree if whole else match_root(result, tree)
    header = painter.dim(f"# {location(result)}")
    return header + "\n" + draw_tree(shown, marks_of(result), painter)
