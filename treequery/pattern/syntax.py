"""The syntax objects between grammar and AST: what the transformer builds, the scoper reads."""
from __future__ import annotations

import re
from dataclasses import dataclass

from treequery.errors import PatternCheckError, PatternSyntaxError
from treequery.pattern.ast import Compare, Flag, NodeTest, Span

# Every relation word: (canonical kind, operands swapped).
RELATION_WORDS: dict[str, tuple[str, bool]] = {
    "dominates": ("dominates", False),
    "dominated-by": ("dominates", True),
    "parent-of": ("parent-of", False),
    "child-of": ("parent-of", True),
    "precedes": ("precedes", False),
    "follows": ("precedes", True),
    "just-before": ("just-before", False),
    "just-after": ("just-before", True),
    "sister-of": ("sister-of", False),
    "left-sister-of": ("left-sister-of", False),
    "right-sister-of": ("left-sister-of", True),
    "immediate-left-sister-of": ("immediate-left-sister-of", False),
    "immediate-right-sister-of": ("immediate-left-sister-of", True),
    "first-child-of": ("first-child-of", False),
    "has-first-child": ("first-child-of", True),
    "last-child-of": ("last-child-of", False),
    "has-last-child": ("last-child-of", True),
    "only-child-of": ("only-child-of", False),
    "has-only-child": ("only-child-of", True),
    "coindexed-with": ("coindexed-with", False),
    "antecedent-of": ("antecedent-of", False),
    "trace-of": ("antecedent-of", True),
    "correspondent-of": ("correspondent-of", False),
    "remnant-of": ("correspondent-of", True),
    "c-commands": ("c-commands", False),
    "c-commanded-by": ("c-commands", True),
    "head-of": ("head-of", False),
    "has-head": ("head-of", True),
    "lexical-head-of": ("lexical-head-of", False),
    "has-lexical-head": ("lexical-head-of", True),
    "same-span-as": ("same-span-as", False),
    "starts-with": ("starts-with", False),
    "at-start-of": ("starts-with", True),
    "ends-with": ("ends-with", False),
    "at-end-of": ("ends-with", True),
}

KEYWORDS = frozenset({"not", "or", "within", "at", "depth"})
RESERVED_WORDS = KEYWORDS | frozenset(RELATION_WORDS)

USER_NAME = re.compile(r"[a-z][A-Za-z0-9_]*|_[A-Za-z][A-Za-z0-9_]*")


# ---------------------------------------------------------------- escapes

def unescape(body: str, delimiter: str) -> tuple[str, list[int]]:
    """Undo the escapes of a quoted body; also give each output character's index in `body`.

    In a /regex/ only `\\/` is an escape (every other backslash belongs to the regular
    expression); in "strings" and 'categories' `\\` + the delimiter and `\\\\` are
    escapes and any other backslash is kept, so "\\d+" stays a usable regex.
    """
    chars: list[str] = []
    offsets: list[int] = []
    index = 0
    while index < len(body):
        char = body[index]
        following = body[index + 1] if index + 1 < len(body) else ""
        if char == "\\" and (following == delimiter or (following == "\\" and delimiter != "/")):
            chars.append(following)
            offsets.append(index)
            index += 2
            continue
        if char == "\\" and following:  # keep an unknown escape whole
            chars.extend((char, following))
            offsets.extend((index, index + 1))
            index += 2
            continue
        chars.append(char)
        offsets.append(index)
        index += 1
    return "".join(chars), offsets


# ---------------------------------------------------------------- syntax objects

@dataclass(frozen=True, slots=True)
class Name:
    text: str
    span: Span


@dataclass(frozen=True, slots=True)
class Located:
    value: object
    span: Span


@dataclass(frozen=True, slots=True)
class NodeSyntax:
    """A node written in the pattern; `children` is non-empty for a fragment."""

    name: Name | None
    test: NodeTest
    test_span: Span
    children: tuple[Term, ...]
    span: Span


@dataclass(frozen=True, slots=True)
class Term:
    node: Name | NodeSyntax
    block: tuple[Statement, ...] | None
    span: Span


@dataclass(frozen=True, slots=True)
class NodeStatement:
    term: Term
    span: Span


@dataclass(frozen=True, slots=True)
class RelationStatement:
    left: Term | None  # None: the subject of the enclosing block
    word: str
    word_span: Span
    right: Term
    depth: tuple[int | None, int] | None
    span: Span


@dataclass(frozen=True, slots=True)
class SameStatement:
    left: Name
    right: Name
    negated: bool
    span: Span


@dataclass(frozen=True, slots=True)
class ConditionStatement:
    """A comparison or flag: already AST, only its variable uses need scoping."""

    condition: Compare | Flag
    span: Span


@dataclass(frozen=True, slots=True)
class NotStatement:
    inner: Statement
    span: Span


@dataclass(frozen=True, slots=True)
class OrStatement:
    branches: tuple[Statement, ...]
    span: Span


@dataclass(frozen=True, slots=True)
class Group:
    items: tuple[Statement, ...]
    span: Span


Statement = (NodeStatement | RelationStatement | SameStatement | ConditionStatement
             | NotStatement | OrStatement | Group)


class BuildError(Exception):
    """A problem found while building; becomes a PatternSyntaxError/PatternCheckError."""

    def __init__(self, message: str, position: int, hint: str | None = None,
                 check: bool = False):
        super().__init__(message)
        self.message, self.position, self.hint, self.check = message, position, hint, check

    def to_pattern_error(self, text: str) -> PatternSyntaxError | PatternCheckError:
        kind = PatternCheckError if self.check else PatternSyntaxError
        return kind(self.message, text, self.position, hint=self.hint)

