"""What the reader yields: trees as read from a file, before any indexing."""
from __future__ import annotations

from dataclasses import dataclass, field


@dataclass(slots=True)
class ParsedNode:
    """One bracket of a tree.

    `label` is the label exactly as written ('' for the unlabelled outer bracket).
    A preterminal has `word` set (exactly as written, escapes such as -LRB- kept)
    and no children; every other node has `word` None and at least one child.
    `line`/`column` (1-based) locate the opening bracket in the source file.
    """

    label: str
    children: list[ParsedNode] = field(default_factory=list)
    word: str | None = None
    line: int = 0
    column: int = 0

    @property
    def is_preterminal(self) -> bool:
        return self.word is not None


@dataclass(slots=True)
class ParsedTree:
    """One complete tree and where it came from.

    `source` is the path of the file, `line` the 1-based line of its opening
    bracket, `ordinal` its 1-based number within the file.
    """

    root: ParsedNode
    source: str
    line: int
    ordinal: int


@dataclass(slots=True)
class SkippedTree:
    """A tree the reader could not read; the reader reports it and goes on."""

    source: str
    line: int
    column: int
    message: str
