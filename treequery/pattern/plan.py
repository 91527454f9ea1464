"""The planner: picks the join order of a pattern's top-level nodes from index statistics.

The node that matches fewest nodes (by `label.n_nodes` / `word.n_nodes`) drives the
join; each later node is reached from nodes already placed, preferably through an
index probe (parent, sisters, the subtree's id range) rather than the tree's range.
"""
from __future__ import annotations

import itertools
import sqlite3
from collections.abc import Sequence
from dataclasses import dataclass, replace

import regex

from treequery.errors import PatternCheckError, TreequeryError
from treequery.pattern.ast import (
    AnyLabel,
    CategoryIs,
    CategoryRegex,
    Compare,
    Condition,
    Exists,
    LabelNot,
    LabelOneOf,
    LabelTest,
    Literal,
    NodeVar,
    Not,
    Pattern,
    Relation,
)
from treequery.pattern.sql import SYNTAX_RELATIONS, anchors, compile_regex, conjuncts

# Shape of typical constituency trees, used to guess how many candidates a probe
# meets (common practice: rough constants; only their order of magnitude matters).
AVG_CHILDREN = 2.5
AVG_DEPTH = 7.0
EXHAUSTIVE_LIMIT = 6  # up to this many top-level nodes every order is tried
# A label test is used as an index key (one seek per matching label code) only
# when it names at most this many label codes; otherwise the node is found by its
# parent / id range alone and the label is checked as a filter. Measured on the
# WSJ sample (about 1,000 distinct labels): `PP parent-of !IN` ran 3x slower
# with the label as key. The tree's range holds ~30 nodes, so a few seeks pay.
LABEL_KEY_LIMIT = {"scan": 10**9, "tree": 4, "ancestors": 4}
LABEL_KEY_LIMIT_DEFAULT = 1

# access kind -> how a later node is reached, for `explain`
ACCESS_TEXT = {
    "scan": "scan of the label index",
    "children": "children of {via} (node_parent index)",
    "parent": "parent of {via} (primary key)",
    "sisters": "sisters of {via} (node_parent index)",
    "same": "same node as {via}",
    "subtree": "id range of {via}'s subtree (label index + id range)",
    "ancestors": "ancestors of {via}: tree's id range before {via}",
    "tree": "id range of the tree (label index + id range)",
    "linked": "coindexed with {via} (link table + primary key)",
    "scope": "c-command scope of {via}: its first branching ancestor's id range",
    "head": "lexical head of {via} (primary key)",
}

# issue 4 relations: (kind, the reached variable is the left operand) -> access, size
SYNTAX_ACCESS = {
    ("coindexed-with", True): ("linked", 1.0), ("coindexed-with", False): ("linked", 1.0),
    ("antecedent-of", True): ("linked", 1.0), ("antecedent-of", False): ("linked", 1.0),
    ("correspondent-of", True): ("linked", 1.0), ("correspondent-of", False): ("linked", 1.0),
    ("c-commands", False): ("scope", 2 * AVG_DEPTH),
    ("head-of", True): ("children", AVG_CHILDREN), ("head-of", False): ("parent", 1.0),
    ("lexical-head-of", True): ("head", 1.0),
    ("starts-with", False): ("subtree", AVG_DEPTH + 1),
    ("ends-with", False): ("subtree", AVG_DEPTH + 1),
}
# Relations in which the left node dominates the right one: the left can be found
# among the right's ancestors.
DOMINATING_KINDS = ("dominates", "starts-with", "ends-with")
SYNTAX_KINDS = frozenset(SYNTAX_RELATIONS) - {"same-span-as", "starts-with", "ends-with"}


@dataclass(frozen=True, slots=True)
class Step:
    """One node of the join order and how it is reached."""

    var: str
    access: str              # a key of ACCESS_TEXT
    via: str | None          # the placed node it is reached from
    matches: int             # nodes in the index that pass its own test (statistics)
    rows: float              # estimated partial assignments after this step
    label_key: bool = True   # the label test is an index key (else only a filter)

    @property
    def needs_tree_range(self) -> bool:
        return self.access in ("tree", "ancestors")

    def describe(self) -> str:
        how = ACCESS_TEXT[self.access].format(via=self.via)
        key = "" if self.label_key else "; label checked after the probe"
        return (f"{self.var}: {how}; {self.matches} matching nodes; "
                f"~{self.rows:,.0f} rows so far{key}")


@dataclass(frozen=True, slots=True)
class Plan:
    """A pattern with its chosen join order and the statistics behind it."""

    pattern: Pattern
    steps: tuple[Step, ...]
    count_empty: bool = False
    total_nodes: int = 0
    total_trees: int = 0
    pin_order: bool = True    # emit CROSS JOIN so SQLite keeps the order
    cost: float = 0.0
    pin_reason: str = ""
    label_codes: tuple[tuple[str, int], ...] = ()  # variable -> label codes its test names

    def codes(self, name: str) -> int:
        """How many label codes the variable's label test names (0: no label test)."""
        return dict(self.label_codes).get(name, 0)

    @property
    def order(self) -> tuple[str, ...]:
        return tuple(step.var for step in self.steps)

    def describe(self) -> str:
        lines = [f"join order (estimated cost {self.cost:,.0f}; "
                 f"{self.total_nodes:,} nodes in {self.total_trees:,} trees):"]
        lines += [f"  {i}. {step.describe()}" for i, step in enumerate(self.steps, 1)]
        if self.pin_reason:
            how = "pinned (CROSS JOIN)" if self.pin_order else "left to SQLite"
            lines.append(f"  order {how}: {self.pin_reason}")
        return "\n".join(lines)


# ---------------------------------------------------------------- statistics

def label_matches(test: LabelTest, category: str, functions: str) -> bool:
    """The label test on one label row (the SQL predicate's meaning, in Python)."""
    if isinstance(test, AnyLabel):
        return True
    if isinstance(test, CategoryIs):
        tags = functions.split("-") if functions else []
        return category == test.category and all(t in tags for t in test.functions)
    if isinstance(test, CategoryRegex):
        return compile_regex(test.pattern).search(category) is not None
    if isinstance(test, LabelOneOf):
        return any(label_matches(o, category, functions) for o in test.options)
    if isinstance(test, LabelNot):
        return not label_matches(test.inner, category, functions)
    raise TypeError(f"unknown label test {test!r}")


@dataclass(frozen=True, slots=True)
class _Stats:
    labels: tuple[tuple[str, str, int], ...]   # (category, functions, n_nodes)
    total_nodes: int
    total_trees: int
    counted: bool                              # label.n_nodes is filled in
    analyzed: bool                             # SQLite has ANALYZE statistics for node


def _load_stats(conn: sqlite3.Connection) -> _Stats:
    labels = tuple(conn.execute("SELECT category, functions, n_nodes FROM label"))
    # Two queries: SQLite answers a lone MIN() or MAX() from the primary key at once,
    # but scans the whole table when both stand in one SELECT.
    highest = conn.execute("SELECT MAX(id) FROM node").fetchone()[0] or 0
    lowest = conn.execute("SELECT MIN(id) FROM node").fetchone()[0] or 1
    total = highest - lowest + 1
    trees = conn.execute("SELECT COUNT(*) FROM tree").fetchone()[0]
    counted = sum(n for _, _, n in labels) > 0
    analyzed = conn.execute(
        "SELECT COUNT(*) FROM sqlite_master WHERE type = 'table' AND name = 'sqlite_stat1'"
    ).fetchone()[0] > 0 and conn.execute(
        "SELECT COUNT(*) FROM sqlite_stat1 WHERE tbl = 'node'").fetchone()[0] > 0
    return _Stats(labels, max(total, 0), trees, counted, analyzed)


def _label_codes(stats: _Stats, var: NodeVar) -> int:
    if isinstance(var.test.label, AnyLabel):
        return 0
    return sum(1 for cat, fun, _ in stats.labels if label_matches(var.test.label, cat, fun))


def _all_vars(pattern: Pattern) -> list[NodeVar]:
    found = list(pattern.vars)

    def walk(cond: Condition) -> None:
        if isinstance(cond, Exists):
            found.extend(cond.vars)
            walk(cond.condition)
        elif isinstance(cond, Not):
            walk(cond.item)
        elif hasattr(cond, "items"):
            for item in cond.items:
                walk(item)

    walk(pattern.condition)
    return found


def _estimate(conn: sqlite3.Connection, stats: _Stats, var: NodeVar) -> int:
    """How many nodes of the index pass the variable's own node test."""
    if stats.counted:
        by_label = sum(n for cat, fun, n in stats.labels if label_matches(var.test.label, cat, fun))
    else:  # statistics not filled in: assume labels are equally frequent
        share = sum(1 for cat, fun, _ in stats.labels if label_matches(var.test.label, cat, fun))
        by_label = stats.total_nodes * share // max(len(stats.labels), 1)
    if var.test.word is None:
        return by_label
    row = conn.execute("SELECT IFNULL(SUM(n_nodes), 0), COUNT(*) FROM word WHERE form = ?",
                       (var.test.word,)).fetchone()
    by_word = row[0] if stats.counted else row[1] * 10
    return min(by_label, by_word)


# ---------------------------------------------------------------- validation

def _check_regexes(pattern: Pattern) -> None:
    """Compile every regular expression now, so a bad one is reported with its place."""
    def check(text: str, position: int) -> None:
        try:
            compile_regex(text)
        except regex.error as err:
            raise PatternCheckError(f"invalid regular expression /{text}/: {err}",
                                    pattern.text, position) from None

    def label(test: LabelTest, position: int) -> None:
        if isinstance(test, CategoryRegex):
            check(test.pattern, position)
        elif isinstance(test, LabelOneOf):
            for option in test.options:
                label(option, position)
        elif isinstance(test, LabelNot):
            label(test.inner, position)

    def walk(cond: Condition) -> None:
        if isinstance(cond, Compare) and cond.op in ("~", "!~") and isinstance(cond.right, Literal):
            check(str(cond.right.value), cond.right.span.start)
        elif isinstance(cond, Exists):
            for var in cond.vars:
                label(var.test.label, var.span.start)
            walk(cond.condition)
        elif isinstance(cond, Not):
            walk(cond.item)
        elif hasattr(cond, "items"):
            for item in cond.items:
                walk(item)

    for var in pattern.vars:
        label(var.test.label, var.span.start)
    walk(pattern.condition)


# ---------------------------------------------------------------- ordering

def _reach(cond: Condition, name: str, placed: set[str]) -> tuple[str, str | None, float]:
    """Best access to `name` from `placed`: (access kind, via, candidates per probe)."""
    if not placed:
        return "scan", None, 0.0
    best: tuple[str, str | None, float] = ("tree", None, 0.0)
    best_size = float("inf")
    for rel in anchors(cond, name, placed):
        other = rel.left if rel.right == name else rel.right
        access, size = _access(rel, name)
        if size < best_size:
            best, best_size = (access, other, size), size
    if best[0] == "tree":
        for rel in conjuncts(cond):  # ancestors: bounded by the tree, cut at the descendant
            if isinstance(rel, Relation) and rel.kind in DOMINATING_KINDS and rel.left == name \
                    and rel.right in placed:
                return "ancestors", rel.right, AVG_DEPTH
        return "tree", sorted(placed)[0], -1.0
    return best


def _access(rel: Relation, name: str) -> tuple[str, float]:
    if rel.kind == "same-node":
        return "same", 1.0
    if (rel.kind, rel.left == name) in SYNTAX_ACCESS:
        return SYNTAX_ACCESS[(rel.kind, rel.left == name)]
    if rel.kind == "dominates":
        if rel.max_depth == 1:
            return "children", AVG_CHILDREN
        return "subtree", AVG_DEPTH + 1  # mean subtree size = mean depth + 1
    if rel.kind in ("sister-of", "left-sister-of", "immediate-left-sister-of"):
        return "sisters", AVG_CHILDREN
    child_is_left = rel.kind != "parent-of"   # *-child-of: left is the child
    is_child = (rel.left == name) == child_is_left
    return ("children", AVG_CHILDREN) if is_child else ("parent", 1.0)


def _cost(order: tuple[NodeVar, ...], cond: Condition, matches: dict[str, int],
          total: int, tree_size: float) -> tuple[float, list[Step]]:
    """Estimated work of one join order: the sum of the partial result sizes."""
    rows, cost, placed, steps = 1.0, 0.0, set(), []
    for var in order:
        access, via, size = _reach(cond, var.name, placed)
        selectivity = matches[var.name] / max(total, 1)
        if access == "scan":
            rows = float(matches[var.name])
        else:
            candidates = tree_size if size < 0 else size
            rows *= max(candidates * selectivity, 1e-3)
        cost += rows
        placed.add(var.name)
        steps.append(Step(var.name, access, via, matches[var.name], rows))
    return cost, steps


def _orders(variables: tuple[NodeVar, ...], cond: Condition, matches: dict[str, int]):
    if len(variables) <= EXHAUSTIVE_LIMIT:
        yield from itertools.permutations(variables)
        return
    for first in variables:  # greedy from each start: next = the cheapest reachable node
        order, rest = [first], [v for v in variables if v is not first]
        while rest:
            placed = {v.name for v in order}
            rest.sort(key=lambda v: (_reach(cond, v.name, placed)[0] == "tree", matches[v.name]))
            order.append(rest.pop(0))
        yield tuple(order)


SYNTAX_ATTRIBUTES = frozenset({"headword", "headtag"})


def _uses_syntax_index(pattern: Pattern) -> bool:
    """Whether the pattern needs node_syntax / link (issue 4 relations and head attributes)."""
    def walk(cond: Condition) -> bool:
        if isinstance(cond, Relation):
            return cond.kind in SYNTAX_KINDS
        if isinstance(cond, Compare):
            names = {cond.left.name} | ({cond.right.name} if hasattr(cond.right, "name")
                                         else set())
            return bool(names & SYNTAX_ATTRIBUTES)
        if isinstance(cond, Exists):
            return walk(cond.condition)
        if isinstance(cond, Not):
            return walk(cond.item)
        return any(walk(item) for item in getattr(cond, "items", ()))

    return walk(pattern.condition)


def _check_syntax_index(conn: sqlite3.Connection, pattern: Pattern) -> None:
    """An index built before heads and links were indexed cannot answer such patterns."""
    if not _uses_syntax_index(pattern):
        return
    has_table = conn.execute("SELECT count(*) FROM sqlite_master WHERE type = 'table' "
                             "AND name = 'node_syntax'").fetchone()[0]
    if has_table and (conn.execute("SELECT EXISTS (SELECT 1 FROM node_syntax)").fetchone()[0]
                      or not conn.execute("SELECT EXISTS (SELECT 1 FROM node)").fetchone()[0]):
        return
    raise TreequeryError(
        "this index was built before heads, c-command and coindexation were indexed; "
        "run `treequery index --db DB` on its files again to add them")


def make_plan(conn: sqlite3.Connection, pattern: Pattern, count_empty: bool = False,
              order: Sequence[str] | None = None) -> Plan:
    """Choose the join order of the pattern's top-level nodes from the index statistics.

    `order` (variable names) forces a join order instead, for tests and `explain`.
    """
    if not pattern.vars:
        raise PatternCheckError("the pattern has no node", pattern.text, 0)
    _check_regexes(pattern)
    _check_syntax_index(conn, pattern)
    stats = _load_stats(conn)
    matches = {v.name: _estimate(conn, stats, v) for v in pattern.vars}
    tree_size = stats.total_nodes / max(stats.total_trees, 1)
    candidates = _orders(pattern.vars, pattern.condition, matches)
    if order is not None:
        by_name = {v.name: v for v in pattern.vars}
        if sorted(order) != sorted(by_name):
            raise PatternCheckError(f"a forced order must list {sorted(by_name)}", pattern.text, 0)
        candidates = [tuple(by_name[name] for name in order)]
    best_cost, best_steps = float("inf"), []
    for candidate in candidates:
        cost, steps = _cost(candidate, pattern.condition, matches, stats.total_nodes, tree_size)
        if cost < best_cost or not best_steps:
            best_cost, best_steps = cost, steps
    # Measured on GUM (see the back-end report): with ANALYZE statistics SQLite keeps
    # the FROM order we emit or finds an equally fast one; without them it can lose
    # a word-driven order (8x slower), so the order is pinned only then.
    pin = (order is not None or not stats.analyzed) and len(best_steps) > 1
    reason = ""
    if len(best_steps) > 1:
        reason = ("order given by the caller" if order is not None
                  else "no ANALYZE statistics in the index" if pin
                  else "SQLite has ANALYZE statistics; the FROM order follows the plan")
    codes = tuple((v.name, _label_codes(stats, v)) for v in _all_vars(pattern))
    lookup = dict(codes)
    steps = tuple(replace(step, label_key=lookup[step.var] <= LABEL_KEY_LIMIT.get(
        step.access, LABEL_KEY_LIMIT_DEFAULT)) for step in best_steps)
    return Plan(pattern, steps, count_empty, stats.total_nodes, stats.total_trees,
                pin_order=pin, cost=best_cost, pin_reason=reason, label_codes=codes)
