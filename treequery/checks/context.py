"""The ranking heuristic of the variation checks: the widest context shared across labels.

Dickinson & Meurers (2003) observe that variation surrounded by more identical words
is more likely an annotation error than genuine ambiguity. For a group of sites (the
same words, each with a label) this module finds the widest window of identical
words around them that at least two sites with different labels share, by growing
the window one word at a time and keeping only the groups that still vary.
"""
from __future__ import annotations

from collections.abc import Callable, Sequence
from dataclasses import dataclass


@dataclass(frozen=True, slots=True)
class Site:
    """Words `tokens[start:end]` of one sentence, annotated with `label`."""

    tokens: Sequence[int]
    start: int
    end: int
    label: str


@dataclass(frozen=True, slots=True)
class SharedContext:
    """`left`/`right` identical words on each side, shared by the sites `members`."""

    left: int
    right: int
    members: tuple[int, ...]

    @property
    def size(self) -> int:
        return self.left + self.right


def widest_context(sites: Sequence[Site], non_fringe: bool = False) -> SharedContext | None:
    """The widest context shared by differently labelled sites; None when there is none.

    With `non_fringe`, only contexts with at least one word on each side count.
    Contexts never reach beyond the sentence.
    """
    best: SharedContext | None = None
    left_groups = _varying([list(range(len(sites)))], sites)
    left = 0
    while left_groups:
        for group in left_groups:
            best = _grow_right(sites, group, left, best, non_fringe)
        left += 1
        left_groups = _split(left_groups, sites, lambda site, n=left: _word(site, site.start - n))
    return best


def _grow_right(sites: Sequence[Site], group: list[int], left: int,
                best: SharedContext | None, non_fringe: bool) -> SharedContext | None:
    groups, right = [group], 0
    while groups:
        if not non_fringe or (left > 0 and right > 0):
            for members in groups:
                best = _better(best, SharedContext(left, right, tuple(members)))
        right += 1
        groups = _split(groups, sites, lambda site, n=right: _word(site, site.end + n - 1))
    return best


def _better(best: SharedContext | None, candidate: SharedContext) -> SharedContext:
    if best is None:
        return candidate
    def key(context: SharedContext) -> tuple:
        return (context.size, min(context.left, context.right) > 0, len(context.members))
    return candidate if key(candidate) > key(best) else best


def _word(site: Site, index: int) -> int | None:
    if 0 <= index < len(site.tokens):
        return site.tokens[index]
    return None


def _split(groups: list[list[int]], sites: Sequence[Site],
           key: Callable[[Site], int | None]) -> list[list[int]]:
    """Each group divided by the word `key` finds; parts that no longer vary are dropped."""
    parts: dict[tuple[int, int], list[int]] = {}
    for number, group in enumerate(groups):
        for member in group:
            word = key(sites[member])
            if word is not None:
                parts.setdefault((number, word), []).append(member)
    return _varying(parts.values(), sites)


def _varying(groups, sites: Sequence[Site]) -> list[list[int]]:
    kept = []
    for group in groups:
        first = sites[group[0]].label
        if any(sites[member].label != first for member in group):
            kept.append(group)
    return kept
