"""Name scoping: syntax objects to the normal-form AST (anonymous names, not/or scopes)."""
from __future__ import annotations

import re
from dataclasses import dataclass

from treequery.pattern.ast import (
    And,
    Attr,
    Compare,
    Condition,
    Exists,
    Flag,
    NodeVar,
    Not,
    Or,
    Pattern,
    Relation,
    Span,
)
from treequery.pattern.syntax import (
    RELATION_WORDS,
    BuildError,
    ConditionStatement,
    Name,
    NodeStatement,
    NodeSyntax,
    NotStatement,
    OrStatement,
    RelationStatement,
    SameStatement,
    Statement,
    Term,
)


def build_pattern(text: str, statements: tuple[Statement, ...]) -> Pattern:
    """The Pattern for parsed statements; raises BuildError for name and scope problems."""
    return _Resolver(text).build(statements)


# ---------------------------------------------------------------- scoping

class _Scope:
    """The top level, or the inside of one `not` or one `or` branch."""

    def __init__(self, parent: _Scope | None = None):
        self.parent = parent
        self.vars: list[NodeVar] = []

    def encloses(self, other: _Scope) -> bool:
        scope: _Scope | None = other
        while scope is not None:
            if scope is self:
                return True
            scope = scope.parent
        return False


@dataclass(frozen=True, slots=True)
class _Binding:
    scope: _Scope
    span: Span


class _Resolver:
    """Walks the statements in text order, naming nodes and placing them in scopes."""

    def __init__(self, text: str):
        self.text = text
        self.bindings: dict[str, _Binding] = {}
        self.uses: list[tuple[str, Span, _Scope]] = []
        self.first_mention: dict[str, int] = {}
        self.errors: list[BuildError] = []
        self.anonymous_count = 0
        self.top = _Scope()

    def build(self, statements: tuple[Statement, ...]) -> Pattern:
        conditions = self._walk_all(statements, self.top, None)
        self._check_uses()
        if self.errors:
            raise min(self.errors, key=lambda error: error.position)
        top_vars = self._ordered(self.top)
        if not top_vars:
            raise BuildError("the pattern has no node outside `not` and `or`", 0,
                                   hint="add the node the results are about, e.g. `s:S`",
                                   check=True)
        reported = tuple(var.name for var in top_vars if var.reported)
        return Pattern(self.text, top_vars, And(tuple(conditions)), reported)

    # ---- statements

    def _walk_all(self, statements, scope: _Scope, subject: str | None) -> list[Condition]:
        conditions: list[Condition] = []
        for statement in statements:
            conditions.extend(self._walk(statement, scope, subject))
        return conditions

    def _walk(self, statement: Statement, scope: _Scope, subject: str | None) -> list[Condition]:
        if isinstance(statement, NodeStatement):
            return self._term(statement.term, scope)[1]
        if isinstance(statement, RelationStatement):
            return self._relation(statement, scope, subject)
        if isinstance(statement, SameStatement):
            return [self._same(statement, scope)]
        if isinstance(statement, ConditionStatement):
            return self._condition(statement, scope)
        if isinstance(statement, NotStatement):
            return [Not(self._local(statement.inner, scope, subject), statement.span)]
        if isinstance(statement, OrStatement):
            return [Or(tuple(self._local(branch, scope, subject) for branch in statement.branches))]
        return self._walk_all(statement.items, scope, subject)  # a group

    def _local(self, statement: Statement, scope: _Scope, subject: str | None) -> Condition:
        inner = _Scope(scope)
        conditions = self._walk(statement, inner, subject)
        local_vars = self._ordered(inner)
        if local_vars:
            return Exists(local_vars, And(tuple(conditions)))
        return conditions[0] if len(conditions) == 1 else And(tuple(conditions))

    def _relation(self, statement: RelationStatement, scope: _Scope,
                  subject: str | None) -> list[Condition]:
        if statement.left is None and subject is None:
            raise BuildError(
                f"`{statement.word}` needs a node on its left", statement.word_span.start,
                hint="write `a dominates b`, or put the statement in a block `vp:VP { ... }` "
                     "whose `{` is on the same line as its node")
        if statement.left is None:
            left, conditions = subject, []
        else:
            left, conditions = self._term(statement.left, scope)
        right, right_conditions = self._term(statement.right, scope)
        conditions.extend(right_conditions)
        kind, swapped = RELATION_WORDS[statement.word]
        if swapped:
            left, right = right, left
        min_depth, max_depth = statement.depth or (None, None)
        span = Span(statement.word_span.start, statement.span.end)
        conditions.append(Relation(kind, left, right, span, min_depth, max_depth))
        return conditions

    def _same(self, statement: SameStatement, scope: _Scope) -> Condition:
        self._use(statement.left, scope)
        self._use(statement.right, scope)
        relation = Relation("same-node", statement.left.text, statement.right.text, statement.span)
        return Not(relation, statement.span) if statement.negated else relation

    def _condition(self, statement: ConditionStatement, scope: _Scope) -> list[Condition]:
        condition = statement.condition
        attrs = [condition.attr] if isinstance(condition, Flag) else [condition.left]
        if isinstance(condition, Compare) and isinstance(condition.right, Attr):
            attrs.append(condition.right)
        for attr in attrs:
            self._use(Name(attr.var, Span(attr.span.start, attr.span.start + len(attr.var))),
                      scope)
        return [condition]

    # ---- terms and nodes

    def _term(self, term: Term, scope: _Scope) -> tuple[str, list[Condition]]:
        if isinstance(term.node, Name):
            self._use(term.node, scope)
            name, conditions = term.node.text, []
        else:
            name, conditions = self._node(term.node, scope)
        if term.block is not None:
            conditions.extend(self._walk_all(term.block, scope, name))
        return name, conditions

    def _node(self, node: NodeSyntax, scope: _Scope) -> tuple[str, list[Condition]]:
        name = node.name.text if node.name else self._anonymous_name()
        self._bind(name, node, scope)
        conditions: list[Condition] = []
        previous: str | None = None
        for child in node.children:
            child_name, child_conditions = self._term(child, scope)
            conditions.append(Relation("parent-of", name, child_name, child.span))
            if previous is not None:
                conditions.append(Relation("left-sister-of", previous, child_name, child.span))
            conditions.extend(child_conditions)
            previous = child_name
        return name, conditions

    def _anonymous_name(self) -> str:
        self.anonymous_count += 1
        return f"_{self.anonymous_count}"

    def _bind(self, name: str, node: NodeSyntax, scope: _Scope) -> None:
        earlier = self.bindings.get(name)
        if earlier is not None:
            line, column = self._line_column(earlier.span.start)
            self.errors.append(BuildError(
                f"`{name}` is bound twice (first at line {line}, column {column})",
                node.test_span.start, hint=f"refer to it again by its bare name `{name}`",
                check=True))
            return
        self.bindings[name] = _Binding(scope, node.test_span)
        self._mention(name, node.test_span.start)
        reported = node.name is not None and scope is self.top and not name.startswith("_")
        scope.vars.append(NodeVar(name, node.test, reported, node.test_span))

    def _use(self, name: Name, scope: _Scope) -> None:
        self.uses.append((name.text, name.span, scope))
        self._mention(name.text, name.span.start)

    def _mention(self, name: str, position: int) -> None:
        self.first_mention[name] = min(position, self.first_mention.get(name, position))

    def _ordered(self, scope: _Scope) -> tuple[NodeVar, ...]:
        return tuple(sorted(scope.vars, key=lambda var: self.first_mention[var.name]))

    def _check_uses(self) -> None:
        for name, span, scope in self.uses:
            binding = self.bindings.get(name)
            if binding is None:
                self.errors.append(_unbound_error(name, span))
            elif not binding.scope.encloses(scope):
                line, column = self._line_column(binding.span.start)
                self.errors.append(BuildError(
                    f"`{name}` is bound inside `not` or `or` (line {line}, column {column}) "
                    "and cannot be used outside it", span.start,
                    hint="bind it at the top level and refer to it inside", check=True))

    def _line_column(self, position: int) -> tuple[int, int]:
        line = self.text.count("\n", 0, position) + 1
        return line, position - (self.text.rfind("\n", 0, position) + 1) + 1


def _unbound_error(name: str, span: Span) -> BuildError:
    hint = f"bind it once with {name}:TEST, e.g. `{name}:NP`"
    if re.fullmatch(r"[a-z]{2,5}\$?", name):  # looks like a category written in lower case
        hint = (f"categories are written as in the treebank, in upper case ({name.upper()}); "
                f"a lower-case word is a variable name, bound with {name}:TEST")
    return BuildError(f"`{name}` is used but never bound", span.start, hint=hint,
                            check=True)
