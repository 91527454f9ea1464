"""Reference head finding: Collins-style head rules applied to the children of a node.

Written for the tests from the published description of head rules (Collins 1999,
PhD thesis, Appendix A: for each category, a search direction and a priority list
of child categories; noun phrases have their own ordered searches; the first or
last child when nothing matches) and from the documented rule-file format
(grammar/README.md, "Head rules"). It shares only the rule TABLE with treequery
(the file is data); reading the file and choosing heads is done here on its own.
"""
from __future__ import annotations

from functools import cache
from pathlib import Path

RULE_FILE = (Path(__file__).resolve().parents[2] / "treequery" / "index"
             / "head_rules_collins1999.txt")


@cache
def read_rules(path: str = str(RULE_FILE)) -> tuple[dict[str, list[tuple[str, list[str]]]],
                                                     set[str]]:
    """{category: [(search, categories), ...]} and the coordination categories."""
    table: dict[str, list[tuple[str, list[str]]]] = {}
    conjunctions: set[str] = set()
    for line in Path(path).read_text(encoding="utf-8").splitlines():
        words = line.partition("#")[0].split()
        if not words:
            continue
        if words[0] == "coordination":
            conjunctions.update(words[1:])
        else:
            table.setdefault(words[0], []).append((words[1], words[2:]))
    return table, conjunctions


def _one_search(search: str, wanted: list[str], cats: list[str]) -> int | None:
    """One rule over the candidate categories; the place found, or None."""
    if search == "first-if":
        return 0 if cats[0] in wanted else None
    if search == "last-if":
        return len(cats) - 1 if cats[-1] in wanted else None
    from_left = search.startswith("left")
    places = list(range(len(cats)))
    if not from_left:
        places.reverse()
    if search.endswith("-any"):
        for place in places:
            if cats[place] in wanted:
                return place
        return None
    for category in wanted:            # priority list: earlier categories win
        for place in places:
            if cats[place] == category:
                return place
    return None


def choose_head(category: str, child_categories: list[str], child_silent: list[bool]) -> int:
    """0-based place of the head child among all the children."""
    table, conjunctions = read_rules()
    candidates = [i for i, silent in enumerate(child_silent) if not silent]
    if not candidates:                 # only silent children: all take part
        candidates = list(range(len(child_categories)))
    cats = [child_categories[i] for i in candidates]
    rules = table[category] if category in table else table.get("*", [])
    found = None
    for search, wanted in rules:
        found = _one_search(search, wanted, cats)
        if found is not None:
            break
    if found is None:
        starts_left = not rules or rules[0][0] in ("left", "left-any", "first-if")
        found = 0 if starts_left else len(cats) - 1
    if found >= 2 and cats[found - 1] in conjunctions:
        found -= 2                     # the conjunct before the conjunction
    return candidates[found]
