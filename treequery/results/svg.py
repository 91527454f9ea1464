"""Trees drawn as SVG: labels, words on one baseline, edges, bound nodes highlighted."""
from __future__ import annotations

from collections.abc import Iterable
from dataclasses import dataclass
from xml.sax.saxutils import escape, quoteattr

from treequery.index.trees import TreeNode
from treequery.results.display import location, marks_of
from treequery.results.model import Result

FONT_SIZE = 14
NAME_SIZE = 11
CHAR_WIDTH = 0.62       # of the font size: a generous average for sans-serif text
GAP = 16                # px between neighbouring subtrees
LEVEL = 48              # px between tree levels
TOP = 56                # px above the root, for the caption
MARGIN = 16
FILLS = ("#f6d5f7", "#cdeffa", "#fbf0b5", "#d3f5d0", "#dadcfb", "#f9d3d3")
STROKES = ("#a01ea6", "#0a7ea4", "#a07a00", "#2b8a2b", "#3a40c4", "#c42b2b")

STYLE = ("text{font-family:sans-serif;font-size:14px}"
         ".label{fill:#222}"
         ".word{fill:#000}"
         ".word.empty{fill:#888;font-style:italic}"
         ".var{font-size:11px;font-weight:bold}"
         ".caption{font-family:monospace;font-size:12px;fill:#555}"
         ".edge{stroke:#888;stroke-width:1}"
         ".lexical{stroke:#bbb;stroke-dasharray:2 3}")


def text_width(text: str, size: int = FONT_SIZE) -> float:
    return len(text) * size * CHAR_WIDTH


@dataclass(frozen=True, slots=True)
class Place:
    """Where one node is drawn: the centre of its label and its depth."""

    x: float
    depth: int


def _needs(tree: TreeNode, marks: dict[int, str]) -> dict[int, float]:
    """The width each subtree needs: its own label (and variable name) or its children."""
    need: dict[int, float] = {}
    for node in reversed(list(tree.walk())):  # children before parents
        own = text_width(node.label or "·") + GAP
        if node.id in marks:
            own += text_width(marks[node.id], NAME_SIZE) + 4
        if node.word is not None:
            own = max(own, text_width(node.form or node.word) + GAP)
        below = sum(need[child.id] for child in node.children)
        need[node.id] = max(own, below)
    return need


def layout(tree: TreeNode, marks: dict[int, str]) -> dict[int, Place]:
    """Leaves left to right in sentence order; every phrase centred over its children."""
    need = _needs(tree, marks)
    left: dict[int, float] = {tree.id: MARGIN}
    depth: dict[int, int] = {tree.id: 0}
    order = list(tree.walk())
    for node in order:
        below = sum(need[child.id] for child in node.children)
        x = left[node.id] + (need[node.id] - below) / 2
        for child in node.children:
            left[child.id], depth[child.id] = x, depth[node.id] + 1
            x += need[child.id]
    places: dict[int, Place] = {}
    for node in reversed(order):
        if node.children:
            first, last = places[node.children[0].id], places[node.children[-1].id]
            x = (first.x + last.x) / 2
        else:
            x = left[node.id] + need[node.id] / 2
        places[node.id] = Place(x, depth[node.id])
    return places


def tree_svg(tree: TreeNode, marks: dict[int, str] | None = None, caption: str = "") -> str:
    """One standalone SVG document; bound nodes carry class `bound` and `data-var`."""
    marks = marks or {}
    places = layout(tree, marks)
    leaves = [node for node in tree.walk() if node.word is not None]
    word_depth = max((places[leaf.id].depth for leaf in leaves), default=0) + 1
    width = max((places[n.id].x + text_width(n.label) for n in tree.walk()), default=0)
    width = max(width, sum(text_width(n.form or n.word or "") + GAP for n in leaves),
                text_width(caption, 12)) + 2 * MARGIN
    height = TOP + word_depth * LEVEL + MARGIN
    colours = _colours(marks)
    parts = [f'<svg xmlns="http://www.w3.org/2000/svg" width="{width:.0f}" '
             f'height="{height:.0f}" viewBox="0 0 {width:.0f} {height:.0f}">',
             f"<title>{escape(caption)}</title>", f"<style>{STYLE}</style>",
             '<rect width="100%" height="100%" fill="white"/>',
             f'<text class="caption" x="{MARGIN}" y="20">{escape(caption)}</text>']
    parts += _edges(tree, places, word_depth)
    parts += [_node(node, places[node.id], marks.get(node.id), colours) for node in tree.walk()]
    parts += [_word(leaf, places[leaf.id], word_depth) for leaf in leaves]
    parts.append("</svg>")
    return "\n".join(parts)


def _y(depth: int) -> float:
    return TOP + depth * LEVEL


def _colours(marks: dict[int, str]) -> dict[str, int]:
    names = list(dict.fromkeys(marks.values()))
    return {name: i % len(FILLS) for i, name in enumerate(names)}


def _edges(tree: TreeNode, places: dict[int, Place], word_depth: int) -> list[str]:
    lines = []
    for node in tree.walk():
        here = places[node.id]
        for child in node.children:
            there = places[child.id]
            lines.append(f'<line class="edge" x1="{here.x:.1f}" y1="{_y(here.depth) + 6:.1f}" '
                         f'x2="{there.x:.1f}" y2="{_y(there.depth) - 15:.1f}"/>')
        if node.word is not None:
            lines.append(f'<line class="edge lexical" x1="{here.x:.1f}" '
                         f'y1="{_y(here.depth) + 6:.1f}" x2="{here.x:.1f}" '
                         f'y2="{_y(word_depth) - 15:.1f}"/>')
    return lines


def _node(node: TreeNode, place: Place, mark: str | None, colours: dict[str, int]) -> str:
    y = _y(place.depth)
    label = escape(node.label or "·")
    text = f'<text class="label" x="{place.x:.1f}" y="{y:.1f}" text-anchor="middle">{label}</text>'
    if mark is None:
        return f'<g class="node" data-id="{node.id}">{text}</g>'
    colour = colours[mark]
    half = text_width(node.label or "·") / 2 + 5
    box = (f'<rect x="{place.x - half:.1f}" y="{y - 16:.1f}" width="{2 * half:.1f}" height="22" '
           f'rx="5" fill="{FILLS[colour]}" stroke="{STROKES[colour]}" stroke-width="1.5"/>')
    name = (f'<text class="var" x="{place.x + half + 2:.1f}" y="{y - 10:.1f}" '
            f'fill="{STROKES[colour]}">{escape(mark)}</text>')
    return (f'<g class="node bound" data-id="{node.id}" data-var={quoteattr(mark)}>'
            f"{box}{text}{name}</g>")


def _word(leaf: TreeNode, place: Place, word_depth: int) -> str:
    kind = "word empty" if leaf.empty else "word"
    shown = leaf.word if leaf.empty else (leaf.form or leaf.word)
    return (f'<text class="{kind}" x="{place.x:.1f}" y="{_y(word_depth):.1f}" '
            f'text-anchor="middle">{escape(shown)}</text>')


def result_svg(result: Result, tree: TreeNode, pattern: str = "") -> str:
    """The whole tree of a result, its bound nodes highlighted and named."""
    caption = location(result)
    if pattern:
        caption += "   " + " ".join(pattern.split())
    return tree_svg(tree, marks_of(result), caption)


def html_page(drawings: Iterable[tuple[Result, str]], title: str) -> str:
    """One page with every drawing under its location, for sharing."""
    sections = [f"<section><h2>{escape(location(result))}</h2>\n{svg}\n</section>"
                for result, svg in drawings]
    return ("<!DOCTYPE html>\n<html><head><meta charset=\"utf-8\">"
            f"<title>{escape(title)}</title><style>body{{font-family:sans-serif}}"
            "section{overflow-x:auto;margin-bottom:2em}h2{font:13px monospace}</style>"
            f"</head><body>\n<h1>{escape(title)}</h1>\n" + "\n".join(sections) +
            "\n</body></html>\n")


def file_name(number: int, result: Result) -> str:
    """`0001-tree5.svg`: numbered in output order, the tree number for finding it again."""
    return f"{number:04d}-tree{result.tree_id}.svg"



