"""A readable outline of a compiled pattern's AST, for `explain`."""
from __future__ import annotations

from .ast import (
    And,
    AnyLabel,
    CategoryIs,
    CategoryRegex,
    Compare,
    Exists,
    Flag,
    LabelNot,
    LabelOneOf,
    LabelTest,
    Literal,
    Not,
    NodeVar,
    Or,
    Pattern,
    Relation,
)


def describe(pattern: Pattern) -> str:
    """The pattern as the compiler understood it: nodes, their tests, then the conditions."""
    lines = ["results: " + ", ".join(pattern.result_vars)]
    lines += _nodes(pattern.vars, 0)
    lines.append("conditions:")
    lines += _condition(pattern.condition, 1)
    return "\n".join(lines)


def _nodes(variables: tuple[NodeVar, ...], depth: int) -> list[str]:
    pad = "  " * depth
    out = [f"{pad}nodes:"]
    for var in variables:
        word = f' word "{var.test.word}"' if var.test.word is not None else ""
        shown = " (reported)" if var.reported else ""
        out.append(f"{pad}  {var.name}: {label_text(var.test.label)}{word}{shown}")
    return out


def label_text(test: LabelTest) -> str:
    if isinstance(test, AnyLabel):
        return "any node"
    if isinstance(test, CategoryIs):
        tags = "".join(f" +{tag}" for tag in test.functions)
        return f"category {test.category!r}{tags}"
    if isinstance(test, CategoryRegex):
        return f"category ~ /{test.pattern}/"
    if isinstance(test, LabelOneOf):
        return "one of (" + " | ".join(label_text(o) for o in test.options) + ")"
    if isinstance(test, LabelNot):
        return f"not ({label_text(test.inner)})"
    raise TypeError(test)


def _condition(cond, depth: int) -> list[str]:
    pad = "  " * depth
    if isinstance(cond, And):
        if not cond.items:
            return [f"{pad}(none)"]
        return [line for item in cond.items for line in _condition(item, depth)]
    if isinstance(cond, Or):
        out = [f"{pad}any of:"]
        for item in cond.items:
            out += _condition(item, depth + 1)
        return out
    if isinstance(cond, Not):
        return [f"{pad}not:"] + _condition(cond.item, depth + 1)
    if isinstance(cond, Exists):
        return (_nodes(cond.vars, depth) + [f"{pad}such that:"]
                + _condition(cond.condition, depth + 1))
    if isinstance(cond, Relation):
        bounds = ""
        if cond.min_depth is not None or cond.max_depth is not None:
            bounds = f" (levels {cond.min_depth or 1}..{cond.max_depth or 'any'})"
        return [f"{pad}{cond.left} {cond.kind} {cond.right}{bounds}"]
    if isinstance(cond, Compare):
        right = cond.right
        shown = (repr(right.value) if isinstance(right, Literal)
                 else f"{right.var}.{right.name}")
        return [f"{pad}{cond.left.var}.{cond.left.name} {cond.op} {shown}"]
    if isinstance(cond, Flag):
        return [f"{pad}{cond.attr.var}.{cond.attr.name}"]
    return [f"{pad}{cond!r}"]
