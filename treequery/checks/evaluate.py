"""Running the rules of a rules file against an index: outcomes and violations with locations."""
from __future__ import annotations

import sqlite3
from dataclasses import dataclass
from typing import TYPE_CHECKING

from ..index.trees import load_tree, to_brackets
from ..read.model import ParsedNode
from ..results.model import Result
from .rules import Rule

if TYPE_CHECKING:  # the API sits above this module; only its type is needed here
    from ..api import Treebank

FIRST_NODE_SQL = "SELECT first_node FROM tree WHERE id = ?"


@dataclass(frozen=True, slots=True)
class MarkedNode:
    """A node bound by the rule's pattern: variable name, label, overt-word span and words."""

    var: str
    label: str
    start: int | None
    end: int | None
    words: str


@dataclass(frozen=True, slots=True)
class Violation:
    """One place that breaks a rule; `tree` shows the tree with the bound nodes marked."""

    tree_id: int
    document: str
    path: str
    line: int
    ordinal: int
    nodes: tuple[MarkedNode, ...]
    tree: str


@dataclass(frozen=True, slots=True)
class RuleOutcome:
    rule: Rule
    passed: bool
    matches: int            # results of the rule's pattern
    summary: str
    violations: tuple[Violation, ...]


def run_rule(treebank: Treebank, rule: Rule, flat: bool = False) -> RuleOutcome:
    """Search `rule`'s pattern in `treebank` and judge the expectation."""
    if rule.expect == "at least":
        matches = treebank.count(rule.pattern).results
        passed = matches >= rule.limit
        summary = f"{_matches(matches)}, at least {rule.limit} expected"
        return RuleOutcome(rule, passed, matches, summary, ())
    results = list(treebank.find(rule.pattern))
    matches = len(results)
    passed, summary = _judge(rule, matches)
    violations = () if passed else tuple(_violation(treebank.conn, r, flat) for r in results)
    return RuleOutcome(rule, passed, matches, summary, violations)


def run_rules(treebank: Treebank, rules: tuple[Rule, ...], flat: bool = False) -> list[RuleOutcome]:
    return [run_rule(treebank, rule, flat) for rule in rules]


def _judge(rule: Rule, matches: int) -> tuple[bool, str]:
    if rule.expect == "never":
        return matches == 0, f"{_matches(matches)}, none allowed"
    if rule.expect == "every":
        return matches == 0, f"{_matches(matches)} of 'every' failing 'satisfies'"
    if rule.expect == "at most":
        return matches <= rule.limit, f"{_matches(matches)}, at most {rule.limit} allowed"
    return matches == rule.limit, f"{_matches(matches)}, exactly {rule.limit} expected"


def _matches(count: int) -> str:
    return f"{count} match" if count == 1 else f"{count} matches"


def _violation(conn: sqlite3.Connection, result: Result, flat: bool) -> Violation:
    nodes = tuple(MarkedNode(_shown_name(name), node.label, node.tok_first, node.tok_last,
                             node.words)
                  for name, node in result.bindings.items())
    marks = {node.id: _shown_name(name) for name, node in result.bindings.items()}
    return Violation(result.tree_id, result.document, result.path, result.line, result.ordinal,
                     nodes, marked_tree(conn, result.tree_id, marks, flat))


def _shown_name(name: str) -> str:
    # Anonymous result nodes have internal names such as "_1".
    return "match" if name.startswith("_") and name[1:2].isdigit() else name


def marked_tree(conn: sqlite3.Connection, tree_id: int, marks: dict[int, str],
                flat: bool = False) -> str:
    """The tree in bracket notation; a marked node's label is written `name:LABEL`."""
    root = load_tree(conn, tree_id)
    (first_node,) = conn.execute(FIRST_NODE_SQL, (tree_id,)).fetchone()
    # Node ids number a tree's nodes in pre-order from its root's id, the order of the
    # walk below, so the k-th node visited has id first_node + k.
    stack: list[ParsedNode] = [root]
    node_id = first_node
    while stack:
        node = stack.pop()
        if node_id in marks:
            node.label = f"{marks[node_id]}:{node.label}"
        node_id += 1
        stack.extend(reversed(node.children))
    return to_brackets(root, indent=not flat)
