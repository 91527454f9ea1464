"""What the variation checks report: variations and their occurrences, independent of output."""
from __future__ import annotations

from dataclasses import dataclass
from ..results.model import display_path

# The label of an occurrence where the words form no constituent.
NIL = "NIL"


@dataclass(frozen=True, slots=True)
class Occurrence:
    """One place where the words of a variation occur.

    `start`/`end` are 1-based positions of the first/last overt word in the tree;
    `left`/`right` the overt words around them (a few, for a concordance line);
    `shared` is True when the occurrence belongs to the widest shared context.
    """

    tree_id: int
    document: str
    path: str
    line: int
    ordinal: int
    start: int
    end: int
    label: str
    left: str
    words: str
    right: str
    shared: bool

    @property
    def location(self) -> str:
        return f"{display_path(self.path)}:{self.line}"


@dataclass(frozen=True, slots=True)
class Variation:
    """Words annotated in more than one way.

    `kind` is "nucleus" (constituent labels of a word string) or "tag" (part-of-speech
    tags of one word). `labels` pairs each label seen with its number of occurrences,
    most frequent first. `context_left`/`context_right` count the identical words on
    each side that at least two differently annotated occurrences share (the widest
    such context); `context_text` shows them with the words in brackets.
    """

    kind: str
    words: str
    length: int
    labels: tuple[tuple[str, int], ...]
    context_left: int
    context_right: int
    context_text: str
    occurrences: tuple[Occurrence, ...]

    @property
    def context(self) -> int:
        return self.context_left + self.context_right

    @property
    def fringe(self) -> bool:
        """True when the shared context lacks a word on one side (Dickinson & Meurers' fringe)."""
        return self.context_left == 0 or self.context_right == 0

    def rank_key(self) -> tuple:
        # More shared context first; then non-fringe, longer, more frequent.
        return (-self.context, self.fringe, -self.length, -len(self.occurrences), self.words)
