"""SQL generation: one parameterized SQLite statement per search, built from a Plan.

Every piece of user text (labels, words, regular expressions, numbers) travels as a
numbered parameter (`?N`), and pattern variables become generated aliases (`n0`,
`n1`, ...), so nothing the user typed is ever spliced into SQL text.
"""
from __future__ import annotations

import sqlite3
import threading
from functools import lru_cache
from typing import TYPE_CHECKING

import regex

from treequery.errors import PatternCheckError, SearchTimeout
from treequery.pattern.ast import (
    ATTRIBUTES,
    And,
    AnyLabel,
    Attr,
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
    Relation,
    walk_conditions,
)

if TYPE_CHECKING:
    from treequery.pattern.plan import Plan

REGEX_TIMEOUT = 0.5  # seconds one regular-expression search may take
# A regular expression on words is tested on each candidate node's word (answers
# remembered per search) when the planner expects fewer than this many candidates
# per distinct word of the index, else once on every word of the word table.
REGEX_ROWS_PER_WORD = 4
EMPTY_CATEGORY = "-NONE-"  # Penn Treebank empty elements (Bies et al. 1995, section 4)

# Attributes stored on the label row, by attribute name -> label column.
LABEL_COLUMNS = {
    "category": "category",
    "label": "text",
    "functions": "functions",
    "index": "coindex",
    "gap": "gapindex",
}

# Attributes computed from the node row; {a} is the node's alias. Unary + marks a
# column as a filter only: without it SQLite may build a throw-away index on it per
# search, which costs a scan of the whole node table.
NODE_EXPRESSIONS = {
    "children": "+{a}.n_children",
    "tokens": "IFNULL({a}.tok_last - {a}.tok_first + 1, 0)",
    "leaves": "({a}.leaf_last - {a}.leaf_first + 1)",
    "depth": "+{a}.depth",
    "position": "+{a}.position",
    "start": "+{a}.tok_first",
    "end": "+{a}.tok_last",
    "preterminal": "({a}.word IS NOT NULL)",
}

SQL_OPERATORS = {"=": "=", "!=": "<>", "<": "<", "<=": "<=", ">": ">", ">=": ">="}

# Relations whose SQL lets the later of two nodes be found by an index probe
# (an equality on id/parent, or the descendant's id range): (kind, side) pairs.
_ANCHOR_SIDES = {
    ("parent-of", "left"), ("parent-of", "right"),
    ("first-child-of", "left"), ("first-child-of", "right"),
    ("last-child-of", "left"), ("last-child-of", "right"),
    ("only-child-of", "left"), ("only-child-of", "right"),
    ("sister-of", "left"), ("sister-of", "right"),
    ("left-sister-of", "left"), ("left-sister-of", "right"),
    ("immediate-left-sister-of", "left"), ("immediate-left-sister-of", "right"),
    ("same-node", "left"), ("same-node", "right"),
    ("dominates", "right"),
    # issue 4: link-table lookups, id ranges and the head's id
    ("coindexed-with", "left"), ("coindexed-with", "right"),
    ("antecedent-of", "left"), ("antecedent-of", "right"),
    ("correspondent-of", "left"), ("correspondent-of", "right"),
    ("c-commands", "right"),
    ("head-of", "left"), ("head-of", "right"),
    ("lexical-head-of", "left"),
    ("starts-with", "right"), ("ends-with", "right"),
}

# Kinds of rows in the link table (treequery/index/linguistics.py), by relation.
LINK_KINDS = {"antecedent-of": "coindex", "correspondent-of": "gap"}


# ---------------------------------------------------------------- regexp function

_regex_state = threading.local()


@lru_cache(maxsize=512)
def compile_regex(pattern: str) -> regex.Pattern:
    """Compile once per pattern; raises regex.error on a bad pattern."""
    return regex.compile(pattern)


# Answers already computed in the current search, by (pattern, text): a pattern tested
# on each candidate's word meets the same words again and again, and a search with a
# time limit costs microseconds per call. Cleared when a search starts (new_search).
REGEX_MEMO_LIMIT = 100_000


def new_search() -> None:
    """Forget the regular-expression answers of the previous search (in this thread)."""
    _regex_state.memo = {}


def _tq_regexp(pattern: str | None, text: str | None) -> int | None:
    if pattern is None or text is None:
        return None  # a missing value: the comparison is false (two-valued logic)
    memo = getattr(_regex_state, "memo", None)
    if memo is None or len(memo) > REGEX_MEMO_LIMIT:
        memo = _regex_state.memo = {}
    key = (pattern, text)
    if key in memo:
        return memo[key]
    memo[key] = _search(pattern, text)
    return memo[key]


def _search(pattern: str, text: str) -> int:
    try:
        return 1 if compile_regex(pattern).search(str(text), timeout=REGEX_TIMEOUT) else 0
    except TimeoutError:
        _regex_state.timed_out = pattern
        raise
    except regex.error:
        _regex_state.bad_pattern = pattern
        raise


def register_functions(conn: sqlite3.Connection) -> None:
    """Register `tq_regexp(pattern, text)` (unanchored search, time-limited) on `conn`.

    Once per connection: SQLite refuses to replace a function while a statement of the
    connection is open (a search still being read, say).
    """
    try:
        conn.execute("SELECT tq_regexp(NULL, NULL)").fetchone()
    except sqlite3.OperationalError:  # no such function yet
        conn.create_function("tq_regexp", 2, _tq_regexp, deterministic=True)


def translate_error(error: sqlite3.Error) -> Exception:
    """Turn a failure raised inside tq_regexp into a clear treequery error."""
    timed_out = getattr(_regex_state, "timed_out", None)
    bad = getattr(_regex_state, "bad_pattern", None)
    _regex_state.timed_out = _regex_state.bad_pattern = None
    if timed_out is not None:
        return SearchTimeout(
            f"regular expression took too long (over {REGEX_TIMEOUT} s on one value): "
            f"/{timed_out}/"
        )
    if bad is not None:
        return PatternCheckError(f"invalid regular expression /{bad}/", bad, 0)
    return error


# ---------------------------------------------------------------- generator

class _Generator:
    """Compiles the conditions of one plan; collects parameters in `?N` order."""

    def __init__(self, plan: Plan):
        self.plan = plan
        self.params: list = []
        self.alias: dict[str, str] = {}
        self.uses_tree = False
        for name in plan.order:
            self.new_alias(name)
        self.root = self.alias[plan.order[0]]

    def param(self, value: object) -> str:
        self.params.append(value)
        return f"?{len(self.params)}"

    def new_alias(self, name: str) -> str:
        self.alias[name] = f"n{len(self.alias)}"
        return self.alias[name]

    def of(self, name: str) -> str:
        try:
            return self.alias[name]
        except KeyError:
            raise PatternCheckError(
                f"unknown variable {name!r}", self.plan.pattern.text, 0
            ) from None

    # ------------------------------------------------------------ node tests

    def label_predicate(self, test: LabelTest) -> str:
        """A predicate over the columns of the label table."""
        if isinstance(test, AnyLabel):
            return "1"
        if isinstance(test, CategoryIs):
            parts = [f"category = {self.param(test.category)}"]
            for tag in test.functions:  # a set: order and extra tags do not matter
                parts.append(f"instr('-' || functions || '-', '-' || {self.param(tag)} || '-') > 0")
            return "(" + " AND ".join(parts) + ")"
        if isinstance(test, CategoryRegex):
            return f"tq_regexp({self.param(test.pattern)}, category)"
        if isinstance(test, LabelOneOf):
            return "(" + " OR ".join(self.label_predicate(o) for o in test.options) + ")"
        if isinstance(test, LabelNot):
            return f"NOT {self.label_predicate(test.inner)}"
        raise TypeError(f"unknown label test {test!r}")

    def node_test(self, alias: str, test: NodeTest, label_key: bool = True,
                  codes: tuple[int, ...] | None = None) -> list[str]:
        """Conditions of a node test; without `label_key` the label is a filter only.

        `codes` are the label codes the planner found for the test: listed as
        parameters, they let SQLite count the index seeks instead of guessing.
        """
        conds = []
        if not isinstance(test.label, AnyLabel):
            column = f"{alias}.label" if label_key else f"+{alias}.label"
            if codes:  # (a test naming no label stays a subquery: it costs next to nothing)
                listed = ", ".join(self.param(code) for code in codes)
                conds.append(f"{column} IN ({listed})")
            else:
                pred = self.label_predicate(test.label)
                conds.append(f"{column} IN (SELECT code FROM label WHERE {pred})")
        if test.word is not None:
            form = self.param(test.word)
            conds.append(f"{alias}.word IN (SELECT code FROM word WHERE form = {form})")
        return conds

    def same_tree(self, alias: str) -> list[str]:
        """Pin a non-root node to the root's tree; the id range makes it an index probe."""
        self.uses_tree = True
        return [f"{alias}.id BETWEEN t.first_node AND t.last_node"]

    # ------------------------------------------------------------ conditions

    def condition(self, cond: Condition) -> str:
        if isinstance(cond, Relation):
            return self.relation(cond)
        if isinstance(cond, Compare):
            return self.compare(cond)
        if isinstance(cond, Flag):
            return self.flag(cond.attr)
        if isinstance(cond, (And, Or)):
            if not cond.items:
                return "1" if isinstance(cond, And) else "0"
            joiner = " AND " if isinstance(cond, And) else " OR "
            return "(" + joiner.join(self.condition(c) for c in cond.items) + ")"
        if isinstance(cond, Not):
            if isinstance(cond.item, Exists):
                return "NOT " + self.exists(cond.item)
            # SQL is three-valued; a missing value makes the inner part NULL, which
            # must count as false before it is negated (two-valued logic).
            return f"NOT IFNULL({self.condition(cond.item)}, 0)"
        if isinstance(cond, Exists):
            return self.exists(cond)
        raise TypeError(f"unknown condition {cond!r}")

    def relation(self, rel: Relation) -> str:
        a, b = self.of(rel.left), self.of(rel.right)
        kind = rel.kind
        if kind == "dominates":
            if rel.max_depth == 1:
                return f"{b}.parent = {a}.id"
            parts = [f"{b}.id > {a}.id", f"{b}.id <= {a}.last"]
            if rel.min_depth is not None and rel.min_depth > 1:
                parts.append(f"{b}.depth - {a}.depth >= {self.param(rel.min_depth)}")
            if rel.max_depth is not None:
                parts.append(f"{b}.depth - {a}.depth <= {self.param(rel.max_depth)}")
            return "(" + " AND ".join(parts) + ")"
        if kind == "parent-of":
            return f"{b}.parent = {a}.id"
        if kind in ("precedes", "just-before"):
            first, last = (("leaf_first", "leaf_last") if self.plan.count_empty
                           else ("tok_first", "tok_last"))
            gap = "<" if kind == "precedes" else "+ 1 ="
            # Redundant with the token test but it bounds the id range: the nodes after
            # a's subtree in pre-order are exactly the nodes to its right.
            return (f"({_same_tree(a, b)} AND {b}.id > {a}.last"
                    f" AND +{a}.{last} {gap} +{b}.{first})")
        if kind == "sister-of":
            return f"({a}.parent = {b}.parent AND {a}.id <> {b}.id)"
        if kind == "left-sister-of":
            return f"({a}.parent = {b}.parent AND +{a}.position < +{b}.position)"
        # In pre-order a first child comes right after its parent, and a next sister
        # right after the subtree of the one before: exact ids, looked up by key.
        if kind == "immediate-left-sister-of":
            return f"({a}.parent = {b}.parent AND {b}.id = {a}.last + 1)"
        if kind == "first-child-of":
            return f"({a}.parent = {b}.id AND {_next_id(b, a)})"
        if kind == "last-child-of":
            return f"({a}.parent = {b}.id AND +{a}.position = +{b}.n_children)"
        if kind == "only-child-of":
            return f"({a}.parent = {b}.id AND {_next_id(b, a)} AND +{b}.n_children = 1)"
        if kind == "same-node":
            return f"{a}.id = {b}.id"
        if kind in SYNTAX_RELATIONS:
            return getattr(self, SYNTAX_RELATIONS[kind])(rel, a, b)
        raise PatternCheckError(f"unknown relation {kind!r}", self.plan.pattern.text,
                                rel.span.start)

    # ------------------------------------------------------------ issue 4 relations

    def syntax(self, alias: str, column: str) -> str:
        """A syntax column of a node (offsets from the node's id; schema.py)."""
        return f"{alias}.{column}"

    def later(self, first: str, second: str) -> bool:
        """Whether alias `second` is joined after `first` (it can then be probed)."""
        return int(second[1:]) > int(first[1:])

    def linked(self, rel: Relation, a: str, b: str) -> str:
        """A link-table lookup written so that the later of the two nodes is probed."""
        kinds = ("antecedent-of", "correspondent-of") if rel.kind == "coindexed-with" \
            else (rel.kind,)
        kind_test = " OR ".join(f"kind = {self.param(LINK_KINDS[k])}" for k in kinds)
        forward = (f"SELECT target FROM link WHERE antecedent = {a}.id AND ({kind_test})",
                   f"SELECT antecedent FROM link WHERE target = {b}.id AND ({kind_test})")
        probe_b = self.later(a, b)
        first = f"{b}.id IN ({forward[0]})" if probe_b else f"{a}.id IN ({forward[1]})"
        if rel.kind != "coindexed-with":
            return first
        backward = (f"SELECT antecedent FROM link WHERE target = {a}.id AND ({kind_test})",
                    f"SELECT target FROM link WHERE antecedent = {b}.id AND ({kind_test})")
        second = f"{b}.id IN ({backward[0]})" if probe_b else f"{a}.id IN ({backward[1]})"
        return f"({first} OR {second})"

    def c_commands(self, rel: Relation, a: str, b: str) -> str:
        # Reinhart 1976: b inside the subtree of a's first branching ancestor, and
        # neither node dominates the other (nor is the other).
        low = f"{a}.id - {self.syntax(a, 'branch_up')}"
        high = f"{a}.id + {self.syntax(a, 'branch_reach')}"
        return (f"({b}.id BETWEEN {low} AND {high} AND {a}.id <> {b}.id"
                f" AND NOT ({b}.id > {a}.id AND {b}.id <= {a}.last)"
                f" AND NOT ({b}.id < {a}.id AND {b}.last >= {a}.id))")

    def head_of(self, rel: Relation, a: str, b: str) -> str:
        # The head child is the child that shares the phrase's lexical head.
        return (f"({a}.parent = {b}.id AND "
                f"{a}.id + {self.syntax(a, 'head')} = {b}.id + {self.syntax(b, 'head')})")

    def lexical_head_of(self, rel: Relation, a: str, b: str) -> str:
        return f"({a}.id = {b}.id + {self.syntax(b, 'head')} AND {a}.id <> {b}.id)"

    def token_columns(self) -> tuple[str, str]:
        return (("leaf_first", "leaf_last") if self.plan.count_empty
                else ("tok_first", "tok_last"))

    def same_span(self, rel: Relation, a: str, b: str) -> str:
        # Token spans of two nodes are nested or apart: equal spans mean one node
        # dominates the other through a unary chain (empty elements aside by default).
        first, last = self.token_columns()
        return (f"({_same_tree(a, b)} AND {a}.id <> {b}.id"
                f" AND +{a}.{first} = +{b}.{first} AND +{a}.{last} = +{b}.{last})")

    def edge(self, rel: Relation, a: str, b: str) -> str:
        first, last = self.token_columns()
        column = first if rel.kind == "starts-with" else last
        return f"({b}.id > {a}.id AND {b}.id <= {a}.last AND +{a}.{column} = +{b}.{column})"

    def head_value(self, a: str, table: str, column: str) -> str:
        """A column of the label / word row of the node's lexical head."""
        head = f"{a}.id + {self.syntax(a, 'head')}"
        code = "label" if table == "label" else "word"
        return (f"(SELECT x.{column} FROM node AS h JOIN {table} AS x ON x.code = h.{code} "
                f"WHERE h.id = {head})")

    def empty_value(self, a: str, column: str) -> str:
        """A column of an empty element's word row (missing on every other node)."""
        empty = self.param(EMPTY_CATEGORY)
        return (f"(SELECT {column} FROM word WHERE code = {a}.word AND {a}.label IN "
                f"(SELECT code FROM label WHERE category = {empty}))")

    def attr_type(self, attr: Attr) -> str:
        kind = ATTRIBUTES.get(attr.name)
        if kind is None:
            raise PatternCheckError(f"unknown attribute {attr.name!r}", self.plan.pattern.text,
                                    attr.span.start)
        return kind

    def value(self, attr: Attr) -> str:
        """A scalar SQL expression for an attribute (NULL when missing)."""
        self.attr_type(attr)
        a = self.of(attr.var)
        if attr.name in LABEL_COLUMNS:
            return f"(SELECT {LABEL_COLUMNS[attr.name]} FROM label WHERE code = {a}.label)"
        if attr.name == "word":
            return f"(SELECT form FROM word WHERE code = {a}.word)"
        if attr.name in ("empty", "silent"):
            return f"({self.flag(attr)})"
        if attr.name in ("kind", "refindex"):
            return self.empty_value(a, "empty_kind" if attr.name == "kind" else "ref_index")
        if attr.name == "headword":
            return self.head_value(a, "word", "form")
        if attr.name == "headtag":
            return self.head_value(a, "label", "category")
        return NODE_EXPRESSIONS[attr.name].format(a=a)

    def flag(self, attr: Attr) -> str:
        a = self.of(attr.var)
        if attr.name == "empty":
            empty = self.param(EMPTY_CATEGORY)
            return f"{a}.label IN (SELECT code FROM label WHERE category = {empty})"
        if attr.name == "preterminal":
            return f"{a}.word IS NOT NULL"
        if attr.name == "silent":
            return f"{a}.tok_first IS NULL"
        raise PatternCheckError(f"{attr.name!r} is not a yes/no attribute", self.plan.pattern.text,
                                attr.span.start)

    def compare(self, cmp: Compare) -> str:
        kind = self.attr_type(cmp.left)
        if isinstance(cmp.right, Literal):
            literal = _coerce(cmp.right.value, kind)
            a = self.of(cmp.left.var)
            name = cmp.left.name
            regex_per_row = cmp.op in ("~", "!~") and self.few_rows(cmp.left.var)
            # Label and word attributes are tested on the small label/word tables
            # once, and the node is matched by code: the node_label index applies.
            if name in LABEL_COLUMNS:
                test = _operator(LABEL_COLUMNS[name], cmp.op, self.param(literal))
                return f"{a}.label IN (SELECT code FROM label WHERE {test})"
            if name == "word" and regex_per_row:
                # A regular expression costs a Python call per value: on each candidate's
                # word when candidates are few (see few_rows), else once per word.
                word = f"(SELECT form FROM word WHERE code = {a}.word)"
                return _operator(word, cmp.op, self.param(literal))
            if name in ("headword", "headtag") and not regex_per_row:
                # the head's code against the codes that pass, as for `word` above
                table, column = ("word", "form") if name == "headword" else ("label", "category")
                head = f"{a}.id + {self.syntax(a, 'head')}"
                test = _operator(column, cmp.op, self.param(literal))
                return (f"(SELECT h.{table} FROM node AS h WHERE h.id = {head}) "
                        f"IN (SELECT code FROM {table} WHERE {test})")
            if name == "word":
                test = _operator("form", cmp.op, self.param(literal))
                return f"{a}.word IN (SELECT code FROM word WHERE {test})"
            return _operator(self.value(cmp.left), cmp.op, self.param(literal))
        self.attr_type(cmp.right)
        return _operator(self.value(cmp.left), cmp.op, self.value(cmp.right))

    def few_rows(self, name: str) -> bool:
        """Whether a top-level variable's expected rows are few against the index's words
        (then a regular expression is tested on each row's value, else on the word table)."""
        rows = self.plan.rows_at(name)
        return rows is not None and rows < REGEX_ROWS_PER_WORD * self.plan.total_words

    def exists(self, ex: Exists) -> str:
        aliases = [self.new_alias(v.name) for v in ex.vars]
        where: list[str] = []
        outer = set(self.alias) - {v.name for v in ex.vars}
        loose = {v.name for v in unanchored(ex.vars, ex.condition, outer)}
        for var, alias in zip(ex.vars, aliases, strict=True):
            # same rule as the planner's: a few seeks in a tree range, one under a probe
            limit = 4 if var.name in loose else 1
            where += self.node_test(alias, var.test, self.plan.codes(var.name) <= limit,
                                    self.plan.code_list(var.name))
            if var.name in loose:
                where += self.same_tree(alias)
        where += [self.condition(c) for c in conjuncts(ex.condition)]
        froms = ", ".join(f"node AS {a}" for a in aliases)
        return f"EXISTS (SELECT 1 FROM {froms} WHERE {' AND '.join(where) or '1'})"


# issue 4 relations -> the _Generator method that writes them
SYNTAX_RELATIONS = {
    "coindexed-with": "linked",
    "antecedent-of": "linked",
    "correspondent-of": "linked",
    "c-commands": "c_commands",
    "head-of": "head_of",
    "lexical-head-of": "lexical_head_of",
    "same-span-as": "same_span",
    "starts-with": "edge",
    "ends-with": "edge",
}


def _next_id(first: str, then: str) -> str:
    """`then` is the node right after `first`, in the form either side can look up."""
    return f"{then}.id = {first}.id + 1 AND {first}.id = {then}.id - 1"


def _same_tree(a: str, b: str) -> str:
    # Unary + keeps SQLite from building a throw-away index on node.tree for this
    # test; the id ranges are the way in, the tree column is only a filter.
    return f"+{a}.tree = +{b}.tree"


def _coerce(value: str | int, kind: str) -> str | int:
    if kind in ("int", "bool") and isinstance(value, str) and value.lstrip("-").isdigit():
        return int(value)
    if kind == "str" and isinstance(value, int):
        return str(value)
    return value


def _operator(left: str, op: str, right: str) -> str:
    if op == "~":
        return f"tq_regexp({right}, {left})"
    if op == "!~":
        return f"NOT tq_regexp({right}, {left})"  # NULL (missing) stays NULL: false
    return f"{left} {SQL_OPERATORS[op]} {right}"


def conjuncts(cond: Condition) -> list[Condition]:
    """The items of a condition read as a conjunction (nested And flattened)."""
    if isinstance(cond, And):
        out: list[Condition] = []
        for item in cond.items:
            out += conjuncts(item)
        return out
    return [cond]


def anchors(cond: Condition, name: str, placed: set[str]) -> list[Relation]:
    """Top-level relations through which `name` is reached by an index probe from `placed`."""
    found = []
    for item in conjuncts(cond):
        if not isinstance(item, Relation) or item.left == item.right:
            continue
        if item.right == name and item.left in placed and (item.kind, "right") in _ANCHOR_SIDES:
            found.append(item)
        elif item.left == name and item.right in placed and (item.kind, "left") in _ANCHOR_SIDES:
            found.append(item)
    return found


def unanchored(variables: tuple[NodeVar, ...], cond: Condition, outer: set[str]) -> list[NodeVar]:
    """Local variables that need the tree's id range to be found (no probe reaches them)."""
    placed = set(outer)
    pending = list(variables)
    loose: list[NodeVar] = []
    while pending:
        reached = [v for v in pending if anchors(cond, v.name, placed)]
        if not reached:
            reached = [pending[0]]
            loose.append(pending[0])
        for var in reached:
            placed.add(var.name)
            pending.remove(var)
    return loose


# ---------------------------------------------------------------- statements

def _body(plan: Plan, window: bool = False) -> tuple[_Generator, str, str]:
    """FROM and WHERE text of the main query, following the plan's join order.

    With `window`, the first two parameters bound the ids of the first node joined (both
    0 here: the caller sets them). Every node of a result lies in that node's tree, so
    bounds at tree boundaries select whole results: a search can then run in pieces
    (windows in corpus order, or halves on two connections).
    """
    gen = _Generator(plan)
    bounds = (gen.param(0), gen.param(0)) if window else None
    variables = {v.name: v for v in plan.pattern.vars}
    where: list[str] = []
    for step in plan.steps:
        alias = gen.alias[step.var]
        where += gen.node_test(alias, variables[step.var].test, step.label_key,
                               plan.code_list(step.var))
        if step.needs_tree_range or step.access == "up":
            where += _access_range(gen, step)
        elif alias != gen.root:
            where.append(_same_tree(alias, gen.root))
    where += [gen.condition(c) for c in conjuncts(plan.pattern.condition)]
    if bounds:
        where.append(f"{gen.root}.id BETWEEN {bounds[0]} AND {bounds[1]}")
    if gen.uses_tree:
        where.insert(0, f"t.id = {gen.root}.tree")
    joiner = " CROSS JOIN " if plan.pin_order else ", "
    tables = [f"node AS {gen.alias[name]}" for name in plan.order]
    if plan.drive_by_label:
        tables[0] += " INDEXED BY node_label"
    if gen.uses_tree:
        tables.insert(1, "tree AS t")
    return gen, joiner.join(tables), " AND ".join(where) or "1"


def _access_range(gen: _Generator, step) -> list[str]:
    """The id condition through which a step's node is reached (plan.ACCESS_TEXT)."""
    alias = gen.alias[step.var]
    if step.access == "tree" or step.via is None:
        return gen.same_tree(alias)
    via = gen.alias[step.via]
    if step.access == "up":
        # the ancestor `levels` levels up, one primary-key lookup per level
        chain, up = [], f"{via}.parent"
        for level in range(1, step.levels[1] + 1):
            if level >= step.levels[0]:
                chain.append(up)
            up = f"(SELECT parent FROM node WHERE id = {up})"
        return [f"{alias}.id IN ({', '.join(chain)})"]
    gen.uses_tree = True
    if step.access == "after":
        return [f"{alias}.id BETWEEN {via}.last + 1 AND t.last_node"]
    if step.access == "spanning":
        return [f"{alias}.id BETWEEN t.first_node AND {via}.last"]
    # ancestors and nodes to the left: the tree's ids before the placed node
    return [f"{alias}.id BETWEEN t.first_node AND {via}.id - 1"]


def _needs_distinct(plan: Plan) -> bool:
    """Rows are distinct already when every top-level variable is a result variable."""
    return set(plan.pattern.result_vars) != {v.name for v in plan.pattern.vars}


def to_sql(plan: Plan, window: bool = False) -> tuple[str, list]:
    """The search statement: result variables' ids (r0, r1, ...) and tree_id, in corpus order."""
    gen, tables, where = _body(plan, window)
    ids = [f"{gen.alias[name]}.id AS r{i}" for i, name in enumerate(plan.pattern.result_vars)]
    distinct = "DISTINCT " if _needs_distinct(plan) else ""
    order = ", ".join(f"r{i}" for i in range(len(ids)))
    columns = ", ".join(ids + [f"{gen.root}.tree AS tree_id"])
    sql = f"SELECT {distinct}{columns} FROM {tables} WHERE {where} ORDER BY {order}"
    return sql, gen.params


def page_sql(plan: Plan, limit: int | None = None, offset: int = 0) -> tuple[str, list]:
    """The search statement restricted to one page of results."""
    sql, params = to_sql(plan)
    n = len(params)
    return f"{sql} LIMIT ?{n + 1} OFFSET ?{n + 2}", params + [
        -1 if limit is None else int(limit), int(offset)]


def sql_aliases(plan: Plan) -> dict[str, str]:
    """Which SQL alias stands for which pattern variable (for `explain`)."""
    gen, _, _ = _body(plan)
    return dict(gen.alias)


def parse_by(plan: Plan, by) -> tuple[tuple[str, str], ...]:
    """Normalise count-by keys: ("v", "category") or "v.category"."""
    out = []
    names = {v.name for v in plan.pattern.vars}
    for item in by:
        var, attr = item.split(".", 1) if isinstance(item, str) else item
        if var not in names:
            raise PatternCheckError(f"count by: {var!r} is not a top-level variable of the pattern",
                                    plan.pattern.text, 0)
        if attr not in ATTRIBUTES:
            raise PatternCheckError(f"count by: unknown attribute {attr!r}", plan.pattern.text, 0)
        out.append((var, attr))
    return tuple(out)


def count_sql(plan: Plan, by=(), window: bool = False) -> tuple[str, list]:
    """Counting statement.

    Without `by`: one row (results, trees). With `by`: one row per key,
    (key values..., results in the group, total results, total trees).
    """
    keys = parse_by(plan, by)
    gen, tables, where = _body(plan, window)
    ids = [f"{gen.alias[name]}.id AS r{i}" for i, name in enumerate(plan.pattern.result_vars)]
    id_names = ", ".join(f"r{i}" for i in range(len(ids)))
    tree = f"{gen.root}.tree AS tree_id"
    if not keys:
        distinct = "DISTINCT " if _needs_distinct(plan) else ""
        inner = f"SELECT {distinct}{', '.join(ids + [tree])} FROM {tables} WHERE {where}"
        return f"SELECT COUNT(*), COUNT(DISTINCT tree_id) FROM ({inner})", gen.params
    # keys are functions of the result ids: rows distinct by ids are distinct with keys
    distinct = "DISTINCT " if _needs_distinct(plan) else ""
    # Groups are formed on integer codes and named once per code, not once per row;
    # not with hidden variables, where one result with two codes of the same value (NP,
    # NP-SBJ: category NP) must count once.
    coded = [_coded_key(gen, var, attr, by_code=not distinct) for var, attr in keys]
    key_names = ", ".join(f"k{i}" for i in range(len(keys)))
    values = [f"{code} AS k{i}" for i, (code, _) in enumerate(coded)]
    decoded = ", ".join(decode.format(k=f"k{i}") for i, (_, decode) in enumerate(coded))
    inner = f"SELECT {distinct}{', '.join(ids + [tree] + values)} FROM {tables} WHERE {where}"
    grouped = f"SELECT {key_names}, COUNT(*) AS n FROM {{rows}} GROUP BY {key_names}"
    if _groups_without_rows(plan):
        # one node and no subqueries: reading its rows again for the trees is cheaper
        # than keeping them (measured: 0.06 s against 0.42 s for every node of 15,000 trees)
        sql = (f"WITH g AS MATERIALIZED ({grouped.format(rows=f'({inner})')}) "
               f"SELECT {decoded}, SUM(n), (SELECT SUM(n) FROM g), "
               f"(SELECT COUNT(DISTINCT tree_id) FROM ({inner})) FROM g GROUP BY {decoded}")
        return sql, gen.params
    results = (f"(SELECT COUNT(*) FROM (SELECT DISTINCT {id_names} FROM m))" if distinct
               else "(SELECT COUNT(*) FROM m)")
    hint = "MATERIALIZED " if sqlite3.sqlite_version_info >= (3, 35, 0) else ""
    sql = (f"WITH m AS {hint}({inner}) "
           f"SELECT {decoded}, SUM(n), {results}, "
           f"(SELECT COUNT(DISTINCT tree_id) FROM m) "
           f"FROM ({grouped.format(rows='m')}) GROUP BY {decoded}")
    return sql, gen.params


def _groups_without_rows(plan: Plan) -> bool:
    """Whether a grouped count of `plan` keeps no matched rows: one node, every variable
    a result, no `not` / inner nodes (which become subqueries; count_sql)."""
    return (len(plan.order) == 1 and not _needs_distinct(plan) and not any(
        isinstance(cond, (Exists, Not)) for cond in walk_conditions(plan.pattern.condition)))


def count_needs_chunks(plan: Plan, by=()) -> bool:
    """Whether a count is better run in chunks of whole trees (results/split.py).

    Not a count of every node (`x:*`, no conditions) grouped by label attributes: as
    one statement it reads the label index in key order, with no sort and little
    memory; in chunks, each chunk sorts its rows (measured on 150,000 trees: 0.67 s
    against 4.4 s). Nodes named by label are found through the label index chunk by
    chunk, which is faster in chunks (0.50 s against 0.97 s for `x:NP` by function).
    """
    keys = parse_by(plan, by)
    if not keys or len(plan.pattern.vars) != 1 or conjuncts(plan.pattern.condition):
        return True
    test = plan.pattern.vars[0].test
    every_node = isinstance(test.label, AnyLabel) and test.word is None
    return not (every_node and all(attr in LABEL_COLUMNS for _, attr in keys))


def _coded_key(gen: _Generator, var: str, attr: str, by_code: bool) -> tuple[str, str]:
    """A count key as (SQL for an integer code or the value itself, SQL that turns `{k}`
    into the value): with `by_code`, labels and words are grouped by their codes."""
    a = gen.of(var)
    if not by_code:
        return gen.value(Attr(var, attr, gen.plan.pattern.vars[0].span)), "{k}"
    if attr in LABEL_COLUMNS:
        return f"{a}.label", f"(SELECT {LABEL_COLUMNS[attr]} FROM label WHERE code = {{k}})"
    if attr == "word":
        return f"{a}.word", "(SELECT form FROM word WHERE code = {k})"
    if attr in ("headword", "headtag"):
        column = "word" if attr == "headword" else "label"
        table, value = ("word", "form") if attr == "headword" else ("label", "category")
        head = f"(SELECT h.{column} FROM node AS h WHERE h.id = {a}.id + {gen.syntax(a, 'head')})"
        return head, f"(SELECT {value} FROM {table} WHERE code = {{k}})"
    value = gen.value(Attr(var, attr, gen.plan.pattern.vars[0].span))
    return value, "{k}"


def document_count_sql(plan: Plan, by=()) -> tuple[str, list]:
    """Counting statement broken down by document (every breakdown is a union of documents).

    One row per document and key: (document id, key values..., results, distinct trees).
    The matches are joined to their tree, whose `document` column is the breakdown key.
    """
    keys = parse_by(plan, by)
    gen, tables, where = _body(plan)
    ids = [f"{gen.alias[name]}.id AS r{i}" for i, name in enumerate(plan.pattern.result_vars)]
    values = [f"{gen.value(Attr(var, attr, plan.pattern.vars[0].span))} AS k{i}"
              for i, (var, attr) in enumerate(keys)]
    distinct = "DISTINCT " if keys or _needs_distinct(plan) else ""
    columns = ", ".join(ids + [f"{gen.root}.tree AS tree_id"] + values)
    inner = f"SELECT {distinct}{columns} FROM {tables} WHERE {where}"
    key_names = "".join(f", m.k{i}" for i in range(len(keys)))
    hint = "MATERIALIZED " if sqlite3.sqlite_version_info >= (3, 35, 0) else ""
    sql = (f"WITH m AS {hint}({inner}) "
           f"SELECT t.document{key_names}, COUNT(*), COUNT(DISTINCT m.tree_id) "
           f"FROM m JOIN tree AS t ON t.id = m.tree_id GROUP BY t.document{key_names}")
    return sql, gen.params


# Node ids where runs of whole trees start (tree ids grow with node ids: both are
# handed out in order, and a re-indexed document gets new ones at the end).
TREE_START_SQL = "SELECT first_node FROM tree WHERE id >= ? ORDER BY id LIMIT 1"
# Three lookups by the primary key, no scan (SQLite answers min() or max() from the key
# only when it stands alone in its query).
TREE_SPAN_SQL = ("SELECT (SELECT min(id) FROM tree), (SELECT max(id) FROM tree),"
                 " (SELECT last_node FROM tree ORDER BY id DESC LIMIT 1)")


# The denominators of every breakdown, per document: its corpus, name, the value of one
# metadata key (the JSON path is the parameter), trees and overt tokens from the tree table.
DOCUMENT_SIZES_SQL = (
    "SELECT d.id, c.name, d.name, json_extract(d.meta, ?), COUNT(t.id), "
    "IFNULL(SUM(t.n_tokens), 0) FROM document AS d JOIN corpus AS c ON c.id = d.corpus "
    "LEFT JOIN tree AS t ON t.document = d.id GROUP BY d.id ORDER BY d.id"
)
META_KEYS_SQL = (
    "SELECT DISTINCT j.key FROM document AS d, json_each(d.meta) AS j ORDER BY j.key"
)


# Lookups used when results are shown (fixed text, ids as parameters).
NODE_DETAILS_SQL = (
    "SELECT n.id, n.last, n.tree, l.text, l.category, l.functions, n.tok_first, n.tok_last "
    "FROM node AS n JOIN label AS l ON l.code = n.label WHERE n.id = ?"
)
# The lexical head of a node: node.head is the offset from the node's id.
NODE_HEAD_SQL = (
    "SELECT w.form, l.category FROM node AS s JOIN node AS h ON h.id = s.id + s.head "
    "JOIN word AS w ON w.code = h.word JOIN label AS l ON l.code = h.label WHERE s.id = ?"
)
NODE_WORDS_SQL = (
    "SELECT w.form FROM node AS n JOIN word AS w ON w.code = n.word "
    "WHERE n.id BETWEEN ? AND ? AND n.tok_first IS NOT NULL ORDER BY n.id"
)
LABEL_TEXT_SQL = "SELECT text FROM label WHERE code = ?"
TREE_LOCATION_SQL = (
    "SELECT t.id, d.name, d.path, t.line, t.ordinal FROM tree AS t "
    "JOIN document AS d ON d.id = t.document WHERE t.id = ?"
)


def explain_query_plan(conn: sqlite3.Connection, sql: str, params: list) -> list[tuple]:
    """SQLite's own plan for a statement: (id, parent, detail) rows."""
    return [(row[0], row[1], row[-1]) for row in conn.execute("EXPLAIN QUERY PLAN " + sql, params)]
