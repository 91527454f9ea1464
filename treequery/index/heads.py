"""Head rules: reading a head-rule file and choosing the head child of a phrase.

A head-rule file holds one rule per line, `CATEGORY SEARCH CATEGORY...`, plus
`#` comments and an optional `coordination CATEGORY...` line (the format is ours;
grammar/README.md, section "Head rules", documents it). The default table,
`head_rules_collins1999.txt`, follows Collins (1999, PhD thesis, Appendix A) and was
written from memory.

SEARCH is one of:
  left / right            for each listed category in turn, the leftmost / rightmost
                          child of that category (the categories are a priority list)
  left-any / right-any    the leftmost / rightmost child whose category is any listed one
  first-if / last-if      the first / last child, when its category is listed
The rules of a category are tried in file order; when none finds a head, the head is
the first child if the category's first rule searches from the left, else the last.
A category without rules uses the rules of `*` (the first child when `*` has none).
"""
from __future__ import annotations

from collections.abc import Mapping, Sequence
from dataclasses import dataclass
from pathlib import Path

from ..errors import TreequeryError

DEFAULT_RULES_FILE = Path(__file__).with_name("head_rules_collins1999.txt")
SEARCHES = ("left", "right", "left-any", "right-any", "first-if", "last-if")
FROM_LEFT = ("left", "left-any", "first-if")
ANY_CATEGORY = "*"


class HeadRulesError(TreequeryError):
    """A head-rule file that cannot be read; carries the file name and line."""

    def __init__(self, message: str, source: str, line: int):
        self.message, self.source, self.line = message, source, line
        super().__init__(f"{source}:{line}: {message}")


@dataclass(frozen=True, slots=True)
class HeadRule:
    search: str                      # one of SEARCHES
    categories: tuple[str, ...]


@dataclass(frozen=True, slots=True)
class HeadRules:
    """A parsed head-rule file: rules per category, and the conjunction categories."""

    rules: Mapping[str, tuple[HeadRule, ...]]
    coordination: frozenset[str] = frozenset()
    text: str = ""                   # the file as read (stored in the index)

    def for_category(self, category: str) -> tuple[HeadRule, ...]:
        found = self.rules.get(category)
        return found if found is not None else self.rules.get(ANY_CATEGORY, ())


def parse_head_rules(text: str, source: str = "<head rules>") -> HeadRules:
    """Read the text of a head-rule file; raises HeadRulesError with the line at fault."""
    rules: dict[str, list[HeadRule]] = {}
    coordination: list[str] = []
    for number, raw in enumerate(text.splitlines(), start=1):
        fields = raw.split("#", 1)[0].split()
        if not fields:
            continue
        if fields[0] == "coordination":
            coordination.extend(fields[1:])
            continue
        if len(fields) < 2 or fields[1] not in SEARCHES:
            raise HeadRulesError(
                f"expected `CATEGORY SEARCH CATEGORY...` with SEARCH one of "
                f"{', '.join(SEARCHES)}; found {raw.strip()!r}", source, number)
        if fields[1] in ("first-if", "last-if", "left-any", "right-any") and len(fields) < 3:
            raise HeadRulesError(f"`{fields[1]}` needs at least one category", source, number)
        rules.setdefault(fields[0], []).append(HeadRule(fields[1], tuple(fields[2:])))
    table = {category: tuple(items) for category, items in rules.items()}
    return HeadRules(table, frozenset(coordination), text)


def load_head_rules(path: str | Path | None = None) -> HeadRules:
    """The rules of a file, or the default Collins (1999) table when `path` is None."""
    path = Path(path) if path is not None else DEFAULT_RULES_FILE
    try:
        text = path.read_text(encoding="utf-8")
    except OSError as error:
        raise HeadRulesError(f"cannot read the head-rule file: {error}", str(path), 0) from None
    return parse_head_rules(text, str(path))


def head_child(rules: HeadRules, category: str, children: Sequence[str],
               silent: Sequence[bool]) -> int:
    """The 0-based place of the head among `children` (their categories).

    Children that cover no overt word (`silent`) take no part unless all do:
    Collins's parser works on trees with the empty elements removed.
    """
    places = [i for i, quiet in enumerate(silent) if not quiet] or list(range(len(children)))
    cats = [children[i] for i in places]
    own = rules.for_category(category)
    chosen = _apply(own, cats)
    if chosen is None:
        chosen = 0 if not own or own[0].search in FROM_LEFT else len(cats) - 1
    if chosen >= 2 and cats[chosen - 1] in rules.coordination:
        chosen -= 2
    return places[chosen]


def _apply(rules: Sequence[HeadRule], cats: Sequence[str]) -> int | None:
    for rule in rules:
        found = _search(rule, cats)
        if found is not None:
            return found
    return None


def _search(rule: HeadRule, cats: Sequence[str]) -> int | None:
    order = range(len(cats)) if rule.search in FROM_LEFT else range(len(cats) - 1, -1, -1)
    if rule.search in ("first-if", "last-if"):
        end = 0 if rule.search == "first-if" else len(cats) - 1
        return end if cats[end] in rule.categories else None
    if rule.search in ("left-any", "right-any"):
        wanted = set(rule.categories)
        return next((i for i in order if cats[i] in wanted), None)
    for category in rule.categories:  # a priority list: the category loop is outside
        found = next((i for i in order if cats[i] == category), None)
        if found is not None:
            return found
    return None
