"""The brute-force reference matcher: evaluates a pattern AST over RefTrees by backtracking.

It implements each construct straight from its definition (treequery/pattern/ast.py
and grammar/README.md) and shares no code with the SQL path: it tries every
candidate node for every variable of a tree, checking each statement as soon as
all of its variables are bound. Slow, but meant to be obviously right.
"""
from __future__ import annotations

import re
from collections.abc import Iterable, Iterator
from dataclasses import dataclass, field

from treequery.pattern.ast import (
    And,
    AnyLabel,
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
)

from .nodes import RefNode, RefTree

# What this matcher implements; the random strategies draw only from these, so
# constructs added to the language later are compared once they are added here.
SUPPORTED_RELATIONS = (
    "dominates", "parent-of", "precedes", "just-before", "sister-of", "left-sister-of",
    "immediate-left-sister-of", "first-child-of", "last-child-of", "only-child-of",
    "same-node",
    # issue 4 (syntax_relation_holds)
    "coindexed-with", "antecedent-of", "correspondent-of", "c-commands", "head-of",
    "lexical-head-of", "same-span-as", "starts-with", "ends-with",
)
SUPPORTED_ATTRIBUTES = (
    "category", "label", "functions", "word", "index", "gap", "children", "tokens",
    "leaves", "depth", "position", "start", "end", "empty", "preterminal",
    "kind", "refindex", "headword", "headtag", "silent",
)

# One result: (0-based tree number in corpus order, pre-order index of each result var).
RefResult = tuple[int, tuple[int, ...]]
Env = dict[str, RefNode]


# ---------------------------------------------------------------- node tests

def label_matches(test: LabelTest, node: RefNode) -> bool:
    """Whether the node's label passes a label test."""
    if isinstance(test, AnyLabel):
        return True
    if isinstance(test, CategoryIs):
        return node.category == test.category and set(test.functions) <= set(node.functions)
    if isinstance(test, CategoryRegex):
        return re.search(test.pattern, node.category) is not None
    if isinstance(test, LabelOneOf):
        return any(label_matches(option, node) for option in test.options)
    if isinstance(test, LabelNot):
        return not label_matches(test.inner, node)
    raise TypeError(f"unknown label test {test!r}")


def node_matches(test: NodeTest, node: RefNode) -> bool:
    """Whether a node passes a node test (a word test only passes preterminals)."""
    if test.word is not None and node.word != test.word:
        return False
    return label_matches(test.label, node)


# ---------------------------------------------------------------- free variables

def free_vars(cond: Condition) -> frozenset[str]:
    """The variables a condition mentions that it does not bind itself."""
    if isinstance(cond, Relation):
        return frozenset((cond.left, cond.right))
    if isinstance(cond, Compare):
        names = {cond.left.var}
        if not isinstance(cond.right, Literal):
            names.add(cond.right.var)
        return frozenset(names)
    if isinstance(cond, Flag):
        return frozenset((cond.attr.var,))
    if isinstance(cond, (And, Or)):
        return frozenset().union(*(free_vars(item) for item in cond.items))
    if isinstance(cond, Not):
        return free_vars(cond.item)
    if isinstance(cond, Exists):
        return free_vars(cond.condition) - {v.name for v in cond.vars}
    raise TypeError(f"unknown condition {cond!r}")


def conjuncts(cond: Condition) -> list[Condition]:
    """The statements of a condition that must all hold (nested Ands flattened)."""
    if isinstance(cond, And):
        return [part for item in cond.items for part in conjuncts(item)]
    return [cond]


# ---------------------------------------------------------------- one tree

@dataclass
class TreeMatcher:
    """Evaluates conditions over the nodes of one tree."""

    tree: RefTree
    count_empty: bool = False
    _candidates: dict = field(default_factory=dict)

    def candidates(self, var: NodeVar) -> list[RefNode]:
        """The nodes of the tree that pass the variable's node test."""
        if var not in self._candidates:
            self._candidates[var] = [n for n in self.tree.nodes if node_matches(var.test, n)]
        return self._candidates[var]

    # -- relations, each written from its definition in ast.py

    def relation_holds(self, rel: Relation, a: RefNode, b: RefNode) -> bool:
        kind = rel.kind
        if kind == "dominates":
            levels = self._levels_above(a, b)
            if levels is None:
                return False
            low = rel.min_depth if rel.min_depth is not None else 1
            high = rel.max_depth
            return levels >= low and (high is None or levels <= high)
        if kind == "parent-of":
            return b.parent == a.index
        if kind == "precedes":
            last, first = self._span_end(a), self._span_start(b)
            return last is not None and first is not None and last < first
        if kind == "just-before":
            last, first = self._span_end(a), self._span_start(b)
            return last is not None and first is not None and last + 1 == first
        if kind == "sister-of":
            return a.parent is not None and a.parent == b.parent and a.index != b.index
        if kind == "left-sister-of":
            return a.parent is not None and a.parent == b.parent and a.position < b.position
        if kind == "immediate-left-sister-of":
            return a.parent is not None and a.parent == b.parent and a.position + 1 == b.position
        if kind == "first-child-of":
            return a.parent == b.index and b.children[0] == a.index
        if kind == "last-child-of":
            return a.parent == b.index and b.children[-1] == a.index
        if kind == "only-child-of":
            return a.parent == b.index and len(b.children) == 1
        if kind == "same-node":
            return a.index == b.index
        return self.syntax_relation_holds(rel, a, b)

    # -- issue 4 relations, each from its published definition (grammar/README.md)

    def syntax_relation_holds(self, rel: Relation, a: RefNode, b: RefNode) -> bool:
        kind = rel.kind
        if kind == "antecedent-of":
            # Bies et al. 1995: a label index -n and an empty element written with -n
            return a.coindex is not None and b.empty and b.ref_index == a.coindex
        if kind == "correspondent-of":
            # Bies et al. 1995, gapping: the -n constituent and the =n constituent
            return (a.index != b.index and a.coindex is not None
                    and b.gap == a.coindex)
        if kind == "coindexed-with":
            return any(self.relation_holds(Relation(k, "", "", rel.span), x, y)
                       for k in ("antecedent-of", "correspondent-of")
                       for x, y in ((a, b), (b, a)))
        if kind == "c-commands":
            return self._c_commands(a, b)
        if kind == "head-of":
            return a.parent == b.index and b.head_child == a.index
        if kind == "lexical-head-of":
            return not b.preterminal and b.head == a.index
        if kind == "same-span-as":
            # the same tokens, one node above the other (a unary chain)
            one_above = self._levels_above(a, b) is not None or \
                self._levels_above(b, a) is not None
            span = (self._span_start(a), self._span_end(a))
            return one_above and span[0] is not None and span == (self._span_start(b),
                                                                  self._span_end(b))
        if kind in ("starts-with", "ends-with"):
            if self._levels_above(a, b) is None:
                return False
            edge = self._span_start if kind == "starts-with" else self._span_end
            return edge(a) is not None and edge(a) == edge(b)
        raise ValueError(f"unknown relation kind {kind!r}")

    def _c_commands(self, a: RefNode, b: RefNode) -> bool:
        """Reinhart (1976): a c-commands b iff neither dominates the other and the
        first branching node that dominates a also dominates b (a != b)."""
        if a.index == b.index or self._levels_above(a, b) is not None \
                or self._levels_above(b, a) is not None:
            return False
        current = a
        while current.parent is not None:
            current = self.tree.nodes[current.parent]
            if len(current.children) >= 2:
                return self._levels_above(current, b) is not None
        return False

    def _levels_above(self, upper: RefNode, lower: RefNode) -> int | None:
        """How many parent steps lead from `lower` up to `upper` (None if never)."""
        levels = 0
        current = lower
        while current.parent is not None:
            current = self.tree.nodes[current.parent]
            levels += 1
            if current.index == upper.index:
                return levels
        return None

    def _span_start(self, node: RefNode) -> int | None:
        return node.leaf_first if self.count_empty else node.tok_first

    def _span_end(self, node: RefNode) -> int | None:
        return node.leaf_last if self.count_empty else node.tok_last

    # -- conditions

    def holds(self, cond: Condition, env: Env) -> bool:
        """Whether a condition holds when all its free variables are bound in env."""
        if isinstance(cond, Relation):
            return self.relation_holds(cond, env[cond.left], env[cond.right])
        if isinstance(cond, Compare):
            return compare_holds(cond, env)
        if isinstance(cond, Flag):
            return env[cond.attr.var].attribute(cond.attr.name) is True
        if isinstance(cond, And):
            return all(self.holds(item, env) for item in cond.items)
        if isinstance(cond, Or):
            return any(self.holds(item, env) for item in cond.items)
        if isinstance(cond, Not):
            return not self.holds(cond.item, env)
        if isinstance(cond, Exists):
            return self.exists(list(cond.vars), conjuncts(cond.condition), env)
        raise TypeError(f"unknown condition {cond!r}")

    def exists(self, variables: list[NodeVar], conds: list[Condition], env: Env) -> bool:
        return next(self.solutions(variables, conds, env), None) is not None

    def solutions(self, variables: list[NodeVar], conds: list[Condition], env: Env
                  ) -> Iterator[Env]:
        """Every binding of `variables` (on top of env) under which all of `conds` hold.

        Each statement is checked right after the last of its variables is bound,
        which prunes the search without changing what is found.
        """
        bound_order = {name: 0 for name in env}
        for step, var in enumerate(variables, start=1):
            bound_order[var.name] = step
        checks: list[list[Condition]] = [[] for _ in range(len(variables) + 1)]
        for cond in conds:
            checks[max((bound_order[name] for name in free_vars(cond)), default=0)].append(cond)
        if not all(self.holds(cond, env) for cond in checks[0]):
            return
        yield from self._extend(variables, checks, dict(env), 0)

    def _extend(self, variables: list[NodeVar], checks: list[list[Condition]], env: Env,
                step: int) -> Iterator[Env]:
        if step == len(variables):
            yield dict(env)
            return
        var = variables[step]
        for node in self.candidates(var):
            env[var.name] = node
            if all(self.holds(cond, env) for cond in checks[step + 1]):
                yield from self._extend(variables, checks, env, step + 1)
        env.pop(var.name, None)


def compare_holds(cond: Compare, env: Env) -> bool:
    """Two-valued comparison: a missing value on either side makes it false."""
    left = env[cond.left.var].attribute(cond.left.name)
    if isinstance(cond.right, Literal):
        right = cond.right.value
    else:
        right = env[cond.right.var].attribute(cond.right.name)
    if left is None or right is None:
        return False
    op = cond.op
    if op == "~":
        return re.search(str(right), str(left)) is not None
    if op == "!~":
        return re.search(str(right), str(left)) is None
    if op == "=":
        return left == right
    if op == "!=":
        return left != right
    if op == "<":
        return left < right
    if op == "<=":
        return left <= right
    if op == ">":
        return left > right
    if op == ">=":
        return left >= right
    raise ValueError(f"unknown comparison operator {op!r}")


# ---------------------------------------------------------------- patterns

def match_tree(pattern: Pattern, tree: RefTree, count_empty: bool = False
               ) -> set[tuple[int, ...]]:
    """Distinct assignments of the pattern's result variables in one tree (pre-order numbers)."""
    matcher = TreeMatcher(tree, count_empty)
    result_names = pattern.result_vars
    by_name = {var.name: var for var in pattern.vars}
    result_vars = [by_name[name] for name in result_names]
    other_vars = [var for var in pattern.vars if var.name not in result_names]
    conds = conjuncts(pattern.condition)
    result_set = set(result_names)
    # Statements over result variables only prune the outer search; the rest
    # only ask whether some binding of the other variables exists.
    outer = [c for c in conds if free_vars(c) <= result_set]
    inner = [c for c in conds if not free_vars(c) <= result_set]
    found = set()
    for env in matcher.solutions(result_vars, outer, {}):
        if matcher.exists(other_vars, inner, env):
            found.add(tuple(env[name].index for name in result_names))
    return found


def match_corpus(pattern: Pattern, trees: Iterable[RefTree], count_empty: bool = False
                 ) -> set[RefResult]:
    """Every result in a corpus, as (tree number in corpus order, pre-order indices)."""
    found: set[RefResult] = set()
    for number, tree in enumerate(trees):
        for nodes in match_tree(pattern, tree, count_empty):
            found.add((number, nodes))
    return found
