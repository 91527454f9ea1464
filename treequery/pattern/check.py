"""Semantic checks of a parsed pattern: names, attributes, types, regexes, contradictions."""
from __future__ import annotations

import difflib
import re
from collections.abc import Iterator
from dataclasses import dataclass

import regex

from treequery.errors import PatternCheckError
from treequery.pattern.ast import (
    ATTRIBUTES,
    RELATION_KINDS,
    And,
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
    NodeVar,
    Not,
    Or,
    Pattern,
    Relation,
    Span,
    walk_conditions,
)
from treequery.pattern.parse import parse_pattern, unescape

# Smallest value each count can take (a node's position and word positions are 1-based).
MINIMUM = {"children": 0, "tokens": 0, "leaves": 0, "depth": 0, "position": 1,
           "start": 1, "end": 1, "index": 0, "gap": 0, "refindex": 0}
TYPE_WORDS = {"str": "text", "int": "a number", "bool": "a yes/no attribute"}
REGEX_LITERAL = re.compile(r"/(?:[^/\\\n]|\\.)+/")


def compile_pattern(text: str) -> Pattern:
    """Parse and check pattern text: the one entry point for callers."""
    return check_pattern(parse_pattern(text))


def check_pattern(pattern: Pattern) -> Pattern:
    """Return the pattern unchanged, or raise PatternCheckError for its first problem."""
    problems = list(_Checker(pattern).problems())
    if problems:
        first = min(problems, key=lambda problem: problem.position)
        raise PatternCheckError(first.message, pattern.text, first.position, hint=first.hint)
    return pattern


@dataclass(frozen=True, slots=True)
class _Problem:
    message: str
    position: int
    hint: str | None = None


class _Checker:
    def __init__(self, pattern: Pattern):
        self.pattern = pattern
        self.text = pattern.text
        self.all_vars = list(pattern.vars) + [var for exists in _exists(pattern.condition)
                                               for var in exists.vars]

    def problems(self) -> Iterator[_Problem]:
        yield from self._duplicates()
        yield from self._scopes(self.pattern.condition, {var.name for var in self.pattern.vars})
        for var in self.all_vars:
            yield from self._label_regexes(var.test.label, var)
        for condition in walk_conditions(self.pattern.condition):
            if isinstance(condition, Relation):
                yield from self._relation(condition)
            elif isinstance(condition, Compare):
                yield from self._compare(condition)
            elif isinstance(condition, Flag):
                yield from self._flag(condition)
        yield from _LabelContradictions(self.pattern).problems()

    # ---- names

    def _duplicates(self) -> Iterator[_Problem]:
        seen: set[str] = set()
        for var in self.all_vars:
            if var.name in seen:
                yield _Problem(f"`{var.name}` is bound twice", var.span.start,
                               hint=f"refer to it again by its bare name `{var.name}`")
            seen.add(var.name)

    def _scopes(self, condition: Condition, visible: set[str]) -> Iterator[_Problem]:
        if isinstance(condition, Exists):
            yield from self._scopes(condition.condition, visible | {v.name for v in condition.vars})
        elif isinstance(condition, (And, Or)):
            for item in condition.items:
                yield from self._scopes(item, visible)
        elif isinstance(condition, Not):
            yield from self._scopes(condition.item, visible)
        else:
            for name, position in self._uses(condition):
                if name not in visible:
                    yield self._invisible(name, position)

    def _uses(self, condition: Condition) -> list[tuple[str, int]]:
        if isinstance(condition, Relation):
            return [(name, _name_position(self.text, condition.span, name))
                    for name in (condition.left, condition.right)]
        attrs = [condition.attr] if isinstance(condition, Flag) else [condition.left]
        if isinstance(condition, Compare) and isinstance(condition.right, Attr):
            attrs.append(condition.right)
        return [(attr.var, attr.span.start) for attr in attrs]

    def _invisible(self, name: str, position: int) -> _Problem:
        if any(var.name == name for var in self.all_vars):
            return _Problem(f"`{name}` is bound inside `not` or `or` and cannot be used outside it",
                            position, hint="bind it at the top level and refer to it inside")
        return _Problem(f"`{name}` is used but never bound", position,
                        hint=f"bind it once with {name}:TEST, e.g. `{name}:NP`")

    # ---- node tests

    def _label_regexes(self, label: LabelTest, var: NodeVar) -> Iterator[_Problem]:
        if isinstance(label, CategoryRegex):
            yield from self._regex(label.pattern, self._category_regex_span(label.pattern, var))
        elif isinstance(label, LabelOneOf):
            for option in label.options:
                yield from self._label_regexes(option, var)
        elif isinstance(label, LabelNot):
            yield from self._label_regexes(label.inner, var)

    def _category_regex_span(self, pattern: str, var: NodeVar) -> Span:
        for match in REGEX_LITERAL.finditer(self.text, var.span.start, var.span.end):
            if unescape(match.group()[1:-1], "/")[0] == pattern:
                return Span(match.start(), match.end())
        return var.span

    def _regex(self, pattern: str, span: Span) -> Iterator[_Problem]:
        try:
            regex.compile(pattern)
        except regex.error as error:
            yield _Problem(f"bad regular expression: {error.msg}",
                           self._inside_literal(span, error.pos or 0))

    def _inside_literal(self, span: Span, index: int) -> int:
        """The text offset of character `index` of a quoted literal's unescaped value."""
        written = self.text[span.start:span.end]
        if len(written) < 2 or written[0] not in "\"/'" or written[-1] != written[0]:
            return span.start
        offsets = unescape(written[1:-1], written[0])[1]
        return span.start + 1 + (offsets[index] if index < len(offsets) else len(written) - 2)

    # ---- relations

    def _relation(self, relation: Relation) -> Iterator[_Problem]:
        if relation.kind not in RELATION_KINDS:
            yield _Problem(f"unknown relation `{relation.kind}`", relation.span.start)
            return
        if relation.left == relation.right and relation.kind != "same-node":
            yield _Problem(f"`{relation.left} {relation.kind} {relation.left}` can never hold: "
                           f"a node is never in this relation with itself", relation.span.start)
        depths = [depth for depth in (relation.min_depth, relation.max_depth) if depth is not None]
        if depths and relation.kind != "dominates":
            yield _Problem("a depth limit only goes with dominates", relation.span.start)
        if any(depth < 1 for depth in depths):
            yield _Problem("a depth limit must be at least 1 (a child is 1 level below)",
                           self._depth_position(relation),
                           hint="`within 1` and `at depth 1` mean parent-of")
        elif len(depths) == 2 and relation.min_depth > relation.max_depth:
            yield _Problem("the smallest depth is larger than the largest", relation.span.start)

    def _depth_position(self, relation: Relation) -> int:
        written = self.text[relation.span.start:relation.span.end]
        matches = list(re.finditer(r"(?:within|depth)\s+(-?\d+)", written))
        return relation.span.start + (matches[-1].start(1) if matches else 0)

    # ---- comparisons and flags

    def _attribute(self, attr: Attr) -> tuple[str | None, _Problem | None]:
        kind = ATTRIBUTES.get(attr.name)
        if kind is not None:
            return kind, None
        close = difflib.get_close_matches(attr.name, list(ATTRIBUTES), n=1)
        hint = f"did you mean {attr.var}.{close[0]}?" if close else None
        return None, _Problem(f"unknown attribute `{attr.name}`; the attributes are "
                              f"{', '.join(ATTRIBUTES)}", _attr_name_position(self.text, attr),
                              hint=hint)

    def _flag(self, flag: Flag) -> Iterator[_Problem]:
        kind, problem = self._attribute(flag.attr)
        if problem:
            yield problem
        elif kind != "bool":
            example = f'{flag.attr.var}.{flag.attr.name} > 0' if kind == "int" else \
                f'{flag.attr.var}.{flag.attr.name} = "..."'
            yield _Problem(f"`{flag.attr.var}.{flag.attr.name}` is {TYPE_WORDS[kind]}, "
                           "not a yes/no attribute", flag.span.start,
                           hint=f"compare it, e.g. `{example}`")

    def _compare(self, compare: Compare) -> Iterator[_Problem]:
        left_kind, problem = self._attribute(compare.left)
        right_kind: str | None = None
        if isinstance(compare.right, Attr):
            right_kind, right_problem = self._attribute(compare.right)
            problem = problem or right_problem
        if problem:
            yield problem
            return
        for attr, kind in ((compare.left, left_kind), (compare.right, right_kind)):
            if kind == "bool":
                yield _Problem(f"`{attr.var}.{attr.name}` is a yes/no attribute and is not "
                               "compared", attr.span.start,
                               hint=f"write `{attr.var}.{attr.name}` or "
                                    f"`not {attr.var}.{attr.name}`")
                return
        if compare.op in ("~", "!~"):
            yield from self._match(compare, left_kind)
        elif isinstance(compare.right, Attr):
            if left_kind != right_kind:
                yield _Problem(f"cannot compare {TYPE_WORDS[left_kind]} with "
                               f"{TYPE_WORDS[right_kind]}", compare.right.span.start)
        else:
            yield from self._compare_literal(compare, left_kind)

    def _match(self, compare: Compare, left_kind: str) -> Iterator[_Problem]:
        if left_kind != "str":
            yield _Problem(f"`{compare.op}` searches text, and `{compare.left.name}` is a number",
                           compare.left.span.start, hint="compare numbers with = != < <= > >=")
        elif not isinstance(compare.right, Literal) or not isinstance(compare.right.value, str):
            yield _Problem(f"`{compare.op}` needs a regular expression: /.../ or \"...\"",
                           compare.right.span.start)
        else:
            yield from self._regex(compare.right.value, compare.right.span)

    def _compare_literal(self, compare: Compare, left_kind: str) -> Iterator[_Problem]:
        value = compare.right.value
        attr = compare.left
        if left_kind == "int" and not isinstance(value, int):
            yield _Problem(f"`{attr.name}` is a number and cannot be compared with text",
                           compare.right.span.start, hint=f"write a number: {attr.var}.{attr.name} "
                                                          f"{compare.op} 3")
        elif left_kind == "str" and not isinstance(value, str):
            yield _Problem(f"`{attr.name}` is text and cannot be compared with a number",
                           compare.right.span.start,
                           hint=f'write it in double quotes: {attr.var}.{attr.name} '
                                f'{compare.op} "{value}"')
        elif left_kind == "int" and _impossible(compare.op, value, MINIMUM.get(attr.name, 0)):
            yield _Problem(f"`{attr.var}.{attr.name} {compare.op} {value}` can never hold: "
                           f"{attr.name} is never below {MINIMUM.get(attr.name, 0)}",
                           compare.span.start)


def _impossible(op: str, value: int, minimum: int) -> bool:
    return (op == "<" and value <= minimum) or (op in ("<=", "=") and value < minimum)


class _LabelContradictions:
    """Node tests that cannot all hold on one node: `a:NP; b:!NP; a = b`, `x:NP; x.category = "PP"`.

    Only the top level is looked at, and only plain categories: the obvious slips.
    """

    def __init__(self, pattern: Pattern):
        self.pattern = pattern
        self.group_of = {var.name: var.name for var in pattern.vars}
        for item in _top_items(pattern.condition):
            if isinstance(item, Relation) and item.kind == "same-node":
                self._join(item.left, item.right)

    def _find(self, name: str) -> str:
        while self.group_of.get(name, name) != name:
            name = self.group_of[name]
        return name

    def _join(self, first: str, second: str) -> None:
        if first in self.group_of and second in self.group_of:
            self.group_of[self._find(second)] = self._find(first)

    def problems(self) -> Iterator[_Problem]:
        tests: dict[str, list[tuple[LabelTest, str | None, int]]] = {}
        for var in self.pattern.vars:
            tests.setdefault(self._find(var.name), []).append(
                (var.test.label, var.test.word, var.span.start))
        for item in _top_items(self.pattern.condition):
            asserted = _asserted_category(item)
            if asserted and item.left.var in self.group_of:
                tests.setdefault(self._find(item.left.var), []).append(
                    (asserted, None, item.span.start))
        for group in tests.values():
            yield from _conflicts(self.pattern.text, group)


def _asserted_category(item: Condition) -> LabelTest | None:
    if not (isinstance(item, Compare) and item.left.name == "category"
            and isinstance(item.right, Literal) and isinstance(item.right.value, str)):
        return None
    if item.op == "=":
        return CategoryIs(item.right.value)
    return LabelNot(CategoryIs(item.right.value)) if item.op == "!=" else None


def _conflicts(text: str, group: list[tuple[LabelTest, str | None, int]]) -> Iterator[_Problem]:
    for index, (label, word, position) in enumerate(group):
        for other_label, other_word, other_position in group[:index]:
            if _labels_clash(label, other_label) or _labels_clash(other_label, label):
                line = text.count("\n", 0, other_position) + 1
                column = other_position - (text.rfind("\n", 0, other_position) + 1) + 1
                yield _Problem(f"this node test contradicts the one at line {line}, column "
                               f"{column} (the same node): no node can pass both", position)
            elif word is not None and other_word is not None and word != other_word:
                yield _Problem(f'a node cannot have both words "{other_word}" and "{word}"',
                               position)


def _labels_clash(label: LabelTest, other: LabelTest) -> bool:
    if not isinstance(label, CategoryIs):
        return False
    if isinstance(other, CategoryIs):
        return other.category != label.category
    if isinstance(other, LabelNot):
        options = other.inner.options if isinstance(other.inner, LabelOneOf) else (other.inner,)
        return any(isinstance(option, CategoryIs) and option.category == label.category
                   and set(option.functions) <= set(label.functions) for option in options)
    return False


# ---------------------------------------------------------------- walking helpers

def _exists(condition: Condition) -> Iterator[Exists]:
    return (item for item in walk_conditions(condition) if isinstance(item, Exists))


def _top_items(condition: Condition) -> Iterator[Condition]:
    if isinstance(condition, And):
        for item in condition.items:
            yield from _top_items(item)
    else:
        yield condition


def _name_position(text: str, span: Span, name: str) -> int:
    """Where `name` is written inside a span (relations do not record operand positions)."""
    match = re.compile(rf"(?<![\w.]){re.escape(name)}(?![\w.])").search(text, span.start, span.end)
    return match.start() if match else span.start


def _attr_name_position(text: str, attr: Attr) -> int:
    written = text[attr.span.start:attr.span.end]
    prefix = f"{attr.var}."
    return attr.span.start + len(prefix) if written.startswith(prefix) else attr.span.start
