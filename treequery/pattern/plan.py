"""The planner: picks the join order of a pattern's top-level nodes from index statistics.

The node that matches fewest nodes (by `label.n_nodes` / `word.n_nodes`) drives the
join; each later node is reached from nodes already placed, preferably through an
index probe (parent, sisters, the subtree's id range) rather than the tree's range.
"""
from __future__ import annotations

import itertools
import sqlite3
import threading
from collections.abc import Sequence
from dataclasses import dataclass, replace

import regex

from treequery.errors import PatternCheckError
from treequery.pattern.ast import (
    all_node_vars,
    walk_conditions,
    AnyLabel,
    CategoryIs,
    CategoryRegex,
    Compare,
    Condition,
    LabelNot,
    LabelOneOf,
    LabelTest,
    Literal,
    NodeVar,
    Pattern,
    Relation,
)
from treequery.pattern.sql import anchors, compile_regex, conjuncts

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
LABEL_KEY_LIMIT = {"scan": 10**9, "tree": 4, "ancestors": 4, "before": 4, "after": 4,
                   "spanning": 4,
                   "up": -1, "linked": -1, "head": -1}
LABEL_KEY_LIMIT_DEFAULT = 1
# Label codes up to this many are written into the statement as a parameter list, so
# SQLite knows how many index seeks the label costs (with a subquery it guesses, and
# measured on the WSJ sample it then preferred a scan of the whole node table).
CODE_LIST_LIMIT = 200
# The first node is read through the label index (not a scan of the node table) when
# its label test matches under 1/DRIVE_SHARE of all nodes: each hit is a random row
# lookup, several times the cost of a row read in a sequential scan (common practice).
DRIVE_SHARE = 4
# All listed codes of one statement together stay under this many parameters
# (older SQLite builds allow 999 per statement; the rest of the pattern needs some).
CODE_PARAM_BUDGET = 600
# Bounded dominance (`within N`, `at depth N`) up to this many levels reaches the
# ancestor through parent links, one primary-key lookup per level, instead of
# scanning the tree's nodes before the descendant.
UP_LIMIT = 4

# access kind -> how a later node is reached, for `explain`
ACCESS_TEXT = {
    "scan": "scan of the label index",
    "children": "children of {via} (node_parent index)",
    "parent": "parent of {via} (primary key)",
    "sisters": "sisters of {via} (node_parent index)",
    "same": "same node as {via}",
    "subtree": "id range of {via}'s subtree (label index + id range)",
    "ancestors": "ancestors of {via}: tree's id range before {via}",
    "up": "ancestors of {via} {levels} levels up through parent links (primary key)",
    "after": "right of {via}: ids after {via}'s subtree to the tree's end (label index + id range)",
    "before": "left of {via}: the tree's ids before {via} (label index + id range)",
    "spanning": "ancestors and subtree of {via}: the tree's ids up to {via}'s last "
                "(label index + id range)",
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
# Relations in which the left node lies wholly before the right one: in pre-order the
# nodes after a node's subtree (in its tree) are exactly the nodes to its right.
PRECEDENCE_KINDS = ("precedes", "just-before")


@dataclass(frozen=True, slots=True)
class Step:
    """One node of the join order and how it is reached."""

    var: str
    access: str              # a key of ACCESS_TEXT
    via: str | None          # the placed node it is reached from
    matches: int             # nodes in the index that pass its own test (statistics)
    rows: float              # estimated partial assignments after this step
    label_key: bool = True   # the label test is an index key (else only a filter)
    levels: tuple[int, int] = (0, 0)  # "up": the ancestor is this many levels up (from, to)

    @property
    def needs_tree_range(self) -> bool:
        return self.access in ("tree", "ancestors", "before", "after", "spanning")

    def describe(self) -> str:
        low, high = self.levels
        levels = str(low) if low == high else f"{low} to {high}"
        how = ACCESS_TEXT[self.access].format(via=self.via, levels=levels)
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
    drive_by_label: bool = False  # the first node is read through the node_label index
    total_words: int = 0          # distinct words in the index

    def rows_at(self, name: str) -> float | None:
        """Estimated partial assignments when the top-level variable is placed."""
        return next((step.rows for step in self.steps if step.var == name), None)
    # variable -> the label codes its test names (None: no label test, or too many)
    code_lists: tuple[tuple[str, tuple[int, ...] | None], ...] = ()

    def codes(self, name: str) -> int:
        """How many label codes the variable's label test names (0: no label test)."""
        return dict(self.label_codes).get(name, 0)

    def code_list(self, name: str) -> tuple[int, ...] | None:
        """The label codes the variable's test names, when few enough to list."""
        return dict(self.code_lists).get(name)

    @property
    def order(self) -> tuple[str, ...]:
        return tuple(step.var for step in self.steps)

    def describe(self) -> str:
        lines = [f"join order (estimated cost {self.cost:,.0f}; "
                 f"{self.total_nodes:,} nodes in {self.total_trees:,} trees):"]
        lines += [f"  {i}. {step.describe()}" for i, step in enumerate(self.steps, 1)]
        if self.drive_by_label:
            lines.append(f"  {self.steps[0].var} is read through the node_label index "
                         f"(INDEXED BY): its labels are a small share of the nodes")
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
    codes: tuple[int, ...] = ()                # label.code of each row of `labels`
    label_index: bool = False                  # the node_label index exists
    total_words: int = 0                       # rows of the word table (largest code)


# Statistics per connection, reused while the index is unchanged: PRAGMA data_version
# changes when another connection commits, total_changes when this one writes. The
# connection itself is kept (and compared by identity) so a recycled id() never
# matches; a few entries are enough for the connections a process keeps open.
_STATS_CACHE: dict[int, tuple[sqlite3.Connection, tuple[int, int], _Stats]] = {}
_STATS_CACHE_SIZE = 8


# Which labels of a statistics snapshot pass a label test, by (id(stats), test): a
# regular expression over every label costs milliseconds, and patterns repeat tests.
_HITS: dict[tuple[int, LabelTest], tuple[bool, ...]] = {}


def _label_hits(stats: _Stats, test: LabelTest) -> tuple[bool, ...]:
    key = (id(stats), test)
    if len(_HITS) > 4096:
        _HITS.clear()
    # read once into a local: another thread may clear the cache between two reads
    hits = _HITS.get(key)
    if hits is None:
        hits = _HITS[key] = tuple(label_matches(test, cat, fun) for cat, fun, _ in stats.labels)
    return hits


def _stats_version(conn: sqlite3.Connection) -> tuple[int, int]:
    return conn.execute("PRAGMA data_version").fetchone()[0], conn.total_changes


_STATS_LOCK = threading.Lock()  # plans may be made in several threads (the web page)


def _cached_stats(conn: sqlite3.Connection) -> _Stats:
    version = _stats_version(conn)
    entry = _STATS_CACHE.get(id(conn))
    if entry is not None and entry[0] is conn and entry[1] == version:
        return entry[2]
    stats = _load_stats(conn)
    with _STATS_LOCK:
        _HITS.clear()
        if len(_STATS_CACHE) >= _STATS_CACHE_SIZE:
            _STATS_CACHE.pop(next(iter(_STATS_CACHE)))
        _STATS_CACHE[id(conn)] = (conn, version, stats)
    return stats


def _load_stats(conn: sqlite3.Connection) -> _Stats:
    rows = tuple(conn.execute("SELECT code, category, functions, n_nodes FROM label"))
    labels = tuple((cat, fun, n) for _, cat, fun, n in rows)
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
    label_index = conn.execute("SELECT COUNT(*) FROM sqlite_master WHERE type = 'index' "
                               "AND name = 'node_label'").fetchone()[0] > 0
    words = conn.execute("SELECT MAX(code) FROM word").fetchone()[0] or 0
    return _Stats(labels, max(total, 0), trees, counted, analyzed,
                  tuple(code for code, *_ in rows), label_index, words)


def _matching_codes(stats: _Stats, var: NodeVar) -> tuple[int, ...] | None:
    """The label codes the variable's label test names (None: no label test)."""
    if isinstance(var.test.label, AnyLabel):
        return None
    hits = _label_hits(stats, var.test.label)
    return tuple(code for code, hit in zip(stats.codes, hits, strict=True) if hit)


def _estimate(conn: sqlite3.Connection, stats: _Stats, var: NodeVar) -> int:
    """How many nodes of the index pass the variable's own node test."""
    hits = _label_hits(stats, var.test.label)
    if stats.counted:
        by_label = sum(n for (_, _, n), hit in zip(stats.labels, hits, strict=True) if hit)
    else:  # statistics not filled in: assume labels are equally frequent
        by_label = stats.total_nodes * sum(hits) // max(len(stats.labels), 1)
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

    for var in all_node_vars(pattern):
        label(var.test.label, var.span.start)
    for cond in walk_conditions(pattern.condition):
        if (isinstance(cond, Compare) and cond.op in ("~", "!~")
                and isinstance(cond.right, Literal)):
            check(str(cond.right.value), cond.right.span.start)


# ---------------------------------------------------------------- ordering

def _reach(cond: Condition, name: str, placed: set[str]) -> tuple[str, str | None, float]:
    """Best access to `name` from `placed`: (access kind, via, candidates per probe).

    A negative size is a share of the tree's nodes.
    """
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
        return _reach_unanchored(cond, name, placed)
    return best


def _reach_unanchored(cond: Condition, name: str,
                      placed: set[str]) -> tuple[str, str | None, float]:
    """Without an index probe: parent links, or a part of the tree's id range."""
    found: list[tuple[float, tuple[str, str | None, float]]] = []
    for rel in conjuncts(cond):
        if not isinstance(rel, Relation) or rel.left == rel.right:
            continue
        if rel.kind in DOMINATING_KINDS and rel.left == name and rel.right in placed:
            if rel.kind == "dominates" and rel.max_depth is not None \
                    and rel.max_depth <= UP_LIMIT:
                levels = rel.max_depth - max(rel.min_depth or 1, 1) + 1
                found.append((0, ("up", rel.right, float(levels))))
            # ancestors: bounded by the tree, cut at the descendant
            found.append((1, ("ancestors", rel.right, AVG_DEPTH)))
        elif rel.kind == "same-span-as" and {rel.left, rel.right} - {name} <= placed:
            # equal spans: one dominates the other, so it is an ancestor or in the subtree
            other = rel.right if rel.left == name else rel.left
            found.append((2, ("spanning", other, -0.5)))
        elif rel.kind in PRECEDENCE_KINDS and rel.left == name and rel.right in placed:
            found.append((2, ("before", rel.right, -0.5)))
        elif rel.kind in PRECEDENCE_KINDS and rel.right == name and rel.left in placed:
            found.append((2, ("after", rel.left, -0.5)))
    if found:
        return min(found, key=lambda item: item[0])[1]
    return "tree", sorted(placed)[0], -1.0


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
          total: int, tree_size: float, reached: dict | None = None,
          build: bool = True) -> tuple[float, list[Step]]:
    """Estimated work of one join order: the sum of the partial result sizes.

    `reached` remembers the access found for (variable, placed set) across orders;
    without `build` only the cost is computed (the steps are built for the best order).
    """
    reached = {} if reached is None else reached
    rows, cost, placed, steps = 1.0, 0.0, set(), []
    for var in order:
        key = (var.name, frozenset(placed))
        if key not in reached:
            reached[key] = _reach(cond, var.name, placed)
        access, via, size = reached[key]
        selectivity = matches[var.name] / max(total, 1)
        if access == "scan":
            rows = float(matches[var.name])
        else:
            candidates = tree_size * -size if size < 0 else size
            rows *= max(candidates * selectivity, 1e-3)
        cost += rows
        placed.add(var.name)
        if build:
            steps.append(Step(var.name, access, via, matches[var.name], rows,
                              levels=_levels(cond, var.name, via) if access == "up"
                              else (0, 0)))
    return cost, steps


def _within_budget(lists: dict[str, tuple[int, ...] | None]
                   ) -> tuple[tuple[str, tuple[int, ...] | None], ...]:
    """Code lists to pass as parameters, shortest first while the budget lasts."""
    kept, spent = {}, 0
    for name, found in sorted(lists.items(), key=lambda item: len(item[1] or ())):
        if found is not None and len(found) <= CODE_LIST_LIMIT \
                and spent + len(found) <= CODE_PARAM_BUDGET:
            kept[name], spent = found, spent + len(found)
    return tuple((name, kept.get(name)) for name in lists)


def _levels(cond: Condition, name: str, via: str | None) -> tuple[int, int]:
    """The (from, to) levels of the bounded dominance that makes `name` an ancestor of `via`."""
    for rel in conjuncts(cond):
        if isinstance(rel, Relation) and rel.kind == "dominates" and rel.left == name \
                and rel.right == via and rel.max_depth is not None \
                and rel.max_depth <= UP_LIMIT:
            return max(rel.min_depth or 1, 1), rel.max_depth
    raise AssertionError("an 'up' step needs its bounded dominance")


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


def make_plan(conn: sqlite3.Connection, pattern: Pattern, count_empty: bool = False,
              order: Sequence[str] | None = None) -> Plan:
    """Choose the join order of the pattern's top-level nodes from the index statistics.

    `order` (variable names) forces a join order instead, for tests and `explain`.
    """
    if not pattern.vars:
        raise PatternCheckError("the pattern has no node", pattern.text, 0)
    _check_regexes(pattern)
    stats = _cached_stats(conn)
    matches = {v.name: _estimate(conn, stats, v) for v in pattern.vars}
    tree_size = stats.total_nodes / max(stats.total_trees, 1)
    candidates = _orders(pattern.vars, pattern.condition, matches)
    if order is not None:
        by_name = {v.name: v for v in pattern.vars}
        if sorted(order) != sorted(by_name):
            raise PatternCheckError(f"a forced order must list {sorted(by_name)}", pattern.text, 0)
        candidates = [tuple(by_name[name] for name in order)]
    best_cost, best_order = float("inf"), None
    reached: dict = {}
    for candidate in candidates:
        cost, _ = _cost(candidate, pattern.condition, matches, stats.total_nodes, tree_size,
                        reached, build=False)
        if cost < best_cost or best_order is None:
            best_cost, best_order = cost, candidate
    _, best_steps = _cost(best_order, pattern.condition, matches, stats.total_nodes, tree_size,
                          reached)
    # The order is always pinned (CROSS JOIN). Measured on the WSJ sample: left to
    # itself, SQLite trusted ANALYZE figures that mislead it (an average of ~6,700 rows
    # per label) and scanned the whole node table, or built a throw-away index on
    # node.tree, making precedence searches 5-10x slower than the planned order.
    pin = len(best_steps) > 1
    reason = ""
    if pin:
        reason = ("order given by the caller" if order is not None
                  else "the planner's order; SQLite's own choice can scan the whole node "
                       "table when its statistics mislead it")
    lists = {v.name: _matching_codes(stats, v) for v in all_node_vars(pattern)}
    codes = tuple((name, len(found or ())) for name, found in lists.items())
    code_lists = _within_budget(lists)
    lookup = dict(codes)
    steps = tuple(replace(step, label_key=lookup[step.var] <= LABEL_KEY_LIMIT.get(
        step.access, LABEL_KEY_LIMIT_DEFAULT)) for step in best_steps)
    first = steps[0]
    # SQLite's ANALYZE average (rows per label) is dominated by a few huge labels, so
    # it scans the whole table for a test naming a couple of dozen rare labels; the
    # label index is named when the label statistics say it reads a small share.
    drive = (stats.label_index and lists[first.var] is not None and first.label_key
             and first.matches * DRIVE_SHARE < stats.total_nodes)
    return Plan(pattern, steps, count_empty, stats.total_nodes, stats.total_trees,
                pin_order=pin, cost=best_cost, pin_reason=reason, label_codes=codes,
                code_lists=code_lists, drive_by_label=drive, total_words=stats.total_words)
