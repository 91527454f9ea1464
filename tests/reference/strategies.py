"""Hypothesis strategies: small random Treebank II trees and random pattern ASTs.

Trees are drawn as bracket text (so the index and NLTK read the very same text)
from a small alphabet with function tags, coindices, gapping indices, empty
elements and escaped brackets. Patterns are drawn directly as AST objects in the
parser's normal form (ast.py): unique variable names, canonical relation kinds,
variables of `not` / `or` branches held by an Exists at that place.
"""
from __future__ import annotations

from dataclasses import dataclass, field

from hypothesis import strategies as st

from treequery.pattern.ast import (
    ATTRIBUTES,
    And,
    AnyLabel,
    Attr,
    CategoryIs,
    CategoryRegex,
    Compare,
    Condition,
    Exists,
    Flag,
    LabelNot,
    LabelOneOf,
    LabelTest,
    Literal,
    NodeTest,
    NodeVar,
    Not,
    Or,
    Pattern,
    Relation,
    Span,
)

from .matcher import SUPPORTED_ATTRIBUTES, SUPPORTED_RELATIONS

NOWHERE = Span(0, 0)
RELATION_KINDS = SUPPORTED_RELATIONS
# Attribute name -> type, for the attributes the reference matcher implements.
ATTRIBUTE_TYPES = {name: ATTRIBUTES[name] for name in SUPPORTED_ATTRIBUTES}

# ---------------------------------------------------------------- trees

PHRASES = ("S", "NP", "VP", "PP", "SBAR", "ADJP", "WHNP")
# Tree labels are drawn from this weighted list (NP most common, as in treebanks).
TREE_PHRASES = ("NP", "NP", "NP", "VP", "VP", "S", "S", "PP", "SBAR", "ADJP", "WHNP")
FUNCTIONS = ("SBJ", "TMP", "LOC", "CLR", "PRD")
# Preterminals: (tag, words as written in a file). Escapes per Penn Treebank
# conventions (from memory): -LRB- / -RRB- for brackets, also inside words.
PRETERMINALS = (
    ("DT", ("the", "a")),
    ("NN", ("dog", "ball", "-LRB-a-RRB-")),
    ("NNS", ("dogs",)),
    ("VBD", ("saw", "ran")),
    ("IN", ("in", "of")),
    ("JJ", ("big",)),
    ("PRP", ("it",)),
    (",", (",",)),
    ("-LRB-", ("-LRB-",)),
    ("-RRB-", ("-RRB-",)),
    ("-NONE-", ("*T*-1", "*", "0", "*-2", "*ICH*-3", "*U*", "*EXP*-1")),
    # coordination and possessives exercise the head rules' special cases
    ("CC", ("and",)),
    ("POS", ("'s",)),
)


@st.composite
def phrase_labels(draw) -> str:
    """A phrase label such as NP, NP-SBJ-1, PP-LOC-CLR or NP=2."""
    label = draw(st.sampled_from(TREE_PHRASES))
    tags = draw(st.lists(st.sampled_from(FUNCTIONS), max_size=2, unique=True))
    for tag in tags if draw(st.booleans()) else ():
        label += "-" + tag
    if draw(st.integers(0, 4)) == 0:
        label += "-" + str(draw(st.integers(1, 3)))
    elif draw(st.integers(0, 6)) == 0:
        label += "=" + str(draw(st.integers(1, 2)))
    return label


@st.composite
def subtrees(draw, depth: int) -> str:
    """Bracket text of a random subtree no deeper than `depth` phrase levels."""
    if depth == 0 or draw(st.integers(0, 4)) == 0:
        tag, words = draw(st.sampled_from(PRETERMINALS))
        return f"({tag} {draw(st.sampled_from(words))})"
    children = draw(st.lists(subtrees(depth - 1), min_size=1 if depth < 3 else 2, max_size=4))
    return f"({draw(phrase_labels())} {' '.join(children)})"


@st.composite
def trees(draw) -> str:
    """One random tree; sometimes under the unlabelled outer bracket of Penn files."""
    body = draw(subtrees(3))
    if draw(st.booleans()):
        return f"( {body} )"
    return body


def tree_batches(max_trees: int = 4) -> st.SearchStrategy[list[str]]:
    return st.lists(trees(), min_size=1, max_size=max_trees)


# ---------------------------------------------------------------- patterns

CATEGORIES = PHRASES + tuple(tag for tag, _ in PRETERMINALS) + ("",)
REGEXES = ("^N", "P$", "^WH", "B", "^-", "^S")
WORDS = ("the", "dog", "(a)", "(", ")", "saw", "*T*-1", "0", "nothing")
STR_VALUES = {
    "category": CATEGORIES,
    "label": ("NP", "NP-SBJ", "-NONE-", "S", "VP", "PP-LOC-CLR", ""),
    "functions": ("", "SBJ", "LOC-CLR", "CLR-LOC", "TMP"),
    "word": WORDS,
    "kind": ("movement-trace", "null-subject", "null-complementizer", "unit", "expletive"),
    "headword": WORDS,
    "headtag": ("NN", "DT", "VBD", "IN", "-NONE-", "CC"),
}
STR_REGEXES = ("^N", "P$", "SBJ", "[()]", "^[*]", "^$", "-", "[0-9]")
MAX_VARS = 5  # node variables in one pattern, all scopes together
INT_OPS = ("=", "!=", "<", "<=", ">", ">=")
STR_OPS = ("=", "!=", "<", ">", "~", "!~")


# Weighted choices keep most random patterns matching something in small trees:
# a pattern that never matches compares nothing.
PHRASE_TESTS = ("NP", "NP", "VP", "S", "PP")
WORD_TESTS = ("DT", "NN", "-NONE-")


@st.composite
def label_tests(draw, depth: int = 2) -> LabelTest:
    kind = draw(st.integers(0, 19 if depth > 0 else 15))
    if kind <= 7:
        return AnyLabel()
    if kind <= 12:
        return CategoryIs(draw(st.sampled_from(PHRASE_TESTS)))
    if kind == 13:
        return CategoryIs(draw(st.sampled_from(WORD_TESTS)))
    if kind == 14:
        category = draw(st.sampled_from(CATEGORIES))
        functions = ()
        if category in PHRASES:
            functions = tuple(draw(st.lists(st.sampled_from(FUNCTIONS), max_size=2, unique=True)))
        return CategoryIs(category, functions)
    if kind == 15:
        return CategoryRegex(draw(st.sampled_from(REGEXES)))
    if kind <= 18:
        return LabelOneOf(tuple(draw(st.lists(label_tests(depth - 1), min_size=2, max_size=3))))
    return LabelNot(draw(label_tests(depth - 1)))


@st.composite
def node_tests(draw) -> NodeTest:
    word = draw(st.sampled_from(WORDS)) if draw(st.integers(0, 9)) == 0 else None
    return NodeTest(draw(label_tests()), word)


@dataclass
class _Names:
    """Hands out unique variable names the way the parser would."""

    count: int = 0
    used: set[str] = field(default_factory=set)

    def fresh(self, draw, user: bool) -> tuple[str, bool]:
        """(name, reported) for a user-named, underscore-named or anonymous node."""
        self.count += 1
        if not user:
            return f"_{self.count}", False
        style = draw(st.integers(0, 3))
        name = ("_v" if style == 0 else "v") + str(self.count)
        return name, style != 0


@st.composite
def node_vars(draw, names: _Names, top_level: bool) -> NodeVar:
    name, reported = names.fresh(draw, user=draw(st.booleans()))
    return NodeVar(name, draw(node_tests()), reported and top_level, NOWHERE)


@st.composite
def relations(draw, scope: list[str]) -> Relation:
    kind = draw(st.sampled_from(RELATION_KINDS))
    left, right = draw(st.sampled_from(scope)), draw(st.sampled_from(scope))
    if left == right and len(scope) > 1 and draw(st.integers(0, 9)) > 0:
        right = draw(st.sampled_from([name for name in scope if name != left]))
    low = high = None
    if kind == "dominates":
        form = draw(st.sampled_from((0, 1, 1, 2, 2, 3)))
        if form == 1:
            high = draw(st.integers(1, 3))                 # within N
        elif form == 2:
            low = high = draw(st.integers(1, 3))           # at depth N
        elif form == 3:
            low = draw(st.integers(1, 2))
            high = low + draw(st.integers(0, 2))
    return Relation(kind, left, right, NOWHERE, low, high)


@st.composite
def comparisons(draw, scope: list[str]) -> Compare | Flag:
    var = draw(st.sampled_from(scope))
    name = draw(st.sampled_from(sorted(ATTRIBUTE_TYPES)))
    kind = ATTRIBUTE_TYPES[name]
    attr = Attr(var, name, NOWHERE)
    if kind == "bool":
        return Flag(attr, NOWHERE)
    if draw(st.integers(0, 3)) == 0:
        # Compare with an attribute of the same type on some variable in scope.
        same_type = sorted(n for n, t in ATTRIBUTE_TYPES.items() if t == kind)
        other = Attr(draw(st.sampled_from(scope)), draw(st.sampled_from(same_type)), NOWHERE)
        op = draw(st.sampled_from(INT_OPS if kind == "int" else ("=", "!=", "<", ">")))
        return Compare(attr, op, other, NOWHERE)
    if kind == "int":
        return Compare(attr, draw(st.sampled_from(INT_OPS)),
                       Literal(draw(st.integers(0, 5)), NOWHERE), NOWHERE)
    op = draw(st.sampled_from(STR_OPS))
    values = STR_REGEXES if op in ("~", "!~") else STR_VALUES[name]
    return Compare(attr, op, Literal(draw(st.sampled_from(values)), NOWHERE), NOWHERE)


@st.composite
def _tie(draw, name: str, scope: list[str]) -> Relation:
    """A relation between a new local node and a node in scope, either way round."""
    relation = draw(relations([name]))
    other = draw(st.sampled_from(scope))
    if draw(st.booleans()):
        return Relation(relation.kind, name, other, NOWHERE, relation.min_depth,
                        relation.max_depth)
    return Relation(relation.kind, other, name, NOWHERE, relation.min_depth,
                    relation.max_depth)


@st.composite
def local_block(draw, scope: list[str], names: _Names, depth: int) -> Condition:
    """A condition that may bind its own variables (an Exists), as inside not/or."""
    room = max(0, min(2, MAX_VARS - names.count))
    local = draw(st.lists(node_vars(names, top_level=False), max_size=room))
    inner_scope = scope + [v.name for v in local]
    # As in parsed patterns, each local node appears in a statement with a node
    # already in scope; this also keeps the brute force from trying every
    # combination of unrelated nodes.
    items = [draw(_tie(v.name, scope)) for v in local]
    items += draw(st.lists(conditions(inner_scope, names, depth - 1),
                           min_size=0 if local else 1, max_size=1))
    body = items[0] if len(items) == 1 else And(tuple(items))
    if not local:
        return body
    return Exists(tuple(local), body)


@st.composite
def conditions(draw, scope: list[str], names: _Names, depth: int = 2) -> Condition:
    """One statement; few conjunctions, since long conjunctions rarely match anything."""
    kind = draw(st.integers(0, 19 if depth > 0 else 11))
    if kind <= 7:
        return draw(relations(scope))
    if kind <= 11:
        return draw(comparisons(scope))
    if kind <= 14:
        return Not(draw(local_block(scope, names, depth)), NOWHERE)
    if kind <= 17:
        branches = draw(st.lists(local_block(scope, names, depth), min_size=2, max_size=3))
        return Or(tuple(branches))
    items = draw(st.lists(conditions(scope, names, depth - 1), min_size=2, max_size=2))
    return And(tuple(items))


@st.composite
def patterns(draw) -> Pattern:
    """A random pattern AST in normal form, with 1-3 top-level variables."""
    names = _Names()
    # Mostly two or three nodes: relations between distinct nodes are what matter.
    top_count = draw(st.sampled_from((2, 2, 3, 1)))
    top = [draw(node_vars(names, top_level=True)) for _ in range(top_count)]
    scope = [v.name for v in top]
    items = draw(st.lists(conditions(scope, names), min_size=0, max_size=2))
    reported = tuple(v.name for v in top if v.reported)
    return Pattern("<generated>", tuple(top), And(tuple(items)), reported)


@st.composite
def simple_patterns(draw) -> Pattern:
    """Two nodes and one relation or comparison: where a single construct's bug shows.

    Long random conjunctions mask the effect of any one construct, so half of the
    generated patterns are this small.
    """
    # Mostly both nodes reported, so every matching pair is a result of its own.
    top = [NodeVar(name, draw(node_tests()), draw(st.integers(0, 4)) > 0, NOWHERE)
           for name in ("a", "b")]
    scope = [v.name for v in top]
    if draw(st.integers(0, 3)) == 0:
        condition: Condition = draw(comparisons(scope))
    else:
        condition = draw(_tie(scope[1], scope[:1]))
    if draw(st.booleans()):
        condition = Not(condition, NOWHERE)
    reported = tuple(v.name for v in top if v.reported)
    return Pattern("<generated>", tuple(top), And((condition,)), reported)


def any_patterns() -> st.SearchStrategy[Pattern]:
    """Small single-construct patterns and larger composite ones, half and half."""
    return st.one_of(simple_patterns(), patterns())
