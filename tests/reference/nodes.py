"""Attributes of the nodes of an nltk.Tree, computed independently of treequery's reader.

Every nltk.Tree subtree is a node (the root and preterminals included); leaves
(strings) are not nodes. Nodes are numbered in pre-order from 0 at the root,
which is how the differential tests name them. Spans and sizes are taken from
NLTK's own tree positions (a node covers the leaves whose position starts with
the node's position), so nothing here shares logic with the SQL index.
"""
from __future__ import annotations

import re
from dataclasses import dataclass, replace
from collections.abc import Iterable, Iterator
from pathlib import Path

from nltk import Tree

from .heads import choose_head

# Penn Treebank bracket escapes (Marcus et al. 1993 tokenization conventions;
# list written from memory): brackets in words are written as these codes, also
# inside a word (GUM writes "-LRB-a-RRB-" for "(a)", see the corpora README).
ESCAPES = {
    "-LRB-": "(",
    "-RRB-": ")",
    "-LCB-": "{",
    "-RCB-": "}",
    "-LSB-": "[",
    "-RSB-": "]",
}
_ESCAPE_RE = re.compile("|".join(re.escape(code) for code in ESCAPES))

EMPTY_LABEL = "-NONE-"  # Bies et al. 1995: empty elements are preterminals tagged -NONE-

# Empty-element notation -> kind, after Bies, Ferguson, Katz & MacIntyre (1995),
# "Bracketing Guidelines for Treebank II Style" (null elements); written from memory
# for the tests. The kind names are the pattern language's (grammar/README.md). A bare
# "*" is used both for PRO and for NP-movement traces, hence one kind for both; any
# other notation under -NONE- is "other".
EMPTY_KINDS = {
    "*T*": "movement-trace",
    "*": "null-subject",
    "0": "null-complementizer",
    "*U*": "unit",
    "*ICH*": "interpret-here",
    "*RNR*": "right-node-raising",
    "*EXP*": "expletive",
    "*PPA*": "predictable-ambiguity",
    "*?*": "ellipsis",
    "*NOT*": "anti-placeholder",
}


def empty_word_parts(word: str) -> tuple[str, int | None]:
    """(kind, reference index) of an empty element's word: *T*-1 -> (movement-trace, 1)."""
    found = re.fullmatch(r"(.+?)-([0-9]+)", word)
    base, index = (found.group(1), int(found.group(2))) if found else (word, None)
    return EMPTY_KINDS.get(base, "other"), index


def unescape(word: str) -> str:
    """The word with every bracket escape replaced by the bracket it stands for."""
    return _ESCAPE_RE.sub(lambda m: ESCAPES[m.group(0)], word)


@dataclass(frozen=True, slots=True)
class LabelParts:
    category: str
    functions: tuple[str, ...]
    coindex: int | None
    gap: int | None


def split_label(label: str) -> LabelParts:
    """Treebank II label decomposition (Bies, Ferguson, Katz & MacIntyre 1995).

    `NP-SBJ-1` is category NP, function SBJ, coindex 1; `NP=2` carries gapping
    index 2 (WSJ also has `NP-SBJ=1-3`); labels that begin with '-' (-NONE-,
    -LRB-) are whole categories; `ADVP|PRT` (annotators' ambiguity) stays whole.
    """
    if label.startswith("-"):
        return LabelParts(label, (), None, None)
    gap = None
    gap_match = re.search(r"=(\d+)", label)
    if gap_match:
        gap = int(gap_match.group(1))
        label = label[: gap_match.start()] + label[gap_match.end():]
    parts = label.split("-")
    coindex = None
    if len(parts) > 1 and parts[-1].isdigit():
        coindex = int(parts.pop())
    return LabelParts(parts[0], tuple(p for p in parts[1:] if p), coindex, gap)


@dataclass(frozen=True, slots=True)
class RefNode:
    """One node of a reference tree with every attribute the pattern language knows."""

    index: int                    # pre-order number in its tree, 0 at the root
    parent: int | None            # pre-order number of the parent
    children: tuple[int, ...]     # pre-order numbers of the child nodes, in order
    depth: int
    position: int                 # 1-based place among its sisters (1 at the root)
    label: str
    category: str
    functions: tuple[str, ...]
    coindex: int | None
    gap: int | None
    word: str | None              # un-escaped word of a preterminal, None on phrases
    empty: bool
    tokens: int                   # overt words covered
    leaves: int                   # words and empty elements covered
    tok_first: int | None         # 1-based overt-word span, None when no overt word
    tok_last: int | None
    leaf_first: int               # 1-based leaf span, empty elements counted
    leaf_last: int
    empty_kind: str | None = None   # empty elements only (EMPTY_KINDS)
    ref_index: int | None = None    # *T*-1 -> 1, empty elements only
    head_child: int | None = None   # pre-order number of the head child (phrases)
    head: int = 0                   # pre-order number of the lexical head (a preterminal)
    headword: str | None = None
    headtag: str | None = None

    @property
    def preterminal(self) -> bool:
        return self.word is not None

    def attribute(self, name: str) -> str | int | bool | None:
        """The value of a pattern attribute; None where the language calls it missing."""
        values = {
            "category": self.category,
            "label": self.label,
            "functions": "-".join(self.functions),
            "word": self.word,
            "index": self.coindex,
            "gap": self.gap,
            "children": len(self.children),
            "tokens": self.tokens,
            "leaves": self.leaves,
            "depth": self.depth,
            "position": self.position,
            "start": self.tok_first,
            "end": self.tok_last,
            "empty": self.empty,
            "preterminal": self.preterminal,
            "kind": self.empty_kind,
            "refindex": self.ref_index,
            "headword": self.headword,
            "headtag": self.headtag,
            "silent": self.tokens == 0,
        }
        return values[name]


@dataclass(frozen=True, slots=True)
class RefTree:
    """A tree as a list of RefNodes in pre-order, and where it came from."""

    nodes: tuple[RefNode, ...]
    source: str
    ordinal: int                  # 1-based number of the tree in its file


def _is_preterminal(tree: Tree) -> bool:
    return len(tree) == 1 and isinstance(tree[0], str)


def build_ref_tree(tree: Tree, source: str = "<memory>", ordinal: int = 1) -> RefTree:
    """Number the nodes of an nltk.Tree in pre-order and compute their attributes."""
    positions = [p for p in tree.treepositions("preorder") if isinstance(tree[p], Tree)]
    number = {pos: i for i, pos in enumerate(positions)}
    leaf_positions = tree.treepositions("leaves")
    # A leaf is overt unless its preterminal is an empty element.
    overt = [tree[p[:-1]].label() != EMPTY_LABEL for p in leaf_positions]
    leaf_no: dict[tuple, int] = {}
    tok_no: dict[tuple, int] = {}
    tokens_so_far = 0
    for i, (pos, is_overt) in enumerate(zip(leaf_positions, overt, strict=True), start=1):
        leaf_no[pos] = i
        if is_overt:
            tokens_so_far += 1
            tok_no[pos] = tokens_so_far
    nodes = []
    for pos in positions:
        nodes.append(_ref_node(tree, pos, number, leaf_no, tok_no))
    return RefTree(_with_heads(nodes), source, ordinal)


def _with_heads(nodes: list[RefNode]) -> tuple[RefNode, ...]:
    """Add head child, lexical head, head word and head tag (tests/reference/heads.py)."""
    head_child: dict[int, int] = {}
    head: dict[int, int] = {}
    for node in reversed(nodes):       # pre-order reversed: children come first
        if not node.children:
            head[node.index] = node.index
            continue
        kids = [nodes[c] for c in node.children]
        place = choose_head(node.category, [k.category for k in kids],
                            [k.tokens == 0 for k in kids])
        head_child[node.index] = node.children[place]
        head[node.index] = head[node.children[place]]
    return tuple(replace(node, head_child=head_child.get(node.index), head=head[node.index],
                         headword=nodes[head[node.index]].word,
                         headtag=nodes[head[node.index]].category)
                 for node in nodes)


def _ref_node(tree: Tree, pos: tuple, number: dict, leaf_no: dict, tok_no: dict) -> RefNode:
    sub = tree[pos]
    covered = [pos + lp for lp in sub.treepositions("leaves")]
    leaf_numbers = [leaf_no[lp] for lp in covered]
    tok_numbers = [tok_no[lp] for lp in covered if lp in tok_no]
    parts = split_label(sub.label())
    word = unescape(sub[0]) if _is_preterminal(sub) else None
    empty = word is not None and sub.label() == EMPTY_LABEL
    kind, ref_index = empty_word_parts(sub[0]) if empty else (None, None)
    return RefNode(
        index=number[pos],
        parent=number[pos[:-1]] if pos else None,
        children=tuple(number[pos + (i,)] for i in range(len(sub)) if isinstance(sub[i], Tree)),
        depth=len(pos),
        position=pos[-1] + 1 if pos else 1,
        label=sub.label(),
        category=parts.category,
        functions=parts.functions,
        coindex=parts.coindex,
        gap=parts.gap,
        word=word,
        empty=word is not None and sub.label() == EMPTY_LABEL,
        tokens=len(tok_numbers),
        leaves=len(leaf_numbers),
        tok_first=min(tok_numbers) if tok_numbers else None,
        tok_last=max(tok_numbers) if tok_numbers else None,
        leaf_first=min(leaf_numbers) if leaf_numbers else 0,
        leaf_last=max(leaf_numbers) if leaf_numbers else 0,
        empty_kind=kind,
        ref_index=ref_index,
    )


# ---------------------------------------------------------------- reading files

def split_tree_texts(text: str) -> Iterator[str]:
    """Each top-level balanced bracket group of a bracketed file, as text.

    Words never contain raw brackets in Penn-style files (they are escaped as
    -LRB- and so on), so counting brackets is enough to find the trees.
    """
    depth = 0
    start = None
    for i, char in enumerate(text):
        if char == "(":
            if depth == 0:
                start = i
            depth += 1
        elif char == ")":
            depth -= 1
            if depth == 0 and start is not None:
                yield text[start: i + 1]
                start = None


def read_nltk_trees(path: Path) -> list[Tree]:
    """The trees of one file, parsed by NLTK (the unlabelled outer bracket kept)."""
    text = path.read_text(encoding="utf-8")
    return [Tree.fromstring(chunk) for chunk in split_tree_texts(text)]


def load_corpus(files: Iterable[Path]) -> list[RefTree]:
    """Every tree of the files in corpus order: sorted file paths, then tree order in a file."""
    trees = []
    for path in sorted((Path(f) for f in files), key=str):
        for ordinal, tree in enumerate(read_nltk_trees(path), start=1):
            trees.append(build_ref_tree(tree, str(path.resolve()), ordinal))
    return trees
