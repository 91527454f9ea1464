"""The pattern AST: what a parsed, normalised pattern means.

The parser turns pattern text into a `Pattern`; the checker validates it; the SQL
generator and the brute-force reference matcher (tests/reference) both evaluate
exactly this structure, so they can be compared result for result.

Normal form, produced by the parser:
- every node mentioned in the pattern, named or not, is a `NodeVar` with a unique
  name; anonymous nodes get names that start with '_' followed by a digit
  ("_1", "_2", ...), which can never be written by a user;
- inverse relations are rewritten to their canonical direction by swapping
  operands (`b child-of a` becomes `Relation("parent-of", "a", "b")`);
- a tree fragment `(VP (NP) (PP))` becomes node variables plus parent-of and
  left-sister-of relations;
- variables bound inside `not {...}` or inside a branch of `or` belong to an
  `Exists` at that place and are invisible outside it.
"""
from __future__ import annotations

from dataclasses import dataclass
from typing import Union


@dataclass(frozen=True, slots=True)
class Span:
    """0-based [start, end) character offsets into the pattern text."""

    start: int
    end: int


# ---------------------------------------------------------------- label tests

@dataclass(frozen=True, slots=True)
class AnyLabel:
    """`*`: any node at all."""


@dataclass(frozen=True, slots=True)
class CategoryIs:
    """`NP`, `NP-SBJ`, `-NONE-`, `'ADVP|PRT'`.

    Matches a node whose category equals `category` and whose function tags
    include every tag in `functions` (others allowed; order irrelevant).
    Indices (NP-SBJ-1, NP=2) never take part: they are attributes.
    """

    category: str
    functions: tuple[str, ...] = ()


@dataclass(frozen=True, slots=True)
class CategoryRegex:
    """`/^WH/`: a regular expression searched (not anchored) in the category."""

    pattern: str


@dataclass(frozen=True, slots=True)
class LabelOneOf:
    """`NP|NX|/^WH/`: any of the alternatives."""

    options: tuple[LabelTest, ...]


@dataclass(frozen=True, slots=True)
class LabelNot:
    """`!PP`, `!NP|PP`: a node whose label fails the inner test."""

    inner: LabelTest


LabelTest = Union[AnyLabel, CategoryIs, CategoryRegex, LabelOneOf, LabelNot]


@dataclass(frozen=True, slots=True)
class NodeTest:
    """A label test and optionally the exact word of a preterminal (`VBD "moored"`).

    `word` is compared with the un-escaped word (`"("` finds `-LRB-`). A node test
    with a word only matches preterminals.
    """

    label: LabelTest
    word: str | None = None


@dataclass(frozen=True, slots=True)
class NodeVar:
    """One node of the pattern.

    `reported` is True for user-named variables whose name does not start with
    '_' and that are bound at the top level of the pattern (not inside `not` or
    `or`). Anonymous nodes are never reported.
    """

    name: str
    test: NodeTest
    reported: bool
    span: Span


# ---------------------------------------------------------------- conditions

# Canonical relation kinds (inverses are rewritten to these by the parser):
#   dominates              left is a proper ancestor of right; with min_depth /
#                          max_depth the number of levels between them is bounded
#                          (parent = 1 level)
#   parent-of              left is the parent of right
#   precedes               same tree; left's last token is before right's first token
#   just-before            same tree; no token between left's last and right's first
#   sister-of              same parent, different nodes (symmetric)
#   left-sister-of         same parent, left's position < right's position
#   immediate-left-sister-of  same parent, left.position + 1 = right.position
#   first-child-of         left is the first child of right
#   last-child-of          left is the last child of right
#   only-child-of          left is the only child of right
#   same-node              left and right are the same node (from `a = b`)
# Issue 4 (grammar/README.md gives each one's published definition and source):
#   coindexed-with         a coindexation link joins them, either way, of either
#                          kind (symmetric)
#   antecedent-of          left's label carries index n, right is an empty element
#                          written with -n (*T*-1, *-2, ...), same tree
#   correspondent-of       left's label carries index -n, right's label =n (gapping)
#   c-commands             neither dominates the other, left != right, and the first
#                          ancestor of left with >= 2 children dominates right
#   head-of                left is the head child of right (by the index's head rules)
#   lexical-head-of        left is the preterminal that is the lexical head of the
#                          phrase right
#   same-span-as           different nodes of one tree with the same first and the
#                          same last token, so one dominates the other (symmetric)
#   starts-with            left dominates right and both begin at the same token
#   ends-with              left dominates right and both end at the same token
# Tokens for same-span-as / starts-with / ends-with are those of precedes: by default
# overt words only (a node with none takes no part); count_empty counts every leaf.
# Tokens for precedes / just-before: by default only overt words count, and a node
# that covers no overt word (an empty element, or a constituent of empty elements
# only) neither precedes nor follows anything. With `count_empty=True` every leaf
# counts, empty elements included.
RELATION_KINDS = (
    "dominates",
    "parent-of",
    "precedes",
    "just-before",
    "sister-of",
    "left-sister-of",
    "immediate-left-sister-of",
    "first-child-of",
    "last-child-of",
    "only-child-of",
    "same-node",
    "coindexed-with",
    "antecedent-of",
    "correspondent-of",
    "c-commands",
    "head-of",
    "lexical-head-of",
    "same-span-as",
    "starts-with",
    "ends-with",
)


@dataclass(frozen=True, slots=True)
class Relation:
    kind: str
    left: str
    right: str
    span: Span
    min_depth: int | None = None  # only for "dominates"
    max_depth: int | None = None


# Attributes of a node, usable in conditions and in count-by.
#   name        type  meaning
#   category    str   category without function tags or indices ('' for the outer bracket)
#   label       str   the label as written
#   functions   str   function tags in written order joined by '-' ('' when none)
#   word        str   un-escaped word of a preterminal (missing on phrases)
#   index       int   coindex of the label (NP-SBJ-1 -> 1), missing when none
#   gap         int   gapping index (NP=2 -> 2), missing when none
#   children    int   number of children (0 on preterminals)
#   tokens      int   number of overt words covered
#   leaves      int   number of words and empty elements covered
#   depth       int   0 at the root of the tree
#   position    int   1-based place among its sisters
#   start       int   1-based position of the first overt word (missing if none)
#   end         int   1-based position of the last overt word (missing if none)
#   empty       bool  the node is an empty element (-NONE- preterminal)
#   preterminal bool  the node has a word
#   kind        str   kind of empty element (movement-trace, null-subject, ...; missing
#                     on other nodes)
#   refindex    int   the index written on an empty element's word (*T*-1 -> 1)
#   headword    str   un-escaped word of the node's lexical head
#   headtag     str   category of the node's lexical head (its part of speech)
#   silent      bool  the node covers no overt word (an empty element or a
#                     constituent made only of empty elements)
ATTRIBUTES: dict[str, str] = {
    "category": "str",
    "label": "str",
    "functions": "str",
    "word": "str",
    "index": "int",
    "gap": "int",
    "children": "int",
    "tokens": "int",
    "leaves": "int",
    "depth": "int",
    "position": "int",
    "start": "int",
    "end": "int",
    "empty": "bool",
    "preterminal": "bool",
    "kind": "str",
    "refindex": "int",
    "headword": "str",
    "headtag": "str",
    "silent": "bool",
}


@dataclass(frozen=True, slots=True)
class Attr:
    var: str
    name: str
    span: Span


@dataclass(frozen=True, slots=True)
class Literal:
    value: str | int
    span: Span


# Comparison operators. `~` and `!~` search a regular expression (Python syntax)
# in a str attribute. A comparison where either side is missing (a phrase's word,
# an absent index) is false, and `not` of it is true: two-valued logic.
COMPARE_OPS = ("=", "!=", "<", "<=", ">", ">=", "~", "!~")


@dataclass(frozen=True, slots=True)
class Compare:
    left: Attr
    op: str
    right: Attr | Literal
    span: Span


@dataclass(frozen=True, slots=True)
class Flag:
    """A bool attribute that must be true: `e.empty`."""

    attr: Attr
    span: Span


@dataclass(frozen=True, slots=True)
class And:
    items: tuple[Condition, ...]


@dataclass(frozen=True, slots=True)
class Or:
    items: tuple[Condition, ...]


@dataclass(frozen=True, slots=True)
class Not:
    item: Condition
    span: Span


@dataclass(frozen=True, slots=True)
class Exists:
    """There are nodes for `vars`, all distinct from nothing in particular
    (two variables may bind the same node unless a relation forbids it),
    satisfying their node tests and `condition`."""

    vars: tuple[NodeVar, ...]
    condition: Condition


Condition = Union[Relation, Compare, Flag, And, Or, Not, Exists]


@dataclass(frozen=True, slots=True)
class Pattern:
    """A whole pattern.

    `vars` are the top-level node variables (in order of first appearance);
    `condition` must hold for an assignment of them. A result is one distinct
    assignment of the `reported` variables; when no variable is reported, the
    first top-level node variable is the result.
    """

    text: str
    vars: tuple[NodeVar, ...]
    condition: Condition
    reported: tuple[str, ...]

    @property
    def result_vars(self) -> tuple[str, ...]:
        return self.reported or (self.vars[0].name,)


def walk_conditions(cond: Condition):
    """Every condition inside `cond`, itself first, in pre-order (through And, Or, Not, Exists)."""
    stack = [cond]
    while stack:
        current = stack.pop()
        yield current
        if isinstance(current, Exists):
            stack.append(current.condition)
        elif isinstance(current, Not):
            stack.append(current.item)
        elif isinstance(current, (And, Or)):
            stack.extend(reversed(current.items))


def all_node_vars(pattern: Pattern) -> list[NodeVar]:
    """The top-level variables, then those bound inside not / or, in pattern order."""
    found = list(pattern.vars)
    for cond in walk_conditions(pattern.condition):
        if isinstance(cond, Exists):
            found.extend(cond.vars)
    return found
